"""Old import path of the budget orchestration; the code lives in app/services/ (one module per
resource). Kept so that ``from taubudget.app.service import budget_from_request`` still works."""

from .services.budget import (  # noqa: F401
    budget_from_request,
    budget_inputs,
    build_span,
    estimate_nodes,
    merge_item,
)
from .services.clock import CLOCK_NOTE, MONTE_CARLO_MAX_SAMPLES, PRESET_LABEL, clock_error, clock_model  # noqa: F401
from .services.orbits import ORBIT_BUILDERS, build_source  # noqa: F401
from .services.stability import STABILITY_CAUTION, stability_from_data  # noqa: F401
