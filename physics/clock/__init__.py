"""Clock behaviour: frequency stability of measured data, power-law noise and time error.

Public names are gathered here; modules:
- stability: ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV with EDF and confidence bounds.
- edf, noise_id: equivalent degrees of freedom; power-law noise identification.
"""

from .edf import chi2_bounds, equivalent_degrees_of_freedom
from .noise_id import noise_alpha_lag1
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

__all__ = [
    "DEFAULT_CONFIDENCE",
    "Deviation",
    "StabilityTable",
    "allan_deviation",
    "chi2_bounds",
    "equivalent_degrees_of_freedom",
    "frequency_to_phase_s",
    "hadamard_deviation",
    "modified_allan_deviation",
    "noise_alpha_lag1",
    "octave_averaging_factors",
    "overlapping_allan_deviation",
    "overlapping_hadamard_deviation",
    "stability_table",
    "time_deviation_s",
]
