"""SP3-d and RINEX clock (3.02, 3.04) sample files against the orbits and clocks they were made from.

Outside references: the closed-form two-body orbits of sample_orbits/formats/make_samples.py
(ELEMENTS, restated below), skyfield's ITRS rotation (used to write the Earth-fixed SP3
coordinates), the SP3 field definitions (km, microseconds, dm/s; Hilla 2010/2016) and the
relativistic periodic term -(2/c^2) r.v with its closed-form amplitude 2 sqrt(a GM) e / c^2
(TN36 eq. 10.10/10.11).
"""

from pathlib import Path

import numpy as np
import pytest
from taubudget.app.formats.rinex_clock import parse_rinex_clock
from taubudget.app.formats.sp3 import clock_series, parse_sp3, sp3_source
from taubudget.app.present.residuals import residuals as present_residuals
from taubudget.physics.clock_residuals import clock_residuals
from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.span import Span

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"
ELEMENTS = {"L51": (7_078.0, 0.0015, 97.9, 40.0, 90.0, 15.0),
            "L52": (26_561.4, 0.008, 55.0, 150.0, 20.0, 200.0)}
CLOCK_RATE = {"L51": 3.0e-12, "L52": -7.0e-12}
SP3_ROUNDING_M = 1e-3  # SP3 writes km with 6 decimals: 0.5 mm per component
INTERPOLATION_M = 0.05  # Lagrange degree 9 on 5-minute points, centred windows (LEO: ~2 cm)
END_INTERVAL_M = 1.0  # one-sided windows in the first/last interval (LEO: ~0.8 m)
CLOCK_ROUNDING_S = 1e-12  # SP3 clocks in us with 6 decimals: 0.5 ps


@pytest.fixture(scope="module")
def sp3():
    return parse_sp3((SAMPLES / "kestrel_constellation.sp3").read_text())


def _truth(ts, sid):
    t0 = ts.utc(2027, 3, 1)
    a, e, i, raan, argp, m0 = ELEMENTS[sid]
    return KeplerianOrbit(t0, a * 1e3, e, i, raan, argp, m0), Span(t0, 2 * 86400.0)


def test_sp3_header_and_records(sp3):
    header = (sp3.version, sp3.coordinate_system, sp3.time_system, sp3.interval_s)
    assert header == ("d", "IGS20", "GPS", 300.0)
    assert sp3.satellites == ["L51", "L52"] and len(sp3.epoch_lines) == 289
    assert sp3.velocities_dm_per_s is not None


@pytest.mark.parametrize("sid", ["L51", "L52"])
def test_sp3_positions_and_interpolation_match_the_orbit(ts, sp3, sid):
    kep, span = _truth(ts, sid)
    src = sp3_source(sp3, sid)
    t_tab = span.seconds_after_start(sp3.epochs)
    at_points = src.states(span, t_tab[1:-1])
    truth = kep.states(span, t_tab[1:-1], None)
    assert np.max(np.linalg.norm(at_points.r_gcrs_m - truth.r_gcrs_m, axis=1)) < SP3_ROUNDING_M
    mid = 0.5 * (t_tab[1:] + t_tab[:-1])
    between = src.states(span, mid)
    truth = kep.states(span, mid, None)
    err = np.linalg.norm(between.r_gcrs_m - truth.r_gcrs_m, axis=1)
    # Inside the data the 10-point window is centred; in the first and last intervals it is
    # one-sided and the error grows (Runge), which the estimate must still report.
    assert err[2:-2].max() < INTERPOLATION_M
    assert err.max() < END_INTERVAL_M
    if sid == "L51":  # truncation-dominated (LEO): the n vs n-2 estimate bounds the error
        assert src.max_position_error_m >= err.max()
    else:  # MEO: the SP3 rounding (0.5 mm) dominates, which the estimate does not claim to cover
        assert err.max() < 10 * SP3_ROUNDING_M


def test_sp3_clock_column_and_rinex_clock_agree(sp3):
    t_sp3, clk_sp3 = clock_series(sp3, "L52")
    for version in ("302", "304"):
        rx = parse_rinex_clock((SAMPLES / f"kestrel_constellation_{version}.clk").read_text())
        assert rx.version == float(version[0] + "." + version[1:]) and rx.time_system == "GPS"
        times, bias, sigma = rx.satellites["L52"]
        assert np.allclose((times.tt - t_sp3.tt) * 86400.0, 0.0, atol=1e-5)
        assert np.max(np.abs(bias - clk_sp3)) < CLOCK_ROUNDING_S
        assert np.all(sigma == 1e-11)


@pytest.mark.parametrize("sid", ["L51", "L52"])
def test_clock_residuals_recover_rate_and_remove_the_periodic_term(ts, sp3, sid):
    kep, span = _truth(ts, sid)
    rx = parse_rinex_clock((SAMPLES / "kestrel_constellation_304.clk").read_text())
    times, bias, _ = rx.satellites[sid]
    t_s = span.seconds_after_start(times)
    st = sp3_source(sp3, sid).states(span, t_s)
    res = clock_residuals(t_s, bias, st.r_gcrs_m, st.v_gcrs_m_per_s, periodic_term_in_data=True,
                          orbital_period_s=kep.period_s())
    out = present_residuals(res)
    assert abs(res.secular_rate - CLOCK_RATE[sid]) < 1e-16  # 0.5 ps rounding over a day
    a, e = ELEMENTS[sid][0] * 1e3, ELEMENTS[sid][1]
    closed_form_ns = 2.0 * np.sqrt(a * GM_EARTH_TCG_M3_PER_S2) * e / C2_M2_PER_S2 * 1e9
    assert abs(out["periodic_term_amplitude_ns"] / closed_form_ns - 1.0) < 1e-3
    assert out["residual_rms_ns"] < 0.01 * closed_form_ns
    assert out["residual_periodic_amplitude_ns"]["orbital_period"] < 0.01 * closed_form_ns
    assert out["deviations"] and out["deviations"][0]["tau_s"] == 300.0
    # Under the IGS convention nothing is subtracted, and the periodic term stays in the residual.
    igs = present_residuals(clock_residuals(t_s, bias, st.r_gcrs_m, st.v_gcrs_m_per_s,
                                            periodic_term_in_data=False, orbital_period_s=kep.period_s()))
    assert igs["residual_periodic_amplitude_ns"]["orbital_period"] > 0.9 * closed_form_ns
