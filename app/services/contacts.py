"""Contact plans: passes over ground stations, the time error between syncs, the recommended syncs.

``contact_plan_from_request`` returns the response JSON as a dict (planning estimate; carries
``caution``). Offsets are clock minus reference.
"""

from __future__ import annotations

import math

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
    eligible_windows,
    error_under_syncs,
    find_passes,
    fixed_interval_meeting_budget,
    greedy_syncs,
    largest_stride_meeting_budget,
    schedule_syncs,
    simulate_syncs,
    simulation_grid,
)
from taubudget.physics.contacts.residual_table import TabulatedResidual
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError

from ..present import contacts as present_contacts
from ..schemas.contacts import MAX_PASSES, MAX_SYNCS, ContactPlanRequest
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


def _check_sync_count(req: ContactPlanRequest, span_s: float) -> None:
    """Refuse, before any work, a fixed interval that could sync more than MAX_SYNCS times (a sync
    comes at least interval_s after the previous one, so at most span / interval_s of them)."""
    pol = req.sync_policy
    if pol.kind == "fixed_interval" and span_s / pol.interval_s > MAX_SYNCS:
        raise PhysicsInputError(
            "sync_policy.interval_s", pol.interval_s,
            f"over the {span_s:g} s span this interval allows up to {math.floor(span_s / pol.interval_s)} "
            f"syncs, above this service's limit of {MAX_SYNCS}; use interval_s >= {span_s / MAX_SYNCS:.6g} s "
            "or a shorter span")


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
    _check_sync_count(req, inputs.span.duration_s)
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
        with evaluated(req, inputs):  # emission is a light time before reception: maybe before the span
            path = downlink(src, sta, span, t_r, env, inputs.gravity)
        for j, i in enumerate(idx):
            sub = type(path)(**{f: getattr(path, f)[3 * j:3 * j + 3] for f in path.__dataclass_fields__})
            paths[i] = sub

    schedule = schedule_syncs(passes, policy)
    sync_t = schedule.times_s
    windows = eligible_windows(passes, policy)
    # The largest stride counts eligible passes, each at its sync_at point.
    cand_idx = eligible_passes(passes, policy)
    cand_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in cand_idx])
    grid = simulation_grid(span.duration_s, np.concatenate([sync_t, cand_t, windows.edges_s()]))
    # The searches below evaluate the residual on this grid many times: once, then looked up.
    residual = TabulatedResidual(residual, np.concatenate([grid, sync_t, cand_t, aos,
                                                          [0.0, span.duration_s]]))
    sim = simulate_syncs(sync_t, span.duration_s, err, residual, k, budget_s, grid)
    greedy = greedy_syncs(windows, span.duration_s, err, residual, k, budget_s, grid, max_syncs=MAX_SYNCS)
    stride = largest_stride_meeting_budget(cand_t, span.duration_s, err, residual, k, budget_s, grid_s=grid)
    interval = None
    if not sim.meets_budget and greedy.feasible and greedy.stopped_at_s is None \
            and greedy.shortest_time_to_violation_s is not None:
        interval = fixed_interval_meeting_budget(windows, span.duration_s, err, residual, k, budget_s,
                                                 greedy.shortest_time_to_violation_s, grid, MAX_SYNCS)

    # The same passes with the request's syncs applied (the free-running offsets above ignore them).
    with_syncs = error_under_syncs(aos, sync_t, err, residual, k)

    return present_contacts.contact_plan(
        req, span, passes, paths, off_aos, off_los, schedule.pass_indices.tolist(), sync_t, sim,
        windows.pass_index.tolist(), greedy, stride, budget, clock, with_syncs_at_aos=with_syncs,
        fixed_interval_s=interval, max_syncs=MAX_SYNCS)
