"""Contact plans: passes over ground stations, the time error between syncs, the recommended syncs.

``contact_plan_from_request`` returns the response JSON as a dict (planning estimate; carries
``caution``). Offsets are clock minus reference.
"""

from __future__ import annotations

import numpy as np
from taubudget.physics.budget import compute_budget
from taubudget.physics.clock import ClockModel
from taubudget.physics.contacts import (
    GroundStation,
    SyncPolicy,
    clock_error_model,
    contact_time_s,
    downlink,
    eligible_passes,
    error_under_syncs,
    find_passes,
    greedy_syncs,
    largest_stride_meeting_budget,
    select_sync_passes,
    simulate_syncs,
    simulation_grid,
)
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError

from ..present import contacts as present_contacts
from ..schemas.contacts import MAX_PASSES, ContactPlanRequest
from ..settings import Settings, get_settings
from .budget import budget_inputs, evaluated
from .clock import clock_model
from .request_terms import request_error


def _station(s, i: int) -> GroundStation:
    try:
        return GroundStation(s.name, s.latitude_deg, s.longitude_deg, s.height_m, s.elevation_mask_deg,
                             s.geoid_undulation_m)
    except PhysicsInputError as exc:
        raise request_error(exc, f"stations.{i}", s) from None


def _stations(req: ContactPlanRequest) -> list[GroundStation]:
    return [_station(s, i) for i, s in enumerate(req.stations)]


def _residual_fn(budget, which: str):
    if which == "after_correction":
        return budget.after_correction_s
    if which == "raw":
        return lambda t: budget.offset_s(np.atleast_1d(np.asarray(t, dtype=float)))
    return budget.after_preset_s


def contact_plan_from_request(req: ContactPlanRequest, settings: Settings | None = None) -> dict:
    """Compute the contact-plan JSON for one request (planning estimate; carries ``caution``)."""
    settings = settings or get_settings()
    inputs = budget_inputs(req, settings)
    if getattr(inputs.source, "frame", "GCRS") != "GCRS":
        raise PhysicsInputError(
            "orbit.center", getattr(req.orbit, "center", None),
            "ground contacts are planned for Earth-centred orbits (Keplerian around the Earth, TLE, "
            "state vectors and Earth-orbit files)",
        )
    inputs.series_step_s = None  # the plan does not need the budget's series
    stations = _stations(req)
    with evaluated(req, inputs):
        budget = compute_budget(inputs)
        span, src = inputs.span, inputs.source
        env = environment_for(span)
        passes = find_passes(src, span, stations, env.orientation)
    if len(passes) > MAX_PASSES:
        raise PhysicsInputError("end", None, f"the span has {len(passes)} passes, above this service's limit "
                                f"of {MAX_PASSES}; shorten the span or use fewer stations")

    clock = clock_model(req.clock) if req.clock is not None else ClockModel(name="ideal")
    pol = req.sync_policy
    err = clock_error_model(clock.h_alpha, clock.drift_per_day, clock.initial_fractional_frequency,
                            clock.initial_time_offset_s, clock.f_h_hz, pol.reestimate_frequency,
                            pol.frequency_residual_fractional)
    residual = _residual_fn(budget, req.relativistic_offset)
    policy = SyncPolicy(pol.kind, pol.every_n, pol.min_duration_s, pol.min_elevation_deg, pol.interval_s,
                        pol.sync_at)
    budget_s = req.time_error_budget_ns * 1e-9
    k = req.k_sigma

    # Free-running offset at AOS and LOS: relativistic part plus the clock's deterministic part.
    aos = np.array([p.aos_s for p in passes])
    los = np.array([p.los_s for p in passes])

    def free_running(t):
        if t.size == 0:
            return t
        return residual(t) + err(t, np.zeros_like(t))[0]

    off_aos, off_los = free_running(aos), free_running(los)

    paths: dict = {}
    for k_sta, sta in enumerate(stations):
        idx = [i for i, p in enumerate(passes) if p.station_index == k_sta]
        if not idx:
            continue
        t_r = np.concatenate([[passes[i].aos_s, passes[i].culmination_s, passes[i].los_s] for i in idx])
        path = downlink(src, sta, span, t_r, env, inputs.gravity)
        for j, i in enumerate(idx):
            sub = type(path)(**{f: getattr(path, f)[3 * j:3 * j + 3] for f in path.__dataclass_fields__})
            paths[i] = sub

    sync_idx = select_sync_passes(passes, policy)
    sync_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in sync_idx])
    cand_idx = eligible_passes(passes, policy)
    cand_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in cand_idx])
    grid = simulation_grid(span.duration_s, np.concatenate([sync_t, cand_t]))
    sim = simulate_syncs(sync_t, span.duration_s, err, residual, k, budget_s, grid)
    greedy = greedy_syncs(cand_t, span.duration_s, err, residual, k, budget_s, grid)
    stride = largest_stride_meeting_budget(cand_t, span.duration_s, err, residual, k, budget_s, grid_s=grid)

    # The same passes with the request's syncs applied (the free-running offsets above ignore them).
    with_syncs = error_under_syncs(aos, sync_t, err, residual, k)

    return present_contacts.contact_plan(
        req, span, passes, paths, off_aos, off_los, sync_idx, sync_t, sim, cand_idx, greedy, stride, budget,
        clock, with_syncs_at_aos=with_syncs, candidate_times_s=cand_t)
