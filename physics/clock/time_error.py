"""Predicted time error of a free-running clock after a synchronisation, and how long it may run.

Time error x(t) = clock minus reference (s) at a time t (s) after the synchronisation:

deterministic part  x_det(t) = x0 + y0 t + D t^2 / 2 + r(t)
    x0 the time offset left at synchronisation (s), y0 the fractional frequency offset
    left after calibration, D the linear frequency drift (ageing, fractional per s,
    given per day), r(t) an optional residual relativistic offset series supplied by
    the caller (e.g. the periodic part left after the frequency preset), interpolated
    linearly. The quadratic is the standard clock model (e.g. ITU-R TF.538; common
    practice).

stochastic part, 1-sigma, for noise processes that start at the synchronisation
(the clock is set, and its frequency calibrated, at t = 0), independent terms added
in variance:
    white FM        Var x = h_0 t / 2                        exact: x is a Wiener process
                    with two-sided diffusion h_0 / 2 (from S_y = h_0, IEEE Std 1139)
    random-walk FM  Var x = (2 pi^2 / 3) h_-2 t^3            exact: y is a Wiener process with
                    two-sided diffusion 2 pi^2 h_-2 started at 0, and Var int_0^t W = q t^3/3
    flicker FM      Var x ~ t^2 sigma_y^2(t) = 2 ln 2 h_-1 t^2   approximation (common
                    practice); flicker FM has no finite stationary form, the value
                    depends on how long before t = 0 the noise is taken to have run
                    (Kasdin-Walter noise started at the sync, physics.clock.simulate,
                    gives about 1.2 times this variance-root at 10^2..10^3 samples:
                    treat the flicker FM figure as optimistic by ~20%)
    white PM        Var x = 2 h_2 f_h / (4 pi^2)             exact for the difference
                    x(t) - x(0) of white phase noise of bandwidth f_h (t >> 1/f_h)
    flicker PM      Var x ~ t^2 sigma_y^2(t)                 approximation (common practice)
For white FM and random-walk FM these equal t^2 sigma_y^2(t) exactly (DESIGN.md's
"t sigma_y(t)" rule holds for them); derivations from S_x(f) = S_y(f) / (2 pi f)^2.

These are planning estimates of a Gaussian model: real clocks also show steps,
frequency jumps, temperature and radiation effects and anomalies that the noise model
does not contain, so a k-sigma bound is not a guarantee for operations.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ..constants import SECONDS_PER_DAY  # the day of drift_per_day
from .powerlaw import NOISE_NAMES

__all__ = [
    "SECONDS_PER_DAY",
    "TimeErrorSeries",
    "deterministic_time_error_s",
    "time_error_variance_components_s2",
    "time_error_sigma_s",
    "predict_time_error",
    "max_free_running_s",
]


_LN2 = math.log(2.0)


def deterministic_time_error_s(
    t_s,
    initial_time_offset_s: float = 0.0,
    initial_fractional_frequency: float = 0.0,
    drift_per_day: float = 0.0,
    residual_t_s=None,
    residual_offset_s=None,
) -> np.ndarray:
    """Deterministic time error x0 + y0 t + D t^2/2 (+ residual series) at t after sync, in s.

    t_s: times since synchronisation (s, >= 0). drift_per_day: fractional frequency change
    per day (ageing). residual_t_s, residual_offset_s: optional arrays of a residual
    relativistic offset (s) at increasing times (s); interpolated linearly, NaN outside
    their span (reported as values, not raised). Model: module docstring.
    """
    t = np.asarray(t_s, dtype=float)
    drift_per_s = float(drift_per_day) / SECONDS_PER_DAY
    x = initial_time_offset_s + initial_fractional_frequency * t + 0.5 * drift_per_s * t**2
    if residual_t_s is not None or residual_offset_s is not None:
        rt = np.asarray(residual_t_s, dtype=float)
        rx = np.asarray(residual_offset_s, dtype=float)
        if rt.shape != rx.shape or rt.ndim != 1 or rt.size < 2 or np.any(np.diff(rt) <= 0):
            raise ValueError("residual series need equal-length 1-D arrays with increasing times")
        x = x + np.interp(t, rt, rx, left=np.nan, right=np.nan)
    return x


def time_error_variance_components_s2(
    t_s, h_alpha: dict, f_h_hz: float | None = None
) -> dict[str, np.ndarray]:
    """Time-error variance (s^2) at t after sync for each power-law term, keyed by noise name.

    t_s: times since synchronisation (s, >= 0); h_alpha: {alpha: h} (IEEE Std 1139);
    f_h_hz: measurement bandwidth, needed if white or flicker PM is present. Forms and
    which are exact: module docstring. Variance is 0 at t = 0 for the FM terms.
    """
    t = np.asarray(t_s, dtype=float)
    out: dict[str, np.ndarray] = {}
    for alpha, h in h_alpha.items():
        alpha = int(alpha)
        h = float(h)
        if alpha == 0:
            var = 0.5 * h * t
        elif alpha == -2:
            var = (2.0 * math.pi**2 / 3.0) * h * t**3
        elif alpha == -1:
            var = 2.0 * _LN2 * h * t**2
        elif alpha in (2, 1):
            if f_h_hz is None or not f_h_hz > 0.0:
                raise ValueError("white PM and flicker PM need the measurement bandwidth f_h_hz")
            if alpha == 2:
                var = np.where(t > 0.0, 2.0 * h * f_h_hz / (4.0 * math.pi**2), 0.0)
            else:
                with np.errstate(divide="ignore", invalid="ignore"):
                    arg = np.log(2.0 * math.pi * f_h_hz * t)
                var = np.where(t > 0.0, h * (1.038 + 3.0 * arg) / (4.0 * math.pi**2), 0.0)
                var = np.maximum(var, 0.0)
        else:
            raise ValueError("noise_alpha must be one of 2, 1, 0, -1, -2")
        out[NOISE_NAMES[alpha]] = np.broadcast_to(var, t.shape).astype(float)
    return out


def time_error_sigma_s(t_s, h_alpha: dict, f_h_hz: float | None = None) -> np.ndarray:
    """1-sigma stochastic time error (s) at t after sync: root-sum-square of the noise terms."""
    t = np.asarray(t_s, dtype=float)
    parts = time_error_variance_components_s2(t, h_alpha, f_h_hz)
    return np.sqrt(sum(parts.values(), np.zeros(t.shape)))


@dataclass(frozen=True)
class TimeErrorSeries:
    """Predicted time error series after a synchronisation (all in s).

    t_s: times since sync; deterministic_s: x_det(t); sigma_s: 1-sigma stochastic part;
    k_sigma: the multiplier; bound_s = |deterministic_s| + k_sigma * sigma_s, the planning
    envelope; sigma_components_s: 1-sigma per noise term. Planning estimates only.
    """

    t_s: np.ndarray
    deterministic_s: np.ndarray
    sigma_s: np.ndarray
    k_sigma: float
    bound_s: np.ndarray
    sigma_components_s: dict

    def as_dict(self) -> dict:
        """Plain dict of lists (JSON-ready apart from NaN outside a residual series)."""
        return {
            "t_s": self.t_s.tolist(),
            "deterministic_s": self.deterministic_s.tolist(),
            "sigma_s": self.sigma_s.tolist(),
            "k_sigma": self.k_sigma,
            "bound_s": self.bound_s.tolist(),
            "sigma_components_s": {k: v.tolist() for k, v in self.sigma_components_s.items()},
        }


def predict_time_error(
    t_s,
    h_alpha: dict,
    k_sigma: float = 1.0,
    initial_time_offset_s: float = 0.0,
    initial_fractional_frequency: float = 0.0,
    drift_per_day: float = 0.0,
    f_h_hz: float | None = None,
    residual_t_s=None,
    residual_offset_s=None,
) -> TimeErrorSeries:
    """Deterministic and stochastic time error at times t after sync, with a k-sigma envelope.

    Arguments as deterministic_time_error_s and time_error_variance_components_s2;
    k_sigma >= 0. Returns a TimeErrorSeries. Model and its limits: module docstring.
    """
    if not k_sigma >= 0.0:
        raise ValueError("k_sigma must be >= 0")
    t = np.asarray(t_s, dtype=float)
    det = deterministic_time_error_s(
        t,
        initial_time_offset_s,
        initial_fractional_frequency,
        drift_per_day,
        residual_t_s,
        residual_offset_s,
    )
    parts = time_error_variance_components_s2(t, h_alpha, f_h_hz)
    sigma = np.sqrt(sum(parts.values(), np.zeros(t.shape)))
    return TimeErrorSeries(
        t_s=t,
        deterministic_s=det,
        sigma_s=sigma,
        k_sigma=float(k_sigma),
        bound_s=np.abs(det) + k_sigma * sigma,
        sigma_components_s={k: np.sqrt(v) for k, v in parts.items()},
    )


def max_free_running_s(
    budget_s: float,
    h_alpha: dict,
    k_sigma: float = 1.0,
    initial_time_offset_s: float = 0.0,
    initial_fractional_frequency: float = 0.0,
    drift_per_day: float = 0.0,
    f_h_hz: float | None = None,
    residual_t_s=None,
    residual_offset_s=None,
    t_max_s: float = 10.0 * 365.25 * SECONDS_PER_DAY,
    t_min_s: float = 1e-3,
    n_scan: int = 4000,
) -> float:
    """Longest time after a sync (s) before |deterministic| + k sigma first reaches the budget.

    budget_s > 0: allowed |time error| (s). Scans n_scan log-spaced times in
    [t_min_s, t_max_s] (vectorised; capped at the end of a residual series if one is
    given) for the first crossing, then refines it with scipy.optimize.brentq
    (xtol 1e-9 relative). Returns 0.0 if the budget is already used at t = 0, and inf if
    it is not reached by t_max_s. A crossing narrower than the scan spacing could be
    missed; the envelope is a planning estimate (see module docstring).
    """
    if not budget_s > 0.0:
        raise ValueError("budget_s must be positive")
    if residual_t_s is not None:
        t_max_s = min(t_max_s, float(np.asarray(residual_t_s, dtype=float)[-1]))
        t_min_s = max(t_min_s, float(np.asarray(residual_t_s, dtype=float)[0]))
    if not t_max_s > t_min_s > 0.0:
        raise ValueError("need t_max_s > t_min_s > 0")

    def excess(t):
        series = predict_time_error(
            t,
            h_alpha,
            k_sigma,
            initial_time_offset_s,
            initial_fractional_frequency,
            drift_per_day,
            f_h_hz,
            residual_t_s,
            residual_offset_s,
        )
        return series.bound_s - budget_s

    if abs(initial_time_offset_s) >= budget_s:
        return 0.0
    grid = np.geomspace(t_min_s, t_max_s, int(n_scan))
    # Without a residual series the envelope is known down to t = 0 (where it is below budget).
    return first_crossing_s(excess, grid, None if residual_t_s is not None else 0.0,
                            xtol=1e-12, rtol=1e-9)


def first_crossing_s(excess, grid_s: np.ndarray, before_grid_s: float | None,
                     xtol: float, rtol: float) -> float:
    """First time (s) where the vectorised ``excess(t)`` reaches 0, or inf if it never does.

    ``excess`` is evaluated on the scan ``grid_s`` at once; the first grid point at or above
    zero is bracketed with its predecessor and refined by scipy.optimize.brentq. If the
    first grid point is already over, it is bracketed from ``before_grid_s``, or returned as
    is when that is None. A crossing narrower than the grid spacing could be missed.
    """
    over = np.flatnonzero(excess(grid_s) >= 0.0)
    if over.size == 0:
        return math.inf
    i = int(over[0])
    if i == 0:
        if before_grid_s is None:
            return float(grid_s[0])
        lo = before_grid_s
    else:
        lo = float(grid_s[i - 1])
    return float(brentq(lambda s: float(excess(np.array([s]))[0]), lo, float(grid_s[i]),
                        xtol=xtol, rtol=rtol))
