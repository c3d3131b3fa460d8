"""The drift budget of one clock over one span (DESIGN.md, "Budget outputs"); stops at the fit.

1. A frame (physics/frames/) gives the integrand g = y_clock - y_ref, term by term; adaptive
   Gauss-Legendre panels (physics/quadrature.py) integrate every term alongside the total.
2. The secular rate (physics/budget/fit.py): a line, jointly with orbital harmonics, fitted once
   the frame's bounded parts of known form (the eccentricity term, ...) are removed.
3. The periodic part, what the user-segment correction -(2/c^2) r.v leaves, the extremes
   (physics/budget/periodic.py), and the preset -y/(1 + y) (f_set = f0/(1 + y), IS-GPS-200).

The result is a ``BudgetResult`` in SI units; app/present/budget.py formats it.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..cancel import checkpoint
from ..constants import C2_M2_PER_S2
from ..environment import environment_for
from ..errors import PhysicsInputError
from ..extrema import refined_peak_to_peak
from ..frames.choose import build_frame
from ..quadrature import NodeBudgetExceeded, integrate
from ..threads import single_threaded_blas
from . import periodic as per
from .fit import fit_secular, harmonic_coefficients, trapezoid_weights
from .inputs import (
    BudgetInputs,
    check_series,
    check_span,
    check_span_covers_an_orbit,
    check_tle_epoch,
    initial_panel_s,
    series_times_s,
)
from .result import (
    BudgetResult,
    EccentricityCorrection,
    Integration,
    PeriodicPart,
    PositionTerm,
    Preset,
    Series,
)

ECCENTRICITY_FORMULA = "delta_t = -(2/c^2) r.v (TN36 eq. 10.10; IS-GPS-200 F e sqrt(A) sin E)"
NOT_OFFERED_FORMULA = ("not offered: a clock fixed on a body has no orbit of its own around a central body "
                       "(the host body's orbital term is removed before the secular fit instead)")


def _integrate(frame, inputs: BudgetInputs):
    src, span = inputs.source, inputs.span
    try:
        q = integrate(frame.rows, 0.0, span.duration_s, initial_panel_s(src, inputs.nodes_scale),
                      tol_fractional=inputs.tol_fractional, max_nodes=inputs.max_nodes,
                      breakpoints_s=src.panel_breaks_s(span) if hasattr(src, "panel_breaks_s") else None)
    except NodeBudgetExceeded as exc:
        raise PhysicsInputError("end", None, f"the span needs {exc.nodes_needed} quadrature nodes, above "
                                f"this service's limit of {exc.max_nodes}; shorten the span or split it",
                                ) from exc
    checkpoint()  # between the integration and the fits and fine grids
    if not np.all(np.isfinite(q.values[0])):
        raise PhysicsInputError("orbit", None, "the clock's rate is not finite at some nodes: check the "
                                "inputs for NaN, infinite or extreme values")
    return q


class _Figures(NamedTuple):
    """Extremes and amplitudes of the offset and its bounded parts (fine grid, refined)."""

    shift_s: float
    extreme_s: float
    extreme_t_s: float
    min_s: float
    max_s: float
    periodic: PeriodicPart
    ecc_amplitude_s: float
    residual_max_s: float
    residual_p2p_s: float
    residual_with_position_s: float | None


def _bounded_figures(q, frame, fit, ecc_part, span_s: float, period, offered: bool,
                     applied: bool) -> _Figures:
    """The periodic part, the eccentricity term and what the correction leaves, on the fine grid
    (refined between samples). In the BCRS the clock's own periodic part excludes the coordinate
    position term (and a TT-like reference's TDB - TT), reported on its own."""
    fine = per.FINE_POINTS_PER_PANEL
    t = q.fine_grid_s(fine)
    weights = trapezoid_weights(t)
    total = q.cumulative_on_fine_grid(fine, rows=[0])[0]
    ecc = ecc_part.on_grid(q, fine)
    line = fit.rate * (t - 0.5 * span_s)
    shift = per.weighted_mean(total - line, weights)
    periodic = total - line - shift
    bcrs = frame.name == "BCRS"
    position = frame.position_term_s(q, t) if bcrs else np.zeros_like(t)
    not_own = frame.not_the_clocks_own_s(q, t) if bcrs else np.zeros_like(t)
    own = periodic - (not_own - per.weighted_mean(not_own, weights))
    residual = own - (ecc - per.weighted_mean(ecc, weights) if applied else 0.0)
    harmonics = fit.raw_harmonic_coef_s if fit.harmonic_weight == 1.0 else None
    if harmonics is not None and bcrs:
        not_own_coef = harmonic_coefficients(t, not_own, span_s, period, fit.harmonics)
        # (the same harmonics unless this grid's conditioning dropped some: then from ``own`` alone)
        harmonics = harmonics - not_own_coef if len(not_own_coef) == len(harmonics) else None
    comps = per.components(own, t, period, harmonics, span_s)

    def periodic_at(ts):
        return q.cumulative_at(ts, rows=[0])[0] - fit.rate * ts

    def own_periodic_at(ts):
        return periodic_at(ts) - (frame.not_the_clocks_own_s(q, ts) if bcrs else 0.0)

    def residual_at(ts):
        return own_periodic_at(ts) - (ecc_part.offset_s(ts) if applied else 0.0)

    p2p = refined_peak_to_peak(periodic_at, t, periodic)
    own_p2p = refined_peak_to_peak(own_periodic_at, t, periodic - not_own)
    with_position = None
    if bcrs:
        kept = residual + (not_own - per.weighted_mean(not_own, weights))
        with_position = float(np.max(np.abs(kept - per.weighted_mean(kept, weights))))
    i_ext = int(np.argmax(np.abs(total)))
    return _Figures(
        shift, float(total[i_ext]), float(t[i_ext]), float(total.min()), float(total.max()),
        PeriodicPart(0.5 * own_p2p, own_p2p, comps[0].period_s if comps else None, comps,
                     per.half_peak_to_peak(position), 0.5 * p2p, p2p),
        0.5 * refined_peak_to_peak(ecc_part.offset_s, t, ecc) if offered else 0.0,
        float(np.max(np.abs(residual))), refined_peak_to_peak(residual_at, t, residual), with_position)


def preset_fractional(mean_fractional_rate: float) -> float:
    """-y/(1 + y): the fractional offset f_set/f0 - 1 that nulls a rate y (no 1/(1 + y) - 1 cancellation)."""
    return -mean_fractional_rate / (1.0 + mean_fractional_rate)


def compute_budget(inputs, reference=None, span=None, gravity=None, **options) -> BudgetResult:
    """The drift budget of ``inputs.source`` against ``inputs.reference`` over ``inputs.span``.

    Also ``compute_budget(source, reference, span, gravity=None, **options)``: the same with the
    ``BudgetInputs`` fields given directly (``gravity`` defaults to ``GravityModel()``).
    """
    if not isinstance(inputs, BudgetInputs):
        if span is None or reference is None:
            raise TypeError("compute_budget(source, reference, span) needs a reference and a Span")
        extra = {} if gravity is None else {"gravity": gravity}
        inputs = BudgetInputs(inputs, reference, span, **extra, **options)
    single_threaded_blas()
    span, src = inputs.span, inputs.source
    check_span(span)
    src.check_span(span)  # a table of states refuses a span outside its data before any work
    src.begin_evaluation()  # a source reused across budgets reports this one's figures only
    warnings = check_tle_epoch(src, span) + check_span_covers_an_orbit(src, span)
    n_series = check_series(inputs)
    env = environment_for(span)
    frame = build_frame(src, inputs.reference, inputs.gravity, span, env, inputs.frame)
    q = _integrate(frame, inputs)
    omitted = frame.omitted_terms()
    # The budget's precision, as it reports it: its integration tolerance, or the largest term it
    # leaves out (omitted_terms), whichever is larger. A source whose own errors exceed it (an
    # orbit table's interpolation, a suspect tabulated point) says so.
    precision = max([inputs.tol_fractional, *(t.size_fractional for t in omitted)])
    warnings = [*warnings, *src.budget_warnings(span, precision)]
    parts = frame.bounded_parts(q)
    ecc_part = parts[0]
    # The series gives the absolute eccentricity term -(2/c^2) r.v (IS-GPS-200), not the part's
    # offset from the span start: the part's start value, r.v(0) scaled.
    ecc_start_s = frame.eccentricity_start_s(q)
    period = src.period_s()
    fit = fit_secular(q, frame.term_names, parts, period)
    y_ref = frame.mean_reference_rate(fit.term_rates)
    mean_rate = fit.rate / (1.0 + y_ref)

    offered = getattr(frame, "offers_eccentricity_correction", True)
    applied = offered and inputs.apply_eccentricity_correction
    fig = _bounded_figures(q, frame, fit, ecc_part, span.duration_s, period, offered, applied)
    analytic = None
    if src.kind == "keplerian":
        analytic = 2.0 * np.sqrt(src.a_m * src.gm) * src.e / C2_M2_PER_S2

    checkpoint()
    series = None
    if n_series is not None:
        ts = series_times_s(span.duration_s, inputs.series_step_s)
        offset = q.cumulative_at(ts, rows=[0])[0]
        series = Series(ts, offset, offset - fit.rate * (ts - 0.5 * span.duration_s) - fig.shift_s,
                        ecc_part.offset_s(ts) + ecc_start_s,
                        frame.signal_path(ts, inputs.link_station) if frame.name == "BCRS" else None)

    included = [n for i, n in enumerate(frame.term_names) if np.any(q.values[1 + i] != 0.0)]
    model = {**frame.describe(included), "secular_fit": fit.description,
             "integration": f"adaptive Gauss-Legendre panels, {q.nodes_s.shape[1]} nodes each, "
             f"tolerance {inputs.tol_fractional:g} s/s"}
    f0 = inputs.nominal_frequency_hz
    return BudgetResult(
        span=span, frame=frame.name, reference=inputs.reference,
        mean_fractional_rate=float(mean_rate),
        terms_fractional={k: float(v / (1.0 + y_ref)) for k, v in fit.term_rates.items()},
        preset=Preset(float(preset_fractional(mean_rate)), f0,
                      None if f0 is None else float(f0 / (1.0 + mean_rate))),
        offset_at_end_s=float(q.edge_cumulative[0, -1]), offset_extreme_s=fig.extreme_s,
        offset_extreme_t_s=fig.extreme_t_s, offset_min_s=fig.min_s, offset_max_s=fig.max_s,
        periodic=fig.periodic,
        eccentricity_correction=EccentricityCorrection(
            fig.ecc_amplitude_s, fig.residual_max_s, fig.residual_p2p_s,
            None if analytic is None else float(analytic),
            ECCENTRICITY_FORMULA if offered else NOT_OFFERED_FORMULA, bool(offered), bool(applied),
            fig.residual_with_position_s),
        position_term=None if frame.name != "BCRS" else PositionTerm(
            fig.periodic.position_term_amplitude_s, frame.position_base),
        integration=Integration(q.error_estimate_s, q.node_count, int(len(q.edges_s) - 1),
                                q.nodes_s.shape[1], inputs.tol_fractional),
        model=model, omitted_terms=omitted, series=series, warnings=tuple(warnings),
        secular_rate_per_tt_s=float(fit.rate), orbital_period_s=period, integral=q,
        eccentricity_part=ecc_part,
    )
