"""Slowly varying inputs shared by every clock over one span, computed once.

An ``Environment`` holds the coarse-grid Earth orientation and the geocentric
Sun and Moon positions for a span. It is cached by span, so a 24-satellite
batch over the same span pays for skyfield's nutation series and DE421 once.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

from .frames import EarthOrientation
from .potential.tidal import SunMoonPositions
from .span import Span


@dataclass
class Environment:
    span: Span
    orientation: EarthOrientation
    sun_moon: SunMoonPositions


@functools.lru_cache(maxsize=16)
def _cached(whole: float, tt_fraction: float, duration_s: float) -> Environment:
    from .ephemeris import timescale

    ts = timescale()
    span = Span(ts.tt_jd(whole, tt_fraction), duration_s)
    return Environment(span, EarthOrientation.for_span(span), SunMoonPositions.for_span(span))


def environment_for(span: Span) -> Environment:
    """The (cached) environment of ``span``."""
    env = _cached(float(span.start.whole), float(span.start.tt_fraction), float(span.duration_s))
    return env
