"""The time-scale table against outside truth: pyerfa (the ERFA/SOFA routines) for the rates of
TCG/TT and TDB/TCB, skyfield for TT - TAI, IS-GPS-200 for TAI - GPS; and the table's refusals."""

import erfa
import numpy as np
import pytest
from taubudget.physics.timescales import (
    REFERENCE_NAMES,
    SCALES,
    needs_positions,
    offset_between_s,
    rate_between,
)

DAY_S = 86400.0
SPAN_DAYS = 10_000.0  # 27 years between the two epochs: the rate resolves to ~1e-20

SMALL_PART_RESOLUTION_S = 1e-14
"""With the whole day in the first part, ERFA returns the scale difference (< 1e-2 day) in the
second: its last bit is ~1e-19 day, 1e-14 s."""


def _rate_from_erfa(convert, jd1=2451545.0) -> float:
    """d(out)/d(in) - 1 from an ERFA two-part conversion over SPAN_DAYS, with its resolution."""
    a1, a2 = convert(jd1, 0.0)
    b1, b2 = convert(jd1 + SPAN_DAYS, 0.0)
    return (((b1 - a1) - SPAN_DAYS) + (b2 - a2)) / SPAN_DAYS  # small parts subtracted first


RATE_TOLERANCE = 1e3 * SMALL_PART_RESOLUTION_S / (SPAN_DAYS * DAY_S)
"""1e-20: a thousand times the resolution, far below any rate the budgets report."""


def test_tcg_against_tt_matches_erfa_tttcg():
    assert rate_between("TCG", "TT") == pytest.approx(_rate_from_erfa(erfa.tttcg), abs=RATE_TOLERANCE)


def test_tdb_against_tcb_matches_erfa_tdbtcb():
    # erfa.tdbtcb: TCB from TDB, so d(TCB)/d(TDB) - 1; the table's TDB against TCB is its inverse.
    r = _rate_from_erfa(erfa.tdbtcb)
    assert rate_between("TCB", "TDB") == pytest.approx(r, abs=RATE_TOLERANCE)
    assert rate_between("TDB", "TCB") == pytest.approx(-r / (1 + r), abs=RATE_TOLERANCE)


def test_constant_offsets_match_skyfield_and_is_gps_200(ts):
    t = ts.utc(2027, 3, 1)
    tt_minus_tai = (t.tt_fraction - t.tai_fraction) * DAY_S  # same whole day: keep the digits
    assert offset_between_s("TT", "TAI") == pytest.approx(tt_minus_tai, abs=1e-6)
    assert offset_between_s("TAI", "GPS") == 19.0  # IS-GPS-200 section 3.3.4
    assert offset_between_s("TT", "GPS") == pytest.approx(tt_minus_tai + 19.0, abs=1e-6)
    # TT, TAI and GPS share their rate: exactly zero, not a rounding of L_G.
    assert rate_between("GPS", "TT") == 0.0 and rate_between("TAI", "TT") == 0.0


def test_scales_that_need_the_positions_of_earth_or_moon():
    assert [n for n in REFERENCE_NAMES if needs_positions(n)] == ["TCB", "TDB", "lunar_surface"]
    with pytest.raises(ValueError, match="barycentric frame"):
        rate_between("TDB", "TT")
    d = np.array([-1.55e-8 - 6.97e-10])  # any geocentre d: the TCB rate follows from the hop
    hops = {"TCG": (d + 6.969290134e-10) / (1 - 6.969290134e-10)}
    assert rate_between("TCB", "TT", hops) == pytest.approx(-d / (1 + d), rel=1e-12)


@pytest.mark.parametrize("bad", ["tt", "Tt", "UTC", "", None, 3])
def test_unknown_or_lowercase_names_fail_naming_the_scales(bad):
    with pytest.raises(ValueError, match="unknown time scale") as err:
        rate_between(bad, "TT")
    assert "TT, TAI, GPS" in str(err.value)
    if bad == "tt":
        assert "case-sensitive" in str(err.value)


def test_every_reference_is_a_row_and_every_hop_has_a_source():
    assert set(REFERENCE_NAMES) <= set(SCALES)
    for row in SCALES.values():
        assert row.definition and (row.parent is None or row.parent in SCALES)
