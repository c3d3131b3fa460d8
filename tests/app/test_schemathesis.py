"""Property-based run of schemathesis over the served OpenAPI document.

Bounded: a few dozen generated cases per operation, no shrinking phase, and an app with
small limits so that any generated request is cheap. Checks: no 5xx, status codes and
content types that the document declares, and bodies that match the declared schemas.
"""

from __future__ import annotations

import schemathesis
from hypothesis import HealthCheck, Phase, settings
from schemathesis.checks import not_a_server_error
from schemathesis.specs.openapi.checks import (
    content_type_conformance,
    response_schema_conformance,
    status_code_conformance,
)
from taubudget.app.main import create_app
from taubudget.app.settings import Settings

CASES_PER_OPERATION = 30
# A generated budget on a span of at most 2 days computes in well under a second; 10 s leaves
# room for a shared 2-core machine without letting a runaway request pass.
DEADLINE_MS = 10_000

LIMITS = Settings(MAX_SPAN_DAYS=2.0, MAX_NODES=50_000, MAX_SERIES_POINTS=2_000,
                  MAX_BATCH_ITEMS=3, MAX_BATCH_NODES=50_000, MAX_BODY_BYTES=200_000,
                  MAX_QUEUED_STUDY_ITEMS=0)  # a generated study is refused (429), never run

schema = schemathesis.openapi.from_asgi("/openapi.json", create_app(LIMITS))

CHECKS = [not_a_server_error, status_code_conformance, content_type_conformance,
          response_schema_conformance]


@schema.parametrize()
@settings(max_examples=CASES_PER_OPERATION, deadline=DEADLINE_MS, phases=[Phase.explicit, Phase.generate],
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much,
                                 HealthCheck.data_too_large], derandomize=True)
def test_api_conforms_to_its_document(case):
    case.call_and_validate(checks=CHECKS)
