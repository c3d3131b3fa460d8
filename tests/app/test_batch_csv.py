"""/v1/budgets/batch as CSV: one row per item, the same figures as the JSON answer."""

from __future__ import annotations

import csv
import io

from support.studies import csv_rows
from taubudget.app.schemas import EXAMPLE_BATCH_REQUEST


def _batch():
    bad = {"id": "@bad", "orbit": {**EXAMPLE_BATCH_REQUEST["items"][0]["orbit"], "eccentricity": 1.2}}
    return {**EXAMPLE_BATCH_REQUEST, "items": [*EXAMPLE_BATCH_REQUEST["items"], bad]}


def test_batch_csv_route_and_accept_header_give_one_row_per_item(client):
    body = _batch()
    as_json = client.post("/v1/budgets/batch", json=body).json()
    by_route = client.post("/v1/budgets/batch.csv", json=body)
    by_accept = client.post("/v1/budgets/batch", json=body, headers={"Accept": "text/csv"})
    assert by_route.status_code == by_accept.status_code == 200
    assert by_route.headers["content-type"].startswith("text/csv")
    assert by_route.text == by_accept.text
    # RFC 4180 only (no '#' lines): the field,value block, an empty row, then the table
    head = list(csv.reader(io.StringIO(by_route.text)))[:4]
    assert head[0] == ["field", "value"] and head[1][1].startswith("taubudget batch")
    assert head[2][0] == "caution" and head[2][1].startswith("Planning estimate") and head[3] == []
    rows = csv_rows(by_route.text)
    assert [r["id"] for r in rows] == ["kestrel-01", "kestrel-02", "'@bad"]
    for row, item in zip(rows[:2], as_json["items"][:2], strict=True):
        b = item["budget"]
        assert row["status"] == "200"
        assert float(row["mean_rate_us_per_day"]) == b["mean_rate_us_per_day"]
        assert float(row["mean_fractional_rate"]) == b["mean_fractional_rate"]
        assert float(row["periodic_amplitude_ns"]) == b["periodic"]["amplitude_ns"]
        assert (row["preset_frequency_hz"] == "") == (b.get("preset_frequency_hz") is None)
    assert rows[1]["preset_frequency_hz"] == repr(as_json["items"][1]["budget"]["preset_frequency_hz"])
    assert rows[2]["status"] == "422" and rows[2]["mean_rate_us_per_day"] == ""
    assert rows[2]["problem"] == as_json["items"][2]["problem"]["detail"]
    # JSON stays the default
    assert client.post("/v1/budgets/batch", json=body).headers["content-type"].startswith("application/json")
