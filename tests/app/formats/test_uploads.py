"""Multipart orbit-file uploads on POST /v1/budgets and /v1/budgets/batch.

Reference for every 200: the same file sent as a JSON text orbit ({"type": ..., "text": ...},
issue 7's contract), whose budget the upload must reproduce exactly. Object ids: the TLE
name line (without its "0 " prefix) or else the catalogue number in columns 3-7 of line 1
(element-set format, Spacetrack Report No. 3); the SP3 satellite IDs of the "+" header lines
(Hilla 2016, SP3-d); OMM OBJECT_ID (CCSDS 502.0-B-3 table 4-2). Error paths: the detail names
the line and the keyword; the body-size limit is the service's MAX_BODY_BYTES.
"""

import copy
import json
from pathlib import Path

import pytest

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"
SPAN = {"start": "2027-03-01T01:00:00Z", "end": "2027-03-01T03:00:00Z"}  # inside every sample's data
REST = {**SPAN, "reference": "TAI", "gravity": {"earth_zonal_degree": 2, "sun": False, "moon": False}}

# file, expected detected type, object_id for files with several objects
SINGLE = [
    ("kestrel_timing1.omm", "omm", None),
    ("kestrel_timing1_omm.xml", "omm", None),
    ("kestrel_timing_omm.json", "omm", "2027-901B"),
    ("kestrel_timing_omm.csv", "omm", "2027-901A"),
    ("kestrel_nav3.opm", "opm", None),
    ("kestrel_nav3_opm.xml", "opm", None),
    ("kestrel_nav3.oem", "oem", None),
    ("kestrel_nav3_oem.xml", "oem", None),
    ("kestrel_constellation.sp3", "sp3", "L52"),
    ("kestrel_fleet.tle", "tle_file", "99873"),
]


def _json_route(client, file_type, text, object_id=None, rest=REST):
    orbit = {"type": file_type, "text": text}
    if object_id is not None:
        orbit["object_id"] = object_id
    resp = client.post("/v1/budgets", json={**copy.deepcopy(rest), "orbit": orbit})
    assert resp.status_code == 200, resp.text
    return resp.json()


@pytest.mark.parametrize(("name", "file_type", "object_id"), SINGLE)
def test_single_upload_with_a_request_part_matches_the_json_text_orbit(client, name, file_type, object_id):
    text = (SAMPLES / name).read_text()
    request = dict(REST, orbit={"object_id": object_id} if object_id else {})
    resp = client.post("/v1/budgets", files={"file": (name, text.encode()),
                                             "request": (None, json.dumps(request))})
    assert resp.status_code == 200, resp.text
    got = resp.json()
    assert got == _json_route(client, file_type, text, object_id)
    assert got["caution"]


def test_form_fields_give_the_same_request_as_a_json_part(client):
    text = (SAMPLES / "kestrel_constellation.sp3").read_bytes()
    form = {"start": SPAN["start"], "end": SPAN["end"], "reference": "TAI", "object_id": "L51",
            "gravity": json.dumps(REST["gravity"]), "type": "sp3"}
    resp = client.post("/v1/budgets", files={"file": ("orbit.dat", text)}, data=form)
    assert resp.status_code == 200, resp.text
    assert resp.json() == _json_route(client, "sp3", text.decode(), "L51")


def test_the_request_json_itself_as_the_file_part(client, request_body):
    data = json.dumps(request_body).encode()
    up = client.post("/v1/budgets", files={"file": ("request.json", data, "application/json")})
    assert up.status_code == 200, up.text
    assert up.json() == client.post("/v1/budgets", content=data).json()


def _batch_upload(client, name, defaults=REST):
    return client.post("/v1/budgets/batch", files={"file": (name, (SAMPLES / name).read_bytes()),
                                                   "defaults": (None, json.dumps(defaults))})


def test_batch_from_a_tle_file_is_one_item_per_object_in_file_order(client):
    resp = _batch_upload(client, "kestrel_fleet.tle")
    assert resp.status_code == 200, resp.text
    out = resp.json()
    # Name line, "0 "-prefixed name line, and no name line (catalogue number 99873).
    assert [r["id"] for r in out["items"]] == ["KESTREL-TIMING-1", "KESTREL-TIMING-2", "99873"]
    assert [r["status"] for r in out["items"]] == [200, 200, 200] and out["caution"]
    text = (SAMPLES / "kestrel_fleet.tle").read_text()
    for r in out["items"]:
        assert r["budget"] == _json_route(client, "tle_file", text, r["id"])


def test_batch_from_an_sp3_file_with_two_satellites(client):
    resp = client.post("/v1/budgets/batch", files={"file": ("c.sp3", (SAMPLES / "kestrel_constellation.sp3")
                                                            .read_bytes())},
                       data={"start": SPAN["start"], "end": SPAN["end"], "reference": "TAI",
                             "gravity": json.dumps(REST["gravity"])})
    assert resp.status_code == 200, resp.text
    out = resp.json()
    assert [r["id"] for r in out["items"]] == ["L51", "L52"]
    text = (SAMPLES / "kestrel_constellation.sp3").read_text()
    for r in out["items"]:
        assert r["status"] == 200
        assert r["budget"] == _json_route(client, "sp3", text, r["id"])


def test_batch_from_an_omm_with_two_objects_keeps_per_item_problems(client):
    # A bad shared field: each object gets its own problem, pointing into the defaults.
    resp = _batch_upload(client, "kestrel_timing_omm.json", dict(REST, series_step_s=-5))
    out = resp.json()
    assert [r["id"] for r in out["items"]] == ["2027-901A", "2027-901B"]
    assert [r["status"] for r in out["items"]] == [422, 422]
    assert out["items"][0]["problem"]["errors"][0]["pointer"] == "/defaults/series_step_s"


def test_a_wrong_checksum_is_a_422_naming_line_and_keyword(client, problem_of):
    lines = (SAMPLES / "kestrel_fleet.tle").read_text().splitlines()
    lines[2] = lines[2][:68] + str((int(lines[2][68]) + 1) % 10)  # line 3: line 2 of the first object
    bad = "\n".join(lines) + "\n"
    for route in ("/v1/budgets", "/v1/budgets/batch"):
        body = problem_of(client.post(route, files={"file": ("f.tle", bad.encode())}, data=SPAN), 422)
        err = body["errors"][0]
        assert err["part"] == "file"
        assert "line 3" in err["detail"] and "checksum" in err["detail"]


def test_a_bad_frame_and_a_clock_file_are_422s_naming_line_and_keyword(client, problem_of):
    opm = (SAMPLES / "kestrel_nav3.opm").read_text().replace("GCRF", "TOD")
    body = problem_of(client.post("/v1/budgets", files={"file": ("x.opm", opm.encode())}, data=SPAN), 422)
    assert body["errors"][0]["pointer"] == "/orbit/text" and body["errors"][0]["part"] == "file"
    assert "REF_FRAME" in body["detail"] and "Line " in body["detail"]
    clk = (SAMPLES / "kestrel_constellation_302.clk").read_bytes()
    body = problem_of(client.post("/v1/budgets", files={"file": ("x.clk", clk)}, data=SPAN), 422)
    assert "line 1, RINEX VERSION / TYPE" in body["errors"][0]["detail"]


def test_a_bad_form_field_names_its_part(client, problem_of):
    text = (SAMPLES / "kestrel_nav3.opm").read_bytes()
    body = problem_of(client.post("/v1/budgets", files={"file": ("x.opm", text)},
                                  data={"start": SPAN["start"], "duration_days": "two"}), 422)
    assert body["errors"] == [{"pointer": "/duration_days", "part": "duration_days",
                               "detail": body["errors"][0]["detail"]}]
    body = problem_of(client.post("/v1/budgets", files={"file": ("x.opm", text),
                                                        "request": (None, json.dumps(SPAN))},
                                  data={"start": SPAN["start"]}), 422)
    assert body["errors"][0]["pointer"] == "/start" and "both" in body["errors"][0]["detail"]


def test_an_upload_over_the_body_limit_is_413(small_client, problem_of):
    data = (SAMPLES / "kestrel_constellation.sp3").read_bytes()
    assert len(data) > 4000  # small_client's MAX_BODY_BYTES
    for route in ("/v1/budgets", "/v1/budgets/batch"):
        p = problem_of(small_client.post(route, files={"file": ("c.sp3", data)}, data=SPAN), 413)
        assert p["limit_name"] == "MAX_BODY_BYTES" and p["limit"] == 4000


def test_a_file_with_more_objects_than_batch_items_is_413(small_client, problem_of):
    lines = (SAMPLES / "kestrel_fleet.tle").read_text().splitlines()
    four = "\n".join(lines + ["KESTREL-SPARE", *lines[1:3]]) + "\n"  # a fourth object, limit 3
    p = problem_of(small_client.post("/v1/budgets/batch", files={"file": ("f.tle", four.encode())},
                                     data=SPAN), 413)
    assert p["limit_name"] == "MAX_BATCH_ITEMS" and p["limit"] == 3
