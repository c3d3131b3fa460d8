"""A contact plan's physics results (passes, signal paths, sync simulation; SI, TT seconds since
the span start) -> the ``ContactPlanResponse`` data."""

from __future__ import annotations

from collections import Counter

import numpy as np
from taubudget.physics.budget import CAUTION

from .budget import PS_PER_S, US_PER_S, ns, ns_list, request_reference, us_per_day, utc, utc1
from .terms import RELATIVISTIC_OFFSET_WORDS

SIGNAL_POINTS = ("aos", "culmination", "los")

MODEL_NOTES = {
    "sync": "a sync resets the time offset (and, if asked, the frequency offset); the noise is "
    "taken to restart at each sync; the span start is a sync",
    "sync_policy": "a pass is a contact window from AOS to LOS; every_pass, every_nth_pass, min_duration "
    "and min_elevation sync once in each chosen eligible pass, at sync_at; fixed_interval syncs once "
    "interval_s has run since the last sync, at that instant if an eligible station is in view, else at "
    "the next eligible AOS, so a long pass holds a sync every interval_s; the recommendation may sync "
    "anywhere inside an eligible pass",
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


def _duration(t_s: float) -> str:
    """A run length in words: hours from an hour on, minutes from a minute on, else seconds."""
    if t_s >= 3600.0:
        return f"{t_s / 3600.0:.3g} h"
    if t_s >= 60.0:
        return f"{t_s / 60.0:.3g} min"
    return f"{t_s:.3g} s"


def _ordinal(n: int) -> str:
    suffix = "th" if 10 <= n % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(n % 10, "th")
    return f"{n}{suffix}"


def recommendation_text(greedy, stride, k_sigma: float, budget_ns: float, span_s: float, utc_of,
                        max_per_pass: int = 1, policy_kind: str | None = None, policy_meets: bool = True,
                        fixed_interval_s: float | None = None, max_syncs: int | None = None) -> str:
    """The recommendation in words: how often to sync to keep the k-sigma envelope within budget.

    ``greedy``: physics.contacts.GreedyPlan (syncs anywhere inside the eligible windows); ``utc_of``:
    TT s since the span start -> UTC text; ``max_per_pass``: most recommended syncs in one pass;
    ``policy_*``: the request's policy and whether it met the budget; ``fixed_interval_s``: a fixed
    interval checked to meet it (or None)."""
    keep = f"to keep {k_sigma:g}-sigma within {budget_ns:g} ns"
    run = greedy.shortest_time_to_violation_s
    if run is None:
        return f"no sync needed within the {_duration(span_s)} span {keep}"
    if not greedy.feasible:
        after = greedy.first_violation_after_sync_s or 0.0
        since = "the span start" if after == 0.0 else f"the sync at {utc_of(after)}"
        t_fail = greedy.first_violation_s
        crossing = f"at {utc_of(t_fail)}, {_duration(t_fail - after)} later"
        if greedy.violation_in_view:
            return (f"the clock cannot keep {k_sigma:g}-sigma within {budget_ns:g} ns by syncing at "
                    f"contacts: after {since} the envelope exceeds it {crossing}, while a station is in "
                    f"view, faster than this plan resolves ({greedy.time_resolution_s:.3g} s); relax the "
                    "budget or use a steadier clock")
        nxt = greedy.next_contact_s
        contact = ("with no eligible contact in between" if nxt is None or nxt > t_fail
                   else f"as the next eligible contact begins ({utc_of(nxt)}), too late to sync")
        return (f"the eligible contacts cannot keep {k_sigma:g}-sigma within {budget_ns:g} ns: after {since} "
                f"the envelope exceeds it {crossing}, {contact}; sync at least every {_duration(run)} (add "
                "stations or relax the policy)")
    every = f"sync at least every {_duration(run)}"
    if greedy.stopped_at_s is not None:
        return (f"{every} {keep}: over this span that takes more than {max_syncs} syncs, this service's "
                f"limit (the search stopped at {utc_of(greedy.stopped_at_s)})")
    if stride is not None:
        every += " / every pass" if stride == 1 else f" / every {_ordinal(stride)} eligible pass"
    count = len(greedy.candidate_indices)
    inside = f", up to {max_per_pass} in one pass" if max_per_pass > 1 else ""
    text = f"{every} {keep} ({count} syncs at the fewest{inside})"
    if not policy_meets and policy_kind is not None:
        once = " syncs once per pass and" if policy_kind != "fixed_interval" and max_per_pass > 1 else ""
        text += f"; the {policy_kind} policy{once} does not meet it"
        if fixed_interval_s is not None:
            text += f"; fixed_interval with interval_s {fixed_interval_s:g} s does"
    return text


def _per_pass(values_by_sync, pass_of_sync) -> dict:
    """Count and largest value of the syncs in each pass: {pass index: (count, largest)}."""
    out: dict = {}
    for i, v in zip(pass_of_sync, values_by_sync, strict=True):
        n, worst = out.get(i, (0, None))
        out[i] = (n + 1, v if worst is None else max(worst, v))
    return out


def _sync_list(span, times_s, pass_indices, passes) -> list[dict]:
    """Syncs in time order: UTC time, the station and pass that make each, the time since the
    previous sync (the span start for the first)."""
    t = np.asarray(times_s, dtype=float)
    since = np.diff(np.concatenate([[0.0], t]))
    return [{"time_utc": when, "station": passes[i].station, "pass_index": int(i),
             "time_since_previous_sync_s": d}
            for when, i, d in zip(utc(span, t) if t.size else [], pass_indices, since.tolist(), strict=True)]


def contact_plan(req, span, passes, paths, off_aos_s, off_los_s, sync_idx, sync_t_s, sim, window_pass_idx,
                 greedy, stride, budget, clock, with_syncs_at_aos=None, fixed_interval_s=None,
                 max_syncs: int | None = None) -> dict:
    """The response: ``paths`` maps a pass index to its SignalPath; ``sync_idx``/``sync_t_s``: the
    policy's syncs (the pass making each, its time; a pass may hold several); ``sim``/``greedy``/
    ``stride`` are physics.contacts' sync simulation, greedy plan (its candidate indices point into
    ``window_pass_idx``, the pass of each eligible window) and largest stride; ``budget`` the
    BudgetResult; ``with_syncs_at_aos``: (deterministic, sigma, bound) at each AOS under the
    request's syncs; ``fixed_interval_s``: a fixed interval checked to meet the budget, or None."""
    order = np.argsort(sync_t_s, kind="stable")
    sync_rows = _sync_list(span, [sync_t_s[j] for j in order], [sync_idx[j] for j in order], passes)
    for pos, row in enumerate(sync_rows):  # simulate_syncs' per-sync arrays follow the sorted times
        row.update({"error_before_sync_ns": ns(sim.error_before_sync_s[pos]),
                    "sigma_before_sync_ns": ns(sim.sigma_before_sync_s[pos]),
                    "bound_before_sync_ns": ns(sim.bound_before_sync_s[pos])})
    in_pass = _per_pass([r["bound_before_sync_ns"] for r in sync_rows], [r["pass_index"] for r in sync_rows])
    pass_rows = []
    for i, p in enumerate(passes):
        sp = signal_points(paths[i], span)
        times = utc(span, [p.aos_s, p.los_s, p.culmination_s])
        count, before = in_pass.get(i, (0, None))
        pass_rows.append({
            "station": p.station,
            "aos_utc": times[0], "los_utc": times[1], "culmination_utc": times[2],
            "duration_s": p.duration_s, "max_elevation_deg": p.max_elevation_deg,
            "offset_at_aos_ns": ns(off_aos_s[i]), "offset_at_los_ns": ns(off_los_s[i]),
            "light_time_us": sp["culmination"]["light_time_us"],
            "sagnac_correction_ns": sp["culmination"]["sagnac_correction_ns"],
            "fractional_frequency_shift": sp["culmination"]["fractional_frequency_shift"],
            "aos_at_span_start": p.aos_at_span_start, "los_at_span_end": p.los_at_span_end,
            "used_for_sync": count > 0,
            "sync_count": count,
            "bound_before_sync_ns": before,
            "signal_path": sp,
        })
        if with_syncs_at_aos is not None:
            pass_rows[-1]["error_at_aos_with_syncs_ns"] = ns(with_syncs_at_aos[0][i])
            pass_rows[-1]["bound_at_aos_with_syncs_ns"] = ns(with_syncs_at_aos[2][i])

    greedy_passes = [int(window_pass_idx[c]) for c in greedy.candidate_indices]
    rec_syncs = _sync_list(span, greedy.sync_times_s, greedy_passes, passes)
    per_pass = max(Counter(greedy_passes).values(), default=0)
    first_violation = None if greedy.first_violation_s is None else utc1(span, greedy.first_violation_s)
    after = greedy.first_violation_after_sync_s
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
            "meets_budget": greedy.feasible and greedy.stopped_at_s is None,
            "sync_count": len(greedy_passes),
            "sync_times_utc": [r["time_utc"] for r in rec_syncs],
            "pass_indices": greedy_passes,
            "syncs": rec_syncs,
            "max_syncs_in_one_pass": per_pass,
            "first_violation_utc": first_violation,
            "first_violation_after_sync_utc": None if first_violation is None else utc1(span, after or 0.0),
            "stopped_at_utc": None if greedy.stopped_at_s is None else utc1(span, greedy.stopped_at_s),
            "time_resolution_s": greedy.time_resolution_s,
            "largest_pass_stride_meeting_budget": stride,
            "stride_note": "every Nth eligible pass in time order, N = 1.. tried in turn",
            "max_time_between_syncs_s": greedy.shortest_time_to_violation_s,
            "fixed_interval_s_meeting_budget": fixed_interval_s,
            "summary": recommendation_text(
                greedy, stride, req.k_sigma, req.time_error_budget_ns, span.duration_s,
                lambda t: utc1(span, t), per_pass, req.sync_policy.kind, sim.meets_budget, fixed_interval_s,
                max_syncs),
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
