"""A contact plan's physics results (passes, signal paths, sync simulation; SI, TT seconds since
the span start) -> the ``ContactPlanResponse`` data."""

from __future__ import annotations

import numpy as np
from taubudget.physics.budget import CAUTION

from .budget import PS_PER_S, US_PER_S, ns, ns_list, request_reference, us_per_day, utc, utc1
from .terms import RELATIVISTIC_OFFSET_WORDS

SIGNAL_POINTS = ("aos", "culmination", "los")

MODEL_NOTES = {
    "sync": "a sync resets the time offset (and, if asked, the frequency offset); the noise is "
    "taken to restart at each sync; the span start is a sync",
    "elevation": "geometric elevation above the geodetic horizon, no refraction",
    "signal_path": "downlink satellite -> station; GCRS light time with Shapiro delay; Sagnac "
    "2 omega A / c^2; one-way shift to first order in 1/c^2 with first-order Doppler",
}


ENVELOPE_POINTS = 1500
"""Grid samples of the k-sigma envelope in a contact plan's response (for figures), besides the
two sides of every sync; ``worst_error_ns`` comes from the full simulation grid."""


def envelope(sim, span) -> dict:
    """The k-sigma envelope |error| + k sigma for figures: thinned grid samples (the value just
    before each sync included) plus the value just after each sync, in time order."""
    n = sim.t_s.size
    keep = np.unique(np.concatenate([np.linspace(0, n - 1, min(n, ENVELOPE_POINTS)).round().astype(int),
                                     np.searchsorted(sim.t_s, sim.sync_times_s)]))
    t = np.concatenate([sim.t_s[keep], sim.sync_times_s])
    bound = np.concatenate([sim.bound_s[keep], sim.bound_after_sync_s])
    order = np.argsort(t, kind="stable")  # at a sync: the value before it, then after it
    return {"time_utc": utc(span, t[order]), "elapsed_s": t[order].tolist(),
            "bound_ns": ns_list(bound[order])}


def signal_points(path, span) -> dict:
    """The downlink at AOS, culmination and LOS (``physics.contacts.SignalPath`` of three points)."""
    times = utc(span, path.reception_s)
    return {
        n: {
            "time_utc": times[i],
            "range_km": float(path.range_m[i] / 1e3),
            "light_time_us": float(path.light_time_s[i] * US_PER_S),
            "sagnac_correction_ns": ns(path.sagnac_correction_s[i]),
            "shapiro_delay_ps": float(path.shapiro_delay_s[i] * PS_PER_S),
            "range_rate_m_per_s": float(path.range_rate_m_per_s[i]),
            "fractional_frequency_shift": float(path.fractional_frequency_shift[i]),
            "first_order_doppler_shift": float(path.first_order_doppler_shift[i]),
            "gravitational_shift": float(path.gravitational_shift[i]),
            "time_dilation_shift": float(path.time_dilation_shift[i]),
        }
        for i, n in enumerate(SIGNAL_POINTS)
    }


def _hours(t_s: float) -> str:
    return f"{t_s / 3600.0:.3g} h"


def _ordinal(n: int) -> str:
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"{n}{suffix}"


def recommendation_text(greedy, stride, k_sigma: float, budget_ns: float, span_s: float,
                        first_violation_utc: str | None) -> str:
    """The recommendation in words: how often to sync to keep the k-sigma envelope within budget."""
    keep = f"to keep {k_sigma:g}-sigma within {budget_ns:g} ns"
    if greedy.shortest_time_to_violation_s is None:
        return f"no sync needed within the {_hours(span_s)} span {keep}"
    if not greedy.feasible:
        return (f"the eligible contacts cannot keep {k_sigma:g}-sigma within {budget_ns:g} ns: the envelope "
                f"first exceeds it at {first_violation_utc} with no contact before it; sync at least every "
                f"{_hours(greedy.shortest_time_to_violation_s)} (add stations or relax the policy)")
    every = f"sync at least every {_hours(greedy.shortest_time_to_violation_s)}"
    if stride is not None:
        every += " / every pass" if stride == 1 else f" / every {_ordinal(stride)} eligible pass"
    return f"{every} {keep} ({len(greedy.candidate_indices)} syncs at the fewest)"


def contact_plan(req, span, passes, paths, off_aos_s, off_los_s, sync_idx, sync_t_s, sim, cand_idx, greedy,
                 stride, budget, clock, with_syncs_at_aos=None, candidate_times_s=None) -> dict:
    """The response: ``paths`` maps a pass index to its SignalPath; ``sim``/``greedy``/``stride`` are
    physics.contacts' sync simulation, greedy plan and largest stride; ``budget`` the BudgetResult;
    ``with_syncs_at_aos``: (deterministic, sigma, bound) at each AOS under the request's syncs."""
    used = set(sync_idx)
    pass_rows = []
    for i, p in enumerate(passes):
        sp = signal_points(paths[i], span)
        times = utc(span, [p.aos_s, p.los_s, p.culmination_s])
        pass_rows.append({
            "station": p.station,
            "aos_utc": times[0], "los_utc": times[1], "culmination_utc": times[2],
            "duration_s": p.duration_s, "max_elevation_deg": p.max_elevation_deg,
            "offset_at_aos_ns": ns(off_aos_s[i]), "offset_at_los_ns": ns(off_los_s[i]),
            "light_time_us": sp["culmination"]["light_time_us"],
            "sagnac_correction_ns": sp["culmination"]["sagnac_correction_ns"],
            "fractional_frequency_shift": sp["culmination"]["fractional_frequency_shift"],
            "aos_at_span_start": p.aos_at_span_start, "los_at_span_end": p.los_at_span_end,
            "used_for_sync": i in used,
            "signal_path": sp,
        })
        if with_syncs_at_aos is not None:
            pass_rows[-1]["error_at_aos_with_syncs_ns"] = ns(with_syncs_at_aos[0][i])
            pass_rows[-1]["bound_at_aos_with_syncs_ns"] = ns(with_syncs_at_aos[2][i])
    order = np.argsort(sync_t_s, kind="stable")
    sync_rows, prev = [], 0.0
    for pos, j in enumerate(order):
        i = sync_idx[j]
        t = float(sync_t_s[j])
        sync_rows.append({
            "time_utc": utc1(span, t), "station": passes[i].station, "pass_index": int(i),
            "error_before_sync_ns": ns(sim.error_before_sync_s[pos]),
            "sigma_before_sync_ns": ns(sim.sigma_before_sync_s[pos]),
            "bound_before_sync_ns": ns(sim.bound_before_sync_s[pos]),
            "time_since_previous_sync_s": t - prev,
        })
        prev = t
    before_sync = {row["pass_index"]: row["bound_before_sync_ns"] for row in sync_rows}
    for i, row in enumerate(pass_rows):
        row["bound_before_sync_ns"] = before_sync.get(i)
    greedy_passes = [cand_idx[c] for c in greedy.candidate_indices]
    first_violation = None if greedy.first_violation_s is None else utc1(span, greedy.first_violation_s)
    return {
        "passes": pass_rows,
        "syncs": sync_rows,
        "worst_error_ns": ns(sim.worst_bound_s),
        "worst_error_time_utc": utc1(span, sim.worst_bound_time_s),
        "worst_gap_s": sim.worst_gap_s,
        "envelope": envelope(sim, span),
        "meets_budget": sim.meets_budget,
        "time_error_budget_ns": req.time_error_budget_ns,
        "k_sigma": req.k_sigma,
        "recommendation": {
            "method": greedy.method,
            "meets_budget": greedy.feasible,
            "sync_count": len(greedy_passes),
            "sync_times_utc": utc(span, greedy.sync_times_s) if len(greedy_passes) else [],
            "pass_indices": greedy_passes,
            "first_violation_utc": first_violation,
            "largest_pass_stride_meeting_budget": stride,
            "stride_note": "every Nth eligible pass in time order, N = 1.. tried in turn",
            "max_time_between_syncs_s": greedy.shortest_time_to_violation_s,
            "summary": recommendation_text(greedy, stride, req.k_sigma, req.time_error_budget_ns,
                                           span.duration_s, first_violation),
        },
        "budget": {
            "mean_fractional_rate": budget.mean_fractional_rate,
            "mean_rate_us_per_day": us_per_day(budget.mean_fractional_rate),
            "frequency_preset_fractional": budget.preset.fractional,
            "periodic_amplitude_ns": ns(budget.periodic.amplitude_s),
        },
        "model": {
            "relativistic_offset": req.relativistic_offset,
            "relativistic_offset_description": RELATIVISTIC_OFFSET_WORDS[req.relativistic_offset],
            "clock": clock.name,
            "clock_h_alpha": {str(a): float(h) for a, h in clock.h_alpha.items()},
            "clock_drift_per_day": clock.drift_per_day,
            **MODEL_NOTES,
            "reference": request_reference(req.reference),
        },
        "start_utc": utc1(span, 0.0),
        "end_utc": utc1(span, span.duration_s),
        "span_s": span.duration_s,
        "caution": CAUTION,
    }
