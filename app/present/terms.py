"""Trade names for the rate terms and the relativistic-offset choices, with the old names as aliases.

Round 1 named some rate terms after the code's own ideas (``monopole`` near the Earth but ``earth``
far from it, ``reference_scale`` / ``time_scale``, ``reference_clock``) and the contact plan's
offset choices ``raw`` / ``after_preset`` / ``after_correction``. The response keeps those names
(``terms_fractional``, a contract, deprecated for one version) and adds ``rate_terms_fractional``
with the names below; requests accept either spelling.
"""

from __future__ import annotations

RATE_TERM_TRADE_NAMES = {
    # near the Earth (GCRS, TCG coordinate time)
    "velocity": "velocity",
    "monopole": "earth_monopole",
    "zonal": "earth_zonal",
    "tidal": "sun_moon_tidal",
    "reference_scale": "time_scale_rate",
    "reference_clock": "ground_reference_clock",
    # far from the Earth (BCRS, TCB coordinate time)
    "sun": "sun",
    "earth": "earth",
    "moon": "moon",
    "mars": "mars",
    "planets": "planets",
    "time_scale": "time_scale_rate",
    "reference": "reference",
}
"""Old term name -> the name in ``rate_terms_fractional``."""

RATE_TERM_DESCRIPTIONS = {
    "velocity": "second-order Doppler (time dilation), -v^2/(2c^2)",
    "earth_monopole": "the Earth's point-mass potential GM/r (gravitational blueshift); was 'monopole'",
    "earth_zonal": "the Earth's zonal harmonics J2..Jn (EGM2008); was 'zonal'",
    "sun_moon_tidal": "the tidal potential of the Sun and Moon at the clock; was 'tidal'",
    "time_scale_rate": "rate of the reference time scale against the coordinate time: L_G (TT, TAI, "
    "GPS time against TCG) near the Earth, the TT/TDB scaling against TCB far from it; was "
    "'reference_scale' (GCRS) and 'time_scale' (BCRS)",
    "ground_reference_clock": "rate of a ground reference clock against TT, with its sign turned "
    "(the reference's own gravitational and rotation terms); was 'reference_clock'",
    "sun": "the Sun's potential at the clock (BCRS)",
    "earth": "the Earth's potential at the clock, monopole plus zonal terms when near (BCRS)",
    "moon": "the Moon's potential at the clock (BCRS)",
    "mars": "the potential of Mars at the clock (BCRS)",
    "planets": "the planets' potentials at the clock (BCRS)",
    "reference": "the reference's own rate against TT along the geocentre (BCRS)",
}

RELATIVISTIC_OFFSET_ALIASES = {
    "uncorrected": "raw",
    "frequency_offset": "after_preset",
    "frequency_offset_and_eccentricity_correction": "after_correction",
}
"""Trade word -> the old value of a contact plan's ``relativistic_offset`` (both accepted)."""

RELATIVISTIC_OFFSET_WORDS = {
    "raw": "uncorrected: the relativistic offset with no frequency offset (preset) applied",
    "after_preset": "frequency_offset: what is left once the factory frequency offset (preset) "
    "removes the mean rate, i.e. the periodic part",
    "after_correction": "frequency_offset_and_eccentricity_correction: also after the user segment "
    "removes the eccentricity term -(2/c^2) r.v (IS-GPS-200 relativistic correction)",
}
"""Old value -> its meaning in words (response fields ..._description)."""


def rate_terms(terms_fractional: dict) -> dict[str, float]:
    """``terms_fractional`` under the trade names (same values, same order)."""
    return {RATE_TERM_TRADE_NAMES.get(k, k): float(v) for k, v in terms_fractional.items()}
