"""Sweep expansion: sizes known before expansion, grid and list orders, and refused shapes."""

from __future__ import annotations

import pytest
from pydantic import ValidationError
from taubudget.app.studies.expand import StudyRequest, Sweep, set_path, swept_request
from taubudget.app.studies.items import item_request, merged_request


def test_grid_is_the_cartesian_product_first_parameter_slowest():
    sweep = Sweep.model_validate({"mode": "grid", "parameters": [
        {"field": "orbit.semi_major_axis_km", "start": 7000.0, "stop": 42164.0, "count": 200},
        {"field": "orbit.eccentricity", "values": [0.0, 0.01, 0.1]},
        {"field": "clock.preset", "values": ["rubidium", "quartz"]}]})
    assert sweep.size() == 200 * 3 * 2
    combos = list(sweep.combinations())
    assert len(combos) == 1200
    assert combos[0] == {"orbit.semi_major_axis_km": 7000.0, "orbit.eccentricity": 0.0,
                         "clock.preset": "rubidium"}
    assert combos[1]["clock.preset"] == "quartz" and combos[2]["orbit.eccentricity"] == 0.01
    # inclusive range: the last value is the stop value exactly, the step (42164-7000)/199
    assert combos[-1]["orbit.semi_major_axis_km"] == 42164.0
    assert combos[6]["orbit.semi_major_axis_km"] == pytest.approx(7000.0 + 35164.0 / 199, rel=1e-15)


def test_list_pairs_the_values_and_needs_equal_lengths():
    sweep = Sweep.model_validate({"mode": "list", "parameters": [
        {"field": "orbit.semi_major_axis_km", "values": [7000.0, 8000.0]},
        {"field": "orbit.inclination_deg", "values": [10.0, 20.0]}]})
    assert list(sweep.combinations()) == [
        {"orbit.semi_major_axis_km": 7000.0, "orbit.inclination_deg": 10.0},
        {"orbit.semi_major_axis_km": 8000.0, "orbit.inclination_deg": 20.0}]
    with pytest.raises(ValidationError, match="same number of values"):
        Sweep.model_validate({"mode": "list", "parameters": [
            {"field": "a", "values": [1, 2]}, {"field": "b", "values": [1]}]})


@pytest.mark.parametrize("param, message", [
    ({"field": "orbit.eccentricity", "values": [0.0], "start": 0.0}, "not both"),
    ({"field": "orbit.eccentricity", "start": 0.0, "stop": 0.1}, "all of start, stop and count"),
    ({"field": "id", "values": [1]}, "assigned by the study"),
    ({"field": "orbit..eccentricity", "values": [1]}, "pattern"),
])
def test_malformed_parameters_are_refused(param, message):
    with pytest.raises(ValidationError, match=message):
        Sweep.model_validate({"parameters": [param]})


def test_overlapping_fields_are_refused():
    with pytest.raises(ValidationError, match="overlap"):
        Sweep.model_validate({"parameters": [{"field": "gravity", "values": [{}]},
                                             {"field": "gravity.sun", "values": [True]}]})


def test_a_study_is_either_a_batch_or_a_sweep():
    with pytest.raises(ValidationError, match="either items"):
        StudyRequest.model_validate({"defaults": {}})
    with pytest.raises(ValidationError, match="either items"):
        StudyRequest.model_validate({"items": [{"id": 1}],
                                     "sweep": {"parameters": [{"field": "a", "values": [1]}]}})


def test_swept_values_are_set_on_a_copy_of_the_base():
    base = {"orbit": {"type": "keplerian", "eccentricity": 0.0}, "start": "x"}
    out = swept_request(base, {"orbit.eccentricity": 0.1, "clock.preset": "quartz"})
    assert out == {"orbit": {"type": "keplerian", "eccentricity": 0.1}, "start": "x",
                   "clock": {"preset": "quartz"}}
    assert base["orbit"]["eccentricity"] == 0.0 and "clock" not in base
    body = {"a": 1}
    set_path(body, "a.b", 2)  # a scalar on the way is replaced by an object
    assert body == {"a": {"b": 2}}


def test_batch_items_merge_like_the_batch_route_and_file_objects_add_their_id():
    defaults = {"orbit": {"type": "tle_file", "text": "..."}, "end": "e", "reference": "TT"}
    assert merged_request(defaults, {"id": "A", "duration_days": 1.0}) == {
        "orbit": {"type": "tle_file", "text": "..."}, "duration_days": 1.0, "reference": "TT"}
    assert merged_request(defaults, {"id": "A", "orbit": {"object_id": "A"}})["orbit"] == {
        "type": "tle_file", "text": "...", "object_id": "A"}
    whole = {"type": "keplerian", "semi_major_axis_km": 7000.0}
    assert merged_request(defaults, {"id": "B", "orbit": whole})["orbit"] == whole
    assert item_request(defaults, {"reference": "TAI"}, None)["reference"] == "TAI"
