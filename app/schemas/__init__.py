"""Request and response models, one module per resource (the CLI reads the same JSON).

orbits.py (the ``Orbit`` union), budget.py (a budget and batches), clock.py (the oscillator),
contacts.py (contact plans), stability.py (measured data), reference.py, problems.py, and
examples.py (worked request bodies). Every name is re-exported here, so
``from taubudget.app.schemas import BudgetRequest`` works whatever module holds it.

Field names carry their units and are a contract: scripts and spreadsheets are written against
them. Add fields; never rename or drop one.
"""

from .budget import (
    BatchRequest,
    BatchResponse,
    BatchResultItem,
    BudgetRequest,
    BudgetResponse,
    EccentricityCorrectionOut,
    OmittedTermOut,
    PeriodicOut,
    SeriesOut,
)
from .clock import ClockErrorOut, ClockIn, ClockModelOut, ClockSeriesOut, HAlphaIn
from .contacts import (
    MAX_PASSES,
    MAX_STATIONS,
    ContactPlanRequest,
    ContactPlanResponse,
    PassOut,
    SignalPointOut,
    StationIn,
    SyncOut,
    SyncPolicyIn,
)
from .examples import (
    EXAMPLE_BATCH_REQUEST,
    EXAMPLE_GROUND_REQUEST,
    EXAMPLE_HELIOCENTRIC_REQUEST,
    EXAMPLE_LEO_J2_REQUEST,
    EXAMPLE_LUNAR_REQUEST,
    EXAMPLE_REQUEST,
    EXAMPLE_STABILITY_REQUEST,
)
from .orbits import GravityIn, KeplerianOrbitIn, Orbit, SurfaceClockIn, TleOrbitIn
from .problems import Problem, ProblemFieldError
from .reference import ConstantOut, HealthResponse, ReferenceResponse
from .stability import StabilityRequest, StabilityResponse

__all__ = [
    "BatchRequest", "BatchResponse", "BatchResultItem", "BudgetRequest", "BudgetResponse",
    "EccentricityCorrectionOut", "OmittedTermOut", "PeriodicOut", "SeriesOut",
    "ClockErrorOut", "ClockIn", "ClockModelOut", "ClockSeriesOut", "HAlphaIn",
    "MAX_PASSES", "MAX_STATIONS", "ContactPlanRequest", "ContactPlanResponse", "PassOut",
    "SignalPointOut", "StationIn", "SyncOut", "SyncPolicyIn",
    "EXAMPLE_BATCH_REQUEST", "EXAMPLE_GROUND_REQUEST", "EXAMPLE_HELIOCENTRIC_REQUEST",
    "EXAMPLE_LEO_J2_REQUEST", "EXAMPLE_LUNAR_REQUEST", "EXAMPLE_REQUEST", "EXAMPLE_STABILITY_REQUEST",
    "GravityIn", "KeplerianOrbitIn", "Orbit", "SurfaceClockIn", "TleOrbitIn",
    "Problem", "ProblemFieldError", "ConstantOut", "HealthResponse", "ReferenceResponse",
    "StabilityRequest", "StabilityResponse",
]
