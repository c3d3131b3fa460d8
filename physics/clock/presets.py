"""Generic oscillator classes with typical noise and ageing figures.

All figures are typical values (common practice, order-of-magnitude figures for each
class of oscillator, not the data of any product): replace them with the measured
ADEV, h_alpha and ageing of your own unit before relying on a budget. The h_alpha
are chosen so that the closed forms of :mod:`physics.clock.powerlaw` give the quoted
Allan deviations: white FM h_0 = 2 sigma_1s^2 (sigma_1s the white-FM ADEV at 1 s),
flicker FM h_-1 = floor^2 / (2 ln 2), random-walk FM h_-2 = 3 sigma^2 / (2 pi^2 tau).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..constants import (
    CSAC_ADEV_AT_1S,
    CSAC_ADEV_AT_1000S,
    CSAC_DRIFT_PER_MONTH,
    DAYS_PER_MONTH,
)

__all__ = ["OscillatorPreset", "PRESETS", "preset"]

_LN2 = math.log(2.0)

CSAC_SOURCE = (  # the citations of the CSAC_* figures in physics.constants
    "Kitching et al., Chip-Scale Atomic Frequency References: Fabrication and Performance, "
    "19th EFTF (2005), NIST; Martinez et al., A chip-scale atomic beam clock, Nature "
    "Communications 14, 3501 (2023), doi:10.1038/s41467-023-39166-1"
)


def _white_fm(adev_at_1s: float) -> float:
    return 2.0 * adev_at_1s**2


def _flicker_fm(adev_floor: float) -> float:
    return adev_floor**2 / (2.0 * _LN2)


def _random_walk_fm(adev: float, at_tau_s: float) -> float:
    return 3.0 * adev**2 / (2.0 * math.pi**2 * at_tau_s)


@dataclass(frozen=True)
class OscillatorPreset:
    """Typical figures for a generic oscillator class (common practice; replace with unit data).

    h_alpha: {alpha: h} (IEEE Std 1139), drift_per_day: linear fractional frequency drift
    per day (ageing), description: what the figures represent.
    """

    name: str
    description: str
    h_alpha: dict = field(default_factory=dict)
    drift_per_day: float = 0.0
    source: str = "common practice"


PRESETS: dict[str, OscillatorPreset] = {
    p.name: p
    for p in (
        OscillatorPreset(
            name="space_rubidium",
            description=(
                "Space-qualified rubidium standard, typical figures (common practice): "
                "ADEV 1e-12 at 1 s falling as tau^-1/2 to a 5e-15 flicker floor, random walk "
                "reaching 1e-14 at 1e6 s, ageing 5e-14 per day. Replace with your unit's data."
            ),
            h_alpha={
                0: _white_fm(1e-12),
                -1: _flicker_fm(5e-15),
                -2: _random_walk_fm(1e-14, 1e6),
            },
            drift_per_day=5e-14,
        ),
        OscillatorPreset(
            name="space_passive_maser",
            description=(
                "Space passive hydrogen maser, typical figures (common practice): ADEV "
                "7e-13 at 1 s falling as tau^-1/2 to a 1e-15 flicker floor, random walk "
                "reaching 2e-15 at 1e6 s, ageing 1e-15 per day. Replace with your unit's data."
            ),
            h_alpha={
                0: _white_fm(7e-13),
                -1: _flicker_fm(1e-15),
                -2: _random_walk_fm(2e-15, 1e6),
            },
            drift_per_day=1e-15,
        ),
        OscillatorPreset(
            name="cesium_beam",
            description=(
                "Cesium beam standard, typical figures (common practice): ADEV 1e-11 at "
                "1 s falling as tau^-1/2 to a 1e-14 flicker floor, no systematic ageing "
                "(a primary-type standard). Replace with your unit's data."
            ),
            h_alpha={0: _white_fm(1e-11), -1: _flicker_fm(1e-14)},
            drift_per_day=0.0,
        ),
        OscillatorPreset(
            name="ultra_stable_quartz",
            description=(
                "Ultra-stable quartz oscillator after burn-in, typical figures (common "
                "practice): white FM 3e-14 at 1 s, flicker floor 1e-13, random walk reaching "
                "1e-12 at 1e4 s, ageing 1e-11 per day. Replace with your unit's data."
            ),
            h_alpha={
                0: _white_fm(3e-14),
                -1: _flicker_fm(1e-13),
                -2: _random_walk_fm(1e-12, 1e4),
            },
            drift_per_day=1e-11,
        ),
        OscillatorPreset(
            name="chip_scale_atomic",
            description=(
                "Chip-scale atomic clock (microfabricated vapour cell), typical figures from the "
                "published literature: ADEV 2.4e-10 at 1 s falling as tau^-1/2, about 1e-11 at "
                "1000 s (a flicker floor of 6.5e-12 added to the white FM), ageing about 1e-9 per "
                "month (3.3e-11 per day); no random-walk term is given, the ageing dominates "
                "beyond a day. Sources: " + CSAC_SOURCE + ". Replace with your unit's data."
            ),
            h_alpha={
                0: _white_fm(CSAC_ADEV_AT_1S),
                # the floor that, added in variance to the white FM, gives the quoted ADEV at 1000 s
                -1: _flicker_fm(math.sqrt(CSAC_ADEV_AT_1000S**2 - CSAC_ADEV_AT_1S**2 / 1000.0)),
            },
            drift_per_day=CSAC_DRIFT_PER_MONTH / DAYS_PER_MONTH,
            source=CSAC_SOURCE,
        ),
    )
}


def preset(name: str) -> OscillatorPreset:
    """The preset of that name (space_rubidium, space_passive_maser, cesium_beam, chip_scale_atomic, ...)."""
    try:
        return PRESETS[name]
    except KeyError:
        raise KeyError(f"unknown oscillator preset {name!r}; known: {sorted(PRESETS)}") from None
