"""The OpenAPI document: it validates, every operation has a worked example, and each example works."""

from __future__ import annotations

import pytest
import schemathesis
from taubudget.app.main import create_app

SERVICE_OPERATIONS = {("POST", "/v1/budgets"), ("POST", "/v1/budgets/batch"), ("GET", "/v1/budgets.csv"),
                      ("GET", "/v1/reference"), ("GET", "/healthz"), ("GET", "/readyz")}


@pytest.fixture(scope="module")
def document(client):
    return client.get("/openapi.json").json()


def _operations(document):
    for path, item in document["paths"].items():
        for method, op in item.items():
            yield path, method, op


def test_document_validates(document):
    """Validate against the OpenAPI 3.1 meta-schema (the copy schemathesis ships)."""
    from schemathesis.specs.openapi.definitions import OPENAPI_31_VALIDATOR

    assert document["openapi"].startswith("3.1")
    OPENAPI_31_VALIDATOR.validate(document)
    broken = {**document, "paths": {"/x": {"get": {"responses": "none"}}}}
    assert not OPENAPI_31_VALIDATOR.is_valid(broken)  # the validator does reject bad documents
    schema = schemathesis.openapi.from_asgi("/openapi.json", create_app())
    loaded = {(op.ok().method.upper(), op.ok().path) for op in schema.get_all_operations()}
    assert SERVICE_OPERATIONS <= loaded


def test_every_operation_has_an_example(document):
    for path, method, op in _operations(document):
        body = op.get("requestBody", {}).get("content", {}).get("application/json", {})
        param_examples = [p for p in op.get("parameters", []) if p.get("schema", {}).get("examples")]
        ok = op["responses"].get("200") or op["responses"]["202"]  # 202: a study accepted
        response_examples = [c for c in ok.get("content", {}).values() if "example" in c or "examples" in c]
        assert body.get("examples") or param_examples or response_examples, f"{method} {path}"


def test_every_example_gets_a_200(client, document):
    called = set()
    for path, method, op in _operations(document):
        body = op.get("requestBody", {}).get("content", {}).get("application/json", {})
        for name, example in body.get("examples", {}).items():
            resp = client.request(method.upper(), path, json=example["value"])
            assert resp.status_code in (200, 202), (path, name, resp.text)
            if resp.status_code == 202:  # a study accepted: cancel it, the example has done its job
                assert client.delete(resp.json()["url"]).json()["state"] == "cancelled"
            called.add((method.upper(), path))
        if "requestBody" in op or "{" in path:  # a study's id comes from POST /v1/studies
            continue
        params = {p["name"]: p["schema"]["examples"][0] for p in op.get("parameters", [])
                  if p.get("schema", {}).get("examples")}
        resp = client.request(method.upper(), path, params=params)
        assert resp.status_code == 200, (path, params, resp.text)
        called.add((method.upper(), path))
    assert SERVICE_OPERATIONS <= called
