"""Contact plans: passes over ground stations, the time error between syncs, the recommended syncs.

``contact_plan_from_request`` returns the response JSON as a dict (planning estimate; carries
``caution``). Offsets are clock minus reference.
"""

from __future__ import annotations

import numpy as np
from taubudget.physics.budget import CAUTION, compute_budget
from taubudget.physics.clock import ClockModel
from taubudget.physics.contacts import (
    GroundStation,
    SyncPolicy,
    clock_error_model,
    contact_time_s,
    downlink,
    eligible_passes,
    find_passes,
    greedy_syncs,
    largest_stride_meeting_budget,
    select_sync_passes,
    simulate_syncs,
    simulation_grid,
)
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError

from ..schemas.contacts import MAX_PASSES, ContactPlanRequest
from ..settings import Settings, get_settings
from .budget import budget_inputs
from .clock import clock_model


def _stations(req: ContactPlanRequest) -> list[GroundStation]:
    return [GroundStation(s.name, s.latitude_deg, s.longitude_deg, s.height_m, s.elevation_mask_deg,
                          s.geoid_undulation_m) for s in req.stations]


def _residual_fn(budget, which: str):
    if which == "after_correction":
        return budget.after_correction_s
    if which == "raw":
        return lambda t: budget.offset_s(np.atleast_1d(np.asarray(t, dtype=float)))
    return budget.after_preset_s


def _signal_points(path, span) -> dict:
    names = ("aos", "culmination", "los")
    utc = span.utc_iso(path.reception_s)
    return {
        n: {
            "time_utc": utc[i],
            "range_km": float(path.range_m[i] / 1e3),
            "light_time_us": float(path.light_time_s[i] * 1e6),
            "sagnac_correction_ns": float(path.sagnac_correction_s[i] * 1e9),
            "shapiro_delay_ps": float(path.shapiro_delay_s[i] * 1e12),
            "range_rate_m_per_s": float(path.range_rate_m_per_s[i]),
            "fractional_frequency_shift": float(path.fractional_frequency_shift[i]),
            "first_order_doppler_shift": float(path.first_order_doppler_shift[i]),
            "gravitational_shift": float(path.gravitational_shift[i]),
            "time_dilation_shift": float(path.time_dilation_shift[i]),
        }
        for i, n in enumerate(names)
    }


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
    budget = compute_budget(inputs)
    span, src = inputs.span, inputs.source
    env = environment_for(span)
    stations = _stations(req)
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

    paths: dict[int, dict] = {}
    for k_sta, sta in enumerate(stations):
        idx = [i for i, p in enumerate(passes) if p.station_index == k_sta]
        if not idx:
            continue
        t_r = np.concatenate([[passes[i].aos_s, passes[i].culmination_s, passes[i].los_s] for i in idx])
        path = downlink(src, sta, span, t_r, env, inputs.gravity)
        for j, i in enumerate(idx):
            sub = type(path)(**{f: getattr(path, f)[3 * j:3 * j + 3] for f in path.__dataclass_fields__})
            paths[i] = _signal_points(sub, span)

    sync_idx = select_sync_passes(passes, policy)
    sync_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in sync_idx])
    cand_idx = eligible_passes(passes, policy)
    cand_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in cand_idx])
    grid = simulation_grid(span.duration_s, np.concatenate([sync_t, cand_t]))
    sim = simulate_syncs(sync_t, span.duration_s, err, residual, k, budget_s, grid)
    greedy = greedy_syncs(cand_t, span.duration_s, err, residual, k, budget_s, grid)
    stride = largest_stride_meeting_budget(cand_t, span.duration_s, err, residual, k, budget_s, grid_s=grid)

    used = set(sync_idx)
    pass_rows = []
    for i, p in enumerate(passes):
        sp = paths[i]
        times = span.utc_iso([p.aos_s, p.los_s, p.culmination_s])
        pass_rows.append({
            "station": p.station,
            "aos_utc": times[0], "los_utc": times[1], "culmination_utc": times[2],
            "duration_s": p.duration_s, "max_elevation_deg": p.max_elevation_deg,
            "offset_at_aos_ns": float(off_aos[i] * 1e9), "offset_at_los_ns": float(off_los[i] * 1e9),
            "light_time_us": sp["culmination"]["light_time_us"],
            "sagnac_correction_ns": sp["culmination"]["sagnac_correction_ns"],
            "fractional_frequency_shift": sp["culmination"]["fractional_frequency_shift"],
            "aos_at_span_start": p.aos_at_span_start, "los_at_span_end": p.los_at_span_end,
            "used_for_sync": i in used,
            "signal_path": sp,
        })
    order = np.argsort(sync_t, kind="stable")
    sync_rows, prev = [], 0.0
    for pos, j in enumerate(order):
        i = sync_idx[j]
        t = float(sync_t[j])
        sync_rows.append({
            "time_utc": span.utc_iso(t)[0], "station": passes[i].station, "pass_index": int(i),
            "error_before_sync_ns": float(sim.error_before_sync_s[pos] * 1e9),
            "sigma_before_sync_ns": float(sim.sigma_before_sync_s[pos] * 1e9),
            "bound_before_sync_ns": float(sim.bound_before_sync_s[pos] * 1e9),
            "time_since_previous_sync_s": t - prev,
        })
        prev = t
    greedy_passes = [cand_idx[c] for c in greedy.candidate_indices]
    return {
        "passes": pass_rows,
        "syncs": sync_rows,
        "worst_error_ns": sim.worst_bound_s * 1e9,
        "worst_error_time_utc": span.utc_iso(sim.worst_bound_time_s)[0],
        "worst_gap_s": sim.worst_gap_s,
        "meets_budget": sim.meets_budget,
        "time_error_budget_ns": req.time_error_budget_ns,
        "k_sigma": k,
        "recommendation": {
            "method": greedy.method,
            "meets_budget": greedy.feasible,
            "sync_count": len(greedy_passes),
            "sync_times_utc": span.utc_iso(greedy.sync_times_s) if len(greedy_passes) else [],
            "pass_indices": greedy_passes,
            "first_violation_utc": None if greedy.first_violation_s is None
            else span.utc_iso(greedy.first_violation_s)[0],
            "largest_pass_stride_meeting_budget": stride,
            "stride_note": "every Nth eligible pass in time order, N = 1.. tried in turn",
        },
        "budget": {
            "mean_fractional_rate": budget.data["mean_fractional_rate"],
            "mean_rate_us_per_day": budget.data["mean_rate_us_per_day"],
            "frequency_preset_fractional": budget.data["frequency_preset_fractional"],
            "periodic_amplitude_ns": budget.data["periodic"]["amplitude_ns"],
        },
        "model": {
            "relativistic_offset": req.relativistic_offset,
            "clock": clock.name,
            "clock_h_alpha": {str(a): float(h) for a, h in clock.h_alpha.items()},
            "clock_drift_per_day": clock.drift_per_day,
            "sync": "a sync resets the time offset (and, if asked, the frequency offset); the noise is "
            "taken to restart at each sync; the span start is a sync",
            "elevation": "geometric elevation above the geodetic horizon, no refraction",
            "signal_path": "downlink satellite -> station; GCRS light time with Shapiro delay; Sagnac "
            "2 omega A / c^2; one-way shift to first order in 1/c^2 with first-order Doppler",
            "reference": req.reference if isinstance(req.reference, str) else req.reference.model_dump(),
        },
        "start_utc": span.utc_iso(0.0)[0],
        "end_utc": span.utc_iso(span.duration_s)[0],
        "span_s": span.duration_s,
        "caution": CAUTION,
    }
