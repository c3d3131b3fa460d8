"""Turn a validated request into physics inputs, run the budget, return plain data.

No HTTP here: the CLI and the web routes both call ``budget_from_request``.
Physics input errors (``PhysicsInputError``) pass through; callers map them.
"""

from __future__ import annotations

from physics import budget as budget_mod
from physics.constants import SECONDS_PER_DAY
from physics.ephemeris import timescale
from physics.errors import PhysicsInputError
from physics.orbits import KeplerianOrbit, SurfaceClock, TleOrbit
from physics.rate import GravityModel
from physics.span import Span

from .schemas import BudgetRequest, KeplerianOrbitIn, SurfaceClockIn, TleOrbitIn
from .settings import Settings, get_settings


def _time(dt):
    return timescale().from_datetime(dt)


def build_source(orbit, prefix: str = "orbit"):
    ts = timescale()
    if isinstance(orbit, KeplerianOrbitIn):
        return KeplerianOrbit(
            _time(orbit.epoch), orbit.semi_major_axis_km * 1e3, orbit.eccentricity,
            orbit.inclination_deg, orbit.ra_of_asc_node_deg, orbit.arg_of_pericenter_deg,
            orbit.mean_anomaly_deg, j2_secular=orbit.j2_secular,
        )
    if isinstance(orbit, TleOrbitIn):
        return TleOrbit(orbit.line1, orbit.line2, ts, orbit.name)
    if isinstance(orbit, SurfaceClockIn):
        return SurfaceClock(
            orbit.latitude_deg, orbit.longitude_deg, orbit.height_m,
            orbit.geoid_undulation_m, orbit.orthometric_height_m, field_prefix=prefix,
        )
    raise TypeError(f"unsupported orbit {type(orbit).__name__}")  # pragma: no cover


def build_span(req: BudgetRequest, settings: Settings) -> Span:
    start = _time(req.start)
    if req.end is not None:
        duration_s = (req.end - req.start).total_seconds()
        # TT seconds: UTC spans that cross a leap second are one second longer in TT.
        duration_s = float((_time(req.end).tt - start.tt) * SECONDS_PER_DAY)
        field = "end"
    else:
        duration_s = req.duration_days * SECONDS_PER_DAY
        field = "duration_days"
    days = duration_s / SECONDS_PER_DAY
    if days > settings.MAX_SPAN_DAYS:
        raise PhysicsInputError(
            field, round(days, 6),
            f"the span of {days:.3f} days exceeds this service's limit of {settings.MAX_SPAN_DAYS:g} days",
        )
    return Span(start, duration_s)


def budget_inputs(req: BudgetRequest, settings: Settings | None = None) -> budget_mod.BudgetInputs:
    settings = settings or get_settings()
    source = build_source(req.orbit)
    reference = req.reference
    if isinstance(reference, SurfaceClockIn):
        reference = build_source(reference, prefix="reference")
    span = build_span(req, settings)
    if req.series_step_s is not None:
        points = span.duration_s / req.series_step_s
        if points > settings.MAX_SERIES_POINTS:
            raise PhysicsInputError(
                "series_step_s", req.series_step_s,
                f"a step of {req.series_step_s:g} s over the span gives {points:.0f} series points, "
                f"above this service's limit of {settings.MAX_SERIES_POINTS}",
            )
    g = req.gravity
    return budget_mod.BudgetInputs(
        source=source, reference=reference, span=span,
        gravity=GravityModel(g.earth_zonal_degree, g.sun, g.moon),
        series_step_s=req.series_step_s, nominal_frequency_hz=req.nominal_frequency_hz,
        max_nodes=settings.MAX_NODES, max_series_points=settings.MAX_SERIES_POINTS,
    )


def budget_from_request(req: BudgetRequest, settings: Settings | None = None) -> dict:
    """Compute the budget JSON for one request."""
    inputs = budget_inputs(req, settings)
    out = budget_mod.compute_budget(inputs).to_dict()
    out["reference"] = req.reference if isinstance(req.reference, str) else req.reference.model_dump()
    out["start_utc"] = inputs.span.utc_iso(0.0)[0]
    out["end_utc"] = inputs.span.utc_iso(inputs.span.duration_s)[0]
    out["span_s"] = inputs.span.duration_s
    return out


# --- Helpers for batches (additive) ----------------------------------------------------

_SPAN_KEYS = ("end", "duration_days")


def merge_item(defaults: dict, item: dict) -> dict:
    """One batch item over the batch defaults, per top-level key; ``id`` is removed.

    An item that names ``end`` or ``duration_days`` drops both from the defaults, so a
    default duration and an item's own end do not collide.
    """
    base = dict(defaults)
    if any(k in item for k in _SPAN_KEYS):
        for k in _SPAN_KEYS:
            base.pop(k, None)
    base.update(item)
    base.pop("id", None)
    return base


def estimate_nodes(req: BudgetRequest, settings: Settings | None = None) -> int:
    """Cheap up-front estimate of the quadrature nodes one request needs.

    The integrator starts with panels of half an orbital period (at most
    ``physics.budget.MAX_PANEL_S``, at least ``MIN_PANEL_S``) and
    ``physics.quadrature.NODES_PER_PANEL`` nodes each; adaptive splitting near a
    high-eccentricity perigee adds more, which the per-request ``MAX_NODES`` still
    bounds. Raises ``PhysicsInputError`` for an unusable orbit or span.
    """
    import math

    from physics.budget import MAX_PANEL_S, MIN_PANEL_S
    from physics.quadrature import NODES_PER_PANEL

    settings = settings or get_settings()
    source = build_source(req.orbit)
    span = build_span(req, settings)
    period = source.period_s()
    panel = MAX_PANEL_S if period is None else min(MAX_PANEL_S, period / 2.0)
    panel = max(MIN_PANEL_S, panel)
    return NODES_PER_PANEL * max(1, math.ceil(span.duration_s / panel))
