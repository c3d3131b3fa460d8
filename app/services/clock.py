"""The oscillator's own time error: the request's clock block -> a physics ClockModel, and the
``clock_error`` block (relativistic residual plus noise and ageing after a sync at the span start)."""

from __future__ import annotations

import numpy as np
from taubudget.physics.errors import PhysicsInputError

from ..present import clock as present_clock
from ..present.clock import CLOCK_NOTE, PRESET_LABEL  # noqa: F401 (old names)
from ..schemas import BudgetRequest, ClockIn


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


def clock_error(req: BudgetRequest, budget, model=None) -> dict:
    """The ``clock_error`` block: relativistic residual plus the oscillator, after a sync at t = 0."""
    from taubudget.physics.timing_budget import combined_time_error, free_running_time

    model = clock_model(req.clock) if model is None else model
    if req.apply_eccentricity_correction:
        residual, residual_name = budget.after_correction_s, "after_correction"
    else:
        residual, residual_name = budget.after_preset_s, "after_preset"
    t_end = budget.span.duration_s
    end = combined_time_error(residual, model, np.array([t_end]), req.k_sigma)
    free = None
    if req.time_error_budget_ns is not None:
        free = free_running_time(residual, model, req.time_error_budget_ns * 1e-9, req.k_sigma,
                                 t_end, budget.orbital_period_s)
    exceedance = None
    if req.monte_carlo_runs is not None:
        exceedance = _exceedance(req, model, residual, t_end)
    series = None
    if budget.series is not None:
        series = combined_time_error(residual, model, budget.series.t_s, req.k_sigma)
    return present_clock.clock_error(req, model, budget.span, residual_name, end, free, exceedance, series)


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
    return present_clock.exceedance(est, req.monte_carlo_seed, step_s, t_end)
