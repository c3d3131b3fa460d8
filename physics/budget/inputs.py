"""What ``compute_budget`` takes, and the checks and sizes fixed before any work starts."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..constants import SECONDS_PER_DAY
from ..ephemeris import DE421_FIRST_JD_TDB, DE421_LAST_JD_TDB
from ..errors import PhysicsInputError
from ..quadrature import DEFAULT_TOL_FRACTIONAL
from ..rate import GravityModel
from ..span import Span

MIN_SPAN_S = 1.0
"""Shortest span a budget integrates, s: below it no rate or periodic part is meaningful."""

MAX_PANEL_S = 12 * 3600.0
"""Longest first panel, s: half a day, so the Moon's semi-diurnal tide has 20 nodes per cycle
(the tail test splits panels where the integrand needs more)."""

MIN_PANEL_S = 60.0

PANELS_PER_PERIOD = 1.0
"""First panels span 1/PANELS_PER_PERIOD of an orbit (then halved where the tail test fails;
full-orbit panels fail it for LEO, whose rate is rich in harmonics)."""

TLE_MAX_EPOCH_DISTANCE_DAYS = 365.0
"""Refuse SGP4 propagation farther than this from the element epoch, days."""

TLE_WARN_EPOCH_DISTANCE_DAYS = 30.0
"""Warn beyond this: mean elements lose accuracy over weeks (common practice)."""


@dataclass
class BudgetInputs:
    """Everything ``compute_budget`` needs.

    ``reference``: a time-scale name from ``physics.timescales.REFERENCE_NAMES`` (case-sensitive)
    or a ground clock's orbit source; ``frame``: None (automatic), "GCRS" or "BCRS";
    ``link_station``: a SurfaceClock whose light time and Shapiro delay the BCRS series carry.
    """

    source: object
    reference: object
    span: Span
    gravity: GravityModel = field(default_factory=GravityModel)
    series_step_s: float | None = None
    nominal_frequency_hz: float | None = None
    max_nodes: int = 5_000_000
    max_series_points: int = 200_000
    tol_fractional: float = DEFAULT_TOL_FRACTIONAL
    nodes_scale: float = 1.0  # > 1 shrinks the initial panels (convergence checks)
    frame: str | None = None
    link_station: object = None
    apply_eccentricity_correction: bool = True
    """The user segment removes -(2/c^2) r.v around the clock's own centre (where one is offered)."""


def initial_panel_s(source, nodes_scale: float = 1.0) -> float:
    """Length of the first panels, s: 1/PANELS_PER_PERIOD of the orbit, within [MIN, MAX]_PANEL_S."""
    period = source.period_s()
    base = MAX_PANEL_S if period is None else min(MAX_PANEL_S, period / PANELS_PER_PERIOD)
    return max(MIN_PANEL_S, base) / nodes_scale


def check_span_covers_an_orbit(src, span: Span) -> list[str]:
    """Warn when an Earth orbit's span is shorter than one orbital period: its J2 and tidal periodic
    terms (not removed as known bounded parts, unlike the eccentricity term) cannot be told apart
    from the secular line there; the fit phases its harmonics in over the first period."""
    period_s = src.period_s()
    earth_orbit = getattr(src, "frame", "GCRS") == "GCRS" and not src.is_surface
    if not earth_orbit or period_s is None or span.duration_s >= period_s:
        return []
    return [f"the span ({span.duration_s / 3600.0:.3g} h) is shorter than one orbit "
            f"({period_s / 3600.0:.3g} h): the periodic term cannot be separated from the mean rate, "
            "so the mean rate, the frequency preset and the periodic amplitudes are uncertain; use a "
            "span of at least one orbit (several for the harmonics)"]


def check_tle_epoch(src, span: Span) -> list[str]:
    """Refuse SGP4 propagation a year or more from the TLE epoch; warn beyond a month."""
    epoch = src.epoch() if hasattr(src, "epoch") else None
    if epoch is None or getattr(src, "kind", "") != "tle":
        return []
    e = float(span.seconds_after_start(epoch))  # epoch - start, s
    nearest = 0.0 if 0.0 <= e <= span.duration_s else min(abs(e), abs(e - span.duration_s))
    days = nearest / SECONDS_PER_DAY
    if days > TLE_MAX_EPOCH_DISTANCE_DAYS:
        raise PhysicsInputError(
            "start", span.start,
            f"the span lies {days:.0f} days from the TLE epoch; SGP4 mean elements are not meant to "
            f"be propagated that far (limit {TLE_MAX_EPOCH_DISTANCE_DAYS:.0f} days): use recent elements",
        )
    if days > TLE_WARN_EPOCH_DISTANCE_DAYS:
        return [f"the span lies {days:.0f} days from the TLE epoch: SGP4 positions degrade over weeks "
                "(drag, solar activity); treat the periodic part with care"]
    return []


def check_span(span: Span):
    if not span.duration_s >= MIN_SPAN_S:
        raise PhysicsInputError(
            "end", span.duration_s,
            f"the span of {span.duration_s:.3g} s is shorter than the {MIN_SPAN_S:g} s a budget needs",
        )
    jd0 = float(span.start.tdb)
    jd1 = jd0 + span.duration_s / SECONDS_PER_DAY
    if jd0 < DE421_FIRST_JD_TDB or jd1 > DE421_LAST_JD_TDB:
        raise PhysicsInputError(
            "end" if jd0 >= DE421_FIRST_JD_TDB else "start",
            span.start if jd0 < DE421_FIRST_JD_TDB else span.times(span.duration_s),
            "the span must lie inside the DE421 ephemeris (1899-07-30 to 2053-10-07) that "
            "supplies the Sun and Moon positions",
        )


SERIES_END_TOLERANCE_S = 1e-6
"""A series whose last step lands this close to the span end does not repeat the end time."""


def series_point_count(duration_s: float, step_s: float) -> int:
    """Exact number of output times of a series: 0, step, 2 step, ... and the span end."""
    steps = math.floor(duration_s / step_s)
    return steps + 1 + (1 if steps * step_s < duration_s - SERIES_END_TOLERANCE_S else 0)


def series_times_s(duration_s: float, step_s: float) -> np.ndarray:
    """The output times of a series, s after the span start (``series_point_count`` of them)."""
    n = math.floor(duration_s / step_s) + 1
    ts = np.arange(n) * float(step_s)
    if ts[-1] < duration_s - SERIES_END_TOLERANCE_S:
        ts = np.append(ts, duration_s)
    return ts


def check_series(inputs: BudgetInputs) -> int | None:
    """Points of the requested series (None: no series); refused above ``max_series_points``
    (callers estimate with ``series_point_count`` before any work: the same count)."""
    if not inputs.series_step_s:
        return None
    n_pts = series_point_count(inputs.span.duration_s, inputs.series_step_s)
    if n_pts > inputs.max_series_points:
        raise PhysicsInputError(
            "series_step_s", inputs.series_step_s,
            f"a step of {inputs.series_step_s} s gives {n_pts} series points, above the limit "
            f"of {inputs.max_series_points}",
        )
    return n_pts
