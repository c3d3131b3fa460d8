"""A tabulated ephemeris (OEM segments, SP3 satellites) interpolated at the quadrature nodes.

Each segment holds GCRS positions (m) and optionally velocities (m/s) at TT
seconds after the table's reference instant. At a node the source uses the
``degree + 1`` points of its own segment nearest to the node (the window is
clipped at the segment's ends, so no polynomial ever spans a segment
boundary, as CCSDS 502.0-B-3 section 5.2.4 requires for OEM) and

- ``LAGRANGE``: the Lagrange polynomial of degree ``degree`` through the
  positions (and, when tabulated, through the velocities; otherwise the
  velocity is the polynomial's derivative). Lagrange's formula in barycentric
  weights (Berrut & Trefethen 2004, SIAM Review 46:501, eq. 3.2 and the
  derivative formula of section 9);
- ``HERMITE``: the Hermite polynomial through positions and velocities at
  m = (degree + 1) / 2 points (degree 2m - 1; e.g. Burden & Faires,
  "Numerical Analysis", section 3.4, in its Lagrange-basis form), velocity its
  derivative;
- ``LINEAR``: degree 1.

Error estimate: the same interpolation at degree n - 2 (Lagrange) or with one
point fewer (Hermite) differs from the degree-n result by about the
lower-degree error, which bounds the degree-n error for smooth orbits. The
largest such difference over all nodes the budget asked for is reported in
``describe()`` with the fractional rate error it implies
(GM |dr| / (r^2 c^2) + v |dv| / c^2) and the periodic-term error
(2/c^2)(|dr| v + r |dv|), so a coarse table cannot pass for a precise one.
The estimate measures truncation only: noise or rounding in the tabulated
values (0.5 mm in SP3) is amplified by the polynomial's Lebesgue constant
and is not included; near the ends of a segment, where the window is
one-sided, errors grow (Runge) and so does the estimate.

The source never extrapolates: a node outside every segment's coverage is an
input error naming the span and the data's coverage. That check happens
before any interpolation, for the whole node array at once.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, SECONDS_PER_DAY
from ..errors import PhysicsInputError
from .base import OrbitSource, States

INTERPOLATIONS = ("LAGRANGE", "HERMITE", "LINEAR")
COVERAGE_SLACK_S = 1e-6
"""Nodes this close outside a segment still count as inside (float round-off of epochs), s."""


@dataclass
class Segment:
    """One segment: TT seconds after the table reference, GCRS positions (m), velocities or None."""

    t_s: np.ndarray
    r_gcrs_m: np.ndarray
    v_gcrs_m_per_s: np.ndarray | None = None
    start_s: float | None = None  # usable window, defaults to the first/last point
    stop_s: float | None = None
    interpolation: str = "LAGRANGE"
    degree: int = 7
    label: str = ""

    def __post_init__(self):
        self.t_s = np.asarray(self.t_s, dtype=float)
        self.r_gcrs_m = np.asarray(self.r_gcrs_m, dtype=float)
        if self.v_gcrs_m_per_s is not None:
            self.v_gcrs_m_per_s = np.asarray(self.v_gcrs_m_per_s, dtype=float)
        if self.start_s is None:
            self.start_s = float(self.t_s[0])
        if self.stop_s is None:
            self.stop_s = float(self.t_s[-1])


def _lagrange_weights(x: np.ndarray, t: np.ndarray):
    """Basis values l_j(t) and derivatives l_j'(t), each (N, k), for abscissae x (N, k).

    Exact at the abscissae (a node equal to x_j gets l_j = 1 and the limit derivative).
    """
    n, k = x.shape
    diff = t[:, None] - x  # (N, k)
    xx = x[:, :, None] - x[:, None, :]  # x_j - x_m
    eye = np.eye(k, dtype=bool)[None]
    xx = np.where(eye, 1.0, xx)
    denom = np.prod(xx, axis=2)  # prod_{m != j} (x_j - x_m)
    dd = np.where(eye, 1.0, diff[:, None, :] * np.ones((1, k, 1)))  # (N, j, m): t - x_m, 1 on m = j
    num = np.prod(dd, axis=2)
    ell = num / denom
    # l_j'(t) = sum_{m != j} prod_{q != j, m} (t - x_q) / denom_j; computed without division by
    # (t - x_m), so it stays exact at the abscissae.
    dl = np.zeros((n, k))
    for m in range(k):  # loop over the k <= 12 window points, never over nodes
        dd_m = dd.copy()
        dd_m[:, :, m] = 1.0
        term = np.prod(dd_m, axis=2)
        term[:, m] = 0.0
        dl += term
    dl /= denom
    return ell, dl


def _lagrange(x, f, t, fprime=None):
    """Lagrange value and derivative at t; f (N, k, 3). With ``fprime`` the derivative output is
    the Lagrange interpolant of the tabulated derivatives instead."""
    ell, dl = _lagrange_weights(x, t)
    val = np.einsum("nk,nki->ni", ell, f)
    der = np.einsum("nk,nki->ni", dl, f) if fprime is None else np.einsum("nk,nki->ni", ell, fprime)
    return val, der


def _hermite(x, f, fp, t):
    """Hermite interpolation through values f and derivatives fp at x (N, m); value, derivative."""
    ell, dl = _lagrange_weights(x, t)
    k = x.shape[1]
    xx = x[:, :, None] - x[:, None, :]
    eye = np.eye(k, dtype=bool)[None]
    dl_at_node = np.sum(np.where(eye, 0.0, 1.0 / np.where(eye, 1.0, xx)), axis=2)  # l_j'(x_j)
    dt = t[:, None] - x
    a = 1.0 - 2.0 * dl_at_node * dt
    l2 = ell * ell
    h0 = a * l2
    h1 = dt * l2
    dh0 = -2.0 * dl_at_node * l2 + a * 2.0 * ell * dl
    dh1 = l2 + dt * 2.0 * ell * dl
    val = np.einsum("nk,nki->ni", h0, f) + np.einsum("nk,nki->ni", h1, fp)
    der = np.einsum("nk,nki->ni", dh0, f) + np.einsum("nk,nki->ni", dh1, fp)
    return val, der


class EphemerisTable(OrbitSource):
    """Tabulated GCRS states, interpolated per segment; refuses to extrapolate.

    ``reference_time``: skyfield Time that the segments' ``t_s`` count from (TT seconds).
    Errors name the table's own parts (``segments``; ``coverage`` for an instant the data do not
    cover, raised with ``at`` and ``source`` so the app can write the instant and the coverage
    in UTC).
    """

    kind = "ephemeris"

    def __init__(self, reference_time, segments: list[Segment], label: str = "ephemeris",
                 period_s: float | None = None):
        field = "segments"
        if not segments:
            raise PhysicsInputError(field, None, "the ephemeris holds no data points")
        for i, seg in enumerate(segments):
            if seg.interpolation not in INTERPOLATIONS:
                raise PhysicsInputError(field, seg.interpolation,
                                        f"segment {i + 1}: interpolation {seg.interpolation!r} is not "
                                        f"one of {', '.join(INTERPOLATIONS)}")
            if seg.interpolation == "HERMITE" and seg.v_gcrs_m_per_s is None:
                raise PhysicsInputError(field, "HERMITE",
                                        f"segment {i + 1}: Hermite interpolation needs velocities")
            if len(seg.t_s) < 2:
                raise PhysicsInputError(field, len(seg.t_s),
                                        f"segment {i + 1} has {len(seg.t_s)} point; interpolation "
                                        "needs at least 2")
            if np.any(np.diff(seg.t_s) <= 0.0):
                raise PhysicsInputError(field, None,
                                        f"segment {i + 1}: epochs must increase strictly")
        self.reference_time = reference_time
        self.segments = segments
        self.label = label
        self._period_s = period_s if period_s is not None else self._estimate_period()
        self.max_position_error_m = 0.0
        self.max_velocity_error_m_per_s = 0.0
        self.max_rate_error_fractional = 0.0
        self.max_periodic_error_s = 0.0

    def _estimate_period(self) -> float | None:
        seg = max(self.segments, key=lambda s: len(s.t_s))
        i = len(seg.t_s) // 2
        r = seg.r_gcrs_m[i]
        if seg.v_gcrs_m_per_s is not None:
            v = seg.v_gcrs_m_per_s[i]
        else:
            j = min(i + 1, len(seg.t_s) - 1)
            v = (seg.r_gcrs_m[j] - seg.r_gcrs_m[j - 1]) / (seg.t_s[j] - seg.t_s[j - 1])
        energy = 0.5 * float(v @ v) - GM_EARTH_TCG_M3_PER_S2 / float(np.linalg.norm(r))
        if energy >= 0:
            return None
        a = -GM_EARTH_TCG_M3_PER_S2 / (2 * energy)
        return float(2 * np.pi * np.sqrt(a**3 / GM_EARTH_TCG_M3_PER_S2))

    def epoch(self):
        return self.reference_time

    def period_s(self) -> float | None:
        return self._period_s

    def coverage(self) -> list:
        """Start and end (skyfield Time, two elements) of each segment."""
        return [self.reference_time.ts.tt_jd(
            self.reference_time.whole,
            self.reference_time.tt_fraction + np.array([seg.start_s, seg.stop_s]) / SECONDS_PER_DAY,
        ) for seg in self.segments]

    def _which_segment(self, t_tab: np.ndarray, span, t_s) -> np.ndarray:
        which = np.full(t_tab.shape, -1)
        for i, seg in enumerate(self.segments):  # loop over segments, not nodes
            inside = (which < 0) & (t_tab >= seg.start_s - COVERAGE_SLACK_S) & (
                t_tab <= seg.stop_s + COVERAGE_SLACK_S)
            which[inside] = i
        if (which < 0).any():
            first = int(np.argmax(which < 0))
            t_need = float(t_tab[first])
            starts = np.array([seg.start_s for seg in self.segments])
            stops = np.array([seg.stop_s for seg in self.segments])
            if t_need < starts.min():
                where = f"{starts.min() - t_need:.6g} s before the data's first point"
            elif t_need > stops.max():
                where = f"{t_need - stops.max():.6g} s after the data's last point"
            else:
                where = "in a gap between the data's segments"
            raise PhysicsInputError(
                "coverage", span.times(float(t_s[first])),
                f"the span of {span.duration_s:.6g} s needs the orbit {where}; the ephemeris is "
                "never extrapolated", source=self, at=span.times(float(t_s[first])),
            )
        return which

    def _interpolate(self, seg: Segment, t: np.ndarray, degree: int, interpolation: str):
        n_pts = len(seg.t_s)
        if interpolation == "HERMITE":
            k = min(max(2, (degree + 1) // 2), n_pts)
        else:
            k = min(max(2, degree + 1), n_pts)
        i = np.searchsorted(seg.t_s, t)
        i0 = np.clip(i - k // 2, 0, n_pts - k)
        idx = i0[:, None] + np.arange(k)[None, :]
        x = seg.t_s[idx]
        # Centre and scale the abscissae: products of many (t - x) stay well conditioned.
        centre = x[:, k // 2 : k // 2 + 1]
        scale = max(float(np.median(np.diff(seg.t_s))), 1e-9)
        xs = (x - centre) / scale
        ts = (t[:, None] - centre)[:, 0] / scale
        f = seg.r_gcrs_m[idx]
        if interpolation == "HERMITE":
            fp = seg.v_gcrs_m_per_s[idx] * scale
            r, dr = _hermite(xs, f, fp, ts)
            return r, dr / scale
        fprime = None if seg.v_gcrs_m_per_s is None else seg.v_gcrs_m_per_s[idx]
        r, d = _lagrange(xs, f, ts, fprime)
        return r, (d / scale if fprime is None else d)

    def states(self, span, t_s, orientation=None) -> States:
        t_s = np.asarray(t_s, dtype=float)
        offset = float(span.seconds_after_start(self.reference_time))
        t_tab = t_s - offset  # TT seconds after the table reference
        which = self._which_segment(t_tab, span, t_s)
        r = np.empty((t_s.size, 3))
        v = np.empty((t_s.size, 3))
        for i, seg in enumerate(self.segments):
            sel = which == i
            if not sel.any():
                continue
            interp = seg.interpolation
            deg = 1 if interp == "LINEAR" else seg.degree
            ri, vi = self._interpolate(seg, t_tab[sel], deg, interp)
            r[sel], v[sel] = ri, vi
            # Error estimate from the next-lower interpolant (see the module docstring).
            low = deg - 2 if interp == "LAGRANGE" else deg - 2
            if interp != "LINEAR" and low >= 1:
                rl, vl = self._interpolate(seg, t_tab[sel], low, interp)
                dr = np.linalg.norm(ri - rl, axis=1)
                dv = np.linalg.norm(vi - vl, axis=1)
                rn = np.linalg.norm(ri, axis=1)
                vn = np.linalg.norm(vi, axis=1)
                rate = (GM_EARTH_TCG_M3_PER_S2 * dr / rn**2 + vn * dv) / C2_M2_PER_S2
                periodic = 2.0 * (dr * vn + rn * dv) / C2_M2_PER_S2
                self.max_position_error_m = max(self.max_position_error_m, float(dr.max()))
                self.max_velocity_error_m_per_s = max(self.max_velocity_error_m_per_s, float(dv.max()))
                self.max_rate_error_fractional = max(self.max_rate_error_fractional, float(rate.max()))
                self.max_periodic_error_s = max(self.max_periodic_error_s, float(periodic.max()))
        return States(r, v, np.zeros(t_s.size, dtype=np.int8))

    def describe(self) -> dict:
        segs = [
            {"start": t[0], "stop": t[1], "points": int(len(s.t_s)), "interpolation": s.interpolation,
             "degree": int(s.degree), "velocities": s.v_gcrs_m_per_s is not None}
            for s, t in zip(self.segments, self.coverage(), strict=True)
        ]
        return {
            "type": self.kind,
            "source": self.label,
            "propagation": "interpolation of tabulated states within each segment, never across "
            "segment boundaries, never extrapolated",
            "segments": segs,
            "period_s": self._period_s,
            "interpolation_error_estimate": {
                "method": "difference from the next-lower-degree interpolant at the nodes used",
                "max_position_m": self.max_position_error_m,
                "max_velocity_m_per_s": self.max_velocity_error_m_per_s,
                "max_fractional_rate": self.max_rate_error_fractional,
                "max_periodic_term_s": self.max_periodic_error_s,
            },
        }
