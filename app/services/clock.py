"""The oscillator's own time error: the request's clock block -> a physics ClockModel, and the
``clock_error`` block (relativistic residual plus noise and ageing after a sync at the span start)."""

from __future__ import annotations

import math

import numpy as np
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.span import Span

from ..schemas import BudgetRequest, ClockIn

PRESET_LABEL = "typical values, replace with your unit's data"

CLOCK_NOTE = (
    "Time error after a synchronisation at the span start: the relativistic residual plus a "
    "Gaussian power-law noise model with ageing. Real clocks also show steps, frequency jumps, "
    "temperature and radiation effects that the model lacks, so the k-sigma bound is a planning "
    "figure, not a guarantee. Flicker FM uses the t sigma_y(t) approximation (optimistic by ~20%)."
)


def clock_model(c: ClockIn):
    """A physics.clock.ClockModel from the request's clock block; PhysicsInputError if unusable."""
    from taubudget.physics.clock import NOISE_NAMES, ClockModel

    given = [n for n in ("preset", "h_alpha", "adev_points") if getattr(c, n) is not None]
    if len(given) != 1:
        raise PhysicsInputError(
            f"clock.{given[1]}" if len(given) > 1 else "clock", None,
            "give exactly one noise description: 'preset', 'h_alpha' or 'adev_points'"
            + (f" (got {', '.join(given)})" if given else ""),
        )
    common = {
        "initial_fractional_frequency": c.initial_fractional_frequency,
        "initial_time_offset_s": c.initial_time_offset_ns * 1e-9,
        "f_h_hz": c.f_h_hz,
    }
    if c.drift_per_day is not None:
        common["drift_per_day"] = c.drift_per_day
    if c.preset is not None:
        return ClockModel.from_preset(c.preset, **common)
    if c.h_alpha is not None:
        by_name = {v: k for k, v in NOISE_NAMES.items()}
        h = {by_name[name]: value for name, value in c.h_alpha.model_dump().items() if value is not None}
        if (2 in h or 1 in h) and c.f_h_hz is None:
            raise PhysicsInputError("clock.f_h_hz", None,
                                    "white and flicker PM need the measurement bandwidth f_h_hz")
        if not any(h.values()):
            raise PhysicsInputError("clock.h_alpha", None, "give at least one positive h_alpha coefficient")
        return ClockModel(h_alpha=h, name="custom h_alpha", **common)
    tau = [p[0] for p in c.adev_points]
    adev = [p[1] for p in c.adev_points]
    need = 5 if c.f_h_hz is not None else 3
    if len(tau) < need:
        raise PhysicsInputError(
            "clock.adev_points", len(tau),
            f"fitting {need} power-law terms needs at least {need} ADEV points"
            + (" (f_h_hz adds the two PM terms)" if c.f_h_hz is not None else ""),
        )
    try:
        return ClockModel(adev_tau_s=tuple(tau), adev=tuple(adev), name="fitted to adev_points", **common)
    except ValueError as exc:
        raise PhysicsInputError("clock.adev_points", None, str(exc)) from exc


def _model_out(c: ClockIn, model) -> dict:
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
        "initial_time_offset_ns": float(model.initial_time_offset_s * 1e9),
        "f_h_hz": model.f_h_hz, "fit": fit,
    }


def clock_error(req: BudgetRequest, budget, span: Span, model=None) -> dict:
    """The ``clock_error`` block: relativistic residual plus the oscillator, after a sync at t = 0."""
    from taubudget.physics.timing_budget import combined_time_error, free_running_time

    model = clock_model(req.clock) if model is None else model
    if req.apply_eccentricity_correction:
        residual, residual_name = budget.after_correction_s, "after_correction"
    else:
        residual, residual_name = budget.after_preset_s, "after_preset"
    t_end = span.duration_s
    end = combined_time_error(residual, model, np.array([t_end]), req.k_sigma)
    out = {
        "elapsed_s": t_end,
        "relativistic_residual": residual_name,
        "relativistic_residual_ns": float(end.relativistic_residual_s[0] * 1e9),
        "initial_time_offset_ns": float(end.initial_time_offset_s[0] * 1e9),
        "initial_frequency_ns": float(end.initial_frequency_s[0] * 1e9),
        "ageing_ns": float(end.ageing_s[0] * 1e9),
        "deterministic_ns": float(end.deterministic_s[0] * 1e9),
        "stochastic_1sigma_ns": float(end.sigma_s[0] * 1e9),
        "stochastic_1sigma_components_ns": {k: float(v[0] * 1e9) for k, v in end.sigma_components_s.items()},
        "k_sigma": req.k_sigma,
        "k_sigma_bound_ns": float(end.bound_s[0] * 1e9),
        "time_error_budget_ns": req.time_error_budget_ns,
        "max_free_running_s": None,
        "budget_reached_within_span": None,
        "clock_model": _model_out(req.clock, model),
        "series": None,
        "note": CLOCK_NOTE,
    }
    if req.time_error_budget_ns is not None:
        found = free_running_time(residual, model, req.time_error_budget_ns * 1e-9, req.k_sigma,
                                  t_end, budget.orbital_period_s)
        reached = math.isfinite(found.t_s)
        out["max_free_running_s"] = found.t_s if reached else None
        out["budget_reached_within_span"] = found.within_span
        out["max_free_running_beyond_span"] = reached and not found.within_span
        out["free_running_search_horizon_s"] = found.horizon_s
        out["max_free_running_basis"] = _free_running_basis(found, residual_name)
    if req.monte_carlo_runs is not None:
        out["exceedance"] = _exceedance(req, model, residual, t_end)
    series = budget.data.get("series")
    if series is not None:
        t = np.asarray(series["elapsed_s"], dtype=float)
        s = combined_time_error(residual, model, t, req.k_sigma)
        out["series"] = {
            "time_utc": series["time_utc"], "elapsed_s": series["elapsed_s"],
            "deterministic_ns": (s.deterministic_s * 1e9).tolist(),
            "sigma_ns": (s.sigma_s * 1e9).tolist(),
            "bound_ns": (s.bound_s * 1e9).tolist(),
        }
    return out


def _free_running_basis(found, residual_name: str) -> str:
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
            f"continued from {fit}, fitted over the span (largest misfit {c.misfit_s * 1e9:.3g} ns, "
            "added as a margin); the clock model is analytic. Assumes the orbit keeps its "
            "behaviour past the span (no manoeuvres)")


MONTE_CARLO_MAX_SAMPLES = 4_000_000
"""Runs x time steps a Monte Carlo request may simulate (bounded work)."""


def _exceedance(req: BudgetRequest, model, residual, t_end: float) -> dict:
    """Monte Carlo probability that |deterministic + noise| passes the budget within the span."""
    from taubudget.physics.clock import exceedance_probability

    steps = max(16, min(4096, MONTE_CARLO_MAX_SAMPLES // req.monte_carlo_runs))
    step_s = t_end / steps
    grid = np.arange(steps + 1) * step_s
    est = exceedance_probability(
        req.time_error_budget_ns * 1e-9, t_end, step_s, model.h_alpha,
        initial_time_offset_s=model.initial_time_offset_s,
        initial_fractional_frequency=model.initial_fractional_frequency,
        drift_per_day=model.drift_per_day, residual_t_s=grid, residual_offset_s=residual(grid),
        n_realisations=req.monte_carlo_runs, seed=req.monte_carlo_seed,
    )
    first = est.first_exceedance_s[np.isfinite(est.first_exceedance_s)]
    return {
        "probability": est.probability,
        "standard_error": est.standard_error,
        "runs": est.n_realisations,
        "exceeded": est.n_exceeded,
        "seed": req.monte_carlo_seed,
        "step_s": step_s,
        "horizon_s": t_end,
        "median_first_exceedance_s": float(np.median(first)) if first.size else None,
        "method": "Kasdin & Walter (1992) power-law noise, sampled at step_s; the white and flicker "
        "PM terms see the step's Nyquist bandwidth",
    }
