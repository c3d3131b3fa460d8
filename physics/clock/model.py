"""ClockModel: one description of a clock's noise, ageing and offsets, with its time error.

A clock may be given by any of: Allan deviation points (fitted to h_alpha by
physics.clock.powerlaw.fit_h_alpha), h_alpha directly, a linear frequency drift
(fractional per day), the fractional frequency offset left after calibration, and
the time offset at synchronisation. Presets give typical figures of generic
oscillator classes (common practice) to be replaced by the user's unit data.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .powerlaw import HAlphaFit, allan_deviation_from_h, fit_h_alpha
from .presets import preset
from .simulate import ExceedanceEstimate, exceedance_probability
from .time_error import TimeErrorSeries, max_free_running_s, predict_time_error

__all__ = ["ClockModel"]


@dataclass(frozen=True)
class ClockModel:
    """Noise, ageing and offsets of one clock (SI units; fractional frequency dimensionless).

    adev_tau_s, adev: optional Allan deviation points (s, dimensionless), used when
    h_alpha is not given; h_alpha: {alpha: h} (IEEE Std 1139); f_h_hz: measurement
    bandwidth for white/flicker PM terms; drift_per_day: linear fractional frequency
    drift per day (ageing); initial_fractional_frequency: y0 after calibration;
    initial_time_offset_s: x0 at synchronisation; name: label (preset name or user's).
    """

    h_alpha: dict = field(default_factory=dict)
    adev_tau_s: tuple = ()
    adev: tuple = ()
    f_h_hz: float | None = None
    drift_per_day: float = 0.0
    initial_fractional_frequency: float = 0.0
    initial_time_offset_s: float = 0.0
    name: str = "custom"
    fit: HAlphaFit | None = None

    def __post_init__(self):
        if not self.h_alpha and len(self.adev_tau_s):
            result = fit_h_alpha(self.adev_tau_s, self.adev, f_h_hz=self.f_h_hz)
            object.__setattr__(self, "fit", result)
            object.__setattr__(self, "h_alpha", dict(result.h_alpha))
        if any(float(h) < 0.0 for h in self.h_alpha.values()):
            raise ValueError("h_alpha coefficients must be >= 0")

    @classmethod
    def from_preset(cls, name: str, **overrides) -> ClockModel:
        """Model from a generic preset (typical figures, common practice), with optional overrides.

        name: e.g. "space_rubidium", "space_passive_maser", "cesium_beam",
        "ultra_stable_quartz"; overrides: any ClockModel field (e.g. initial_time_offset_s).
        """
        p = preset(name)
        fields = {"h_alpha": dict(p.h_alpha), "drift_per_day": p.drift_per_day, "name": p.name}
        fields.update(overrides)
        return cls(**fields)

    def adev_at(self, tau_s) -> np.ndarray:
        """Model Allan deviation at tau_s (s) from h_alpha (powerlaw closed forms)."""
        return allan_deviation_from_h(self.h_alpha, tau_s, self.f_h_hz)

    def time_error(
        self, t_s, k_sigma: float = 1.0, residual_t_s=None, residual_offset_s=None
    ) -> TimeErrorSeries:
        """Predicted time error (s) at times t_s after sync: deterministic, 1-sigma, k-sigma bound.

        residual_t_s, residual_offset_s: optional residual relativistic offset series (s).
        Planning estimate; see physics.clock.time_error for the model and its limits.
        """
        return predict_time_error(
            t_s,
            self.h_alpha,
            k_sigma,
            self.initial_time_offset_s,
            self.initial_fractional_frequency,
            self.drift_per_day,
            self.f_h_hz,
            residual_t_s,
            residual_offset_s,
        )

    def max_free_running_s(
        self,
        budget_s: float,
        k_sigma: float = 1.0,
        residual_t_s=None,
        residual_offset_s=None,
        **scan,
    ) -> float:
        """Longest time (s) after a sync before |deterministic| + k sigma reaches budget_s."""
        return max_free_running_s(
            budget_s,
            self.h_alpha,
            k_sigma,
            self.initial_time_offset_s,
            self.initial_fractional_frequency,
            self.drift_per_day,
            self.f_h_hz,
            residual_t_s,
            residual_offset_s,
            **scan,
        )

    def exceedance_probability(
        self,
        budget_s: float,
        t_end_s: float,
        sample_interval_s: float,
        n_realisations: int = 1000,
        seed=None,
        residual_t_s=None,
        residual_offset_s=None,
    ) -> ExceedanceEstimate:
        """Monte Carlo probability that |time error| exceeds budget_s before t_end_s (s)."""
        return exceedance_probability(
            budget_s,
            t_end_s,
            sample_interval_s,
            self.h_alpha,
            self.initial_time_offset_s,
            self.initial_fractional_frequency,
            self.drift_per_day,
            residual_t_s,
            residual_offset_s,
            n_realisations,
            seed,
        )
