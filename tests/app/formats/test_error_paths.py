"""Every format's error paths name the line and the keyword (and become orbit.text input errors).

The mandatory keywords are those of CCSDS 502.0-B-3 Tables 3-1..3-3 (OPM), 4-1..4-3 (OMM)
and 5-1..5-3 (OEM); the checksum rule is the element-set format's modulo-10 sum of columns
1-68; SP3 and RINEX clock layouts as in their format documents (Hilla 2010/2016; Ray &
Gurtner 2010/2017).
"""

from pathlib import Path

import numpy as np
import pytest
from support.budgets import LEO_TLE
from taubudget.app.formats import build_format_source
from taubudget.app.formats.common import MAX_TEXT_CHARS, FormatError
from taubudget.app.formats.models import OemOrbitIn, OmmOrbitIn, OpmOrbitIn, Sp3OrbitIn, TleFileOrbitIn
from taubudget.app.formats.omm import parse_omm
from taubudget.app.formats.opm import parse_opm
from taubudget.app.formats.rinex_clock import parse_rinex_clock
from taubudget.app.formats.sp3 import parse_sp3
from taubudget.app.formats.tle_file import parse_tle_file
from taubudget.physics.errors import PhysicsInputError

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"
R_KM = (-12_000.123456789, 21_000.5, 8_000.25)
V_KM_S = (-2.5, -1.25, 2.75)
EPOCH = "2027-03-01T00:00:00Z"


def _line_of(text: str, start: str) -> int:
    return next(n for n, ln in enumerate(text.splitlines(), start=1) if ln.startswith(start))


def _oem_text(odm, **meta):
    seg = {"OBJECT_NAME": "KESTREL-NAV-3", "OBJECT_ID": "2027-901C", "CENTER_NAME": "EARTH",
           "REF_FRAME": "GCRF", "TIME_SYSTEM": "UTC", "START_TIME": "2027-03-01T00:00:00",
           "STOP_TIME": "2027-03-01T00:20:00", "INTERPOLATION": "LAGRANGE", "INTERPOLATION_DEGREE": "3",
           # straight-line motion at V_KM_S: positions and velocities agree (the table checks)
           "rows": [(f"2027-03-01T00:{m:02d}:00", np.array(R_KM) + 60.0 * m * np.array(V_KM_S), V_KM_S)
                    for m in range(0, 21, 5)]}
    seg.update(meta)
    return odm.oem_kvn([seg])


# --- OPM ---------------------------------------------------------------------------

def test_opm_missing_mandatory_keyword(odm):
    text = odm.opm_kvn(EPOCH, R_KM, V_KM_S, drop="Y_DOT")
    with pytest.raises(FormatError) as info:
        parse_opm(text)
    assert info.value.keyword == "Y_DOT" and "missing" in info.value.reason
    assert info.value.line_number == 1


def test_opm_bad_epoch_names_its_line(odm):
    text = odm.opm_kvn("2027-02-30T00:00:00", R_KM, V_KM_S)
    with pytest.raises(FormatError) as info:
        parse_opm(text)
    assert (info.value.line_number, info.value.keyword) == (_line_of(text, "EPOCH"), "EPOCH")


@pytest.mark.parametrize("frame", ["TOD", "MOD", "ECLIPJ2000"])
def test_opm_unknown_frame_is_refused_by_name(odm, frame):
    text = odm.opm_kvn(EPOCH, R_KM, V_KM_S, frame=frame)
    with pytest.raises(FormatError) as info:
        parse_opm(text)
    assert info.value.keyword == "REF_FRAME" and frame in info.value.reason
    assert info.value.line_number == _line_of(text, "REF_FRAME")


def test_opm_unknown_time_system_and_wrong_unit(odm):
    with pytest.raises(FormatError) as info:
        parse_opm(odm.opm_kvn(EPOCH, R_KM, V_KM_S, time_system="GMST"))
    assert info.value.keyword == "TIME_SYSTEM" and "GMST" in info.value.reason
    text = odm.opm_kvn(EPOCH, R_KM, V_KM_S).replace("[km/s]", "[m/s]", 1)
    with pytest.raises(FormatError) as info:
        parse_opm(text)
    assert info.value.keyword == "X_DOT" and info.value.line_number == _line_of(text, "X_DOT")


def test_opm_xml_missing_keyword_and_forbidden_entities(odm):
    with pytest.raises(FormatError) as info:
        parse_opm(odm.opm_xml(EPOCH, R_KM, V_KM_S, drop="Z"))
    assert info.value.keyword == "Z"
    bomb = ('<?xml version="1.0"?><!DOCTYPE opm [<!ENTITY a "aaaaaaaaaa">'
            '<!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;">]><opm>&b;</opm>')
    with pytest.raises(FormatError) as info:
        parse_opm(bomb)
    assert info.value.keyword == "XML" and "forbidden" in info.value.reason


def test_opm_maneuver_is_refused(odm):
    text = odm.opm_kvn(EPOCH, R_KM, V_KM_S, extra=["MAN_EPOCH_IGNITION = 2027-03-01T06:00:00"])
    with pytest.raises(FormatError) as info:
        parse_opm(text)
    assert info.value.keyword == "MAN_EPOCH_IGNITION"
    assert info.value.line_number == _line_of(text, "MAN_EPOCH")


# --- OMM ---------------------------------------------------------------------------

def test_omm_missing_keyword_bad_epoch_and_frame(odm):
    f = odm.omm_fields_from_tle(*LEO_TLE)
    with pytest.raises(FormatError) as info:
        parse_omm(odm.omm_kvn(f, drop="ECCENTRICITY"))
    assert info.value.keyword == "ECCENTRICITY"
    text = odm.omm_kvn(f, epoch="2027-366T00:00:00")
    with pytest.raises(FormatError) as info:
        parse_omm(text)
    assert (info.value.keyword, info.value.line_number) == ("EPOCH", _line_of(text, "EPOCH"))
    with pytest.raises(FormatError) as info:
        parse_omm(odm.omm_kvn(f, frame="GCRF"))
    assert info.value.keyword == "REF_FRAME" and "TEME" in info.value.reason


def test_omm_csv_row_names_its_line(odm):
    f = odm.omm_fields_from_tle(*LEO_TLE)
    text = odm.omm_csv([f, dict(f, EPOCH="2027-03-01 06:00")])
    with pytest.raises(FormatError) as info:
        parse_omm(text)
    assert (info.value.line_number, info.value.keyword) == (3, "EPOCH")


def test_omm_undetectable_encoding():
    with pytest.raises(FormatError) as info:
        parse_omm("this is not an orbit message\n")
    assert info.value.line_number == 1


# --- OEM ---------------------------------------------------------------------------

def test_oem_missing_metadata_keyword(odm):
    from taubudget.app.formats.oem import parse_oem

    text = _oem_text(odm)
    text = "\n".join(ln for ln in text.splitlines() if not ln.startswith("TIME_SYSTEM"))
    with pytest.raises(FormatError) as info:
        parse_oem(text)
    assert info.value.keyword == "TIME_SYSTEM" and info.value.line_number == _line_of(text, "META_START")


def test_oem_bad_epoch_line_and_unknown_frame(odm):
    from taubudget.app.formats.oem import parse_oem

    text = _oem_text(odm).replace("2027-03-01T00:10:00", "2027-03-01T00:61:00")
    with pytest.raises(FormatError) as info:
        parse_oem(text)
    assert info.value.keyword == "EPOCH" and info.value.line_number == _line_of(text, "2027-03-01T00:61")
    with pytest.raises(FormatError) as info:
        parse_oem(_oem_text(odm, REF_FRAME="TOD"))
    assert info.value.keyword == "REF_FRAME"


def test_oem_never_extrapolates(ts, odm):
    from taubudget.physics.span import Span

    src = build_format_source(OemOrbitIn(type="oem", text=_oem_text(odm)))
    span = Span(ts.utc(2027, 3, 1), 3600.0)
    with pytest.raises(PhysicsInputError) as info:
        src.states(span, np.array([0.0, 1800.0]))
    # physics: its own vocabulary (the table's coverage, seconds, the instant as a Time) ...
    exc = info.value
    assert exc.field == "coverage" and exc.source is src and "never extrapolated" in exc.reason
    assert "600 s after the data's last point" in exc.reason and "2027-" not in exc.reason
    assert float(span.seconds_after_start(exc.at)) == pytest.approx(1800.0, abs=1e-3)
    # ... and the app's terms: the file's text, the instant and the coverage in UTC
    from taubudget.app.present.errors import shown
    from taubudget.app.services.request_terms import request_error

    field, value, reason = shown(request_error(exc, "orbit", OemOrbitIn))
    assert field == "orbit.text" and value is None  # the text has no value to quote
    assert ("asked for at an instant (2027-03-01T00:30:00Z) 600 s after the data's last point "
            "(2027-03-01T00:20:00Z)") in reason
    assert "the data cover 2027-03-01T00:00:00Z to 2027-03-01T00:20:00Z" in reason


def test_oem_span_is_checked_at_its_ends_before_any_node(ts, odm):
    """check_span judges the span itself, not the nodes a budget would use: an end 30 s past the
    data's last point (00:20:00 in the file) is refused, naming the 30 s and both instants; a
    span ending on the last point is not."""
    from taubudget.physics.span import Span

    src = build_format_source(OemOrbitIn(type="oem", text=_oem_text(odm)))
    src.check_span(Span(ts.utc(2027, 3, 1), 1200.0))
    with pytest.raises(PhysicsInputError) as info:
        src.check_span(Span(ts.utc(2027, 3, 1, 0, 5), 930.0))
    exc = info.value
    assert exc.field == "coverage" and exc.source is src and "2027-" not in exc.reason
    assert exc.reason.startswith("the span's end lies 30 s after the data's last point")
    assert [name for name, _ in exc.instants] == ["the span's end", "the data's last point"]
    from taubudget.app.present.errors import shown
    from taubudget.app.services.request_terms import request_error

    _, _, reason = shown(request_error(exc, "orbit", OemOrbitIn))
    assert reason.startswith("the span's end (2027-03-01T00:20:30Z) lies 30 s after the data's last "
                             "point (2027-03-01T00:20:00Z); the ephemeris is never extrapolated")


# --- TLE files -----------------------------------------------------------------------

def test_tle_file_wrong_checksum_names_line():
    bad1 = LEO_TLE[0][:-1] + str((int(LEO_TLE[0][-1]) + 3) % 10)
    text = f"KESTREL-TIMING-1\n{bad1}\n{LEO_TLE[1]}\n"
    with pytest.raises(FormatError) as info:
        parse_tle_file(text)
    assert (info.value.line_number, info.value.keyword) == (2, "checksum")
    assert f"columns 1-68 give {LEO_TLE[0][-1]}" in info.value.reason


def test_tle_file_orphan_lines():
    with pytest.raises(FormatError) as info:
        parse_tle_file(f"{LEO_TLE[0]}\nKESTREL\n")
    assert (info.value.line_number, info.value.keyword) == (1, "line 2")
    with pytest.raises(FormatError) as info:
        parse_tle_file(f"NAME\n\n{LEO_TLE[1]}\n")
    assert (info.value.line_number, info.value.keyword) == (3, "line 1")


def test_tle_file_several_objects_need_object_id():
    text = (SAMPLES / "kestrel_fleet.tle").read_text()
    with pytest.raises(PhysicsInputError) as info:
        build_format_source(TleFileOrbitIn(type="tle_file", text=text))
    assert info.value.field == "orbit.object_id" and "3 objects" in info.value.reason


# --- SP3 and RINEX clock ---------------------------------------------------------------

def test_sp3_truncated_unknown_time_system_and_bad_record():
    text = (SAMPLES / "kestrel_constellation.sp3").read_text()
    with pytest.raises(FormatError) as info:
        parse_sp3(text.replace("EOF\n", ""))
    assert info.value.keyword == "EOF"
    with pytest.raises(FormatError) as info:
        parse_sp3(text.replace("%c L  cc GPS", "%c L  cc GLO"))
    assert info.value.keyword == "%c" and "GLO" in info.value.reason
    lines = text.splitlines()
    k = next(i for i, ln in enumerate(lines) if ln.startswith("PL52"))
    lines[k] = lines[k][:10] + "xx" + lines[k][12:]
    with pytest.raises(FormatError) as info:
        parse_sp3("\n".join(lines) + "\n")
    assert (info.value.line_number, info.value.keyword) == (k + 1, "X")


def test_sp3_unknown_satellite():
    text = (SAMPLES / "kestrel_constellation.sp3").read_text()
    with pytest.raises(PhysicsInputError) as info:
        build_format_source(Sp3OrbitIn(type="sp3", text=text, object_id="L99"))
    assert info.value.field == "orbit.text" and "L51" in info.value.reason


def test_rinex_clock_bad_records():
    text = (SAMPLES / "kestrel_constellation_302.clk").read_text()
    lines = text.splitlines()
    k = next(i for i, ln in enumerate(lines) if ln.startswith("AS"))
    broken = lines[:k] + [lines[k].replace("  2   ", "  3   ")] + lines[k + 1:k + 2]
    with pytest.raises(FormatError) as info:
        parse_rinex_clock("\n".join(broken) + "\n")
    assert info.value.line_number == k + 1
    with pytest.raises(FormatError) as info:
        parse_rinex_clock(text.replace("END OF HEADER", "END OF HEADEX"))
    assert info.value.keyword == "END OF HEADER"
    with pytest.raises(FormatError) as info:
        parse_rinex_clock(text.replace("   GPS", "   GLO", 1))
    assert info.value.keyword == "TIME SYSTEM ID"


# --- Oversized input and the mapping to PhysicsInputError --------------------------------

@pytest.mark.parametrize("model", [OpmOrbitIn, OmmOrbitIn, OemOrbitIn, TleFileOrbitIn, Sp3OrbitIn])
def test_oversized_text_is_refused_before_parsing(model):
    big = "COMMENT " + "x" * MAX_TEXT_CHARS + "\n"
    with pytest.raises(PhysicsInputError) as info:
        build_format_source(model(type=model.model_fields["type"].annotation.__args__[0], text=big))
    assert info.value.field == "orbit.text" and info.value.value == "size"
    assert "limit" in info.value.reason


def test_format_error_maps_to_orbit_text_with_line_and_keyword(odm):
    text = odm.opm_kvn(EPOCH, R_KM, V_KM_S, frame="TOD")
    with pytest.raises(PhysicsInputError) as info:
        build_format_source(OpmOrbitIn(type="opm", text=text))
    line = _line_of(text, "REF_FRAME")
    assert info.value.field == "orbit.text" and info.value.value == "REF_FRAME"
    assert info.value.reason.startswith(f"line {line}, REF_FRAME:")
