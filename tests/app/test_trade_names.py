"""Trade names beside the round-1 names: both in the response, either in a request, all described
in the OpenAPI document. The round-1 names are a contract kept for one version.

Outside truth: the closed form L_G / (1 - L_G) of the TT-vs-TCG scale term (IERS TN36 Table 1.1,
L_G = 6.969290134e-10) under its new name, and the light-time description in words.
"""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest
from taubudget.app.schemas import EXAMPLE_REQUEST

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
L_G = 6.969290134e-10  # TN36 Table 1.1 (defining)
OLD_TO_NEW_GCRS = {"velocity": "velocity", "monopole": "earth_monopole", "zonal": "earth_zonal",
                   "tidal": "sun_moon_tidal", "reference_scale": "time_scale_rate",
                   "reference_clock": "ground_reference_clock"}


@pytest.fixture(scope="module")
def gcrs_budget(client):
    r = client.post("/v1/budgets", json=EXAMPLE_REQUEST)
    assert r.status_code == 200
    return r.json()


def test_both_names_carry_the_same_values(gcrs_budget):
    old, new = gcrs_budget["terms_fractional"], gcrs_budget["rate_terms_fractional"]
    assert set(old) == set(OLD_TO_NEW_GCRS)
    assert {OLD_TO_NEW_GCRS[k]: v for k, v in old.items()} == new
    assert new["time_scale_rate"] == pytest.approx(L_G / (1.0 - L_G), rel=1e-12)


def test_barycentric_time_scale_and_earth_terms_are_renamed(client):
    body = json.loads((SAMPLES / "heliocentric_cruise.json").read_text())
    body.pop("series_step_s", None)
    b = client.post("/v1/budgets", json=body).json()
    assert b["rate_terms_fractional"]["time_scale_rate"] == b["terms_fractional"]["time_scale"]
    assert b["rate_terms_fractional"]["earth"] == b["terms_fractional"]["earth"]


def test_openapi_describes_new_and_old_names(client):
    schemas = client.get("/openapi.json").json()["components"]["schemas"]
    props = schemas["BudgetResponse"]["properties"]
    desc = props["rate_terms_fractional"]["description"]
    for name in ("earth_monopole", "time_scale_rate", "ground_reference_clock", "was 'monopole'"):
        assert name in desc
    assert "deprecated" in props["terms_fractional"]["description"]
    offset = json.dumps(schemas["ContactPlanRequest"]["properties"]["relativistic_offset"])
    for word in ("frequency_offset_and_eccentricity_correction", "uncorrected", "after_preset", "raw"):
        assert word in offset


@pytest.mark.parametrize("new, old", [("frequency_offset", "after_preset"),
                                      ("frequency_offset_and_eccentricity_correction", "after_correction"),
                                      ("uncorrected", "raw")])
def test_contact_plan_takes_either_word_for_the_offset(client, new, old):
    base = json.loads((SAMPLES / "contact_plan_meo.json").read_text())
    base["end"] = "2027-03-01T12:00:00Z"
    plans = {}
    for word in (new, old):
        body = copy.deepcopy(base)
        body["relativistic_offset"] = word
        r = client.post("/v1/contact-plans", json=body)
        assert r.status_code == 200, r.text
        plans[word] = r.json()
    assert plans[new]["worst_error_ns"] == plans[old]["worst_error_ns"]
    assert plans[new]["model"]["relativistic_offset"] == old  # the response repeats the kept name
    assert plans[new]["model"]["relativistic_offset_description"].startswith(new)


def test_clock_error_says_its_residual_in_words(client):
    body = json.loads((SAMPLES / "meo_navigation.json").read_text())
    body.pop("series_step_s")
    ce = client.post("/v1/budgets", json=body).json()["clock_error"]
    assert ce["relativistic_residual"] == "after_correction"
    assert ce["relativistic_residual_description"].startswith("frequency_offset_and_eccentricity_correction")


def test_light_time_method_is_in_words(client):
    body = json.loads((SAMPLES / "heliocentric_cruise.json").read_text())
    body["series_step_s"] = 86400.0 * 10
    series = client.post("/v1/budgets", json=body).json()["series"]
    assert series["light_time_method"] == "iterated from emission to reception"
