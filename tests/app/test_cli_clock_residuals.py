"""``taubudget clock-residuals`` on the invented SP3 and RINEX clock samples.

Outside references: the values sample_orbits/formats/make_samples.py put into the files
(CLOCK_L51/CLOCK_L52: an invented fractional rate per satellite, and the relativistic
periodic term -(2/c^2) r.v left in the clock values, restated below), the two-body period
T = 2 pi sqrt(a^3/GM) and the term's closed-form amplitude 2 sqrt(a GM) e / c^2 (TN36
eq. 10.10/10.11), and the field resolutions of the formats: SP3 clocks in microseconds with
6 decimals (Hilla 2016, SP3-d: 0.5 ps rounding), RINEX clock values as E19.12 (Ray & Gurtner,
RINEX clock 3.02/3.04: 12 mantissa decimals), SP3 positions in km with 6 decimals and
velocities in dm/s with 6 decimals.

The recovered rate is checked against a worst-case bound rather than a bare epsilon: a
least-squares slope is a linear combination sum p_i x_i of the data, so a per-point error
of at most eps moves it by at most eps * sum |p_i|, with p the slope row of the fit's
pseudo-inverse (a line plus two harmonics of the orbital period, as physics/clock_residuals.py
documents).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from taubudget.app.cli import main
from taubudget.physics.constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2

SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits" / "formats"
SP3 = SAMPLES / "kestrel_constellation.sp3"
ELEMENTS = {"L51": (7_078.0, 0.0015), "L52": (26_561.4, 0.008)}  # a_km, e (make_samples.ELEMENTS)
CLOCK_RATE = {"L51": 3.0e-12, "L52": -7.0e-12}  # make_samples.CLOCK_L51/CLOCK_L52["rate"]
CLOCK_BIAS_S = {"L51": 2.5e-4, "L52": -1.1e-4}
EPOCHS, STEP_S = 289, 300.0  # one day of 5-minute epochs

SP3_CLOCK_ROUNDING_S = 0.5e-12  # microseconds with 6 decimals
RINEX_RELATIVE_ROUNDING = 0.5e-12  # E19.12: 12 mantissa decimals
# r.v from the SP3 states: positions rounded to 0.5 mm per component and velocities to 0.05 um/s,
# so |r.v error| <= |v| dr + |r| dv < 10 m^2/s for both orbits (LEO: 7.5 km/s x 0.9 mm + 7.1e6 m x
# 9e-8 m/s = 7 m^2/s); the subtracted term 2 r.v / c^2 is then off by < 2.3e-16 s.
# The generator divides by c^2, the module by (1 - L_G) c^2: < 1.3e-17 s more (L52), inside the margin.
RV_TERM_ERROR_S = 2.0 * 10.0 / C2_M2_PER_S2
AMPLITUDE_RELATIVE = 1e-3  # SP3 rounding of r.v against a 1.8 ns (LEO) amplitude, and e^2 terms


def _period_s(sid: str) -> float:
    a_m = ELEMENTS[sid][0] * 1e3
    return 2.0 * math.pi * math.sqrt(a_m**3 / GM_EARTH_TCG_M3_PER_S2)


def _slope_error_bound(sid: str, eps_s: float) -> float:
    t = np.arange(EPOCHS) * STEP_S
    w = 2.0 * math.pi / _period_s(sid)
    design = np.stack([np.ones_like(t), t, np.cos(w * t), np.sin(w * t), np.cos(2 * w * t),
                       np.sin(2 * w * t)], axis=1)
    return eps_s * float(np.sum(np.abs(np.linalg.pinv(design)[1])))


def _run(capsys, *argv) -> dict:
    assert main(["clock-residuals", *argv, "--json"]) == 0
    return json.loads(capsys.readouterr().out)


CLOCK_FILES = {
    "kestrel_constellation_302.clk": lambda sid: RINEX_RELATIVE_ROUNDING * abs(CLOCK_BIAS_S[sid]) * 1.01,
    "kestrel_constellation_304.clk": lambda sid: RINEX_RELATIVE_ROUNDING * abs(CLOCK_BIAS_S[sid]) * 1.01,
    "kestrel_constellation.sp3": lambda sid: SP3_CLOCK_ROUNDING_S,
}


@pytest.mark.parametrize("sid", ["L51", "L52"])
@pytest.mark.parametrize("clock_file", sorted(CLOCK_FILES))
def test_recovered_secular_rate_is_the_generated_one(capsys, clock_file, sid):
    out = _run(capsys, str(SAMPLES / clock_file), "--orbit", str(SP3), "--sat", sid,
               "--periodic-term-in-data")
    assert out["points"] == EPOCHS and out["periodic_term_in_data"] is True
    assert out["periodic_term_subtracted"] is True and "subtracted" in out["assumption"]
    # The bias factor 1.01 covers the clock's drift over the day (3e-12 x 86400 s << 1% of the bias).
    bound = _slope_error_bound(sid, CLOCK_FILES[clock_file](sid) + RV_TERM_ERROR_S)
    assert abs(out["secular_fractional_rate"] - CLOCK_RATE[sid]) <= bound
    assert abs(out["orbital_period_s"] / _period_s(sid) - 1.0) < 1e-6  # SP3 state's osculating a
    assert out["caution"]


@pytest.mark.parametrize("sid", ["L51", "L52"])
def test_default_follows_the_igs_convention_and_leaves_the_term_in(capsys, sid):
    """The samples carry the term, so under the IGS default it must stay in the residual."""
    out = _run(capsys, str(SAMPLES / "kestrel_constellation_304.clk"), "--orbit", str(SP3), "--sat", sid)
    assert out["periodic_term_in_data"] is False and out["periodic_term_subtracted"] is False
    assert out["assumption"].startswith("IGS convention")
    a_m, e = ELEMENTS[sid][0] * 1e3, ELEMENTS[sid][1]
    closed_form_ns = 2.0 * math.sqrt(a_m * GM_EARTH_TCG_M3_PER_S2) * e / C2_M2_PER_S2 * 1e9
    left = out["residual_periodic_amplitude_ns"]["orbital_period"]
    assert abs(left / closed_form_ns - 1.0) < AMPLITUDE_RELATIVE
    assert abs(out["periodic_term_amplitude_ns"] / closed_form_ns - 1.0) < AMPLITUDE_RELATIVE


def test_sp3_alone_is_clock_and_orbit_and_the_table_names_the_assumption(capsys):
    assert main(["clock-residuals", str(SP3), "--sat", "L52"]) == 0
    text = capsys.readouterr().out
    assert "not in the data (IGS convention)" in text and "assumption: IGS convention" in text
    assert "Planning estimate only" in text
    assert main(["clock-residuals", str(SP3), "--sat", "L52", "--periodic-term-in-data"]) == 0
    assert "in the data: subtracted" in capsys.readouterr().out


def test_bad_inputs_exit_2_naming_the_file_and_keyword(capsys, tmp_path):
    clk = SAMPLES / "kestrel_constellation_302.clk"
    assert main(["clock-residuals", str(clk), "--sat", "L51"]) == 2  # RINEX clock holds no orbit
    assert "orbit_file" in capsys.readouterr().err
    assert main(["clock-residuals", str(clk), "--orbit", str(SP3), "--sat", "L77"]) == 2
    err = capsys.readouterr().err
    assert "AS" in err and "'L77'" in err
    broken = tmp_path / "broken.clk"
    lines = clk.read_text().splitlines()
    first_as = next(i for i, ln in enumerate(lines) if ln.startswith("AS "))
    lines[first_as] = lines[first_as].replace("AS ", "XX ", 1)
    broken.write_text("\n".join(lines) + "\n")
    assert main(["clock-residuals", str(broken), "--orbit", str(SP3), "--sat", "L51"]) == 2
    err = capsys.readouterr().err
    assert f"line {first_as + 1}" in err and "record type" in err
