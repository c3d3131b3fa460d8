"""The oscillator's figures (physics.timing_budget / physics.clock results, SI) -> the
``clock_error`` block of a budget response."""

from __future__ import annotations

import math

import numpy as np

from .budget import ns, ns_list, utc
from .terms import RELATIVISTIC_OFFSET_WORDS

PRESET_LABEL = "typical values, replace with your unit's data"

CLOCK_NOTE = (
    "Time error after a synchronisation at the span start: the relativistic residual plus a "
    "Gaussian power-law noise model with ageing. Real clocks also show steps, frequency jumps, "
    "temperature and radiation effects that the model lacks, so the k-sigma bound is a planning "
    "figure, not a guarantee. Flicker FM uses the t sigma_y(t) approximation (optimistic by ~20%)."
)

EXCEEDANCE_METHOD = ("Kasdin & Walter (1992) power-law noise, sampled at step_s; the white and flicker "
                     "PM terms see the step's Nyquist bandwidth")


def clock_model(c, model) -> dict:
    """The ``clock_model`` block: where the noise figures came from, and the figures."""
    from taubudget.physics.clock import NOISE_NAMES, PRESETS

    if c.preset is not None:
        source, label = "preset", f"{PRESET_LABEL}: {PRESETS[c.preset].description}"
    elif c.h_alpha is not None:
        source, label = "h_alpha", "the user's power-law coefficients"
    else:
        source, label = "adev_points", "power-law fit to the user's Allan deviation points"
    fit = None
    if model.fit is not None:
        f = model.fit
        fit = {"tau_s": f.tau_s.tolist(), "adev": f.adev.tolist(), "adev_fit": f.adev_fit.tolist(),
               "relative_residual": f.relative_residual.tolist(),
               "rms_relative_residual": float(f.rms_relative_residual)}
    return {
        "source": source, "name": model.name, "label": label,
        "h_alpha": {NOISE_NAMES[int(a)]: float(h) for a, h in sorted(model.h_alpha.items(), reverse=True)},
        "drift_per_day": float(model.drift_per_day),
        "initial_fractional_frequency": float(model.initial_fractional_frequency),
        "initial_time_offset_ns": ns(model.initial_time_offset_s),
        "f_h_hz": model.f_h_hz, "fit": fit,
    }


def exceedance(est, seed: int, step_s: float, horizon_s: float) -> dict:
    first = est.first_exceedance_s[np.isfinite(est.first_exceedance_s)]
    return {
        "probability": est.probability,
        "standard_error": est.standard_error,
        "runs": est.n_realisations,
        "exceeded": est.n_exceeded,
        "seed": seed,
        "step_s": step_s,
        "horizon_s": horizon_s,
        "median_first_exceedance_s": float(np.median(first)) if first.size else None,
        "method": EXCEEDANCE_METHOD,
    }


def free_running_basis(found, residual_name: str) -> str:
    """One sentence on how max_free_running_s was found (inside the span, or past it)."""
    days = found.span_s / 86_400.0
    if found.continuation is None:
        return (f"found within the {days:g}-day span with the integrated relativistic residual "
                f"({residual_name})")
    c = found.continuation
    fit = "a fitted line" + (f" and {c.harmonics} harmonics of the {c.period_s:.1f} s orbital period"
                             if c.harmonics else "")
    where = ("beyond the span" if math.isfinite(found.t_s)
             else f"not reached within {found.horizon_s / 86_400.0:g} days")
    return (f"{where}: past the {days:g}-day span the relativistic residual ({residual_name}) is "
            f"continued from {fit}, fitted over the span (largest misfit {ns(c.misfit_s):.3g} ns, "
            "added as a margin); the clock model is analytic. Assumes the orbit keeps its "
            "behaviour past the span (no manoeuvres)")


def clock_error(req, model, span, residual_name: str, end, free, exceedance_block, series) -> dict:
    """``end``/``series``: ``physics.timing_budget.combined_time_error`` at the span end / the series
    times; ``free``: ``physics.timing_budget.free_running_time`` (None when no budget was asked)."""
    out = {
        "elapsed_s": span.duration_s,
        "relativistic_residual": residual_name,
        "relativistic_residual_description": RELATIVISTIC_OFFSET_WORDS[residual_name],
        "relativistic_residual_ns": ns(end.relativistic_residual_s[0]),
        "initial_time_offset_ns": ns(end.initial_time_offset_s[0]),
        "initial_frequency_ns": ns(end.initial_frequency_s[0]),
        "ageing_ns": ns(end.ageing_s[0]),
        "deterministic_ns": ns(end.deterministic_s[0]),
        "stochastic_1sigma_ns": ns(end.sigma_s[0]),
        "stochastic_1sigma_components_ns": {k: ns(v[0]) for k, v in end.sigma_components_s.items()},
        "k_sigma": req.k_sigma,
        "k_sigma_bound_ns": ns(end.bound_s[0]),
        "time_error_budget_ns": req.time_error_budget_ns,
        "max_free_running_s": None,
        "budget_reached_within_span": None,
        "clock_model": clock_model(req.clock, model),
        "series": None,
        "note": CLOCK_NOTE,
    }
    if free is not None:
        reached = math.isfinite(free.t_s)
        out["max_free_running_s"] = free.t_s if reached else None
        out["budget_reached_within_span"] = free.within_span
        out["max_free_running_beyond_span"] = reached and not free.within_span
        out["free_running_search_horizon_s"] = free.horizon_s
        out["max_free_running_basis"] = free_running_basis(free, residual_name)
    if exceedance_block is not None:
        out["exceedance"] = exceedance_block
    if series is not None:
        t = np.asarray(series.t_s, dtype=float)
        out["series"] = {
            "time_utc": utc(span, t), "elapsed_s": t.tolist(),
            "deterministic_ns": ns_list(series.deterministic_s),
            "sigma_ns": ns_list(series.sigma_s),
            "bound_ns": ns_list(series.bound_s),
        }
    return out
