"""Tabulated orbits (OEM, SP3) through the HTTP API: the span against the data's coverage, and
corrupted lines.

Outside references: the sample files' own epochs and values (sample_orbits/formats; OEM epochs in
UTC, CCSDS 502.0-B-3 section 5.2.4; SP3 positions F14.6 km in GPS time, Hilla 2016), UTC = GPS
- 18 s in 2027 (TAI - UTC = 37 s since 2017-01-01, IERS Bulletin C 52; GPS = TAI - 19 s,
IS-GPS-200 section 3.3.4), and the closed form of the rate error a position error d implies,
GM d / (r^2 c^2) (the monopole term of TN36 eq. 10.6, differentiated). The invented LEO tables are
two-body orbits (physics' Keplerian source, checked against skyfield elsewhere) with seeded noise.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from taubudget.app.measured_clock import clock_residuals_from_texts
from taubudget.app.present.errors import shown
from taubudget.physics.errors import PhysicsInputError

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"
NAV3 = (SAMPLES / "kestrel_nav3.oem").read_text()  # 00:00 Mar 1 to 12:00 Mar 2, 5 min, two segments
GM_M3_PER_S2 = 3.986004418e14  # IERS TN36 table 1.1
C_M_PER_S = 299792458.0


def _upload(client, text: str, start: str, end: str, name: str = "orbit.oem", **form):
    return client.post("/v1/budgets", files={"file": (name, text.encode())},
                       data={"start": start, "end": end, "reference": "TAI", **form})


def _only_error(body) -> dict:
    (err,) = body["errors"]
    assert err["pointer"] == "/orbit/text"
    return err


# --- 1. the span against the data's coverage ------------------------------------------------


def test_a_span_ending_a_minute_past_the_data_is_refused(client, problem_of):
    """60 s past the last point is less than the inset of the first quadrature node, so a check
    at the nodes let it through and the series ran past the data."""
    body = problem_of(_upload(client, NAV3, "2027-03-01T06:00:00Z", "2027-03-02T12:01:00Z"), 422)
    detail = _only_error(body)["detail"]
    assert detail.startswith("the span's end (2027-03-02T12:01:00Z) lies 60 s after the data's last "
                             "point (2027-03-02T12:00:00Z); the ephemeris is never extrapolated")


@pytest.mark.parametrize(("start", "end", "expected"), [
    ("2027-03-01T06:00:00Z", "2027-03-02T18:00:00Z",
     "the span's end (2027-03-02T18:00:00Z) lies 21600 s after the data's last point (2027-03-02T12:00:00Z)"),
    ("2027-02-28T23:00:00Z", "2027-03-01T06:00:00Z",
     "the span's start (2027-02-28T23:00:00Z) lies 3600 s before the data's first point "
     "(2027-03-01T00:00:00Z)"),
    ("2027-02-28T23:00:00Z", "2027-03-02T13:00:00Z",
     "the span's start (2027-02-28T23:00:00Z) lies 3600 s before the data's first point "
     "(2027-03-01T00:00:00Z) and the span's end (2027-03-02T13:00:00Z) lies 3600 s after the data's "
     "last point (2027-03-02T12:00:00Z)"),
    ("2027-03-03T00:00:00Z", "2027-03-03T06:00:00Z",  # all after the data: how far its start is
     "the span's start (2027-03-03T00:00:00Z) lies 43200 s after the data's last point "
     "(2027-03-02T12:00:00Z)"),
])
def test_the_error_names_how_far_the_span_itself_lies_outside(client, problem_of, start, end, expected):
    """Not the first quadrature node the data miss (it read 74.2111 s for a span 6 h too long),
    and no time quoted as the value of the file's text."""
    body = problem_of(_upload(client, NAV3, start, end), 422)
    detail = _only_error(body)["detail"]
    assert detail.startswith(expected + "; the ephemeris is never extrapolated")
    # the two segments touch at 18:00, so the data cover one stretch
    assert detail.endswith("the data cover 2027-03-01T00:00:00Z to 2027-03-02T12:00:00Z")
    assert "orbit.text =" not in body["detail"]


def test_a_span_ending_on_the_last_point_is_accepted(client):
    """The span's end is TT seconds from two-double times: one float Julian date (~40 us) could
    put it past the last point."""
    resp = _upload(client, NAV3, "2027-03-02T00:00:00Z", "2027-03-02T12:00:00Z")
    assert resp.status_code == 200, resp.text
    assert resp.json()["end_utc"] == "2027-03-02T12:00:00.000000Z" and resp.json()["warnings"] == []


def _nav3_with_a_gap() -> str:
    """The sample with the second segment's first hour removed: data 00:00-18:00 and 19:00-12:00."""
    lines = NAV3.splitlines()
    meta2 = max(i for i, ln in enumerate(lines) if ln.startswith("START_TIME"))
    assert lines[meta2].endswith("2027-03-01T18:00:00.000")
    lines[meta2] = lines[meta2].replace("18:00:00", "19:00:00")
    keep = lines[:meta2] + [ln for ln in lines[meta2:] if not ln.startswith("2027-03-01T18:")]
    return "\n".join(keep) + "\n"


def test_a_span_across_a_gap_names_the_gap(client, problem_of):
    text = _nav3_with_a_gap()
    body = problem_of(_upload(client, text, "2027-03-01T12:00:00Z", "2027-03-02T00:00:00Z"), 422)
    detail = _only_error(body)["detail"]
    assert detail.startswith("the span crosses a gap of 3600 s in the data, from a segment's last point "
                             "(2027-03-01T18:00:00Z) to the next segment's first point "
                             "(2027-03-01T19:00:00Z)")
    assert detail.endswith("the data cover 2027-03-01T00:00:00Z to 2027-03-01T18:00:00Z; "
                           "2027-03-01T19:00:00Z to 2027-03-02T12:00:00Z")
    # within one stretch of the same file: accepted
    resp = _upload(client, text, "2027-03-01T19:00:00Z", "2027-03-02T12:00:00Z")
    assert resp.status_code == 200, resp.text


def _sp3_cut_at(hour: int) -> str:
    """The SP3 sample without its epochs after ``hour``:00 (GPS) of 2027-03-01."""
    out = []
    for ln in (SAMPLES / "kestrel_constellation.sp3").read_text().splitlines():
        if ln.startswith("*") and tuple(int(x) for x in ln.split()[3:6]) > (1, hour, 0):  # day, h, min
            break
        out.append(ln)
    return "\n".join(out) + "\nEOF\n"


def test_clock_epochs_past_the_orbit_file_name_the_last_epoch():
    """The RINEX clock file runs to 2027-03-02 00:00 GPS, the cut orbit to 23:00 GPS; in UTC,
    18 s earlier."""
    clock = (SAMPLES / "kestrel_constellation_304.clk").read_text()
    with pytest.raises(PhysicsInputError) as info:
        clock_residuals_from_texts(clock, _sp3_cut_at(23), "L51")
    field, value, reason = shown(info.value)
    assert field == "orbit_file.text" and value is None
    assert reason.startswith("the last clock epoch (2027-03-01T23:59:42Z) lies 3600 s after the data's "
                             "last point (2027-03-01T22:59:42Z); the ephemeris is never extrapolated")
    assert reason.endswith("the data cover 2027-02-28T23:59:42Z to 2027-03-01T22:59:42Z")


# --- 2. corrupted lines ----------------------------------------------------------------------

LINE_00_15 = 20  # the sample's data line of 2027-03-01T00:15:00 (first segment's fourth point)


@pytest.mark.parametrize(("old", "new", "field", "size"), [
    # X of 00:15, 5528.851921692 km written 55285.51921692: off by 49756.667 km
    ("5528.851921692", "55285.51921692", "X", "differs by 4.98e+07 m"),
    # X_DOT of 00:15 ten times too large: off by 9 x 3.4979 km/s
    ("-3.497948270860", "-34.97948270860", "X_DOT", "differs by 3.15e+04 m/s"),
])
def test_a_corrupted_oem_line_is_refused_naming_it(client, problem_of, old, new, field, size):
    """Both were accepted with 200 (326 and 73 us/day for a 38.575 us/day clock)."""
    lines = NAV3.splitlines()
    assert lines[LINE_00_15 - 1].startswith("2027-03-01T00:15:00.000") and old in lines[LINE_00_15 - 1]
    body = problem_of(_upload(client, NAV3.replace(old, new), "2027-03-01T00:00:00Z",
                              "2027-03-02T00:00:00Z"), 422)
    detail = _only_error(body)["detail"]
    assert detail.startswith(f"line {LINE_00_15}, {field}: the tabulated ")
    assert size in detail and "the table is not used" in detail


def test_a_corrupted_sp3_record_is_refused_naming_its_line(client, problem_of):
    text = (SAMPLES / "kestrel_constellation.sp3").read_text()
    lines = text.splitlines()
    n = [i for i, ln in enumerate(lines) if ln.startswith("PL52")][100]
    x_km = float(lines[n][4:18])
    lines[n] = lines[n][:4] + f"{x_km + 1.0:14.6f}" + lines[n][18:]  # 1 km off in X
    body = problem_of(_upload(client, "\n".join(lines) + "\n", "2027-03-01T01:00:00Z",
                              "2027-03-01T03:00:00Z", name="orbit.sp3", object_id="L52"), 422)
    detail = _only_error(body)["detail"]
    # SP3 coordinates are Earth-fixed: the record is named, not a GCRS component
    assert detail.startswith(f"line {n + 1}, P record: satellite L52: the tabulated position "
                             "differs by 1e+03 m")


@pytest.mark.parametrize("reference", ["TAI", "TCB"])  # GCRS and BCRS frames
@pytest.mark.parametrize(("name", "object_id", "start", "end"), [
    ("kestrel_nav3.oem", None, "2027-03-01T00:00:00Z", "2027-03-02T12:00:00Z"),
    ("kestrel_nav3_oem.xml", None, "2027-03-01T00:00:00Z", "2027-03-01T04:00:00Z"),
    # the SP3 sample's epochs are GPS time: 00:00 GPS is 23:59:42 UTC
    ("kestrel_constellation.sp3", "L51", "2027-02-28T23:59:42Z", "2027-03-01T23:59:42Z"),
    ("kestrel_constellation.sp3", "L52", "2027-02-28T23:59:42Z", "2027-03-01T23:59:42Z"),
])
def test_clean_samples_pass_without_warnings(client, name, object_id, start, end, reference):
    """All of each file's data. The LEO SP3 (5-minute points) has the largest interpolation error
    estimate, 2.4e-15 at the one-sided ends, under its budget's largest omitted term (the
    tesseral harmonics, 3.2e-15 at 7078 km)."""
    form = {"object_id": object_id} if object_id else {}
    resp = _upload(client, (SAMPLES / name).read_text(), start, end, name=name, reference=reference, **form)
    assert resp.status_code == 200, resp.text
    out = resp.json()
    # the XML sample holds 4 h of a 12-h orbit: its one warning is about the span, not the data
    expected = 1 if name.endswith(".xml") else 0
    assert len(out["warnings"]) == expected and all("shorter than one orbit" in w for w in out["warnings"])
    check = out["model"]["orbit"]["consistency_check"]
    assert check["max_position_ratio"] < 1.0  # measured 0.07 to 0.3 (ephemeris_table's docstring)
    assert check["max_velocity_ratio"] < 10.0  # SP3 velocities into the GCRS: 3.5


def test_the_test_support_oem_passes_without_warnings(client):
    from support.big_oem import circular_oem

    resp = _upload(client, circular_oem(2000), "2027-03-01T00:00:00Z", "2027-03-02T00:00:00Z")
    assert resp.status_code == 200, resp.text
    assert resp.json()["warnings"] == []


def _leo_oem(step_s: float, hours: float, degree: int, noise_m: float = 0.0) -> tuple[str, list[str]]:
    """An invented LEO (7000 km, e = 0.001) tabulated every ``step_s`` from 2027-03-01T00:00 UTC, with
    Gaussian noise of ``noise_m`` per position component (seed 7); the text and its lines."""
    from taubudget.physics.ephemeris import timescale
    from taubudget.physics.orbits import KeplerianOrbit
    from taubudget.physics.span import Span

    t0 = timescale().utc(2027, 3, 1)
    span = Span(t0, hours * 3600.0)
    t = np.arange(0.0, hours * 3600.0 + 0.5, step_s)
    st = KeplerianOrbit(t0, 7.0e6, 0.001, 55.0, 10.0, 20.0, 30.0).states(span, t, None)
    r_km = st.r_gcrs_m / 1e3 + np.random.default_rng(7).normal(0.0, noise_m / 1e3, (t.size, 3))
    rows = [f"{ep[:-1]} " + " ".join(f"{x:.9f}" for x in r) + " " + " ".join(f"{x:.12f}" for x in v)
            for ep, r, v in zip(span.utc_iso(t), r_km, st.v_gcrs_m_per_s / 1e3, strict=True)]
    head = ["CCSDS_OEM_VERS = 2.0", "CREATION_DATE = 2027-02-28T00:00:00", "ORIGINATOR = TAUBUDGET-TEST",
            "META_START", "OBJECT_NAME = PLOVER-LEO-2", "OBJECT_ID = 2027-990M", "CENTER_NAME = EARTH",
            "REF_FRAME = GCRF", "TIME_SYSTEM = UTC", f"START_TIME = {rows[0][:26]}",
            f"STOP_TIME = {rows[-1][:26]}", "INTERPOLATION = LAGRANGE",
            f"INTERPOLATION_DEGREE = {degree}", "META_STOP"]
    lines = head + rows
    return "\n".join(lines) + "\n", lines


def test_a_mildly_inconsistent_line_is_a_warning_naming_it(client):
    """A table with 10 cm of noise (which the check takes as the data's own scatter) and one
    position 100 m off: too little to call corrupted, enough to matter for a LEO budget. The
    warning names the line and the size; 100 m at r = 7000 km is GM d / (r^2 c^2) = 9.1e-15."""
    _, lines = _leo_oem(60.0, 12.0, 7, noise_m=0.1)
    n = next(i for i, ln in enumerate(lines) if ln.startswith("2027-03-01T05:00:00"))
    tok = lines[n].split()
    tok[1] = f"{float(tok[1]) + 0.1:.9f}"  # X, km: 100 m
    lines[n] = " ".join(tok)
    resp = _upload(client, "\n".join(lines) + "\n", "2027-03-01T01:00:00Z", "2027-03-01T11:00:00Z")
    assert resp.status_code == 200, resp.text
    out = resp.json()
    (warning,) = out["warnings"]
    assert warning.startswith(f"orbit data, line {n + 1}, X: the tabulated position differs by 100 m")
    r_m = np.linalg.norm([float(x) for x in tok[1:4]]) * 1e3
    assert f"up to {GM_M3_PER_S2 * 100.0 / (r_m**2 * C_M_PER_S**2):.2g} near it" in warning
    precision = max(t["size_fractional"] for t in out["omitted_terms"])  # the LEO's tesseral term
    assert f"above the budget's precision of {precision:.2g}" in warning


def test_a_coarse_table_warns_with_its_interpolation_error(client):
    """A LEO every 10 minutes at degree 5: the interpolation error estimate (n vs n - 2) implies a
    rate error far above the largest term the budget leaves out, which the response now says."""
    text, _ = _leo_oem(600.0, 12.0, 5)
    resp = _upload(client, text, "2027-03-01T01:00:00Z", "2027-03-01T11:00:00Z")
    assert resp.status_code == 200, resp.text
    out = resp.json()
    est = out["model"]["orbit"]["interpolation_error_estimate"]
    precision = max(t["size_fractional"] for t in out["omitted_terms"])
    assert est["max_fractional_rate"] > 100 * precision
    (warning,) = out["warnings"]
    assert warning.startswith("orbit data: the interpolation error estimate reaches")
    assert f"{est['max_fractional_rate']:.2g} at some nodes" in warning


def test_a_contact_plan_needing_the_orbit_before_the_data_points_at_the_file(client, problem_of):
    """A pass received at the span's start was emitted a light time (~0.07 s from 20,000 km) earlier,
    before the file's first point: refused, on the orbit's text (it read /coverage, no request field)."""
    from taubudget.app.api.contacts import EXAMPLE_CONTACT_PLAN_MEO

    body = {**EXAMPLE_CONTACT_PLAN_MEO, "orbit": {"type": "oem", "text": NAV3},
            "start": "2027-03-01T00:00:00Z", "end": "2027-03-01T12:00:00Z"}
    body.pop("duration_days", None)
    detail = _only_error(problem_of(client.post("/v1/contact-plans", json=body), 422))["detail"]
    assert detail.startswith("the orbit is asked for at an instant (2027-02-28T23:59:59.9")
    assert "s before the data's first point (2027-03-01T00:00:00Z)" in detail
