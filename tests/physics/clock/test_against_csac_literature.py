"""The chip-scale atomic clock preset against the figures published for that class of clock.

Sources (cited beside each value):
- Kitching et al., "Chip-Scale Atomic Frequency References: Fabrication and Performance",
  19th European Frequency and Time Forum (2005), NIST: short-term instability 2.4e-10/sqrt(tau).
- Martinez et al., "A chip-scale atomic beam clock", Nature Communications 14, 3501 (2023),
  doi:10.1038/s41467-023-39166-1: chip-scale atomic clocks reach about 1e-11 at 1000 s and drift
  about 1e-9 per month.
The quoted figures are typical (order of magnitude), so the tolerances only guard against a slip
in the conversion to h_alpha, not against the scatter of real units.
"""

import math

import pytest
from taubudget.physics.clock import PRESETS, ClockModel

CONVERSION_SLIP = 0.02  # 2 %: the closed forms must return the quoted figures, not "about" them

PUBLISHED_ADEV_AT_1S = 2.4e-10  # Kitching et al. 2005
PUBLISHED_ADEV_AT_1000S = 1e-11  # Martinez et al. 2023
PUBLISHED_DRIFT_PER_MONTH = 1e-9  # Martinez et al. 2023
DAYS_IN_MEAN_MONTH = 365.25 / 12.0


@pytest.fixture(scope="module")
def csac():
    return ClockModel.from_preset("chip_scale_atomic")


def test_short_term_instability_is_the_published_white_fm(csac):
    assert csac.adev_at([1.0])[0] == pytest.approx(PUBLISHED_ADEV_AT_1S, rel=CONVERSION_SLIP)
    # tau^-1/2 over the white-FM range: 10 s is 1/sqrt(10) of 1 s
    assert csac.adev_at([10.0])[0] == pytest.approx(PUBLISHED_ADEV_AT_1S / math.sqrt(10.0),
                                                     rel=CONVERSION_SLIP)


def test_instability_at_1000_s_is_the_published_figure(csac):
    assert csac.adev_at([1000.0])[0] == pytest.approx(PUBLISHED_ADEV_AT_1000S, rel=CONVERSION_SLIP)


def test_ageing_is_the_published_monthly_drift(csac):
    assert csac.drift_per_day * DAYS_IN_MEAN_MONTH == pytest.approx(PUBLISHED_DRIFT_PER_MONTH,
                                                                    rel=CONVERSION_SLIP)


def test_preset_is_labelled_typical_and_cites_its_sources():
    p = PRESETS["chip_scale_atomic"]
    assert "typical" in p.description
    assert "doi:10.1038/s41467-023-39166-1" in p.description
    assert "Kitching" in p.source and "Martinez" in p.source


def test_a_chip_scale_clock_runs_free_far_shorter_than_a_rubidium_one():
    # 10 ns at 3 sigma: white FM alone gives 3 sqrt(h0 t / 2) = 10 ns at t = (10e-9/(3*2.4e-10))^2
    # = 193 s (closed form, physics.clock.time_error docstring); flicker and ageing shorten it.
    t_white_only_s = (10e-9 / (3.0 * PUBLISHED_ADEV_AT_1S)) ** 2
    t = ClockModel.from_preset("chip_scale_atomic").max_free_running_s(10e-9, 3.0)
    assert 0.5 * t_white_only_s < t < t_white_only_s
    assert ClockModel.from_preset("space_rubidium").max_free_running_s(10e-9, 3.0) > 100 * t
