"""Regenerate the invented example files in this folder (run from the project root).

    .venv/bin/python sample_orbits/formats/make_samples.py

Every object, designator, originator, agency and number here is our own invention.
The orbits are two-body Keplerian orbits (physics.orbits.KeplerianOrbit, GCRS) so that
the tests can recompute the truth from ELEMENTS below. Earth-fixed coordinates (SP3)
come from skyfield's ITRS frame (no polar motion: the builtin timescale has none).
"""

from __future__ import annotations

import datetime as dt
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.append(str(ROOT / "tests" / "app" / "formats"))
sys.path.append(str(ROOT / "tests"))

from skyfield.constants import AU_M, DAY_S  # noqa: E402
from skyfield.framelib import itrs  # noqa: E402
from skyfield.positionlib import Geocentric  # noqa: E402

from taubudget.physics.constants import C2_M2_PER_S2  # noqa: E402
from taubudget.physics.ephemeris import timescale  # noqa: E402
from taubudget.physics.orbits import KeplerianOrbit  # noqa: E402
from taubudget.physics.span import Span  # noqa: E402

OUT = Path(__file__).resolve().parent
EPOCH_UTC = (2027, 3, 1, 0, 0, 0.0)
ELEMENTS = {
    # name: (a_km, e, i_deg, raan_deg, argp_deg, m0_deg)
    "KESTREL-NAV-3": (26_561.4, 0.02, 55.0, 30.0, 40.0, 10.0),
    "L51": (7_078.0, 0.0015, 97.9, 40.0, 90.0, 15.0),
    "L52": (26_561.4, 0.008, 55.0, 150.0, 20.0, 200.0),
}
GPS_START = dt.datetime(2027, 3, 1)
INTERVAL_S = 300.0  # 5-minute epochs: 20 points per LEO revolution
CLOCK_L51 = {"bias_s": 2.5e-4, "rate": 3.0e-12}  # invented clock offset and fractional rate
CLOCK_L52 = {"bias_s": -1.1e-4, "rate": -7.0e-12}


def kepler(name, t0):
    a, e, i, raan, argp, m0 = ELEMENTS[name]
    return KeplerianOrbit(t0, a * 1e3, e, i, raan, argp, m0)


def main():
    import conftest as odm  # the test writers

    ts = timescale()
    t0 = ts.utc(*EPOCH_UTC)
    span = Span(t0, 2 * 86400.0)
    nav = kepler("KESTREL-NAV-3", t0)
    st = nav.states(span, np.array([0.0]), None)
    r, v = st.r_gcrs_m[0] / 1e3, st.v_gcrs_m_per_s[0] / 1e3
    ep = "2027-03-01T00:00:00.000Z"
    (OUT / "kestrel_nav3.opm").write_text(odm.opm_kvn(ep, r, v))
    (OUT / "kestrel_nav3_opm.xml").write_text(odm.opm_xml(ep, r, v))

    # OEM: two segments of 5-minute states (0..18 h and 18..36 h), Lagrange degree 9.
    def rows(t_first, t_last):
        t_s = np.arange(t_first, t_last + 1.0, 300.0)
        s = nav.states(span, t_s, None)
        eps = span.utc_iso(t_s)
        return [(e.replace(".000000Z", ".000"), a / 1e3, b / 1e3)
                for e, a, b in zip(eps, s.r_gcrs_m, s.v_gcrs_m_per_s, strict=True)]

    segs = []
    for first, last in ((0.0, 64800.0), (64800.0, 129600.0)):
        rr = rows(first, last)
        segs.append({"OBJECT_NAME": "KESTREL-NAV-3", "OBJECT_ID": "2027-901C", "CENTER_NAME": "EARTH",
                     "REF_FRAME": "GCRF", "TIME_SYSTEM": "UTC", "START_TIME": rr[0][0],
                     "STOP_TIME": rr[-1][0],
                     "INTERPOLATION": "LAGRANGE", "INTERPOLATION_DEGREE": "9", "rows": rr})
    (OUT / "kestrel_nav3.oem").write_text(odm.oem_kvn(segs))
    short = [dict(segs[0], rows=segs[0]["rows"][:49], STOP_TIME=segs[0]["rows"][48][0])]
    (OUT / "kestrel_nav3_oem.xml").write_text(odm.oem_xml(short))

    # OMM in four encodings, from the invented TLE of tests/support/budgets.py.
    from support.budgets import LEO_TLE

    f = odm.omm_fields_from_tle(*LEO_TLE)
    (OUT / "kestrel_timing1.omm").write_text(odm.omm_kvn(f))
    (OUT / "kestrel_timing1_omm.xml").write_text(odm.omm_xml(f))
    f2 = dict(f, OBJECT_NAME="KESTREL-TIMING-2", OBJECT_ID="2027-901B", NORAD_CAT_ID=99872,
              RA_OF_ASC_NODE=241.0, MEAN_ANOMALY=75.3)
    (OUT / "kestrel_timing_omm.json").write_text(odm.omm_json([f, f2]))
    (OUT / "kestrel_timing_omm.csv").write_text(odm.omm_csv([f, f2]))

    # A TLE file: one object with a name line, one with a '0 ' name line, one without.
    l1b = _tle_line("1 99872U 27901B   27060.25000000  .00001100  00000-0  21000-4 0  999")
    l2b = _tle_line("2 99872  97.6000 241.0000 0012000  96.3000  75.3000 15.12000000  123")
    l1c = _tle_line("1 99873U 27901C   27060.00000000  .00000000  00000-0  00000-0 0  999")
    l2c = _tle_line("2 99873  55.0000 100.0000 0050000  30.0000 330.0000  2.00561000    1")
    (OUT / "kestrel_fleet.tle").write_text(
        f"KESTREL-TIMING-1\n{LEO_TLE[0]}\n{LEO_TLE[1]}\n0 KESTREL-TIMING-2\n{l1b}\n{l2b}\n{l1c}\n{l2c}\n")

    # SP3-d and RINEX clock files for two invented "L" satellites over one day, 5-minute epochs.
    # Epochs on round GPS times from GPS 2027-03-01 00:00:00 (= TAI - 19 s; IS-GPS-200 3.3.4).
    gps0 = ts.tai(2027, 3, 1, 0, 0, 19.0)
    t_s = span.seconds_after_start(gps0) + np.arange(0.0, 86400.0 + 1.0, INTERVAL_S)
    times = span.times(t_s)
    ecef, clocks = {}, {}
    for sid, clk in (("L51", CLOCK_L51), ("L52", CLOCK_L52)):
        s = kepler(sid, t0).states(span, t_s, None)
        geo = Geocentric(s.r_gcrs_m.T / AU_M, s.v_gcrs_m_per_s.T / AU_M * DAY_S, times)
        pos, vel = geo.frame_xyz_and_velocity(itrs)
        ecef[sid] = (pos.m.T, vel.m_per_s.T)
        rv = np.einsum("ni,ni->n", s.r_gcrs_m, s.v_gcrs_m_per_s)
        # A clock that carries the relativistic periodic term -(2/c^2) r.v (raw proper time).
        clocks[sid] = clk["bias_s"] + clk["rate"] * t_s - 2.0 * rv / C2_M2_PER_S2
    gps_cal = [GPS_START + dt.timedelta(seconds=INTERVAL_S * k) for k in range(len(t_s))]
    (OUT / "kestrel_constellation.sp3").write_text(_sp3(gps_cal, ecef, clocks))
    (OUT / "kestrel_constellation_302.clk").write_text(_rinex_clock(gps_cal, clocks, "3.02"))
    (OUT / "kestrel_constellation_304.clk").write_text(_rinex_clock(gps_cal, clocks, "3.04"))


def _tle_line(body68: str) -> str:
    assert len(body68) == 68, len(body68)
    return body68 + str(sum(int(c) if c.isdigit() else (1 if c == "-" else 0) for c in body68) % 10)


def _sp3(gps_cal, ecef, clocks):
    sats = sorted(ecef)
    g0 = gps_cal[0]
    mjd = (g0.date() - dt.date(1858, 11, 17)).days
    week = (g0.date() - dt.date(1980, 1, 6)).days // 7
    sow = ((g0.date() - dt.date(1980, 1, 6)).days % 7) * 86400.0
    lines = [
        f"#dV{g0.year:4d} {g0.month:2d} {g0.day:2d} {g0.hour:2d} {g0.minute:2d} {0.0:11.8f}"
        f" {len(gps_cal):7d} ORBIT IGS20 FIT  TAUB",
        f"## {week:4d} {sow:15.8f} {INTERVAL_S:14.8f} {mjd:5d} {0.0:15.13f}",
        f"+  {len(sats):3d}   " + "".join(sats) + "   0" * (17 - len(sats)),
        "++         " + "  0" * 17,
        "%c L  cc GPS ccc cccc cccc cccc cccc ccccc ccccc ccccc ccccc",
        "%c cc cc ccc ccc cccc cccc cccc cccc ccccc ccccc ccccc ccccc",
        "%f  1.2500000  1.025000000  0.00000000000  0.000000000000000",
        "%f  0.0000000  0.000000000  0.00000000000  0.000000000000000",
        "%i    0    0    0    0      0      0      0      0         0",
        "%i    0    0    0    0      0      0      0      0         0",
        "/* INVENTED EXAMPLE FOR TAUBUDGET TESTS; NOT A REAL PRODUCT",
        "/* TWO-BODY ORBITS, CLOCKS WITH THE RELATIVISTIC PERIODIC TERM",
    ]
    for k, g in enumerate(gps_cal):
        lines.append(f"*  {g.year:4d} {g.month:2d} {g.day:2d} {g.hour:2d} {g.minute:2d} {g.second:11.8f}")
        for sid in sats:
            p, v = ecef[sid][0][k] / 1e3, ecef[sid][1][k] * 10.0
            lines.append(f"P{sid}{p[0]:14.6f}{p[1]:14.6f}{p[2]:14.6f}{clocks[sid][k] * 1e6:14.6f}")
            lines.append(f"V{sid}{v[0]:14.6f}{v[1]:14.6f}{v[2]:14.6f}{999999.999999:14.6f}")
    lines.append("EOF")
    return "\n".join(lines) + "\n"


def _rinex_clock(gps_cal, clocks, version):
    wide = version == "3.04"
    label_col = 65 if wide else 60

    def hdr(content, label):
        return f"{content:<{label_col}}{label}"

    lines = [
        hdr(f"{version:>9}           C                   L", "RINEX VERSION / TYPE"),
        hdr("make_samples.py     TAUBUDGET-DEMO      20270227 120000 UTC", "PGM / RUN BY / DATE"),
        hdr("INVENTED EXAMPLE FOR TAUBUDGET TESTS; NOT A REAL PRODUCT", "COMMENT"),
        hdr("   GPS", "TIME SYSTEM ID"),
        hdr("     1    AS", "# / TYPES OF DATA"),
        hdr("TAUB TAUBUDGET DEMO ANALYSIS", "ANALYSIS CENTER"),
        hdr(f"{len(clocks):6d}", "# OF SOLN SATS"),
        hdr(" ".join(sorted(clocks)), "PRN LIST"),
        hdr("", "END OF HEADER"),
    ]
    for k, g in enumerate(gps_cal):
        yy, mm, dd, hh, mn, ss = g.year, g.month, g.day, g.hour, g.minute, float(g.second)
        for sid in sorted(clocks):
            name = f"{sid:<9}" if wide else f"{sid:<4}"
            lines.append(f"AS {name} {yy:4d} {mm:02d} {dd:02d} {hh:02d} {mn:02d} {ss:9.6f}  2   "
                         f"{clocks[sid][k]:19.12E} {1.0e-11:19.12E}")
    return "\n".join(lines) + "\n"


if __name__ == "__main__":
    main()
