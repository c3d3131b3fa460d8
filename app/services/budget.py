"""A budget request -> physics inputs (orbit source, reference, span, gravity, limits) -> the budget.

No HTTP here: the CLI and the web routes both call ``budget_from_request``.
Physics input errors (``PhysicsInputError``) pass through; callers map them.
"""

from __future__ import annotations

from taubudget.physics import budget as budget_mod
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import SurfaceClock
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

from ..compute import Cost, check_cost, estimate_cost
from ..present.budget import budget as present_budget
from ..schemas import BudgetRequest, SurfaceClockIn
from ..settings import Settings, get_settings
from .clock import clock_error, clock_model
from .orbits import _time, build_source, ellipsoidal_height_m
from .request_terms import request_error, request_terms


def build_span(req: BudgetRequest, settings: Settings) -> Span:
    start = _time(req.start)
    if req.end is not None:
        # TT seconds (a UTC span across a leap second is one second longer in TT), from the two
        # parts of skyfield's Julian dates: a single float JD (~2.46e6 days) holds only ~40 us.
        duration_s = float(Span(start, 1.0).seconds_after_start(_time(req.end)))
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


def orbit_source(req: BudgetRequest):
    """The physics source of the request's orbit: Keplerian elements follow its zonal field, and a
    state vector or OPM without a force_model is propagated under its gravity block."""
    return build_source(req.orbit, gravity=req.gravity)


def _reference_source(req: BudgetRequest):
    reference = req.reference
    return build_source(reference, prefix="reference") if isinstance(reference, SurfaceClockIn) else reference


def planned_cost(req: BudgetRequest, settings: Settings, source, reference, span: Span) -> Cost:
    """The request's estimated cost (app/compute.py), checked against the settings before any work."""
    cost = estimate_cost(source, reference, span, req.series_step_s,
                         None if req.frame == "auto" else req.frame, clock=req.clock is not None,
                         link_station=req.link_station is not None)
    with request_terms((source, "orbit", req.orbit)):  # a state vector's epoch, an OPM's text
        check_cost(cost, settings, source, span, "end" if req.end is not None else "duration_days")
    return cost


def budget_inputs(req: BudgetRequest, settings: Settings | None = None,
                  source=None) -> budget_mod.BudgetInputs:
    """Physics inputs of a request; ``source``: the orbit source when the caller already built it
    (one object of an uploaded multi-object file), else built from ``req.orbit``."""
    settings = settings or get_settings()
    source = orbit_source(req) if source is None else source
    reference = _reference_source(req)
    span = build_span(req, settings)
    planned_cost(req, settings, source, reference, span)
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


def _link_station(req: BudgetRequest):
    st = req.link_station
    if st is None:
        return None
    if st.center != "earth":
        raise PhysicsInputError("link_station.center", st.center, "the link station must be on the Earth")
    try:
        return SurfaceClock(st.latitude_deg, st.longitude_deg, ellipsoidal_height_m(st, "link_station"),
                            st.geoid_undulation_m, st.orthometric_height_m)
    except PhysicsInputError as exc:
        raise request_error(exc, "link_station", st) from None


def evaluated(req: BudgetRequest, inputs: budget_mod.BudgetInputs):
    """A context in which errors raised while the sources are evaluated (an ephemeris that does not
    cover the span, a propagation too long) name the request block of the source that raised them."""
    return request_terms((inputs.source, "orbit", req.orbit), (inputs.reference, "reference", req.reference),
                         (inputs.link_station, "link_station", req.link_station))


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
    with evaluated(req, inputs):
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


def planned_cost_of(req: BudgetRequest, settings: Settings, source=None) -> Cost:
    """``planned_cost`` of a request, building what it needs (``source``: see ``budget_inputs``)."""
    source = orbit_source(req) if source is None else source
    return planned_cost(req, settings, source, _reference_source(req), build_span(req, settings))


def estimate_nodes(req: BudgetRequest, settings: Settings | None = None, source=None) -> int:
    """Cheap up-front estimate of the quadrature nodes one request needs, after checking the
    request's whole estimated cost (``planned_cost``): initial panels of
    ``physics.budget.initial_panel_s`` times ``physics.quadrature.NODES_PER_PANEL``; adaptive
    splitting adds more, which the per-request ``MAX_NODES`` still bounds. Raises
    ``PhysicsInputError`` for an unusable orbit or span, or a cost over a limit.
    """
    return planned_cost_of(req, settings or get_settings(), source).nodes


def budget_result(request, settings: Settings | None = None):
    """The typed ``physics.budget.BudgetResult`` of a request given as the API's JSON (a dict) or a
    ``BudgetRequest``: the same validation and limits as ``POST /v1/budgets``, no presentation.
    Raises pydantic's ``ValidationError`` or ``PhysicsInputError`` for unusable input."""
    req = request if isinstance(request, BudgetRequest) else BudgetRequest.model_validate(request)
    inputs = budget_inputs(req, settings)
    with evaluated(req, inputs):
        return budget_mod.compute_budget(inputs)
