"""Span lengths and time labels keep microseconds.

A single float Julian date (~2.46e6 days) resolves only ~40 us; spans are computed from skyfield's
two-part dates. Check values: the length of a UTC interval in TT seconds is its UTC length plus the
leap seconds inside it (IERS Bulletin C 52: one leap second at the end of 2016-12-31).
"""

from __future__ import annotations

import copy

import pytest
from taubudget.app.schemas import EXAMPLE_REQUEST


@pytest.mark.parametrize("start, end, span_s, end_label", [
    ("2027-03-01T00:00:00Z", "2027-03-01T12:00:30.5Z", 43230.5, "2027-03-01T12:00:30.500000Z"),
    ("2027-03-01T00:00:00Z", "2027-03-01T12:00:30Z", 43230.0, "2027-03-01T12:00:30.000000Z"),
    # across the leap second
    ("2016-12-31T12:00:00Z", "2017-01-01T12:00:00Z", 86401.0, "2017-01-01T12:00:00.000000Z"),
])
def test_span_and_end_label_to_the_microsecond(client, start, end, span_s, end_label):
    body = copy.deepcopy(EXAMPLE_REQUEST)
    body["orbit"]["epoch"] = start
    body.update(start=start, end=end)
    body.pop("series_step_s")
    out = client.post("/v1/budgets", json=body).json()
    assert out["span_s"] == pytest.approx(span_s, abs=1e-6)
    # the label the service writes for the span end is the instant the request gave
    assert out["end_utc"] == end_label
