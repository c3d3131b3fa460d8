"""What a budget computes, as frozen values in SI units (no ns, no ISO strings, no formatting).

``BudgetResult`` is what ``compute_budget`` returns; the app's presenter
(app/present/budget.py) turns it into the response. Offsets are clock minus reference, in seconds
of the reference; times are TT seconds since the span start (``span.times(t_s)`` gives skyfield
``Time`` objects). A positive rate means the clock gains.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ..quadrature import PanelIntegral
from ..span import Span


@dataclass(frozen=True)
class OmittedTerm:
    """A rate term the model leaves out, with its order of magnitude."""

    name: str
    size_fractional: float
    note: str


@dataclass(frozen=True)
class PeriodicComponent:
    period_s: float
    amplitude_s: float


@dataclass(frozen=True)
class PeriodicPart:
    """The offset left once the secular line is removed (mean zero over the span)."""

    amplitude_s: float
    """Half the peak-to-peak of the clock's own periodic part: without the coordinate position term
    and, for a clock that does not ride with the Earth against a TT-like scale, without TDB - TT
    (the reference's own oscillation); extremes refined."""
    peak_to_peak_s: float
    dominant_period_s: float | None
    components: tuple[PeriodicComponent, ...]
    position_term_amplitude_s: float = 0.0
    """Half the peak-to-peak of the coordinate position term, clock minus reference (0 in the GCRS)."""
    amplitude_with_position_term_s: float | None = None
    """Half the peak-to-peak of the offset less the secular line, position term included."""
    peak_to_peak_with_position_term_s: float | None = None


@dataclass(frozen=True)
class EccentricityCorrection:
    """The user-segment correction -(2/c^2) r.v (TN36 eq. 10.10; IS-GPS-200 F e sqrt(A) sin E)."""

    amplitude_s: float
    residual_after_correction_s: float
    """Largest |offset - secular line - correction| over the span (mean removed), of the clock's own
    periodic part: in the BCRS without the coordinate position term (and a TT-like reference's own
    TDB - TT), which ``PositionTerm`` reports, as ``PeriodicPart.amplitude_s`` is."""
    residual_peak_to_peak_s: float
    analytic_amplitude_s: float | None
    """2 sqrt(a GM) e / c^2 with the source's mean a and e (Brouwer mean elements in a zonal field,
    the given ones in a point-mass field), for Keplerian orbits; None otherwise."""
    formula: str
    applicable: bool = True
    """False for a clock with no orbit of its own around a centre (fixed on the Moon or Mars)."""
    applied: bool = True
    """Whether the residual figures include the correction (applicable and requested)."""
    residual_with_position_term_s: float | None = None
    """BCRS: the largest residual with the coordinate position term kept (what a comparison in
    barycentric coordinates sees); None in the GCRS, where there is none."""


@dataclass(frozen=True)
class Preset:
    """The frequency offset that nulls the mean rate: f_set = f0 / (1 + y) (IS-GPS-200 practice)."""

    fractional: float
    """-y / (1 + y): every digit of y kept (1/(1 + y) - 1 cancels)."""
    nominal_frequency_hz: float | None
    frequency_hz: float | None


@dataclass(frozen=True)
class PositionTerm:
    """Barycentric budgets: -(v_B.(x - x_B))/c^2, the part of TCB - TCG that TT along the geocentre
    (or the lunar reference at the Moon's centre) leaves out; bounded."""

    amplitude_s: float
    base_body: str


@dataclass(frozen=True)
class Integration:
    error_estimate_s: float
    """Sum of the panels' tail bounds: conservative."""
    nodes_used: int
    panels_used: int
    nodes_per_panel: int
    tol_fractional: float


@dataclass(frozen=True)
class Series:
    """Samples at the requested step (the span end included)."""

    t_s: np.ndarray
    offset_s: np.ndarray
    periodic_s: np.ndarray
    """The offset less the secular line (the mean rate), mean zero over the span: every bounded
    part together (eccentricity term, J2 and tidal periodic terms; in the BCRS also the position
    term and the host body's orbital term)."""
    eccentricity_term_s: np.ndarray
    """-(2/c^2) r.v(t): the absolute term, as IS-GPS-200's F e sqrt(A) sin E (zeros where no
    correction is offered)."""
    signal_path: Mapping[str, object] | None = None
    """Barycentric budgets: light time and Shapiro delay to the Earth (and the link station)."""


@dataclass(frozen=True)
class BudgetResult:
    """A computed budget. ``terms_fractional`` add up to ``mean_fractional_rate``."""

    span: Span
    frame: str
    """"GCRS" or "BCRS"."""
    reference: object
    """The scale's name, or the reference clock's orbit source."""
    mean_fractional_rate: float
    """Mean rate against the reference, per second of the reference."""
    terms_fractional: Mapping[str, float]
    preset: Preset
    offset_at_end_s: float
    offset_extreme_s: float
    offset_extreme_t_s: float
    offset_min_s: float
    offset_max_s: float
    periodic: PeriodicPart
    eccentricity_correction: EccentricityCorrection
    position_term: PositionTerm | None
    integration: Integration
    model: Mapping[str, object]
    """The frame's description of the model: equations, included terms, orbit, fit."""
    omitted_terms: tuple[OmittedTerm, ...]
    series: Series | None
    warnings: tuple[str, ...]
    secular_rate_per_tt_s: float
    """The fitted slope against TT per TT second (what ``after_preset_s`` removes)."""
    orbital_period_s: float | None
    """The source's period (None for a clock fixed on a body's surface)."""
    integral: PanelIntegral
    """The quadrature: panels, node values, antiderivative (row 0: the total; then the terms)."""
    eccentricity_part: object
    """The ``physics.budget.fit.BoundedPart`` of the eccentricity term."""

    def offset_s(self, t_s) -> np.ndarray:
        """Accumulated offset at ``t_s`` (TT s since the start), clock minus reference, s."""
        return self.integral.cumulative_at(np.atleast_1d(np.asarray(t_s, dtype=float)), rows=[0])[0]

    def eccentricity_term_s(self, t_s) -> np.ndarray:
        """-(2/c^2)(r.v(t) - r.v(0)), s."""
        return self.eccentricity_part.offset_s(np.atleast_1d(np.asarray(t_s, dtype=float)))

    def after_preset_s(self, t_s) -> np.ndarray:
        """The offset once the preset removes the secular rate (the periodic part plus its start)."""
        t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
        return self.offset_s(t_s) - self.secular_rate_per_tt_s * t_s

    def after_correction_s(self, t_s) -> np.ndarray:
        """What is left once the user segment also applies -(2/c^2) r.v."""
        return self.after_preset_s(t_s) - self.eccentricity_term_s(t_s)

    @property
    def nodes_used(self) -> int:
        return self.integration.nodes_used
