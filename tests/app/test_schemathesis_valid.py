"""Schemathesis reaches every operation with valid requests: 2xx counted per operation, no 5xx.

The served document admits far more bodies than are physically usable (a semi-major axis below
the Earth's radius, a span outside DE421, an 'end' before 'start' are all 422s by design), so
positive generation straight from it rarely builds a body that computes. The test therefore
narrows each request schema to a *valid profile* (physical ranges, a few valid dates, one
orbit family at a time), checks that every generated body is also valid against the served
document's own schema (the profile is a subset, not a different API), and lets schemathesis
generate from the profile. Bounded: a small app (short spans, few nodes), few examples.
"""

from __future__ import annotations

import copy
from collections import Counter

import jsonschema_rs
import pytest
import schemathesis
from hypothesis import HealthCheck, Phase, given, settings
from schemathesis import GenerationMode
from taubudget.app.main import create_app
from taubudget.app.settings import Settings
from taubudget.physics.clock import PRESETS

EXAMPLES_PER_OPERATION = 8
TWO_XX_FLOOR = 4  # at least half of the valid-profile requests compute
LIMITS = Settings(MAX_NODES=50_000, MAX_SERIES_POINTS=2_000, MAX_BATCH_ITEMS=3, MAX_BATCH_NODES=1_000_000,
                  MAX_BODY_BYTES=200_000)
STARTS = ["2027-03-01T00:00:00Z", "2031-07-15T12:00:00Z"]  # inside DE421 (1899-2053)


def _number(lo: float, hi: float) -> dict:
    return {"type": "number", "minimum": lo, "maximum": hi}


KEPLER = {"type": "object", "additionalProperties": False,
          "required": ["type", "epoch", "semi_major_axis_km", "eccentricity", "inclination_deg"],
          "properties": {"type": {"enum": ["keplerian"]}, "epoch": {"enum": STARTS},
                         "semi_major_axis_km": _number(7000.0, 45000.0), "eccentricity": _number(0.0, 0.05),
                         "inclination_deg": _number(0.0, 180.0), "ra_of_asc_node_deg": _number(0.0, 360.0),
                         "arg_of_pericenter_deg": _number(0.0, 360.0),
                         "mean_anomaly_deg": _number(0.0, 360.0)}}
SURFACE = {"type": "object", "additionalProperties": False,
           "required": ["type", "latitude_deg", "longitude_deg"],
           "properties": {"type": {"enum": ["surface"]}, "latitude_deg": _number(-89.0, 89.0),
                          "longitude_deg": _number(-180.0, 180.0), "height_m": _number(-400.0, 8000.0)}}
GRAVITY = {"type": "object", "additionalProperties": False,
           "properties": {"earth_zonal_degree": {"enum": [0, 2, 3, 4]}, "sun": {"type": "boolean"},
                          "moon": {"type": "boolean"}}}
BUDGET = {"type": "object", "additionalProperties": False, "required": ["orbit", "start", "duration_days"],
          "properties": {"orbit": {"oneOf": [KEPLER, SURFACE]},
                         "reference": {"enum": ["TT", "TAI", "GPS", "TCG"]},
                         "start": {"enum": STARTS}, "duration_days": _number(0.05, 1.0),
                         "gravity": GRAVITY, "series_step_s": _number(3600.0, 43200.0),
                         "nominal_frequency_hz": _number(1.0, 1e10),
                         "clock": {"type": "object", "additionalProperties": False, "required": ["preset"],
                                   "properties": {"preset": {"enum": sorted(PRESETS)}}}}}
BATCH = {"type": "object", "additionalProperties": False, "required": ["items"],
         "properties": {"items": {"type": "array", "minItems": 1, "maxItems": 3,
                                  "items": {**BUDGET, "required": ["id", *BUDGET["required"]],
                                            "properties": {**BUDGET["properties"],
                                                           "id": {"type": "string", "minLength": 1,
                                                                  "maxLength": 20}}}}}}
STATION = {"type": "object", "additionalProperties": False,
           "required": ["name", "latitude_deg", "longitude_deg"],
           "properties": {"name": {"enum": ["Brisk Hollow"]}, "latitude_deg": _number(-60.0, 60.0),
                          "longitude_deg": _number(-180.0, 180.0), "elevation_mask_deg": _number(0.0, 20.0)}}
CONTACTS = {"type": "object", "additionalProperties": False,
            "required": ["orbit", "start", "duration_days", "stations", "time_error_budget_ns"],
            "properties": {"orbit": KEPLER, "start": {"enum": STARTS}, "duration_days": _number(0.1, 1.0),
                           "stations": {"type": "array", "minItems": 1, "maxItems": 1, "items": STATION},
                           "time_error_budget_ns": _number(1.0, 1e6)}}
STABILITY = {"type": "object", "additionalProperties": False, "required": ["data", "sample_interval_s"],
             "properties": {"data": {"type": "array", "minItems": 8, "maxItems": 64,
                                     "items": _number(-1e-6, 1e-6)},
                            "data_type": {"enum": ["phase", "frequency"]},
                            "sample_interval_s": _number(0.001, 1000.0), "confidence": _number(0.5, 0.95)}}
QUERY = {"semi_major_axis_km": _number(7000.0, 45000.0), "eccentricity": _number(0.0, 0.05),
         "inclination_deg": _number(0.0, 180.0), "start": {"enum": STARTS},
         "duration_days": _number(0.05, 1.0), "earth_zonal_degree": {"enum": [0, 2, 4]}}
QUERY_FIELD = {"enum": ["mean_rate_us_per_day", "offset_at_end_ns", "periodic.amplitude_ns"]}
BODIES = {("/v1/budgets", "post"): ("BudgetRequest", BUDGET),
          ("/v1/budgets/batch", "post"): ("BatchRequest", BATCH),
          ("/v1/budgets/batch.csv", "post"): ("BatchRequest", BATCH),
          ("/v1/clock-stability", "post"): ("StabilityRequest", STABILITY),
          ("/v1/contact-plans", "post"): ("ContactPlanRequest", CONTACTS),
          ("/v1/contact-plans.csv", "post"): ("ContactPlanRequest", CONTACTS)}
QUERY_ROUTES = ("/v1/budgets.csv", "/v1/budgets.svg", "/v1/budgets.png")


def _profiled(doc: dict) -> dict:
    out = copy.deepcopy(doc)
    for (path, method), (_, profile) in BODIES.items():
        out["paths"][path][method]["requestBody"]["content"] = {"application/json": {"schema": profile}}
        # Query parameters belong to the text uploads (a JSON body carries its fields itself).
        out["paths"][path][method].pop("parameters", None)
    for path in QUERY_ROUTES:
        params = []
        for p in out["paths"][path]["get"]["parameters"]:
            if p["name"] in QUERY:
                params.append({**p, "required": True, "schema": QUERY[p["name"]]})
            elif p["name"] == "field" and path.endswith(".csv"):
                params.append({**p, "required": True, "schema": QUERY_FIELD})
        out["paths"][path]["get"]["parameters"] = params
    return out


APP = create_app(LIMITS)
SERVED = APP.openapi()
APP.openapi_schema = _profiled(SERVED)
SCHEMA = schemathesis.openapi.from_asgi("/openapi.json", APP)
# The interactive operations and probes; the studies routes (stateful: ids from a submission) are
# fuzzed the same way in tests/app/studies/test_studies_schemathesis_valid.py.
OPERATIONS = [op for op in (r.ok() for r in SCHEMA.get_all_operations())
              if not op.path.startswith("/v1/studies")]


def _served_validator(component: str):
    return jsonschema_rs.Draft202012Validator({"$ref": f"#/components/schemas/{component}",
                                            "components": SERVED["components"]})


@pytest.mark.parametrize("operation", OPERATIONS, ids=[op.label for op in OPERATIONS])
def test_valid_requests_reach_every_operation(operation):
    statuses: Counter = Counter()
    body_schema = BODIES.get((operation.path, operation.method.lower()))
    validator = _served_validator(body_schema[0]) if body_schema else None

    @given(case=operation.as_strategy(GenerationMode.POSITIVE))
    @settings(max_examples=EXAMPLES_PER_OPERATION, derandomize=True, phases=[Phase.generate],
              deadline=None, database=None, suppress_health_check=list(HealthCheck))
    def run(case):
        if validator is not None:
            validator.validate(case.body)  # the profile stays inside the served document
        response = case.call()
        statuses[response.status_code] += 1
        assert response.status_code < 500, response.text[:500]

    run()
    two_xx = sum(n for status, n in statuses.items() if 200 <= status < 300)
    floor = min(TWO_XX_FLOOR, sum(statuses.values()))  # a probe without inputs is sent once
    assert two_xx >= floor, dict(statuses)
