"""Round trips: Keplerian states written as our own OPM/OEM/OMM (KVN, XML, JSON, CSV), read back.

Outside references: the closed-form two-body budget of physics.orbits.KeplerianOrbit
(Kepler's equation; its rate checked against Kouba 2004 elsewhere), the sgp4 package's
own TLE reader (Satrec.twoline2rv, Vallado et al. 2006) through skyfield's EarthSatellite,
and skyfield's frame rotations (TEME, ITRS) and frame-bias matrix (IERS 2003 values, TN36
eq. 5.21) for the frame conversions.
"""

import numpy as np
import pytest
from skyfield.api import EarthSatellite
from skyfield.constants import AU_M, DAY_S
from skyfield.framelib import ICRS_to_J2000, itrs
from skyfield.positionlib import Geocentric
from skyfield.sgp4lib import TEME
from support.budgets import LEO_TLE, POINT_MASS, as_dict
from taubudget.app.formats import build_format_source, format_sources
from taubudget.app.formats.common import parse_epoch
from taubudget.app.formats.models import OemOrbitIn, OmmOrbitIn, OpmOrbitIn, TleFileOrbitIn
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.environment import environment_for
from taubudget.physics.orbits import KeplerianOrbit, TleOrbit
from taubudget.physics.span import Span

ONE_PS_PER_DAY_US_PER_DAY = 1e-6  # the 1 ps/day, in the budget's unit
ONE_PS_NS = 1e-3
ONE_MICROMETRE_M = 1e-6  # text round trip: OPM writes km with 9 decimals (1 um)
ONE_MILLIMETRE_M = 1e-3  # Earth orientation grid: < 1e-13 rad (physics/frames/orientation.py) ~ 3 um at GPS r
ONE_CENTIMETRE_M = 1e-2  # OMM epoch in float days since 1949 resolves ~0.5 us ~ 4 mm along a LEO track
SPIN_RATE_OMISSION_M_PER_S = 1e-4
POINT_MASS_FORCES = {"earth_zonal_degree": 0, "sun": False, "moon": False}
EPOCH = "2027-03-01T00:00:00.000Z"


@pytest.fixture(scope="module")
def nav(ts):
    t0 = parse_epoch(EPOCH, "UTC", 1)
    kep = KeplerianOrbit(t0, 26_561.4e3, 0.02, 55.0, 30.0, 40.0, 10.0)
    st = kep.states(Span(t0, 60.0), np.array([0.0]), None)
    return t0, kep, st.r_gcrs_m[0] / 1e3, st.v_gcrs_m_per_s[0] / 1e3


def _budgets(kep, src, start, duration_s):
    span = Span(start, duration_s)
    bk = as_dict(compute_budget(BudgetInputs(kep, "TT", span, POINT_MASS)))
    bs = as_dict(compute_budget(BudgetInputs(src, "TT", span, POINT_MASS)))
    return bk, bs


def _assert_same_budget(bk, bs):
    assert abs(bs["mean_rate_us_per_day"] - bk["mean_rate_us_per_day"]) < ONE_PS_PER_DAY_US_PER_DAY
    assert abs(bs["offset_at_end_ns"] - bk["offset_at_end_ns"]) < ONE_PS_NS
    assert abs(bs["eccentricity_correction"]["amplitude_ns"]
               - bk["eccentricity_correction"]["amplitude_ns"]) < ONE_PS_NS
    assert abs(bs["periodic"]["amplitude_ns"] - bk["periodic"]["amplitude_ns"]) < ONE_PS_NS


@pytest.mark.parametrize("encoding", ["kvn", "xml"])
def test_opm_round_trip_reproduces_the_keplerian_budget(nav, odm, encoding):
    t0, kep, r, v = nav
    text = odm.opm_kvn(EPOCH, r, v) if encoding == "kvn" else odm.opm_xml(EPOCH, r, v)
    src = build_format_source(OpmOrbitIn(type="opm", text=text, force_model=POINT_MASS_FORCES))
    assert np.max(np.abs(src.r0_m - r * 1e3)) < ONE_MICROMETRE_M
    bk, bs = _budgets(kep, src, t0, 86400.0)
    _assert_same_budget(bk, bs)


@pytest.mark.parametrize("encoding", ["kvn", "xml"])
def test_oem_round_trip_reproduces_the_keplerian_budget(ts, nav, odm, encoding):
    t0, kep, _, _ = nav
    span = Span(t0, 86400.0)
    segs = []
    for first, last in ((0.0, 43200.0), (43200.0, 90000.0)):  # two segments meeting at 12 h
        t_s = np.arange(first, last + 1.0, 300.0)
        st = kep.states(span, t_s, None)
        rows = [(e, a / 1e3, b / 1e3) for e, a, b in
                zip(span.utc_iso(t_s), st.r_gcrs_m, st.v_gcrs_m_per_s, strict=True)]
        segs.append({"OBJECT_NAME": "KESTREL-NAV-3", "OBJECT_ID": "2027-901C", "CENTER_NAME": "EARTH",
                     "REF_FRAME": "GCRF", "TIME_SYSTEM": "UTC", "START_TIME": rows[0][0],
                     "STOP_TIME": rows[-1][0], "INTERPOLATION": "LAGRANGE", "INTERPOLATION_DEGREE": "9",
                     "rows": rows})
    text = odm.oem_kvn(segs) if encoding == "kvn" else odm.oem_xml(segs)
    src = build_format_source(OemOrbitIn(type="oem", text=text))
    bk, bs = _budgets(kep, src, t0, 86400.0)
    _assert_same_budget(bk, bs)
    est = bs["model"]["orbit"]["interpolation_error_estimate"]
    # The n vs n-2 estimate must bound the true interpolation error at the nodes.
    nodes = np.linspace(100.0, 86300.0, 777)
    true = np.max(np.linalg.norm(src.states(span, nodes).r_gcrs_m - kep.states(span, nodes, None).r_gcrs_m,
                                 axis=1))
    assert true <= est["max_position_m"]
    assert est["max_periodic_term_ns"] < ONE_PS_NS


def test_oem_hermite_segment_uses_velocities(nav, odm):
    t0, kep, _, _ = nav
    span = Span(t0, 21600.0)
    t_s = np.arange(0.0, 21601.0, 600.0)
    st = kep.states(span, t_s, None)
    rows = [(e, a / 1e3, b / 1e3) for e, a, b in zip(span.utc_iso(t_s), st.r_gcrs_m, st.v_gcrs_m_per_s,
                                                     strict=True)]
    seg = {"OBJECT_NAME": "KESTREL-NAV-3", "OBJECT_ID": "2027-901C", "CENTER_NAME": "EARTH",
           "REF_FRAME": "GCRF", "TIME_SYSTEM": "UTC", "START_TIME": rows[0][0], "STOP_TIME": rows[-1][0],
           "INTERPOLATION": "HERMITE", "INTERPOLATION_DEGREE": "7", "rows": rows}
    src = build_format_source(OemOrbitIn(type="oem", text=odm.oem_kvn([seg])))
    nodes = np.linspace(50.0, 21550.0, 301)
    err = np.linalg.norm(src.states(span, nodes).r_gcrs_m - kep.states(span, nodes, None).r_gcrs_m, axis=1)
    assert err.max() < ONE_MILLIMETRE_M


@pytest.mark.parametrize("encoding", ["kvn", "xml", "json", "csv"])
def test_omm_matches_sgp4_from_the_same_tle(ts, odm, encoding):
    f = odm.omm_fields_from_tle(*LEO_TLE)
    text = {"kvn": odm.omm_kvn, "xml": odm.omm_xml}.get(encoding, lambda x: None)(f) if encoding in (
        "kvn", "xml") else (odm.omm_json([f]) if encoding == "json" else odm.omm_csv([f]))
    src = build_format_source(OmmOrbitIn(type="omm", text=text))
    span = Span(ts.utc(2027, 3, 1, 6), 86400.0)
    env = environment_for(span)
    t_s = np.linspace(0.0, span.duration_s, 97)
    ours = src.states(span, t_s, env.orientation)
    ref = EarthSatellite(*LEO_TLE, "ref", ts).at(span.times(t_s))  # sgp4's TLE reader via skyfield
    assert np.max(np.linalg.norm(ours.r_gcrs_m - ref.position.m.T, axis=1)) < ONE_CENTIMETRE_M
    b_omm = as_dict(compute_budget(BudgetInputs(src, "TT", span, POINT_MASS)))
    b_tle = as_dict(compute_budget(BudgetInputs(TleOrbit(*LEO_TLE, ts), "TT", span, POINT_MASS)))
    assert abs(b_omm["mean_rate_us_per_day"] - b_tle["mean_rate_us_per_day"]) < ONE_PS_PER_DAY_US_PER_DAY


def test_omm_without_optional_tle_keys_defaults_to_no_drag(ts, odm):
    f = odm.omm_fields_from_tle(*LEO_TLE)
    text = odm.omm_kvn(f)
    text = "\n".join(ln for ln in text.splitlines() if not ln.startswith(("BSTAR", "MEAN_MOTION_D")))
    src = build_format_source(OmmOrbitIn(type="omm", text=text))
    assert src.sat.model.bstar == 0.0 and "BSTAR" in src.omm_defaults


def test_omm_json_with_two_objects_is_a_batch_and_object_id_picks_one(odm):
    f1 = odm.omm_fields_from_tle(*LEO_TLE)
    f2 = dict(f1, OBJECT_NAME="KESTREL-TIMING-2", OBJECT_ID="2027-901B", MEAN_ANOMALY=75.3)
    text = odm.omm_json([f1, f2])
    assert [i for i, _ in format_sources(OmmOrbitIn(type="omm", text=text))] == ["2027-901A", "2027-901B"]
    one = build_format_source(OmmOrbitIn(type="omm", text=text, object_id="KESTREL-TIMING-2"))
    assert abs(one.sat.model.mo - np.radians(75.3)) < 1e-12


def test_frame_bias_eme2000_is_undone(nav, odm):
    # EME2000 -> GCRS with the IERS 2003 frame bias (TN36 eq. 5.21): skyfield's matrix B maps
    # GCRS to J2000, so writing B r and reading back must return r; the bias moves the GPS-radius
    # state by ~3 m (23 mas), far above the text round-trip error.
    _, _, r, v = nav
    b = np.asarray(ICRS_to_J2000)
    src = build_format_source(OpmOrbitIn(type="opm", text=odm.opm_kvn(EPOCH, b @ r, b @ v, frame="EME2000"),
                                         force_model=POINT_MASS_FORCES))
    assert np.max(np.abs(src.r0_m - r * 1e3)) < ONE_MICROMETRE_M * 10
    assert 1.0 < np.linalg.norm(b @ r - r) * 1e3 < 5.0


def test_teme_and_itrf_states_convert_as_skyfield_does(nav, odm):
    t0, _, r, v = nav
    # TEME: skyfield's TEME.rotation_at (GCRS -> TEME).
    rot = TEME.rotation_at(t0)
    src = build_format_source(OpmOrbitIn(type="opm", text=odm.opm_kvn(EPOCH, rot @ r, rot @ v, frame="TEME"),
                                         force_model=POINT_MASS_FORCES))
    assert np.max(np.abs(src.r0_m - r * 1e3)) < ONE_MILLIMETRE_M
    # ITRF: skyfield's ITRS position and velocity (rotation rate included).
    geo = Geocentric(r * 1e3 / AU_M, v * 1e3 / AU_M * DAY_S, t0)
    pos, vel = geo.frame_xyz_and_velocity(itrs)
    text = odm.opm_kvn(EPOCH, pos.km, vel.km_per_s, frame="ITRF2014")
    src = build_format_source(OpmOrbitIn(type="opm", text=text, force_model=POINT_MASS_FORCES))
    assert np.max(np.abs(src.r0_m - r * 1e3)) < ONE_MILLIMETRE_M
    # Spin term omega x r restored; physics/frames/orientation.py spins at the ERA rate only (precession and
    # nutation rates, ~1e-8 of omega x r ~ 3e-5 m/s here, are left out): v dv / c^2 < 1e-17.
    assert np.max(np.abs(src.v0_m_per_s - v * 1e3)) < SPIN_RATE_OMISSION_M_PER_S


def test_time_systems_shift_the_epoch(nav, odm):
    # GPS = TAI - 19 s, TT = TAI + 32.184 s (IS-GPS-200 3.3.4; TN36 ch. 10): the same clock reading
    # in different time systems names different instants.
    _, _, r, v = nav
    epochs = {}
    for tsys in ("UTC", "TAI", "TT", "GPS"):
        src = build_format_source(OpmOrbitIn(type="opm", text=odm.opm_kvn(EPOCH, r, v, time_system=tsys),
                                             force_model=POINT_MASS_FORCES))
        epochs[tsys] = src.epoch()
    tai = epochs["TAI"]

    def after_s(t):  # two-double difference: a float JD resolves only ~20 us
        return ((t.whole - tai.whole) + (t.tai_fraction - tai.tai_fraction)) * 86400.0

    assert abs(after_s(epochs["GPS"]) - 19.0) < 1e-6
    assert abs(after_s(epochs["TT"]) + 32.184) < 1e-6
    assert abs(after_s(epochs["UTC"]) - 37.0) < 1e-6  # TAI - UTC in 2027 (builtin leap-second table)


def test_day_of_year_epoch_without_fraction(nav, odm):
    _, _, r, v = nav
    a = build_format_source(OpmOrbitIn(type="opm", text=odm.opm_kvn("2027-060T00:00:00", r, v),
                                       force_model=POINT_MASS_FORCES))
    b = build_format_source(OpmOrbitIn(type="opm", text=odm.opm_kvn(EPOCH, r, v),
                                       force_model=POINT_MASS_FORCES))
    assert abs((a.epoch().tt - b.epoch().tt) * 86400.0) < 1e-6


def test_tle_file_objects_with_and_without_names():
    from pathlib import Path

    text = (Path(__file__).resolve().parents[3] / "sample_orbits/formats/kestrel_fleet.tle").read_text()
    found = format_sources(TleFileOrbitIn(type="tle_file", text=text))
    assert [i for i, _ in found] == ["KESTREL-TIMING-1", "KESTREL-TIMING-2", "99873"]
    one = build_format_source(TleFileOrbitIn(type="tle_file", text=text, object_id="99873"))
    assert one.sat.model.satnum == 99873
