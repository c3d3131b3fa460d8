"""The drift budget: inputs.py (what it takes), compute.py (``compute_budget``), fit.py (the
secular fit and its bounded parts), periodic.py (extremes and components), result.py (the typed
result in SI units)."""

from .compute import compute_budget, preset_fractional
from .fit import HARMONICS, BoundedPart, SecularFit, fit_secular
from .inputs import (
    MAX_PANEL_S,
    MIN_PANEL_S,
    MIN_SPAN_S,
    PANELS_PER_PERIOD,
    BudgetInputs,
    initial_panel_s,
    series_point_count,
    series_times_s,
)
from .result import (
    BudgetResult,
    EccentricityCorrection,
    Integration,
    OmittedTerm,
    PeriodicComponent,
    PeriodicPart,
    PositionTerm,
    Preset,
    Series,
)

CAUTION = (
    "Planning estimate only. These figures come from a first-order relativistic model with the "
    "terms listed under 'model'; flight use needs independent verification against the "
    "mission's own standards, orbit products and clock data."
)

__all__ = [
    "CAUTION", "compute_budget", "preset_fractional", "HARMONICS", "BoundedPart", "SecularFit", "fit_secular",
    "MAX_PANEL_S", "MIN_PANEL_S", "MIN_SPAN_S", "PANELS_PER_PERIOD", "BudgetInputs", "initial_panel_s",
    "series_point_count", "series_times_s",
    "BudgetResult", "EccentricityCorrection", "Integration", "OmittedTerm", "PeriodicComponent",
    "PeriodicPart", "PositionTerm", "Preset", "Series",
]
