"""A GCRS state vector propagated numerically: Earth zonal field plus Sun and Moon.

Equations of motion in the GCRS with TCG as the independent variable and the
TCG-compatible GM of the Earth (TN36 Table 1.1; DESIGN.md "Conventions"):

    d^2x/dTCG^2 = grad U_E(x) + sum_b GM_b [ (X_b - x)/|X_b - x|^3 - X_b/|X_b|^3 ]

U_E is the point mass plus the EGM2008 zonal terms of ``physics.potential.earth``
up to ``zonal_degree``; its gradient is written out below (``zonal_acceleration``).
The third-body term is the standard geocentric (indirect-term) form, e.g.
Montenbruck & Gill, "Satellite Orbits" (2000), eq. 3.37. Solar radiation
pressure, drag, tesserals and relativistic corrections to the motion are not
modelled: the budget lists the first three; the last moves a GPS orbit by
centimetres per day, far below the clock's sensitivity.

Node times arrive as TT seconds since the span start; TCG seconds since the
epoch are (TT seconds since the epoch) / (1 - L_G), exactly (TN36 eq. 10.2,
dTT/dTCG = 1 - L_G). Velocities are dx/dTCG, the coordinate velocity that the
rate equation (TN36 eq. 10.6) wants.

Integrator and tolerance. scipy's DOP853 (Dormand & Prince 8(5,3), Hairer,
Norsett & Wanner, "Solving ODEs I", II.5) with ``RTOL = 1e-13`` and absolute
tolerances of 1 micrometre and 1 nm/s. Why that is enough for 1 ps/day:

- the secular rate depends on the orbital energy only (v^2/2 + GM/r =
  3GM/(2a) + 2 d(r.v)/dt for two-body motion); an energy error of
  1e-12 relative changes the rate by ~1e-21, nothing;
- the periodic part, -(2/c^2) r.v, sees position and velocity errors directly:
  the offset error is (2/c^2)(|dr| v + r |dv|). RTOL 1e-13 leaves global errors
  of ~mm and ~um/s after a day even in LEO, i.e. ~(2/c^2)(1e-3 * 7.5e3 + 7e6 *
  1e-6) ~ 3e-16 s: four orders below a picosecond;
- the potential terms see dr: GM dr/(r^2 c^2) ~ 1e-19 for dr = 1 mm in LEO.

The tests check the result against the closed-form two-body budget (within
1 ps/day), energy conservation over 30 days (1e-12 relative) and the J2 nodal
rate. The dense output (7th-order continuous extension of DOP853) supplies
states at arbitrary node times, vectorised over the nodes.

Slowly varying inputs (the Earth's pole for the zonal terms, the geocentric Sun
and Moon) come from the coarse-grid interpolants of ``physics.environment``
over the integration interval, evaluated per right-hand-side call with a
hand-rolled uniform-grid cubic (a scalar ``CubicSpline`` call costs ~10 us).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import solve_ivp

from ..cancel import checkpoint
from ..constants import (
    EARTH_EQUATORIAL_RADIUS_M,
    EGM2008_J,
    EGM2008_REFERENCE_RADIUS_M,
    GM_EARTH_TCG_M3_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    L_G,
    MAX_ZONAL_DEGREE,
    SECONDS_PER_DAY,
)
from ..errors import PhysicsInputError
from .base import OrbitSource, States, check_perigee_altitude

RTOL = 1e-13
"""DOP853 relative tolerance (see the module docstring for why it meets 1 ps/day)."""

ATOL_POSITION_M = 1e-6
ATOL_VELOCITY_M_PER_S = 1e-9

DEFAULT_ZONAL_DEGREE = MAX_ZONAL_DEGREE
"""Propagation uses every zonal term the field carries unless told otherwise."""

MAX_PROPAGATION_DAYS = 400.0
"""Longest interval between the epoch and a node; beyond it the force model's omissions
(drag, radiation pressure, tesserals) make a numerically propagated state meaningless."""

CHECKPOINT_EVERY_CALLS = 512
"""Right-hand-side calls between cancellation checkpoints (~5 ms of integration)."""

CODE_OUTSIDE = 1
CODE_MESSAGES = {CODE_OUTSIDE: "node outside the propagated interval"}


def zonal_acceleration(r_gcrs_m: np.ndarray, pole_gcrs: np.ndarray, degree: int,
                       gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2) -> np.ndarray:
    """Acceleration of the zonal terms J_2..J_degree, (N, 3) m/s^2, GCRS.

    Gradient of U_n = -(GM/r) J_n (R/r)^n P_n(s), s = r.p/r (``physics.potential.earth``):

        grad U_n = GM J_n R^n / r^(n+2) [ (n+1) P_n(s) r_hat - P_n'(s) (p - s r_hat) ]

    with P_n' from P'_{n+1} = P'_{n-1} + (2n+1) P_n (Abramowitz & Stegun 8.5.3 family).
    For n = 2 it reduces to the textbook -3/2 J2 GM R^2/r^4 [(1 - 5 s^2) r_hat + 2 s p]
    (Vallado, 4th ed., eq. 8-31 in vector form).
    """
    r = np.atleast_2d(np.asarray(r_gcrs_m, dtype=float))
    p = np.broadcast_to(np.atleast_2d(np.asarray(pole_gcrs, dtype=float)), r.shape)
    out = np.zeros_like(r)
    if degree < 2:
        return out
    rn = np.linalg.norm(r, axis=1)
    rhat = r / rn[:, None]
    s = np.einsum("ni,ni->n", rhat, p)
    pn = [np.ones_like(s), s]
    dpn = [np.zeros_like(s), np.ones_like(s)]
    for n in range(1, degree):
        pn.append(((2 * n + 1) * s * pn[n] - n * pn[n - 1]) / (n + 1))
        dpn.append(dpn[n - 1] + (2 * n + 1) * pn[n])
    ratio = EGM2008_REFERENCE_RADIUS_M / rn
    tangential = p - s[:, None] * rhat
    for n in range(2, degree + 1):
        k = gm_m3_per_s2 * EGM2008_J[n] * ratio**n / rn**2
        out += k[:, None] * ((n + 1) * pn[n][:, None] * rhat - dpn[n][:, None] * tangential)
    return out


def _zonal_acceleration_one(x: float, y: float, z: float, px: float, py: float, pz: float,
                            degree: int, gm: float):
    """Scalar twin of ``zonal_acceleration`` for the integrator's right-hand side (floats only:
    small numpy arrays cost ~10 us per operation, this costs ~3 us in all)."""
    r2 = x * x + y * y + z * z
    r = math.sqrt(r2)
    ux, uy, uz = x / r, y / r, z / r
    s = ux * px + uy * py + uz * pz
    tx, ty, tz = px - s * ux, py - s * uy, pz - s * uz
    p_prev, p_cur = 1.0, s
    d_prev, d_cur = 0.0, 1.0
    ratio = EGM2008_REFERENCE_RADIUS_M / r
    rn = ratio
    ax = ay = az = 0.0
    for n in range(1, degree):
        p_next = ((2 * n + 1) * s * p_cur - n * p_prev) / (n + 1)
        d_next = d_prev + (2 * n + 1) * p_cur
        p_prev, p_cur, d_prev, d_cur = p_cur, p_next, d_cur, d_next
        rn *= ratio
        m = n + 1
        k = gm * _J[m] * rn / r2
        radial = k * (m + 1) * p_cur
        tang = k * d_cur
        ax += radial * ux - tang * tx
        ay += radial * uy - tang * ty
        az += radial * uz - tang * tz
    return ax, ay, az


_J = {n: EGM2008_J[n] for n in EGM2008_J}


def osculating_elements(r_m: np.ndarray, v_m_per_s: np.ndarray, gm_m3_per_s2: float):
    """(a_m, e, i_rad) of a state (Vallado, 4th ed., algorithm 9, the parts we need)."""
    r = np.asarray(r_m, dtype=float)
    v = np.asarray(v_m_per_s, dtype=float)
    rn = float(np.linalg.norm(r))
    energy = 0.5 * float(v @ v) - gm_m3_per_s2 / rn
    h = np.cross(r, v)
    e_vec = np.cross(v, h) / gm_m3_per_s2 - r / rn
    a = -gm_m3_per_s2 / (2.0 * energy) if energy < 0 else math.inf
    inc = math.acos(max(-1.0, min(1.0, h[2] / np.linalg.norm(h)))) if np.any(h) else 0.0
    return a, float(np.linalg.norm(e_vec)), inc


def _with_checkpoints(rhs):
    """``rhs`` that checks for cancellation every CHECKPOINT_EVERY_CALLS calls: a long
    propagation stops soon after its deadline or its caller's cancellation."""
    calls = 0

    def wrapped(tau, y):
        nonlocal calls
        calls += 1
        if calls % CHECKPOINT_EVERY_CALLS == 0:
            checkpoint()
        return rhs(tau, y)

    return wrapped


class _UniformCubic:
    """Fast scalar evaluation of a ``CubicSpline`` built on a uniform grid."""

    def __init__(self, spline):
        self.x0 = float(spline.x[0])
        self.h = float(spline.x[1] - spline.x[0])
        self.n = len(spline.x) - 1
        self.c = np.asarray(spline.c)  # (4, n, ...) power-series coefficients per interval

    def __call__(self, t: float) -> np.ndarray:
        i = min(max(int((t - self.x0) // self.h), 0), self.n - 1)
        dt = t - (self.x0 + i * self.h)
        c = self.c[:, i]
        return ((c[0] * dt + c[1]) * dt + c[2]) * dt + c[3]


class NumericalOrbit(OrbitSource):
    """GCRS position (m) and velocity (m/s) at ``epoch``, integrated with DOP853.

    ``zonal_degree`` 0 is a point-mass Earth, 2..6 adds EGM2008 J2..J_n; ``sun``
    and ``moon`` switch the third-body terms (DE421). Errors name this class's own parameters
    (``r_gcrs_m``, ``v_gcrs_m_per_s``, ``zonal_degree``, ``epoch``) in SI.
    """

    kind = "state_vector"

    def __init__(self, epoch, r_gcrs_m, v_gcrs_m_per_s, zonal_degree: int = DEFAULT_ZONAL_DEGREE,
                 sun: bool = True, moon: bool = True, gm_m3_per_s2: float = GM_EARTH_TCG_M3_PER_S2,
                 label: str = "state vector"):
        r = np.asarray(r_gcrs_m, dtype=float).reshape(3)
        v = np.asarray(v_gcrs_m_per_s, dtype=float).reshape(3)
        if not (np.all(np.isfinite(r)) and np.all(np.isfinite(v))):
            raise PhysicsInputError("r_gcrs_m", None, "the state must be finite")
        if zonal_degree < 0 or zonal_degree == 1 or zonal_degree > MAX_ZONAL_DEGREE:
            raise PhysicsInputError(
                "zonal_degree", zonal_degree,
                f"zonal degree must be 0 or 2..{MAX_ZONAL_DEGREE}",
            )
        if np.linalg.norm(r) <= EARTH_EQUATORIAL_RADIUS_M:
            raise PhysicsInputError(
                "r_gcrs_m", r.tolist(),
                f"the position is {np.linalg.norm(r) / 1e3:.0f} km from the geocentre, inside the "
                f"Earth (equatorial radius {EARTH_EQUATORIAL_RADIUS_M / 1e3:.0f} km)",
            )
        a, e, inc = osculating_elements(r, v, gm_m3_per_s2)
        if not math.isfinite(a) or e >= 1.0:
            raise PhysicsInputError(
                "v_gcrs_m_per_s", v.tolist(),
                f"the state is not bound to the Earth (osculating e = {e:.4f}); a clock on an "
                "escape trajectory needs a barycentric model",
            )
        rp = a * (1.0 - e)
        if rp <= EARTH_EQUATORIAL_RADIUS_M:
            raise PhysicsInputError(
                "r_gcrs_m", r.tolist(),
                f"the osculating perigee radius {rp / 1e3:.0f} km is below the Earth's equatorial "
                f"radius {EARTH_EQUATORIAL_RADIUS_M / 1e3:.0f} km",
            )
        check_perigee_altitude(rp, "r_gcrs_m", r.tolist())
        self._epoch = epoch
        self.r0_m, self.v0_m_per_s = r, v
        self.gm = gm_m3_per_s2
        self.zonal_degree = int(zonal_degree)
        self.sun, self.moon = bool(sun), bool(moon)
        self.a_m, self.e, self.i_rad = a, e, inc
        self.label = label
        self._cache_key = None
        self._solutions = None  # (forward OdeSolution or None, backward or None, lo_s, hi_s)

    def epoch(self):
        return self._epoch

    def period_s(self) -> float:
        """Osculating two-body period at the epoch, s (sizes the panels; not the nodal period)."""
        return 2.0 * math.pi * math.sqrt(self.a_m**3 / self.gm)

    def propagation_s(self, span) -> float:
        """TT seconds the integrator must cover for ``span``: from the state's epoch to the far
        end of the span (the span itself, plus the stretch between the epoch and the span)."""
        epoch_s = float(span.seconds_after_start(self._epoch))
        return max(float(span.duration_s), epoch_s) - min(0.0, epoch_s)

    def propagation_revolutions(self, span) -> float:
        """Orbits the integrator must follow for ``span`` (its cost: ~constant steps per orbit)."""
        return self.propagation_s(span) / self.period_s()

    # --- propagation ---------------------------------------------------------------

    def _rhs_factory(self, env, epoch_tt_s: float):
        """Right-hand side in TCG seconds since the epoch; ``env`` spans the interval."""
        gm = self.gm
        degree = self.zonal_degree
        scale = 1.0 - L_G  # dTT/dTCG
        pole = None
        if degree >= 2:
            from scipy.interpolate import CubicSpline

            grid = env.orientation._m.x
            pole = _UniformCubic(CubicSpline(grid, env.orientation.pole_gcrs(grid)))
        bodies = []
        if self.sun:
            bodies.append((_UniformCubic(env.sun_moon.splines["sun"]), GM_SUN_M3_PER_S2))
        if self.moon:
            bodies.append((_UniformCubic(env.sun_moon.splines["moon"]), GM_MOON_M3_PER_S2))

        def rhs(tau, y):
            r = y[:3]
            t_tt = epoch_tt_s + tau * scale
            rn2 = r @ r
            acc = (-gm / (rn2 * math.sqrt(rn2))) * r
            if pole is not None:
                p = pole(t_tt)
                pn = math.sqrt(p @ p)
                acc = acc + np.array(_zonal_acceleration_one(
                    r[0], r[1], r[2], p[0] / pn, p[1] / pn, p[2] / pn, degree, gm))
            for spline, gmb in bodies:
                x = spline(t_tt)
                d = x - r
                dn2 = d @ d
                xn2 = x @ x
                acc = acc + gmb * (d / (dn2 * math.sqrt(dn2)) - x / (xn2 * math.sqrt(xn2)))
            return np.concatenate([y[3:], acc])

        return rhs

    def _propagate(self, span, lo_s: float, hi_s: float):
        """Integrate from the epoch to cover [lo_s, hi_s] TT seconds after ``span.start``."""
        from ..environment import environment_for
        from ..span import Span

        epoch_s = float(span.seconds_after_start(self._epoch))
        lo, hi = min(lo_s, epoch_s), max(hi_s, epoch_s)
        if (hi - lo) / SECONDS_PER_DAY > MAX_PROPAGATION_DAYS:
            raise PhysicsInputError(
                "epoch", self._epoch,
                f"the span reaches {(hi - lo) / SECONDS_PER_DAY:.0f} days from the state's epoch; "
                f"numerical propagation is limited to {MAX_PROPAGATION_DAYS:.0f} days because drag, "
                "radiation pressure and tesseral terms are not modelled", source=self,
            )
        # One environment over the whole interval (cached by span), with a little margin.
        margin = 60.0
        env_span = Span(span.times(lo - margin), (hi - lo) + 2 * margin)
        env = environment_for(env_span) if (self.sun or self.moon or self.zonal_degree >= 2) else None
        epoch_env_s = epoch_s - (lo - margin)
        rhs = _with_checkpoints(
            self._rhs_factory(env, epoch_env_s) if env is not None else self._rhs_factory_point())
        y0 = np.concatenate([self.r0_m, self.v0_m_per_s])
        atol = np.array([ATOL_POSITION_M] * 3 + [ATOL_VELOCITY_M_PER_S] * 3)
        inv = 1.0 / (1.0 - L_G)
        sols = []
        for end in (hi, lo):
            tau_end = (end - epoch_s) * inv
            if abs(tau_end) < 1e-9:
                sols.append(None)
                continue
            sol = solve_ivp(rhs, (0.0, tau_end), y0, method="DOP853", rtol=RTOL, atol=atol,
                            dense_output=True)
            if not sol.success:  # pragma: no cover - DOP853 fails only on non-finite forces
                raise PhysicsInputError("r_gcrs_m", None, f"numerical propagation failed: {sol.message}",
                                        source=self)
            sols.append(sol.sol)
        self._solutions = (sols[0], sols[1], lo, hi, epoch_s)
        self.steps_taken = sum(len(s.ts) - 1 for s in sols if s is not None)

    def _rhs_factory_point(self):
        gm = self.gm

        def rhs(tau, y):
            r = y[:3]
            rn2 = r @ r
            return np.concatenate([y[3:], (-gm / (rn2 * math.sqrt(rn2))) * r])

        return rhs

    def _ensure(self, span, t_s: np.ndarray):
        key = (float(span.start.whole), float(span.start.tt_fraction))
        lo = min(0.0, float(t_s.min())) if t_s.size else 0.0
        hi = max(float(span.duration_s), float(t_s.max())) if t_s.size else float(span.duration_s)
        if self._cache_key == key and self._solutions is not None:
            _, _, clo, chi, _ = self._solutions
            if clo <= lo and hi <= chi:
                return
            lo, hi = min(lo, clo), max(hi, chi)
        self._propagate(span, lo, hi)
        self._cache_key = key

    def states(self, span, t_s, orientation=None) -> States:
        t_s = np.asarray(t_s, dtype=float)
        self._ensure(span, t_s)
        fwd, bwd, lo, hi, epoch_s = self._solutions
        tau = (t_s - epoch_s) / (1.0 - L_G)
        y = np.full((6, t_s.size), np.nan)
        ahead = tau >= 0.0
        if fwd is not None and ahead.any():
            y[:, ahead] = fwd(tau[ahead])
        elif ahead.any():  # nodes at the epoch itself with no forward leg
            y[:, ahead] = np.concatenate([self.r0_m, self.v0_m_per_s])[:, None]
        if bwd is not None and (~ahead).any():
            y[:, ~ahead] = bwd(tau[~ahead])
        code = np.zeros(t_s.size, dtype=np.int8)
        outside = (t_s < lo - 1e-6) | (t_s > hi + 1e-6)
        code[outside] = CODE_OUTSIDE
        y[:, outside] = np.nan
        messages = {CODE_OUTSIDE: CODE_MESSAGES[CODE_OUTSIDE]} if outside.any() else {}
        return States(y[:3].T.copy(), y[3:].T.copy(), code, messages)

    def describe(self) -> dict:
        forces = ["point-mass Earth" if self.zonal_degree == 0 else f"EGM2008 zonal J2..J{self.zonal_degree}"]
        forces += [b for b, on in (("Sun", self.sun), ("Moon", self.moon)) if on]
        return {
            "type": self.kind,
            "source": self.label,
            "propagation": f"numerical (scipy DOP853, rtol {RTOL:g}) in the GCRS with TCG, forces: "
            + ", ".join(forces) + "; no drag, radiation pressure or tesseral terms",
            "epoch": self._epoch,
            "osculating_semi_major_axis_m": self.a_m,
            "osculating_eccentricity": self.e,
            "osculating_inclination_deg": math.degrees(self.i_rad),
            "period_s": self.period_s(),
        }
