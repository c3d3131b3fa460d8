"""A span of coordinate time: a start instant and offsets from it in TT seconds.

Every array of node times in physics/ is a float64 array of TT seconds since
the span's start. The start is a skyfield ``Time`` (two-double storage), so an
offset of up to a year keeps a resolution of ~1e-8 s; building node times as
one float Julian date would resolve only ~40 µs.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import SECONDS_PER_DAY, TT_MINUS_TAI_S


@dataclass(frozen=True)
class Span:
    """Integration span: ``start`` (skyfield Time) and ``duration_s`` (TT seconds, > 0)."""

    start: object
    duration_s: float

    @property
    def ts(self):
        return self.start.ts

    def times(self, t_s):
        """Skyfield Time at ``t_s`` TT seconds after the start (scalar or array)."""
        t_s = np.asarray(t_s, dtype=float)
        return self.ts.tt_jd(self.start.whole, self.start.tt_fraction + t_s / SECONDS_PER_DAY)

    def seconds_after_start(self, time) -> np.ndarray:
        """TT seconds from the span's start to skyfield Time(s) ``time``."""
        return (
            (np.asarray(time.whole) - self.start.whole)
            + (np.asarray(time.tt_fraction) - self.start.tt_fraction)
        ) * SECONDS_PER_DAY

    def utc_jd_parts(self, t_s):
        """UTC Julian date as (whole, fraction) arrays at ``t_s``, as SGP4 takes it.

        Same arithmetic as skyfield's ``EarthSatellite`` (TAI fraction minus TAI - UTC), but with
        TAI - UTC looked up only at the span's ends when no leap second falls inside it.
        """
        t_s = np.asarray(t_s, dtype=float)
        tai_fraction = self.start.tt_fraction - TT_MINUS_TAI_S / SECONDS_PER_DAY + t_s / SECONDS_PER_DAY
        ends = self.times(np.array([0.0, float(self.duration_s)]))
        leap = ends._leap_seconds()
        if leap[0] == leap[1]:
            fraction = tai_fraction - leap[0] / SECONDS_PER_DAY
        else:  # a leap second inside the span: per node (vectorised lookup)
            fraction = tai_fraction - self.times(t_s)._leap_seconds() / SECONDS_PER_DAY
        whole = np.full(t_s.shape, float(self.start.whole))
        return whole, fraction

    def utc_iso(self, t_s) -> list[str]:
        """ISO 8601 UTC strings (microsecond resolution, trailing Z) at ``t_s``."""
        # strftime truncates the fraction: add half a microsecond to round instead.
        t = self.times(np.atleast_1d(np.asarray(t_s, dtype=float)) + 5e-7)
        return [s.replace(" ", "T") for s in t.utc_strftime("%Y-%m-%dT%H:%M:%S.%fZ")]
