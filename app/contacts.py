"""Old import path of contact plans. The request and response models live in
app/schemas/contacts.py, the orchestration in app/services/contacts.py and the pass table's CSV in
app/csv_format.py; this module re-exports them so existing imports keep working."""

from .csv_format import PASS_COLUMNS, passes_csv  # noqa: F401
from .schemas.contacts import (  # noqa: F401
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
from .services.contacts import contact_plan_from_request  # noqa: F401
