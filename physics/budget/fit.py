"""Secular rate: a line fitted to the offset once the bounded parts of known form are removed,
jointly with harmonics of the orbital period.

Steps:
1. Remove every ``BoundedPart`` (a bounded term whose offset is known exactly: the eccentricity
   term -(2/c^2)(r.v - r.v_0) from the two-body identity v^2/2 + GM/r = 3GM/(2a) + 2 d(r.v)/dt,
   TN36 eq. 10.10; far from the Earth the position term; a frame may add more, e.g. the
   reference's own periodic part). Each part is booked against the rate terms that carry it.
2. Fit [1, t, cos k w t, sin k w t (k = 1..HARMONICS)] by weighted least squares, every row at
   once (total and terms), when the span covers the orbital period. Over less than a period the
   harmonics are phased in linearly in span length between HARMONIC_RAMP_START and one period,
   so the rate is continuous in the span length.

The sample grid follows from the harmonics: at least SAMPLES_PER_PERIOD uniform samples per
orbital period in every panel (the top harmonic is sampled well above Nyquist, so no column of
the basis can vanish on a span of a whole number of orbits), and the normal matrix's condition
number is checked: harmonics are dropped, highest first, while it exceeds MAX_NORMAL_CONDITION.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from ..quadrature import PanelIntegral

HARMONICS = 4
"""Orbital-period harmonics fitted jointly with the secular line."""

SAMPLES_PER_PERIOD = 2 * HARMONICS + 2
"""Least uniform samples per orbital period on the fit grid: the top harmonic at 0.8 of the
Nyquist frequency, never on it (where its sine column vanishes on a span of whole orbits)."""

MIN_FIT_POINTS_PER_PANEL = 8
"""Samples per panel when no period sets the grid (a line needs few; the panels are <= 12 h)."""

MAX_NORMAL_CONDITION = 1e10
"""Largest accepted 2-norm condition number of the (column-scaled) normal matrix."""

HARMONIC_RAMP_START = 0.5
"""Span, in orbital periods, below which no harmonic is fitted (the ramp ends at one period)."""


@dataclass(frozen=True)
class BoundedPart:
    """A bounded term of known form, removed from the offset before the secular fit.

    ``offset_s(t_s)``: its contribution to the accumulated offset at ``t_s`` (TT s since the span
    start), s, zero at the start. ``booked_against``: the share of it each rate term carries (the
    shares add up to 1), so the terms' secular rates stay consistent with the total's.
    """

    name: str
    offset_s: Callable[[np.ndarray], np.ndarray]
    booked_against: Mapping[str, float] = field(default_factory=dict)
    on_fine_grid: Callable[[int], np.ndarray] | None = None
    """Optional fast path: ``offset_s(q.fine_grid_s(points_per_panel))`` from the quadrature's
    cached per-panel matrices."""

    def on_grid(self, q: PanelIntegral, points_per_panel: int) -> np.ndarray:
        """The part on ``q.fine_grid_s(points_per_panel)``."""
        if self.on_fine_grid is not None:
            return self.on_fine_grid(points_per_panel)
        return self.offset_s(q.fine_grid_s(points_per_panel))


@dataclass(frozen=True)
class SecularFit:
    rate: float
    """Secular slope of the total, per TT second."""
    term_rates: Mapping[str, float]
    harmonics: int
    """Harmonics fitted (0: a line only)."""
    harmonic_weight: float
    """1 over a period or more; between 0 and 1 on the ramp below one period."""
    raw_harmonic_coef_s: np.ndarray | None
    """Cos/sin coefficient pairs of the offset itself (bounded parts kept), s; for the periodic
    components."""
    condition: float
    description: str


def fit_points_per_panel(q: PanelIntegral, period_s: float | None) -> int:
    """Uniform samples per panel so that the longest panel has SAMPLES_PER_PERIOD per period."""
    if period_s is None:
        return MIN_FIT_POINTS_PER_PANEL
    longest = float(np.max(np.diff(q.edges_s)))
    return max(MIN_FIT_POINTS_PER_PANEL, math.ceil(SAMPLES_PER_PERIOD * longest / period_s))


def trapezoid_weights(t_s: np.ndarray) -> np.ndarray:
    dt = np.diff(t_s)
    w = np.zeros_like(t_s)
    w[:-1] += 0.5 * dt
    w[1:] += 0.5 * dt
    return w


def _basis(t_s, span_s, period_s, harmonics):
    half = 0.5 * span_s
    cols = [np.ones_like(t_s), (t_s - half) / half]  # centred and scaled to [-1, 1]
    if harmonics:
        z1 = np.exp(1j * (2.0 * np.pi / period_s) * t_s)
        z = z1
        for _ in range(harmonics):  # cos(k w t) + i sin(k w t) by repeated products
            cols += [z.real, z.imag]
            z = z * z1
    return np.stack(cols, axis=1)


def _solve(t_s, weights, rows, span_s, period_s, harmonics):
    """Weighted LS of each row on the basis; (coef (k, m) with the slope per second, condition)."""
    half = 0.5 * span_s
    # Remove the chord first so the solve sees only the small departures from it.
    chord_slope = (rows[:, -1] - rows[:, 0]) / span_s
    chord = rows[:, :1] + chord_slope[:, None] * t_s[None, :]
    while True:
        basis = _basis(t_s, span_s, period_s, harmonics)
        bw = basis * weights[:, None]
        normal = bw.T @ basis
        scale = 1.0 / np.sqrt(np.diag(normal))
        condition = float(np.linalg.cond(normal * scale[:, None] * scale[None, :]))
        if condition <= MAX_NORMAL_CONDITION or harmonics == 0:
            break
        harmonics -= 1
    coef = np.linalg.solve(normal, bw.T @ (rows - chord).T).T
    coef[:, 0] += rows[:, 0] + chord_slope * half
    coef[:, 1] = coef[:, 1] / half + chord_slope
    return coef, condition, harmonics


def fit_secular(q: PanelIntegral, term_names: Sequence[str], parts: Sequence[BoundedPart],
                period_s: float | None) -> SecularFit:
    """Secular rates of the total (row 0 of ``q``) and of each term (rows 1..len(term_names))."""
    span_s = float(q.edges_s[-1] - q.edges_s[0])
    ppp = fit_points_per_panel(q, period_s)
    t = q.fine_grid_s(ppp)
    weights = trapezoid_weights(t)
    cum = q.cumulative_on_fine_grid(ppp, rows=list(range(1 + len(term_names))))
    total = cum[0].copy()
    terms = {n: cum[1 + i].copy() for i, n in enumerate(term_names)}
    for part in parts:
        off = part.on_grid(q, ppp)
        total -= off
        for name, share in part.booked_against.items():
            terms[name] -= share * off
    rows = np.vstack([total] + [terms[n] for n in term_names] + [cum[0]])

    cycles = span_s / period_s if period_s else 0.0
    weight = min(1.0, max(0.0, (cycles - HARMONIC_RAMP_START) / (1.0 - HARMONIC_RAMP_START)))
    coef, condition, harmonics = _solve(t, weights, rows, span_s, period_s, HARMONICS if weight else 0)
    slope = coef[:, 1]
    if 0.0 < weight < 1.0:
        line_only, _, _ = _solve(t, weights, rows, span_s, period_s, 0)
        slope = weight * slope + (1.0 - weight) * line_only[:, 1]
    raw = coef[-1, 2:] if harmonics else None
    if harmonics == 0:
        how = "a line"
    else:
        how = f"a line jointly with {harmonics} harmonics of the {period_s:.1f} s orbital period"
        if weight < 1.0:
            how += (f" (span of {cycles:.2f} periods: the rate is {weight:.2f} of that fit and "
                    f"{1 - weight:.2f} of a plain line's, so it stays continuous in the span length)")
    removed = ", ".join(p.name.replace("_", " ") for p in parts)
    description = f"{how} fitted to the offset" + (f" less the {removed}" if removed else "")
    term_rates = dict(zip(term_names, slope[1:1 + len(term_names)].tolist(), strict=True))
    return SecularFit(float(slope[0]), term_rates, harmonics, weight, raw, condition, description)


def harmonic_coefficients(t_s: np.ndarray, series_s: np.ndarray, span_s: float, period_s: float,
                          harmonics: int) -> np.ndarray:
    """Cos/sin coefficient pairs (s) of ``series_s`` on the orbital harmonics, fitted jointly with a
    line as ``fit_secular`` does (same basis and weights): the components of a part of the offset."""
    rows = np.asarray(series_s, dtype=float)[None, :]
    coef, _, _ = _solve(t_s, trapezoid_weights(t_s), rows, span_s, period_s, harmonics)
    return coef[0, 2:]


def fit_line_and_harmonics(t_s: np.ndarray, offset_s: np.ndarray, period_s: float | None) -> float:
    """Secular rate of one offset sampled on its own grid ``t_s`` (e.g. a reference's), with the
    same harmonics and ramp as ``fit_secular``; per second."""
    span_s = float(t_s[-1] - t_s[0])
    weights = trapezoid_weights(t_s)
    rows = np.asarray(offset_s, dtype=float)[None, :]
    cycles = span_s / period_s if period_s else 0.0
    weight = min(1.0, max(0.0, (cycles - HARMONIC_RAMP_START) / (1.0 - HARMONIC_RAMP_START)))
    coef, _, _ = _solve(t_s, weights, rows, span_s, period_s, HARMONICS if weight else 0)
    slope = float(coef[0, 1])
    if 0.0 < weight < 1.0:
        line_only, _, _ = _solve(t_s, weights, rows, span_s, period_s, 0)
        slope = weight * slope + (1.0 - weight) * float(line_only[0, 1])
    return slope
