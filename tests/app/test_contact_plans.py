"""Contact-plan request validation, the response contract, and the pass-table CSV."""

from __future__ import annotations

import json
import pathlib

import pytest
from pydantic import ValidationError
from support.csv_blocks import split_blocks
from taubudget.app.contacts import PASS_COLUMNS, ContactPlanRequest, contact_plan_from_request, passes_csv
from taubudget.physics.budget import CAUTION

SAMPLES = pathlib.Path(__file__).resolve().parents[2] / "sample_orbits"

PASS_FIELDS = ("station", "aos_utc", "los_utc", "duration_s", "max_elevation_deg", "offset_at_aos_ns",
               "offset_at_los_ns", "light_time_us", "sagnac_correction_ns", "fractional_frequency_shift",
               "signal_path")
PLAN_FIELDS = ("passes", "syncs", "worst_error_ns", "worst_gap_s", "meets_budget", "caution")


def _load(name):
    return json.loads((SAMPLES / name).read_text())


@pytest.fixture(scope="module")
def leo_plan():
    return contact_plan_from_request(ContactPlanRequest(**_load("contact_plan_leo.json")))


@pytest.fixture(scope="module")
def meo_plan():
    return contact_plan_from_request(ContactPlanRequest(**_load("contact_plan_meo.json")))


@pytest.mark.parametrize("plan_name", ["leo_plan", "meo_plan"])
def test_plan_contract(plan_name, request):
    plan = request.getfixturevalue(plan_name)
    for f in PLAN_FIELDS:
        assert f in plan
    assert plan["caution"] == CAUTION
    assert plan["passes"]
    for p in plan["passes"]:
        for f in PASS_FIELDS:
            assert f in p
        assert p["duration_s"] > 0 and p["aos_utc"] < p["los_utc"]
        assert set(p["signal_path"]) == {"aos", "culmination", "los"}
    assert plan["meets_budget"] == (plan["worst_error_ns"] <= plan["time_error_budget_ns"])
    for s in plan["syncs"]:
        assert s["bound_before_sync_ns"] <= plan["worst_error_ns"] * (1 + 1e-12)
    if plan["syncs"]:
        assert plan["worst_gap_s"] >= max(s["time_since_previous_sync_s"] for s in plan["syncs"])
    json.dumps(plan)  # plain JSON types only


def test_leo_policy_uses_every_second_long_pass(leo_plan):
    req = _load("contact_plan_leo.json")
    min_dur = req["sync_policy"]["min_duration_s"]
    eligible = [i for i, p in enumerate(leo_plan["passes"]) if p["duration_s"] >= min_dur]
    used = [s["pass_index"] for s in leo_plan["syncs"]]
    assert sorted(used) == sorted(eligible[1::2])


def test_passes_csv(leo_plan):
    text = passes_csv(leo_plan)
    assert "\r\n" in text and CAUTION in text
    fields, rows = split_blocks(text)
    assert fields["caution"] == CAUTION
    assert tuple(rows[0]) == PASS_COLUMNS
    assert len(rows) == len(leo_plan["passes"])
    assert float(rows[0]["duration_s"]) == leo_plan["passes"][0]["duration_s"]


@pytest.mark.parametrize("patch, where", [
    ({"sync_policy": {"kind": "fixed_interval"}}, "interval_s"),
    ({"sync_policy": {"kind": "min_elevation"}}, "min_elevation_deg"),
    ({"clock": {"preset": "no_such_oscillator"}}, "preset"),
    ({"time_error_budget_ns": -1.0}, "time_error_budget_ns"),
    ({"stations": []}, "stations"),
    ({"orbit": {"type": "surface", "latitude_deg": 10.0, "longitude_deg": 20.0}}, "surface"),
])
def test_invalid_requests_are_refused(patch, where):
    body = _load("contact_plan_leo.json")
    body.update(patch)
    with pytest.raises(ValidationError) as info:
        ContactPlanRequest(**body)
    assert where in str(info.value)


def test_duplicate_station_names_are_refused():
    body = _load("contact_plan_leo.json")
    body["stations"] = [body["stations"][0], dict(body["stations"][0])]
    with pytest.raises(ValidationError, match="unique"):
        ContactPlanRequest(**body)


def test_tighter_budget_cannot_be_met_with_more_error():
    body = _load("contact_plan_leo.json")
    body["duration_days"] = 0.5
    loose = contact_plan_from_request(ContactPlanRequest(**body))
    body["time_error_budget_ns"] = loose["worst_error_ns"] * 0.5
    tight = contact_plan_from_request(ContactPlanRequest(**body))
    assert tight["meets_budget"] is False
    assert tight["worst_error_ns"] == pytest.approx(loose["worst_error_ns"])
