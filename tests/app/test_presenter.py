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


NOT_JSON = {
    ("post", "/v1/budgets/batch.csv"): "CSV text",
    ("get", "/v1/budgets.csv"): "CSV text",
    ("get", "/v1/budgets.svg"): "SVG image",
    ("get", "/v1/budgets.png"): "PNG image",
    ("post", "/v1/contact-plans.csv"): "CSV text",
    ("get", "/v1/studies/{study_id}/results"): "NDJSON stream, one line per item",
    ("get", "/v1/studies/{study_id}/results.csv"): "CSV stream",
}
"""Routes whose success body is not one JSON document, so no pydantic response model applies.
The HTML pages (/, /docs, /redoc) are outside the schema and outside /v1."""


def _routes_by_operation():
    from fastapi.routing import APIRoute
    from taubudget.app.api import clock, contacts, figures, health, reference, studies

    out = {}
    for module in (budget_routes, clock, contacts, figures, health, reference, studies):
        for r in module.router.routes:
            if isinstance(r, APIRoute):
                out.update({(m.lower(), r.path): r for m in r.methods})
    return out


def _operations():
    doc = create_app().openapi()
    return doc, [(m, p) for p, ops in doc["paths"].items() for m in ops
                 if p.startswith("/v1/") or p in ("/healthz", "/readyz")]


def test_every_json_route_declares_its_response_model_and_the_document_uses_it():
    """Every /v1 JSON route and the health probes: the success schema is generated from the
    route's ``response_model`` (not hand-stitched), and the model's required fields are the
    document's."""
    doc, operations = _operations()
    routes = _routes_by_operation()
    assert {"/healthz", "/readyz", "/v1/reference", "/v1/clock-stability"} <= {p for _, p in operations}
    assert set(NOT_JSON) <= set(operations)
    checked = []
    for method, path in operations:
        route = routes[(method, path)]
        if (method, path) in NOT_JSON:
            assert route.response_model is None, f"{method} {path} is listed as not JSON"
            continue
        model = route.response_model
        assert model is not None, f"{method.upper()} {path} has no response_model"
        status = str(route.status_code or 200)
        content = doc["paths"][path][method]["responses"][status]["content"]["application/json"]
        assert content["schema"] == {"$ref": f"#/components/schemas/{model.__name__}"}, (method, path)
        component = doc["components"]["schemas"][model.__name__]
        required = {n for n, f in model.model_fields.items() if f.is_required()}
        assert required and required <= set(component["required"]), (method, path)
        checked.append(path)
    assert len(checked) == len(operations) - len(NOT_JSON) >= 10


@pytest.mark.parametrize("path, model", [("/v1/budgets", BudgetResponse),
                                         ("/v1/budgets/batch", BatchResponse),
                                         ("/v1/contact-plans", ContactPlanResponse)])
def test_the_main_routes_return_their_named_models(path, model):
    assert _routes_by_operation()[("post", path)].response_model is model


def test_health_and_reference_bodies_keep_their_fields():
    """The models validate what the routes return and add nothing: /healthz is only its status,
    /readyz names what it loaded, /v1/reference keeps its six blocks."""
    from starlette.testclient import TestClient

    with TestClient(create_app()) as client:
        assert client.get("/healthz").json() == {"status": "ok"}
        assert client.get("/readyz").json() == {"status": "ready", "timescale": True, "ephemeris": True}
        ref = client.get("/v1/reference").json()
    assert set(ref) == {"constants", "sources", "models", "versions", "limits", "caution"}
    assert {"name", "value", "doc"} == set(ref["constants"][0])
    assert isinstance(ref["limits"]["MAX_NODES"], int)


def test_a_response_missing_a_required_field_is_refused_not_passed_on(monkeypatch):
    """The model is enforced: a presenter slip becomes a 500 problem, never a silently short body."""
    from starlette.testclient import TestClient

    def short(req, settings=None, source=None):
        return {"mean_fractional_rate": 1e-10}

    monkeypatch.setattr(budget_routes, "budget_from_request", short)
    with TestClient(create_app(), raise_server_exceptions=False) as client:
        resp = client.post("/v1/budgets", json=EXAMPLE_REQUEST)
    assert resp.status_code == 500
