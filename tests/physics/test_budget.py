"""Budget assembly: references, series, presets, errors (consistency checks with stated sources)."""

import numpy as np
import pytest
from support.budgets import POINT_MASS, as_dict, kepler_budget
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.constants import C2_M2_PER_S2, L_G
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import KeplerianOrbit, SurfaceClock
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span


def test_tcg_reference_differs_by_lg(ts):
    # TN36 eq. 10.2: dTT/dTCG = 1 - L_G, so rate vs TCG = (1 + y_TT)(1 - L_G) - 1,
    # expanded to avoid the cancellation of 1 + y in double precision.
    _, _, tt = kepler_budget(ts, 26561.4, 0.0, 86400.0, reference="TT")
    _, _, tcg = kepler_budget(ts, 26561.4, 0.0, 86400.0, reference="TCG")
    y = tt["mean_fractional_rate"]
    expected = y - L_G - y * L_G
    assert abs(tcg["mean_fractional_rate"] - expected) < 1e-19
    assert tcg["terms_fractional"]["reference_scale"] == 0.0


def test_gps_and_tai_run_at_tt_rate(ts):
    rates = [kepler_budget(ts, 20000.0, 0.1, 40000.0, reference=r)[2]["mean_fractional_rate"]
             for r in ("TT", "TAI", "GPS")]
    assert rates[0] == rates[1] == rates[2]


def test_ground_reference_clock(ts):
    # Against a clock on the ellipsoid at sea level, the rate is the rate against TT minus
    # the ground clock's own (W0 - U0)/c^2 (GRS80 check in test_against_grs80.py).
    ground = SurfaceClock(0.0, 0.0, 0.0)
    _, _, tt = kepler_budget(ts, 26561.4, 0.0, 86400.0)
    _, _, gr = kepler_budget(ts, 26561.4, 0.0, 86400.0, reference=ground)
    y_g = gr["terms_fractional"]["reference_clock"]
    assert abs(y_g + (-5.4e-17)) < 2e-18
    assert abs(gr["mean_fractional_rate"] - (tt["mean_fractional_rate"] + y_g)) < 1e-20


def test_series_layout_and_end_point(ts):
    _, _, b = kepler_budget(ts, 26561.4, 0.01, 10000.0, series_step_s=900.0, gravity=POINT_MASS)
    s = b["series"]
    assert len(s["time_utc"]) == len(s["offset_ns"]) == len(s["periodic_ns"]) == 13
    assert s["elapsed_s"][-1] == 10000.0
    assert s["time_utc"][0] == "2027-03-01T00:00:00.000000Z"
    assert abs(s["offset_ns"][-1] - b["offset_at_end_ns"]) < 1e-6


@pytest.mark.parametrize(
    "a_km,e,field,words",
    [
        (6100.0, 0.0, "semi_major_axis_m", "below the Earth's equatorial radius"),
        (26561.4, 1.2, "eccentricity", "not elliptic"),
        (8000.0, 0.3, "semi_major_axis_m", "perigee radius 5600 km"),
    ],
)
def test_physical_input_errors_name_field_and_reason(ts, a_km, e, field, words):
    with pytest.raises(PhysicsInputError) as info:
        KeplerianOrbit(ts.utc(2027, 3, 1), a_km * 1e3, e, 10.0, 0.0, 0.0, 0.0)
    assert info.value.field == field and words in info.value.reason


def test_span_beyond_ephemeris_is_refused(ts):
    start = ts.utc(2053, 9, 1)
    src = KeplerianOrbit(start, 26561.4e3, 0.0, 55.0, 0.0, 0.0, 0.0)
    with pytest.raises(PhysicsInputError) as info:
        compute_budget(BudgetInputs(src, "TT", Span(start, 90 * 86400.0), GravityModel()))
    assert "DE421" in info.value.reason


def test_node_limit_is_an_input_error(ts):
    start = ts.utc(2027, 3, 1)
    src = KeplerianOrbit(start, 7000e3, 0.001, 98.0, 0.0, 0.0, 0.0)
    with pytest.raises(PhysicsInputError) as info:
        compute_budget(BudgetInputs(src, "TT", Span(start, 30 * 86400.0), GravityModel(), max_nodes=1000))
    assert "limit" in info.value.reason


def test_terms_add_up_to_total(ts):
    _, _, b = kepler_budget(ts, 12000.0, 0.3, 3 * 86400.0, gravity=GravityModel(6, True, True))
    assert abs(sum(b["terms_fractional"].values()) - b["mean_fractional_rate"]) < 1e-21
    # Monopole share: -GM/(a c^2)/(1-L_G) on average (virial theorem, point mass).
    expected_monopole = -3.986004418e14 / (12000e3 * C2_M2_PER_S2) / (1 - L_G)
    assert abs(b["terms_fractional"]["monopole"] - expected_monopole) < 1e-17


def test_budget_model_block_lists_omissions(ts):
    _, _, b = kepler_budget(ts, 26561.4, 0.0, 86400.0)
    names = {t["term"] for t in b["omitted_terms"]}
    assert {"sun_tide", "moon_tide", "earth_zonal_above_degree_0", "post_newtonian_c4"} <= names
    assert "Planning estimate" in b["caution"]


def test_offset_functions_agree_with_series(ts):
    start = ts.utc(2027, 3, 1)
    span = Span(start, 86400.0)
    src = KeplerianOrbit(start, 26561.4e3, 0.02, 55.0, 0.0, 0.0, 0.0)
    bud = compute_budget(BudgetInputs(src, "TT", span, POINT_MASS, series_step_s=3600.0))
    d = as_dict(bud)
    t = np.asarray(d["series"]["elapsed_s"])
    assert np.allclose(bud.offset_s(t) * 1e9, d["series"]["offset_ns"], atol=1e-9)
    # After preset and eccentricity correction, a two-body clock keeps < 1 ps.
    assert np.max(np.abs(bud.after_correction_s(t))) < 1e-12
