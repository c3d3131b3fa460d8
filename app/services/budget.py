"""A budget request -> physics inputs (orbit source, reference, span, gravity, limits) -> the budget.

No HTTP here: the CLI and the web routes both call ``budget_from_request``.
Physics input errors (``PhysicsInputError``) pass through; callers map them.
"""

from __future__ import annotations

import math

from taubudget.physics import budget as budget_mod
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import SurfaceClock
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

from ..present.budget import budget as present_budget
from ..schemas import BudgetRequest, SurfaceClockIn
from ..settings import Settings, get_settings
from .clock import clock_error, clock_model
from .orbits import _time, build_source


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
    if not duration_s >= budget_mod.MIN_SPAN_S:
        raise PhysicsInputError(
            field, duration_s / SECONDS_PER_DAY if field == "duration_days" else req.end.isoformat(),
            f"the span of {duration_s:.3g} s is shorter than the {budget_mod.MIN_SPAN_S:g} s a budget needs",
        )
    if days > settings.MAX_SPAN_DAYS:
        raise PhysicsInputError(
            field, round(days, 6),
            f"the span of {days:.3f} days exceeds this service's limit of {settings.MAX_SPAN_DAYS:g} days",
        )
    return Span(start, duration_s)


def budget_inputs(req: BudgetRequest, settings: Settings | None = None,
                  source=None) -> budget_mod.BudgetInputs:
    """Physics inputs of a request; ``source``: the orbit source when the caller already built it
    (one object of an uploaded multi-object file), else built from ``req.orbit``."""
    settings = settings or get_settings()
    if source is None:
        source = build_source(req.orbit, zonal_degree=req.gravity.earth_zonal_degree)
    reference = req.reference
    if isinstance(reference, SurfaceClockIn):
        reference = build_source(reference, prefix="reference")
    span = build_span(req, settings)
    _check_numerical_cost(source, span, settings)
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
        frame=None if req.frame == "auto" else req.frame,
        link_station=_link_station(req),
        apply_eccentricity_correction=req.apply_eccentricity_correction,
    )


def _check_numerical_cost(source, span: Span, settings: Settings):
    """Refuse up front a numerical propagation longer than MAX_NUMERICAL_REVOLUTIONS orbits,
    counted from the state's epoch to the far end of the span (the integrator covers both)."""
    from taubudget.physics.orbits import NumericalOrbit

    if not isinstance(source, NumericalOrbit):
        return
    revolutions = source.propagation_revolutions(span)
    if revolutions > settings.MAX_NUMERICAL_REVOLUTIONS:
        in_span = span.duration_s / source.period_s()
        to_span = revolutions - in_span
        prefix = source.field_prefix
        field, value = ((f"{prefix}.epoch", source.describe()["epoch_utc"]) if to_span > in_span
                        else ("end", round(span.duration_s / SECONDS_PER_DAY, 6)))
        raise PhysicsInputError(
            field, value,
            f"a state-vector orbit is integrated numerically from its epoch: an estimated "
            f"{revolutions:.0f} revolutions ({to_span:.0f} from the epoch to the span, {in_span:.0f} "
            f"over it), above this service's limit of {settings.MAX_NUMERICAL_REVOLUTIONS} "
            "(TAUBUDGET_MAX_NUMERICAL_REVOLUTIONS); give a state nearer the span, shorten the span, "
            "or give mean elements (TLE/OMM)",
        )


def _link_station(req: BudgetRequest):
    st = req.link_station
    if st is None:
        return None
    if st.center != "earth":
        raise PhysicsInputError("link_station.center", st.center, "the link station must be on the Earth")
    return SurfaceClock(st.latitude_deg, st.longitude_deg, st.height_m, st.geoid_undulation_m,
                        st.orthometric_height_m, field_prefix="link_station")


def budget_from_request(req: BudgetRequest, settings: Settings | None = None, source=None) -> dict:
    """Compute the budget JSON for one request, a ``BudgetRequest`` or the API's JSON as a dict
    (``source``: see ``budget_inputs``)."""
    if not isinstance(req, BudgetRequest):
        req = BudgetRequest.model_validate(req)
    inputs = budget_inputs(req, settings, source)
    # Refuse an unusable clock block before the integration runs, and build its model once.
    model = clock_model(req.clock) if req.clock is not None else None
    if model is None and req.monte_carlo_runs is not None:
        raise PhysicsInputError("monte_carlo_runs", req.monte_carlo_runs,
                                "a Monte Carlo exceedance needs a 'clock' block to simulate")
    if model is None and req.time_error_budget_ns is not None:
        raise PhysicsInputError("time_error_budget_ns", req.time_error_budget_ns,
                                "a time-error budget needs a 'clock' block to compare against")
    if req.monte_carlo_runs is not None and req.time_error_budget_ns is None:
        raise PhysicsInputError("monte_carlo_runs", req.monte_carlo_runs,
                                "a Monte Carlo exceedance needs time_error_budget_ns")
    result = budget_mod.compute_budget(inputs)
    out = present_budget(result, req.reference)
    if model is not None:
        out["clock_error"] = clock_error(req, result, model)
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


def estimate_nodes(req: BudgetRequest, settings: Settings | None = None, source=None) -> int:
    """Cheap up-front estimate of the quadrature nodes one request needs.

    The integrator starts with panels of ``physics.budget.initial_panel_s`` (a fraction
    of the orbital period within the panel limits) and
    ``physics.quadrature.NODES_PER_PANEL`` nodes each; adaptive splitting near a
    high-eccentricity perigee adds more, which the per-request ``MAX_NODES`` still
    bounds. Raises ``PhysicsInputError`` for an unusable orbit or span.
    """
    from taubudget.physics.budget import initial_panel_s
    from taubudget.physics.quadrature import NODES_PER_PANEL

    settings = settings or get_settings()
    if source is None:
        source = build_source(req.orbit, zonal_degree=req.gravity.earth_zonal_degree)
    span = build_span(req, settings)
    return NODES_PER_PANEL * max(1, math.ceil(span.duration_s / initial_panel_s(source)))


def budget_result(request, settings: Settings | None = None):
    """The typed ``physics.budget.BudgetResult`` of a request given as the API's JSON (a dict) or a
    ``BudgetRequest``: the same validation and limits as ``POST /v1/budgets``, no presentation.
    Raises pydantic's ``ValidationError`` or ``PhysicsInputError`` for unusable input."""
    req = request if isinstance(request, BudgetRequest) else BudgetRequest.model_validate(request)
    return budget_mod.compute_budget(budget_inputs(req, settings))
