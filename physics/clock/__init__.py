"""Clock behaviour: frequency stability of measured data, power-law noise and time error.

Public names are gathered here; modules:
- stability: ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV with EDF and confidence bounds.
- edf, noise_id: equivalent degrees of freedom; power-law noise identification.
- powerlaw: IEEE Std 1139 h_alpha, closed-form Allan variances, h_alpha fit.
- presets: generic oscillator classes with typical figures (replace with unit data).
- time_error: deterministic + stochastic time error after a sync; max free-running time.
- simulate: Kasdin-Walter power-law noise; Monte Carlo budget exceedance.
- model: ClockModel tying these together.
"""

from .edf import chi2_bounds, equivalent_degrees_of_freedom
from .model import ClockModel
from .noise_id import noise_alpha_lag1
from .powerlaw import (
    NOISE_ALPHAS,
    NOISE_NAMES,
    HAlphaFit,
    allan_deviation_from_h,
    allan_variance_per_h,
    fit_h_alpha,
)
from .presets import PRESETS, OscillatorPreset, preset
from .simulate import (
    ExceedanceEstimate,
    exceedance_probability,
    kasdin_walter_noise,
    simulate_fractional_frequency,
    simulate_time_error_s,
)
from .stability import (
    DEFAULT_CONFIDENCE,
    Deviation,
    StabilityTable,
    allan_deviation,
    frequency_to_phase_s,
    hadamard_deviation,
    modified_allan_deviation,
    octave_averaging_factors,
    overlapping_allan_deviation,
    overlapping_hadamard_deviation,
    stability_table,
    time_deviation_s,
)
from .time_error import (
    SECONDS_PER_DAY,
    TimeErrorSeries,
    deterministic_time_error_s,
    max_free_running_s,
    predict_time_error,
    time_error_sigma_s,
    time_error_variance_components_s2,
)

__all__ = [
    "ClockModel",
    "DEFAULT_CONFIDENCE",
    "Deviation",
    "ExceedanceEstimate",
    "HAlphaFit",
    "NOISE_ALPHAS",
    "NOISE_NAMES",
    "OscillatorPreset",
    "PRESETS",
    "SECONDS_PER_DAY",
    "StabilityTable",
    "TimeErrorSeries",
    "allan_deviation",
    "allan_deviation_from_h",
    "allan_variance_per_h",
    "chi2_bounds",
    "deterministic_time_error_s",
    "equivalent_degrees_of_freedom",
    "exceedance_probability",
    "fit_h_alpha",
    "frequency_to_phase_s",
    "hadamard_deviation",
    "kasdin_walter_noise",
    "max_free_running_s",
    "modified_allan_deviation",
    "noise_alpha_lag1",
    "octave_averaging_factors",
    "overlapping_allan_deviation",
    "overlapping_hadamard_deviation",
    "predict_time_error",
    "preset",
    "simulate_fractional_frequency",
    "simulate_time_error_s",
    "stability_table",
    "time_deviation_s",
    "time_error_sigma_s",
    "time_error_variance_components_s2",
]
