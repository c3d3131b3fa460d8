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

The source never extrapolates: ``check_span`` refuses, before any work, a span
whose start or end lies outside the data (naming how far, and both instants),
or that crosses a gap between segments (naming the gap). ``states`` refuses a
node outside the data as well (a caller asking for separate epochs rather than
a span).

Consistency of the data (a corrupted line: a digit slipped, a velocity in the
wrong unit) is checked when the table is built, vectorised over the points:

- each tabulated position against the Lagrange interpolant of its ``k``
  nearest neighbours in its segment, the point itself left out (k = degree + 1,
  within 6..10), evaluated at the point's epoch;
- where velocities are tabulated, each against the derivative of that
  interpolant at the point.

What the data explain at a point is the truncation there, measured as the
difference between that interpolant and the one through the k - 2 nearest
neighbours (the error estimate above, applied to the left-out point), plus
the scatter of the values: the step they are written with when the format
fixes it (``Segment.position_resolution_m``; SP3: 1 mm), double precision,
and three times the segment's median leave-one-out scatter (which absorbs
rounding and the noise of an orbit solution; a few bad points do not move a
median), each times the interpolant's Lebesgue function 1 + sum |l_j| (for a
velocity: sum |l_j'| for the positions' part). The ratio of the disagreement
to that level is the test. Measured on clean data: at most 0.8 on the shipped
OEM samples and 1.3 on the test support's 40,000-point OEM, OEMs written to
1 m, and OEMs with 1 cm to 1 m of noise (LEO to GPS altitude, e up to 0.7,
Lagrange, Hermite and linear segments); 3.5 on the SP3 sample's velocities
(Earth-fixed velocities carried into the GCRS without the precession-nutation
rate, physics/frames/orientation.py: 4e-5 m/s, a rate error of 1.5e-18); 6.7
on an e = 0.7 orbit sampled every 15 minutes (too coarse at perigee).
Corrupted values: a position 1 m off in an OEM consistent to 10 um, 2.9e4; a
velocity 1 mm/s off, 1.9e4; the digit slips of the audit (a position written
x10, a velocity x10), 1.4e12 and 6.1e11. The corrupted point carries the
largest ratio: its neighbours' interpolants include it in both degrees, so
their truncation measure grows with their disagreement (ratios near 1); a bad
position also bends its neighbours' derivatives, so a velocity is judged only
where its ratio exceeds ``CONTAMINATION`` times the largest position ratio in
its window. Cost: O(n k^2), 0.07 to 0.09 s for 40,000 points with velocities.

A point whose ratio reaches ``CONSISTENCY_REFUSE_RATIO`` and whose
disagreement implies a fractional rate error (the formula above) of at least
``MATTERS_FRACTIONAL`` refuses the table (``InconsistentStateError``, naming
the point); from ``CONSISTENCY_WARN_RATIO``, a budget warns about a point near
its span whose implied error exceeds the budget's precision
(``budget_warnings``), and about an interpolation error estimate that does.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view

from ..constants import C2_M2_PER_S2, GM_EARTH_TCG_M3_PER_S2, SECONDS_PER_DAY
from ..errors import PhysicsInputError
from ..quadrature import DEFAULT_TOL_FRACTIONAL
from .base import OrbitSource, States

INTERPOLATIONS = ("LAGRANGE", "HERMITE", "LINEAR")
COVERAGE_SLACK_S = 1e-6
"""A span end or node this close outside the data still counts as inside (float round-off of
epochs: two-double TT seconds resolve ~1e-8 s over a year), s."""

CHECK_NEIGHBOURS = (6, 10)
"""Neighbours of the leave-one-out interpolant: the segment's degree + 1, clipped to this range
(at least 6 so the k - 2 comparison still has degree 3; at most 10 keeps the check O(n k^2)
cheap), and at most the segment's other points. Segments of fewer than 5 points are not checked
(too few to compare two degrees)."""
CONSISTENCY_WARN_RATIO = 30.0
"""Disagreement over what spacing and rounding explain from which a point is suspect: clean data
stay below 1.3, and below 7 where the sampling is too coarse for the orbit or a frame conversion
leaves a small systematic part (measured: module docstring), so 30 keeps a margin of 4."""
CONSISTENCY_REFUSE_RATIO = 1000.0
"""The ratio from which a point is taken as corrupted and the table refused: three orders of
magnitude above what the data explain cannot come from truncation or rounding; a slipped digit or
a wrong unit gives 1e4 to 1e12."""
MATTERS_FRACTIONAL = DEFAULT_TOL_FRACTIONAL
"""Smallest implied fractional rate error for which an inconsistent point is refused: the
quadrature's tolerance (1e-18 s/s). Below it an error changes none of the integrated figures a
budget reports, so a harmless glitch (1 mm in a MEO table: ~6e-21) does not refuse a file."""
CONTAMINATION = 10.0
"""A velocity disagreement is attributed to the velocity only when its ratio exceeds this many times
the largest position ratio in its window (a bad position shows up in its neighbours' derivatives)."""
NOISE_MEDIANS = 3.0
"""The scatter a segment's values show at its median point, times this, counts as rounding: data
written to more digits than they hold (an orbit solution's noise) are rough, not corrupted."""
_DOUBLE_EPS = float(np.finfo(float).eps)


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
    position_resolution_m: float = 0.0  # the step the positions were written with (rounding), m
    velocity_resolution_m_per_s: float = 0.0  # the same for velocities, m/s

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


def _weights_off_nodes(x: np.ndarray, t: np.ndarray):
    """Lagrange basis values and derivatives, each (N, k), at points t (N,) that are none of the
    abscissae x (N, k): first barycentric form l_j = prod_m (t - x_m) w_j / (t - x_j) with
    w_j = 1 / prod_{m != j} (x_j - x_m) (Berrut & Trefethen 2004, eq. 3.3), and
    l_j' = l_j (sum_{m != j} 1 / (t - x_m)). O(N k^2)."""
    k = x.shape[1]
    xx = x[:, :, None] - x[:, None, :]
    xx[:, np.arange(k), np.arange(k)] = 1.0
    w = 1.0 / np.prod(xx, axis=2)
    d = t[:, None] - x
    inv = 1.0 / d
    ell = np.prod(d, axis=1)[:, None] * w * inv
    dl = ell * (inv.sum(axis=1)[:, None] - inv)
    return ell, dl


@dataclass(frozen=True)
class Consistency:
    """One quantity (``position`` or ``velocity``) of one segment, per tabulated point.

    ``disagreement``: |tabulated - leave-one-out estimate| (m or m/s); ``explained``: what
    truncation and rounding explain there (same unit); ``rate_fractional``: the fractional rate
    error the disagreement implies (GM d / (r^2 c^2), or v d / c^2); ``axis``: the component
    (0, 1, 2) that disagrees most.
    """

    quantity: str
    disagreement: np.ndarray
    explained: np.ndarray
    rate_fractional: np.ndarray
    axis: np.ndarray
    judged: np.ndarray | None = None  # the ratio a decision uses (velocities: see _leave_one_out)

    @property
    def ratio(self) -> np.ndarray:
        return self.disagreement / self.explained

    @property
    def judged_ratio(self) -> np.ndarray:
        return self.ratio if self.judged is None else self.judged

    @property
    def unit(self) -> str:
        return "m" if self.quantity == "position" else "m/s"


def _leave_one_out(seg: Segment, k: int) -> list[Consistency]:
    """Each point of ``seg`` against the interpolant of its k nearest neighbours (module docstring)."""
    t, r, v = seg.t_s, seg.r_gcrs_m, seg.v_gcrs_m_per_s
    n = len(t)
    i = np.arange(n)
    i0 = np.clip(i - (k + 1) // 2, 0, n - k - 1)
    window = i0[:, None] + np.arange(k + 1)[None, :]
    nb = window[window != i[:, None]].reshape(n, k)  # the window without the point itself
    scale = max(float(np.median(np.diff(t))), 1e-9)
    x = (t[nb] - t[:, None]) / scale  # abscissae about the point (at 0), in steps
    # The k - 2 nearest of those neighbours (a centred window loses its two outermost points).
    near = np.sort(np.argsort(np.abs(x), axis=1, kind="stable")[:, : k - 2], axis=1)
    nb2 = np.take_along_axis(nb, near, axis=1)
    x2 = np.take_along_axis(x, near, axis=1)
    zero = np.zeros(n)
    ell, dl = _weights_off_nodes(x, zero)
    ell2, dl2 = _weights_off_nodes(x2, zero)
    dr = r[nb] - r[:, None, :]  # neighbours relative to the point: less cancellation
    dr2 = r[nb2] - r[:, None, :]
    miss = np.einsum("nk,nki->ni", ell, dr)  # leave-one-out estimate minus the tabulated position
    trunc = np.linalg.norm(miss - np.einsum("nk,nki->ni", ell2, dr2), axis=1)
    lebesgue = 1.0 + np.abs(ell).sum(axis=1)  # a value's own error plus its neighbours' through l_j
    d_r = np.linalg.norm(miss, axis=1)
    rn = np.linalg.norm(r, axis=1)
    # Rounding: the written step, double precision, and the scatter the segment shows at its typical
    # point (the median is untouched by a few bad points; a value error enters d with weight 1 and
    # its neighbours' through the Lebesgue function, so d / lebesgue is ~ a value's own error).
    noise_r = (seg.position_resolution_m + 4.0 * _DOUBLE_EPS * rn
               + NOISE_MEDIANS * float(np.median(d_r / lebesgue)))
    gm_r2 = GM_EARTH_TCG_M3_PER_S2 / rn**2
    out = [Consistency("position", d_r, trunc + noise_r * lebesgue, gm_r2 * d_r / C2_M2_PER_S2,
                       np.argmax(np.abs(miss), axis=1))]
    if v is not None:
        deriv = np.einsum("nk,nki->ni", dl, dr) / scale
        deriv2 = np.einsum("nk,nki->ni", dl2, dr2) / scale
        vmiss = deriv - v
        vn = np.linalg.norm(v, axis=1)
        # The velocities' own scatter, from their leave-one-out interpolant (a velocity written in
        # the wrong unit throughout stays smooth there, so it does not raise this floor).
        v_loo = np.linalg.norm(np.einsum("nk,nki->ni", ell, v[nb]) - v, axis=1)
        noise_v = (seg.velocity_resolution_m_per_s + 4.0 * _DOUBLE_EPS * vn
                   + NOISE_MEDIANS * float(np.median(v_loo / lebesgue)))
        explained_v = (np.linalg.norm(deriv - deriv2, axis=1) + noise_v
                       + noise_r * np.abs(dl).sum(axis=1) / scale)
        d_v = np.linalg.norm(vmiss, axis=1)
        ratio_v = d_v / explained_v
        # A bad position also bends its neighbours' derivatives (measured: their velocity ratio up
        # to ~1.5 times the position's own), so a velocity is judged only where its ratio exceeds
        # CONTAMINATION times the largest position ratio within its window.
        half = k // 2 + 1
        nearby = sliding_window_view(np.pad(out[0].ratio, half), 2 * half + 1).max(axis=1)
        judged = np.where(ratio_v > CONTAMINATION * nearby, ratio_v, 0.0)
        out.append(Consistency("velocity", d_v, explained_v, vn * d_v / C2_M2_PER_S2,
                               np.argmax(np.abs(vmiss), axis=1), judged))
    return out


class InconsistentStateError(PhysicsInputError):
    """A tabulated state that disagrees with its neighbours far beyond what the data explain.

    ``segment`` and ``point`` (0-based) locate it, ``quantity`` is ``position`` or ``velocity``
    and ``axis`` the component (0, 1, 2) that disagrees most; ``detail`` is the reason without
    the point's name, for a caller that names the point itself (a file's line).
    """

    def __init__(self, field, value, reason, *, segment: int, point: int, quantity: str, axis: int,
                 detail: str, at=None, source=None):
        super().__init__(field, value, reason, at=at, source=source)
        self.segment = segment
        self.point = point
        self.quantity = quantity
        self.axis = axis
        self.detail = detail

    def __reduce__(self):
        """Picklable as a plain ``PhysicsInputError`` (the table stays behind, as its source does)."""
        return PhysicsInputError(self.field, self.value, self.reason, at=self.at).__reduce__()


def default_point_name(segment: int, point: int, quantity: str, axis: int) -> str:
    """How a tabulated point is named when the table's maker gives no names (0-based inputs)."""
    return f"point {point + 1} of segment {segment + 1} ({quantity}, {'xyz'[axis]})"


class EphemerisTable(OrbitSource):
    """Tabulated GCRS states, interpolated per segment; refuses to extrapolate.

    ``reference_time``: skyfield Time that the segments' ``t_s`` count from (TT seconds).
    ``point_name(segment, point, quantity, axis)``: what the table's maker calls a tabulated
    point (0-based segment and point, ``position`` or ``velocity``, component 0..2), used in
    errors and warnings; default ``default_point_name``.
    Errors name the table's own parts (``segments``; ``r_gcrs_m``/``v_gcrs_m_per_s`` for an
    inconsistent point, as ``InconsistentStateError``; ``coverage`` for a span or an instant the
    data do not cover, raised with ``source`` and the instants it names as skyfield Times, so the
    app can write them and the coverage in UTC).
    """

    kind = "ephemeris"

    def __init__(self, reference_time, segments: list[Segment], label: str = "ephemeris",
                 period_s: float | None = None, point_name=None):
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
        self.point_name = point_name or default_point_name
        self._covered_s = self._merged_coverage()
        self._period_s = period_s if period_s is not None else self._estimate_period()
        self.begin_evaluation()
        self.consistency = [self._check_segment(seg) for seg in segments]
        self._refuse_inconsistent()

    # --- consistency of the data (module docstring) -------------------------------------------

    @staticmethod
    def _check_segment(seg: Segment) -> list[Consistency]:
        k = min(int(np.clip(seg.degree + 1, *CHECK_NEIGHBOURS)), len(seg.t_s) - 1)
        return _leave_one_out(seg, k) if k >= 4 else []

    def _time(self, t_tab_s: float):
        """Skyfield Time at TT seconds after the table's reference."""
        ref = self.reference_time
        return ref.ts.tt_jd(ref.whole, ref.tt_fraction + t_tab_s / SECONDS_PER_DAY)

    def _finding(self, i: int, c: Consistency, j: int) -> tuple[str, str]:
        """(point name, what is wrong) for point j of segment i in ``c``."""
        seg = self.segments[i]
        k = min(int(np.clip(seg.degree + 1, *CHECK_NEIGHBOURS)), len(seg.t_s) - 1)
        against = ("the interpolant of its" if c.quantity == "position"
                   else "the derivative of the positions' interpolant through its")
        what = (f"the tabulated {c.quantity} differs by {c.disagreement[j]:.3g} {c.unit} from {against} "
                f"{k} nearest neighbours, {c.ratio[j]:.3g} times what the data's spacing and rounding "
                f"explain ({c.explained[j]:.2g} {c.unit}); it alone would put the clock's fractional "
                f"rate off by up to {c.rate_fractional[j]:.2g} near it")
        return self.point_name(i, j, c.quantity, int(c.axis[j])), what

    def _refuse_inconsistent(self) -> None:
        worst, count = None, 0
        for i, checks in enumerate(self.consistency):
            for c in checks:
                bad = (c.judged_ratio >= CONSISTENCY_REFUSE_RATIO) & (c.rate_fractional >= MATTERS_FRACTIONAL)
                count += int(np.count_nonzero(bad))
                if bad.any():
                    j = int(np.argmax(np.where(bad, c.judged_ratio, -np.inf)))
                    if worst is None or c.judged_ratio[j] > worst[1].judged_ratio[worst[2]]:
                        worst = (i, c, j)
        if worst is None:
            return
        i, c, j = worst
        name, what = self._finding(i, c, j)
        others = f" ({count - 1} other tabulated values are as inconsistent)" if count > 1 else ""
        detail = (f"{what}{others}: a corrupted value (a slipped digit, a wrong unit?), so the table is "
                  "not used")
        raise InconsistentStateError(
            "r_gcrs_m" if c.quantity == "position" else "v_gcrs_m_per_s", float(c.disagreement[j]),
            f"{name}: {detail}", segment=i, point=j, quantity=c.quantity, axis=int(c.axis[j]),
            detail=detail, at=self._time(float(self.segments[i].t_s[j])), source=self)

    def begin_evaluation(self) -> None:
        """Zero the interpolation-error maxima (they grow with every ``states`` call)."""
        self.max_position_error_m = 0.0
        self.max_velocity_error_m_per_s = 0.0
        self.max_rate_error_fractional = 0.0
        self.max_periodic_error_s = 0.0

    def budget_warnings(self, span, rate_precision_fractional: float) -> list[str]:
        """Suspect points near the span, and an interpolation error above the budget's precision.

        A point warns when its ratio reaches ``CONSISTENCY_WARN_RATIO`` and the rate error it
        implies exceeds ``rate_precision_fractional`` (the budget's integration tolerance or its
        largest omitted term, whichever is larger: below that the table is not what limits the
        budget). The interpolation error estimate (``describe``) warns on the same comparison,
        its fractional rate bound at the nodes used against that precision.
        """
        offset = float(span.seconds_after_start(self.reference_time))
        lo, hi = -offset, span.duration_s - offset  # the span in table seconds
        out = []
        for i, checks in enumerate(self.consistency):
            seg = self.segments[i]
            reach = (CHECK_NEIGHBOURS[1] + 1) * float(np.median(np.diff(seg.t_s)))  # a point's influence
            near = (seg.t_s >= lo - reach) & (seg.t_s <= hi + reach)
            for c in checks:
                suspect = near & (c.judged_ratio >= CONSISTENCY_WARN_RATIO) & (
                    c.rate_fractional > rate_precision_fractional)
                if suspect.any():
                    j = int(np.argmax(np.where(suspect, c.judged_ratio, -np.inf)))
                    name, what = self._finding(i, c, j)
                    more = int(np.count_nonzero(suspect)) - 1
                    others = f" ({more} more in this segment)" if more else ""
                    out.append(f"orbit data, {name}: {what}, above the budget's precision of "
                               f"{rate_precision_fractional:.2g}{others}; check the data there")
        if self.max_rate_error_fractional > rate_precision_fractional:
            out.append(
                f"orbit data: the interpolation error estimate reaches {self.max_position_error_m:.2g} m "
                f"in position and {self.max_velocity_error_m_per_s:.2g} m/s in velocity, a fractional "
                f"rate error of up to {self.max_rate_error_fractional:.2g} at some nodes, above the "
                f"budget's precision of {rate_precision_fractional:.2g}: the rate and periodic figures "
                "are no better than that; a denser table (or a check of its interpolation degree) "
                "would tighten them")
        return out

    # --- coverage ---------------------------------------------------------------------------

    def _merged_coverage(self) -> np.ndarray:
        """(M, 2) covered intervals in table seconds: segments' windows, touching ones merged."""
        windows = sorted((float(seg.start_s), float(seg.stop_s)) for seg in self.segments)
        merged = [list(windows[0])]
        for a, b in windows[1:]:
            if a <= merged[-1][1] + COVERAGE_SLACK_S:
                merged[-1][1] = max(merged[-1][1], b)
            else:
                merged.append([a, b])
        return np.array(merged)

    def covered(self) -> list:
        """Start and end (skyfield Times) of each stretch the data cover without a gap."""
        return [(self._time(a), self._time(b)) for a, b in self._covered_s]

    def check_span(self, span, start_name: str = "the span's start", end_name: str = "the span's end",
                   gaps: bool = True) -> None:
        """Refuse a span whose start or end lies outside the data, or (``gaps``) that crosses a gap
        between segments: ``PhysicsInputError`` on ``coverage`` naming how far outside, with the
        instants it names (``instants``) as skyfield Times. See ``OrbitSource.check_span``."""
        offset = float(span.seconds_after_start(self.reference_time))
        a, b = -offset, span.duration_s - offset  # the span in table seconds
        lo, hi = float(self._covered_s[0, 0]), float(self._covered_s[-1, 1])
        first, last = "the data's first point", "the data's last point"
        start, end = span.start, span.times(span.duration_s)
        parts, instants = [], []
        if a < lo - COVERAGE_SLACK_S:
            if b < lo - COVERAGE_SLACK_S:  # all of it before the data: how far its end is short
                parts.append(f"{end_name} lies {lo - b:.6g} s before {first}")
                instants += [(end_name, end), (first, self._time(lo))]
            else:
                parts.append(f"{start_name} lies {lo - a:.6g} s before {first}")
                instants += [(start_name, start), (first, self._time(lo))]
        if b > hi + COVERAGE_SLACK_S:
            if a > hi + COVERAGE_SLACK_S:  # all of it after the data
                parts.append(f"{start_name} lies {a - hi:.6g} s after {last}")
                instants += [(start_name, start), (last, self._time(hi))]
            else:
                parts.append(f"{end_name} lies {b - hi:.6g} s after {last}")
                instants += [(end_name, end), (last, self._time(hi))]
        if parts:
            raise PhysicsInputError(
                "coverage", instants[0][1], f"{' and '.join(parts)}; the ephemeris is never extrapolated",
                source=self, at=instants[0][1], instants=instants)
        if not gaps:
            return
        gap_lo, gap_hi = self._covered_s[:-1, 1], self._covered_s[1:, 0]
        crossed = np.nonzero((gap_hi > a + COVERAGE_SLACK_S) & (gap_lo < b - COVERAGE_SLACK_S))[0]
        if crossed.size:
            g = int(crossed[0])
            g0, g1 = float(gap_lo[g]), float(gap_hi[g])
            more = f" (and {crossed.size - 1} more gaps)" if crossed.size > 1 else ""
            before, after = "a segment's last point", "the next segment's first point"
            raise PhysicsInputError(
                "coverage", self._time(g0),
                f"the span crosses a gap of {g1 - g0:.6g} s in the data, from {before} to {after}{more}; "
                "the ephemeris is never interpolated across a gap or extrapolated",
                source=self, at=self._time(g0), instants=[(before, self._time(g0)), (after, self._time(g1))])

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
            lo, hi = float(self._covered_s[0, 0]), float(self._covered_s[-1, 1])
            when = span.times(float(t_s[first]))
            asked = "an instant"
            if t_need < lo:
                limit = "the data's first point"
                where, instants = f"{lo - t_need:.6g} s before {limit}", [(limit, self._time(lo))]
            elif t_need > hi:
                limit = "the data's last point"
                where, instants = f"{t_need - hi:.6g} s after {limit}", [(limit, self._time(hi))]
            else:
                g = int(np.searchsorted(self._covered_s[:, 0], t_need)) - 1
                g0, g1 = float(self._covered_s[g, 1]), float(self._covered_s[g + 1, 0])
                before, after = "a segment's last point", "the next segment's first point"
                where = (f"in a gap of {g1 - g0:.6g} s in the data, from {before} to {after}")
                instants = [(before, self._time(g0)), (after, self._time(g1))]
            raise PhysicsInputError(
                "coverage", when, f"the orbit is asked for at {asked} {where}; the ephemeris is never "
                "extrapolated or interpolated across a gap", source=self, at=when,
                instants=[(asked, when), *instants])
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
            "consistency_check": self._consistency_summary(),
        }

    def _consistency_summary(self) -> dict:
        """The largest leave-one-out disagreement of each quantity and its ratio to what the data
        explain (module docstring); ``None`` where no segment was checked or has velocities."""
        out = {"method": "each tabulated position against the interpolant of its nearest neighbours "
               "(the point left out), each tabulated velocity against that interpolant's derivative; "
               "ratio: the disagreement over what the data's spacing and rounding explain"}
        for quantity, unit in (("position", "m"), ("velocity", "m_per_s")):
            cs = [c for checks in self.consistency for c in checks if c.quantity == quantity]
            out[f"max_{quantity}_disagreement_{unit}"] = (
                float(max(c.disagreement.max() for c in cs)) if cs else None)
            out[f"max_{quantity}_ratio"] = float(max(c.ratio.max() for c in cs)) if cs else None
        return out
