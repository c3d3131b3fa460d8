"""One presenter: the routes' responses are their models (enforced, and the OpenAPI schema is
generated from them), and only app/present/ turns seconds into ns/us/ps or TT seconds into UTC."""

import re
from pathlib import Path

import pytest
from taubudget.app.api import budgets as budget_routes
from taubudget.app.main import create_app
from taubudget.app.schemas import BatchResponse, BudgetResponse, ContactPlanResponse
from taubudget.app.schemas.examples import EXAMPLE_REQUEST

APP = Path(__file__).resolve().parents[2] / "app"
OUTPUT_SCALING = re.compile(r"\*\s*1e(6|9|12)\b|utc_iso\(|utc_strftime\(|budget\.data")
"""Seconds -> us/ns/ps, TT seconds -> ISO text, and the old dict hand-over."""


def test_only_the_presenter_formats_physics_results():
    offenders = []
    for path in APP.rglob("*.py"):
        if path.parent.name == "present":
            continue
        for n, line in enumerate(path.read_text().splitlines(), 1):
            if OUTPUT_SCALING.search(line.split("#")[0]):
                offenders.append(f"{path.relative_to(APP)}:{n}: {line.strip()}")
    assert offenders == []


@pytest.mark.parametrize("path, model", [("/v1/budgets", BudgetResponse),
                                         ("/v1/budgets/batch", BatchResponse),
                                         ("/v1/contact-plans", ContactPlanResponse)])
def test_routes_declare_their_response_model_and_the_document_uses_it(path, model):
    from taubudget.app.api import contacts as contact_routes

    routes = budget_routes.router.routes + contact_routes.router.routes
    (route,) = [r for r in routes if r.path == path and "POST" in r.methods]
    assert route.response_model is model
    doc = create_app().openapi()
    schema = doc["paths"][path]["post"]["responses"]["200"]["content"]["application/json"]["schema"]
    assert schema == {"$ref": f"#/components/schemas/{model.__name__}"}
    component = doc["components"]["schemas"][model.__name__]
    required = {n for n, f in model.model_fields.items() if f.is_required()}
    assert required and required <= set(component["required"])


def test_a_response_missing_a_required_field_is_refused_not_passed_on(monkeypatch):
    """The model is enforced: a presenter slip becomes a 500 problem, never a silently short body."""
    from starlette.testclient import TestClient

    def short(req, settings=None, source=None):
        return {"mean_fractional_rate": 1e-10}

    monkeypatch.setattr(budget_routes, "budget_from_request", short)
    with TestClient(create_app(), raise_server_exceptions=False) as client:
        resp = client.post("/v1/budgets", json=EXAMPLE_REQUEST)
    assert resp.status_code == 500
