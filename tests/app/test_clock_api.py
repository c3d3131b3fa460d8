"""POST /v1/clock-stability against NIST SP 1065 Table 30, over JSON and text uploads; input errors.

Reference: W. J. Riley, NIST Special Publication 1065, "Handbook of Frequency Stability
Analysis" (2008), Table 30: the NBS 9-point data set (fractional frequency, tau0 = 1 s)
with ADEV 91.22945 at tau = 1 and 115.8082 at tau = 2 (values quoted in DESIGN.md), and
OADEV 85.95287, MDEV 74.78849, TDEV 52.67135 / 86.35831, HDEV 70.80607 / 116.7980 (as in
tests/physics/clock/test_against_nist_sp1065.py, which cites where they were read).
"""

from __future__ import annotations

import math

import pytest
from fastapi.testclient import TestClient
from support.nist_sp1065 import NBS9_Y
from support.nist_sp1065 import TABLE_30 as SP1065_TABLE_30
from taubudget.app.main import create_app
from taubudget.app.settings import Settings

NBS_9 = NBS9_Y

# (row key, value at tau = 1, value at tau = 2), SP 1065 Table 30 (TDEV's row key carries "_s").
TABLE_30 = [("tdev_s" if name == "tdev" else name, at_1, at_2)
            for name, at_1, at_2 in SP1065_TABLE_30 if name != "ohdev"]


def _unit_of_7th_digit(value: float) -> float:
    """Half a unit in the 7th significant digit: the table's printed precision."""
    return 0.5 * 10.0 ** (math.floor(math.log10(abs(value))) - 6)


def _check_table_30(rows: list[dict]) -> None:
    assert [r["tau_s"] for r in rows[:2]] == [1.0, 2.0]
    for key, at_1, at_2 in TABLE_30:
        assert abs(rows[0][key] - at_1) <= _unit_of_7th_digit(at_1), key
        assert abs(rows[1][key] - at_2) <= _unit_of_7th_digit(at_2), key


def test_json_body_matches_sp1065_table_30(client):
    body = {"data": NBS_9, "data_type": "frequency", "sample_interval_s": 1.0, "confidence": 0.683}
    resp = client.post("/v1/clock-stability", json=body)
    assert resp.status_code == 200, resp.text
    out = resp.json()
    _check_table_30(out["deviations"])
    assert out["n_samples"] == 9 and out["n_phase_points"] == 10
    assert out["caution"].startswith("Planning estimate")
    row = out["deviations"][0]
    # Every statistic carries its bounds and number of terms; ADEV at tau0 of 10 phase
    # points averages N - 2 = 8 second differences (SP 1065 section 5.2.2).
    for name in ("adev", "oadev", "mdev", "hdev"):
        assert row[f"{name}_lower"] < row[name] < row[f"{name}_upper"]
        assert row[f"{name}_n_terms"] > 0
    assert row["tdev_lower_s"] < row["tdev_s"] < row["tdev_upper_s"]
    assert row["adev_n_terms"] == 8


def test_text_upload_matches_the_json_result(client):
    text = "value\n" + "\n".join(str(v) for v in NBS_9) + "\n"
    resp = client.post("/v1/clock-stability", params={"data_type": "frequency", "sample_interval_s": 1},
                       content=text, headers={"content-type": "text/plain"})
    assert resp.status_code == 200, resp.text
    _check_table_30(resp.json()["deviations"])


def test_multipart_csv_upload_reads_its_header_lines(client):
    text = "# data_type: frequency\r\n# sample_interval_s: 1\r\n" + "\r\n".join(map(str, NBS_9))
    resp = client.post("/v1/clock-stability", files={"file": ("nbs.csv", text, "text/csv")})
    assert resp.status_code == 200, resp.text
    _check_table_30(resp.json()["deviations"])


def test_phase_input_scales_with_the_sample_interval(client):
    """Same phase points at 10x the interval: ADEV / 10 (x differences over tau), TDEV unchanged."""
    phase = [0.0, 1.2e-9, 0.7e-9, 2.9e-9, 3.1e-9, 2.2e-9, 4.8e-9, 5.0e-9, 6.6e-9]
    a = client.post("/v1/clock-stability", json={"data": phase, "sample_interval_s": 1.0}).json()
    b = client.post("/v1/clock-stability", json={"data": phase, "sample_interval_s": 10.0}).json()
    rel = 1e-12  # rounding only
    assert b["deviations"][0]["adev"] == pytest.approx(a["deviations"][0]["adev"] / 10, rel=rel)
    assert b["deviations"][0]["tdev_s"] == pytest.approx(a["deviations"][0]["tdev_s"], rel=rel)


@pytest.mark.parametrize("body, pointer", [
    ({"data": NBS_9, "data_type": "bogus", "sample_interval_s": 1}, "/data_type"),
    ({"data": NBS_9, "sample_interval_s": 0}, "/sample_interval_s"),
    ({"data": NBS_9}, "/sample_interval_s"),
    ({"data": [1.0, 2.0], "sample_interval_s": 1}, "/data"),
    ({"data": [1.0, "x", 3.0], "sample_interval_s": 1}, "/data/1"),
    ({"data": NBS_9, "sample_interval_s": 1, "confidence": 1.5}, "/confidence"),
    ({"data": NBS_9, "sample_interval_s": 1, "tau_s": 2}, "/tau_s"),
])
def test_bad_json_is_422_naming_the_field(client, problem_of, pointers_of, body, pointer):
    p = problem_of(client.post("/v1/clock-stability", json=body), 422)
    assert pointer in pointers_of(p)


def test_bad_text_line_is_422_naming_the_line(client, problem_of):
    text = "1.0\n2.0\nabc\n4.0\n"
    p = problem_of(client.post("/v1/clock-stability", params={"sample_interval_s": 1}, content=text,
                               headers={"content-type": "text/plain"}), 422)
    assert "line 3" in p["detail"] and "abc" in p["detail"]


def test_text_without_sample_interval_is_422_naming_the_parameter(client, problem_of):
    p = problem_of(client.post("/v1/clock-stability", content="1\n2\n3\n4\n",
                               headers={"content-type": "text/plain"}), 422)
    assert p["errors"][0]["parameter"] == "sample_interval_s"


def test_two_columns_are_refused(client, problem_of):
    p = problem_of(client.post("/v1/clock-stability", params={"sample_interval_s": 1},
                               content="1,2\n3,4\n5,6\n", headers={"content-type": "text/csv"}), 422)
    assert "one value per line" in p["detail"]


def test_query_parameters_with_a_json_body_are_refused(client, problem_of):
    p = problem_of(client.post("/v1/clock-stability", params={"sample_interval_s": 1},
                               json={"data": NBS_9, "sample_interval_s": 1}), 422)
    assert p["errors"][0]["parameter"] == "sample_interval_s"


LIMIT_POINTS = 20


@pytest.fixture(scope="module")
def tiny_client():
    with TestClient(create_app(Settings(MAX_STABILITY_POINTS=LIMIT_POINTS))) as c:
        yield c


def test_sample_limit_is_413_for_json_and_text(tiny_client, problem_of):
    data = [float(i % 7) for i in range(LIMIT_POINTS + 1)]
    p = problem_of(tiny_client.post("/v1/clock-stability", json={"data": data, "sample_interval_s": 1}), 413)
    assert p["limit"] == LIMIT_POINTS
    text = "\n".join(map(str, data))
    problem_of(tiny_client.post("/v1/clock-stability", params={"sample_interval_s": 1}, content=text,
                                headers={"content-type": "text/plain"}), 413)
    ok = tiny_client.post("/v1/clock-stability", json={"data": data[:LIMIT_POINTS], "sample_interval_s": 1})
    assert ok.status_code == 200
