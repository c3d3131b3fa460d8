"""Our stability statistics, EDF and bounds against allantools (general-purpose reference library).

allantools (A. Wallin et al., https://github.com/aewallin/allantools) is used here only as
an outside reference; the package code does not import it. Noise is simulated with our
Kasdin-Walter generator; the slope and level checks compare with the IEEE Std 1139
closed forms sigma_y^2 = h0/(2 tau), 2 ln2 h_-1, (2 pi^2/3) h_-2 tau (DESIGN.md; Barnes
et al. 1971, Table I).
"""

import allantools
import numpy as np
import pytest
from taubudget.physics.clock import edf as edf_mod
from taubudget.physics.clock import powerlaw, simulate
from taubudget.physics.clock import stability as st
from taubudget.physics.clock.noise_id import noise_alpha_lag1

N_SAMPLES = 2**15
SEED = 20240611
TAU0_S = 1.0

FLOAT_AGREEMENT = 1e-9
"""Relative tolerance between two implementations of the same sums: floating-point rounding
(ours uses a cumulative sum for MDEV), far below any statistical effect."""

PAIRS = [
    (st.allan_deviation, allantools.adev),
    (st.overlapping_allan_deviation, allantools.oadev),
    (st.modified_allan_deviation, allantools.mdev),
    (st.time_deviation_s, allantools.tdev),
    (st.hadamard_deviation, allantools.hdev),
    (st.overlapping_hadamard_deviation, allantools.ohdev),
]

NOISES = [  # (alpha, h_alpha, expected tau exponent of ADEV)
    (0, 2e-24, -0.5),
    (-1, 7e-29, 0.0),
    (-2, 1.5e-35, 0.5),
]


@pytest.fixture(scope="module")
def simulated():
    out = {}
    for i, (alpha, h, _) in enumerate(NOISES):
        out[alpha] = simulate.kasdin_walter_noise(N_SAMPLES, alpha, h, TAU0_S, seed=SEED + i)[0]
    return out


@pytest.mark.parametrize(("ours", "theirs"), PAIRS, ids=[p[1].__name__ for p in PAIRS])
@pytest.mark.parametrize("alpha", [n[0] for n in NOISES])
def test_deviations_match_allantools(simulated, ours, theirs, alpha):
    y = simulated[alpha]
    m = st.octave_averaging_factors(y.size + 1)[:-2]
    mine = ours(y, TAU0_S, data_type="frequency", averaging_factors=m, noise_alpha=alpha)
    taus, devs, _, ns = theirs(y, rate=1.0 / TAU0_S, data_type="freq", taus=m * TAU0_S)
    np.testing.assert_allclose(taus, mine.tau_s)
    np.testing.assert_allclose(mine.deviation, devs, rtol=FLOAT_AGREEMENT)
    np.testing.assert_array_equal(mine.n_terms, ns.astype(int))


SLOPE_TOLERANCE = 0.1
"""Allowed error of the fitted log-log slope over m = 16..1024: with 2^15 points the EDF at
m = 1024 is ~10-30, a log-deviation scatter of ~0.15 at the long end over ln(64) = 4.2,
i.e. a slope scatter of ~0.04; 0.1 is about 3 sigma."""

NOISE_ID_AGREEMENT = 0.05
"""Same lag-1 formula on the same data; differences only from detail of mean/trend removal."""

BOUND_CONFIDENCE = 0.99
"""Per-point confidence for the level check (7 points x 3 noises: a ~20% chance of one
miss for correct code if the level were drawn afresh; the seed is fixed)."""


@pytest.mark.parametrize(("alpha", "h", "slope"), NOISES)
def test_slopes_and_levels_within_confidence(simulated, alpha, h, slope):
    y = simulated[alpha]
    # m = 16 .. 1024: below that the discrete (Kasdin-Walter) noise departs from the
    # continuous closed forms by a few percent for flicker and random-walk FM.
    m = 2 ** np.arange(4, 11)
    dev = st.overlapping_allan_deviation(
        y,
        TAU0_S,
        "frequency",
        averaging_factors=m,
        confidence=BOUND_CONFIDENCE,
        noise_alpha=alpha,
    )
    fitted = np.polyfit(np.log(dev.tau_s), np.log(dev.deviation), 1)[0]
    assert abs(fitted - slope) < SLOPE_TOLERANCE
    # The closed-form ADEV of the generating h lies inside the chi-squared bounds.
    expected = powerlaw.allan_deviation_from_h({alpha: h}, dev.tau_s)
    assert np.all(dev.lower <= expected) and np.all(expected <= dev.upper)


@pytest.mark.parametrize(
    ("alpha", "factors"), [(2, (1, 4, 16)), (1, (1,)), (0, (1, 4, 16)), (-1, (1,)), (-2, (1, 4, 16))]
)
def test_noise_identification_matches_allantools(alpha, factors):
    # Flicker types are checked at m = 1 only: after decimation their lag-1 estimate sits
    # near a rounding boundary (see physics.clock.noise_id), for allantools as for us.
    y = simulate.kasdin_walter_noise(4096, alpha, 1.0, 1.0, seed=7 + alpha)[0]
    x = st.frequency_to_phase_s(y, 1.0)
    for m in factors:
        ours = noise_alpha_lag1(x, m)
        theirs = allantools.autocorr_noise_id(x, m, data_type="phase")
        assert round(ours) == theirs[0] == alpha
        # ours is clipped to the modelled range [-2, 2]
        assert ours == pytest.approx(np.clip(theirs[1], -2, 2), abs=NOISE_ID_AGREEMENT)


# EDF against allantools.edf_greenhall (Greenhall & Riley 2003 algorithm, continuous-time
# model) and edf_simple (Howe, Allan & Barnes 1981 empirical formulas, SP 1065 Table 11
# as recalled).
N_EDF = 1001

EDF_CONTINUOUS_LIMIT = 0.03
"""For m >= 64 our discrete-noise EDF and Greenhall's continuous-noise EDF describe the same
statistic (sampling effects die out as 1/m); 3% covers the remaining difference."""

EDF_HAB = 0.08
"""Howe-Allan-Barnes formulas are empirical fits from simulations, quoted good to a few
percent (from memory); 8% allows for that."""

EDF_WHITE_PM_EXACT = 1e-6
"""For white PM the discrete and continuous models coincide (independent samples), so the
two exact computations must agree to rounding."""

VARIANTS = [  # (d, boxes, stride is m?, overlapping, modified, n_terms)
    ("adev", 2, 2, True, False, False, lambda m: (N_EDF - 1) // m - 1),
    ("oadev", 2, 2, False, True, False, lambda m: N_EDF - 2 * m),
    ("mdev", 2, 3, False, True, True, lambda m: N_EDF - 3 * m + 1),
    ("ohdev", 3, 3, False, True, False, lambda m: N_EDF - 3 * m),
]


@pytest.mark.parametrize("variant", VARIANTS, ids=[v[0] for v in VARIANTS])
@pytest.mark.parametrize("alpha", [2, 0, -1, -2])
def test_edf_against_greenhall(variant, alpha):
    _, d, boxes, non_overlapping, overlapping, modified, terms = variant
    for m in (1, 4, 64):
        if (alpha != 2 or modified) and m < 64:
            continue
        ours = edf_mod.equivalent_degrees_of_freedom(
            alpha, terms(m), m, d, boxes, m if non_overlapping else 1
        )
        theirs = allantools.edf_greenhall(alpha, d, m, N_EDF, overlapping=overlapping, modified=modified)
        exact = alpha == 2 and not modified  # MDEV: Greenhall averages in continuous time
        tol = EDF_WHITE_PM_EXACT if exact else EDF_CONTINUOUS_LIMIT
        assert ours == pytest.approx(theirs, rel=tol)


@pytest.mark.parametrize("alpha", [2, 0, -1, -2])
def test_oadev_edf_against_howe_allan_barnes(alpha):
    for m in (4, 16, 64):
        ours = edf_mod.equivalent_degrees_of_freedom(alpha, N_EDF - 2 * m, m, 2, 2, 1)
        assert ours == pytest.approx(allantools.edf_simple(N_EDF, m, alpha), rel=EDF_HAB)


def test_confidence_bounds_match_allantools():
    dev = np.array([1e-12, 3e-13, 2e-13])
    edf = np.array([3.5, 40.0, 800.0])
    lo, hi = edf_mod.chi2_bounds(dev**2, edf, 0.683)
    for i in range(3):
        ref_lo, ref_hi = allantools.confidence_interval(dev[i], edf[i], ci=0.683)
        assert np.sqrt(lo[i]) == pytest.approx(ref_lo, rel=FLOAT_AGREEMENT)
        assert np.sqrt(hi[i]) == pytest.approx(ref_hi, rel=FLOAT_AGREEMENT)
