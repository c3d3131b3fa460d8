"""Time-domain frequency stability of measured clock data: ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV.

Input is phase (time error x, in s) or fractional frequency y at a uniform sample
interval tau0; results are given at averaging times tau = m tau0, by default at
octaves m = 1, 2, 4, ... Each statistic carries the number of squared terms it
averaged, its equivalent degrees of freedom (EDF, :mod:`physics.clock.edf`) and
chi-squared confidence bounds.

Definitions (phase form; N phase points x_0..x_{N-1}; NIST SP 1065, W. J. Riley,
"Handbook of Frequency Stability Analysis", 2008, section 5.2):
- Allan variance (non-overlapping), SP 1065 section 5.2.2: decimate x to every m-th
  point, sigma^2 = sum (x_{i+2} - 2 x_{i+1} + x_i)^2 / (2 tau^2 M).
- Overlapping Allan variance, section 5.2.4:
  sigma^2 = sum_{i=0}^{N-2m-1} (x_{i+2m} - 2 x_{i+m} + x_i)^2 / (2 tau^2 (N - 2m)).
- Modified Allan variance, section 5.2.5:
  Mod sigma^2 = sum_{j=0}^{N-3m} [sum_{i=j}^{j+m-1} (x_{i+2m} - 2x_{i+m} + x_i)]^2
  / (2 m^2 tau^2 (N - 3m + 1)).
- Time variance, section 5.2.6: TVAR = (tau^2 / 3) Mod sigma^2 (TDEV in s).
- Hadamard variance (non-overlapping), section 5.2.8: decimate x to every m-th point,
  sigma^2 = sum (x_{i+3} - 3x_{i+2} + 3x_{i+1} - x_i)^2 / (6 tau^2 M).
- Overlapping Hadamard variance, section 5.2.9:
  sum_{i=0}^{N-3m-1} (x_{i+3m} - 3x_{i+2m} + 3x_{i+m} - x_i)^2 / (6 tau^2 (N - 3m)).
(Section numbers as recalled from SP 1065; the formulas are checked against its
Table 30 in the tests.)

The confidence bounds assume Gaussian power-law noise of one type at each tau
(identified from the data unless given). They are statistical only: drift,
steps, outliers and gaps in measured data are not detected here and would make
the bounds optimistic.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .edf import chi2_bounds, equivalent_degrees_of_freedom
from .noise_id import noise_alpha_lag1

__all__ = [
    "DEFAULT_CONFIDENCE",
    "Deviation",
    "StabilityTable",
    "frequency_to_phase_s",
    "octave_averaging_factors",
    "allan_deviation",
    "overlapping_allan_deviation",
    "modified_allan_deviation",
    "time_deviation_s",
    "hadamard_deviation",
    "overlapping_hadamard_deviation",
    "stability_table",
]

DEFAULT_CONFIDENCE = 0.683
"""Two-sided confidence of the bounds, the 1-sigma convention (common practice)."""

ASSUMED_NOISE_ALPHA = 0.0
"""Noise exponent assumed for EDF when too few points exist to identify it: white FM
(common practice for short data sets; state it to the user)."""

_STATISTICS = ("adev", "oadev", "mdev", "tdev", "hdev", "ohdev")


@dataclass(frozen=True)
class Deviation:
    """One stability statistic at a set of averaging times, with its uncertainty.

    tau_s: averaging times (s); deviation: the statistic (dimensionless fractional
    frequency, except TDEV in s, see `unit`); lower/upper: confidence bounds in the
    same unit; n_terms: squared terms averaged (0 where the data are too short, and
    then deviation is NaN); edf: equivalent degrees of freedom; noise_alpha: power-law
    exponent used for the EDF; confidence: two-sided confidence level of the bounds.
    """

    name: str
    unit: str
    tau_s: np.ndarray
    averaging_factor: np.ndarray
    deviation: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    n_terms: np.ndarray
    edf: np.ndarray
    noise_alpha: np.ndarray
    confidence: float


@dataclass(frozen=True)
class StabilityTable:
    """ADEV, OADEV, MDEV, TDEV, HDEV and OHDEV at common taus; `rows()` gives one dict per tau."""

    tau_s: np.ndarray
    averaging_factor: np.ndarray
    noise_alpha: np.ndarray
    noise_alpha_source: list[str]
    confidence: float
    deviations: dict[str, Deviation] = field(default_factory=dict)

    def rows(self) -> list[dict]:
        """One JSON-ready dict per tau: tau_s, then per statistic the value, bounds, n_terms, edf.

        Keys: tau_s, averaging_factor, noise_alpha, noise_alpha_source, confidence, and for
        each of adev, oadev, mdev, hdev, ohdev: `<name>`, `<name>_lower`, `<name>_upper`,
        `<name>_n_terms`, `<name>_edf`; TDEV (seconds) as tdev_s, tdev_lower_s, tdev_upper_s,
        tdev_n_terms, tdev_edf. NaN (too few data for a statistic) becomes None.
        """
        out = []
        for i, tau in enumerate(self.tau_s):
            row: dict = {
                "tau_s": float(tau),
                "averaging_factor": int(self.averaging_factor[i]),
                "noise_alpha": _json_float(self.noise_alpha[i]),
                "noise_alpha_source": self.noise_alpha_source[i],
                "confidence": self.confidence,
            }
            for name, dev in self.deviations.items():
                suffix = "_s" if dev.unit == "s" else ""
                row[f"{name}{suffix}"] = _json_float(dev.deviation[i])
                row[f"{name}_lower{suffix}"] = _json_float(dev.lower[i])
                row[f"{name}_upper{suffix}"] = _json_float(dev.upper[i])
                row[f"{name}_n_terms"] = int(dev.n_terms[i])
                row[f"{name}_edf"] = _json_float(dev.edf[i])
            out.append(row)
        return out


def _json_float(value: float) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None


def frequency_to_phase_s(fractional_frequency: np.ndarray, sample_interval_s: float) -> np.ndarray:
    """Phase (time error, s) from fractional frequency averages: x_0 = 0, x_{i+1} = x_i + y_i tau0.

    fractional_frequency: y_i, dimensionless, each the average over one interval;
    sample_interval_s: tau0 > 0. Returns N + 1 phase points (NIST SP 1065 section 4,
    phase and frequency conversions).
    """
    y = np.asarray(fractional_frequency, dtype=float)
    return np.concatenate(([0.0], np.cumsum(y) * float(sample_interval_s)))


def octave_averaging_factors(n_phase: int) -> np.ndarray:
    """Averaging factors m = 1, 2, 4, ... up to the largest with one overlapping Allan term.

    n_phase: number of phase points N (at least 3). m_max = floor((N - 1) / 2).
    """
    m_max = (int(n_phase) - 1) // 2
    if m_max < 1:
        return np.zeros(0, dtype=int)
    return 2 ** np.arange(int(math.floor(math.log2(m_max))) + 1)


def _as_phase(data, sample_interval_s: float, data_type: str) -> np.ndarray:
    if sample_interval_s <= 0.0 or not math.isfinite(sample_interval_s):
        raise ValueError("sample_interval_s must be positive and finite")
    values = np.asarray(data, dtype=float)
    if values.ndim != 1:
        raise ValueError("data must be one-dimensional")
    if not np.all(np.isfinite(values)):
        raise ValueError("data contain NaN or infinite values (gaps are not supported)")
    if data_type == "phase":
        return values
    if data_type == "frequency":
        return frequency_to_phase_s(values, sample_interval_s)
    raise ValueError("data_type must be 'phase' or 'frequency'")


def _factors(averaging_factors, n_phase: int) -> np.ndarray:
    if averaging_factors is None:
        return octave_averaging_factors(n_phase)
    m = np.atleast_1d(np.asarray(averaging_factors))
    if m.size and (np.any(m < 1) or np.any(m != np.round(m))):
        raise ValueError("averaging factors must be positive integers")
    return m.astype(int)


def _noise_alphas(x: np.ndarray, m_values: np.ndarray, noise_alpha) -> tuple[np.ndarray, list]:
    """Noise exponent per tau: given, lag-1 ACF, borrowed from the nearest tau, or assumed."""
    if noise_alpha is not None:
        alphas = np.broadcast_to(np.asarray(noise_alpha, dtype=float), m_values.shape).copy()
        if np.any(alphas < -2.0) or np.any(alphas > 2.0):
            raise ValueError("noise_alpha must lie in [-2, 2]")
        return alphas, ["given"] * m_values.size
    raw = np.array([noise_alpha_lag1(x, m) for m in m_values])
    alphas = np.round(raw)
    sources = ["lag1_acf" if np.isfinite(a) else "" for a in raw]
    known = np.flatnonzero(np.isfinite(raw))
    for i in np.flatnonzero(~np.isfinite(raw)):
        if known.size:
            alphas[i] = alphas[known[np.argmin(np.abs(known - i))]]
            sources[i] = "nearest_tau_lag1_acf"
        else:
            alphas[i] = ASSUMED_NOISE_ALPHA
            sources[i] = "assumed_white_fm"
    return alphas, sources


# Statistic definitions: difference order d, boxcars in the EDF filter, variance
# normalisation constant, overlapping?
_SPEC = {
    "adev": (2, 2, 2.0, False),
    "oadev": (2, 2, 2.0, True),
    "mdev": (2, 3, 2.0, True),
    "tdev": (2, 3, 2.0, True),
    "hdev": (3, 3, 6.0, False),
    "ohdev": (3, 3, 6.0, True),
}


def _sums_of_squares(name: str, x: np.ndarray, m: int) -> tuple[float, int]:
    """Sum of squared finite differences for one statistic at factor m, and the term count."""
    n = x.size
    if name in ("adev", "hdev"):
        xd = x[::m]
        d = 2 if name == "adev" else 3
        if xd.size <= d:
            return float("nan"), 0
        z = np.diff(xd, n=d)
        return float(np.dot(z, z)), z.size
    if name == "oadev":
        if n - 2 * m < 1:
            return float("nan"), 0
        z = x[2 * m :] - 2.0 * x[m:-m] + x[: n - 2 * m]
        return float(np.dot(z, z)), z.size
    if name == "ohdev":
        if n - 3 * m < 1:
            return float("nan"), 0
        z = x[3 * m :] - 3.0 * x[2 * m : n - m] + 3.0 * x[m : n - 2 * m] - x[: n - 3 * m]
        return float(np.dot(z, z)), z.size
    # mdev / tdev: inner sums over m second differences via a cumulative sum; the
    # third difference of the cumulative sum is unchanged by removing a line from x,
    # which keeps the cumulative sum small (precision only).
    count = n - 3 * m + 1
    if count < 1:
        return float("nan"), 0
    idx = np.arange(n)
    xr = x - np.polyval(np.polyfit(idx, x, 1), idx) if n > 2 else x - x.mean()
    c = np.concatenate(([0.0], np.cumsum(xr)))
    z = c[3 * m : 3 * m + count] - 3.0 * c[2 * m : 2 * m + count]
    z += 3.0 * c[m : m + count] - c[:count]
    return float(np.dot(z, z)), count


def _deviation(
    name: str,
    data,
    sample_interval_s: float,
    data_type: str,
    averaging_factors,
    confidence: float,
    noise_alpha,
) -> Deviation:
    x = _as_phase(data, float(sample_interval_s), data_type)
    m_values = _factors(averaging_factors, x.size)
    alphas, _ = _noise_alphas(x, m_values, noise_alpha)
    return _deviation_on_phase(name, x, float(sample_interval_s), m_values, alphas, confidence)


def _deviation_on_phase(name, x, tau0, m_values, alphas, confidence) -> Deviation:
    d, boxes, norm, overlapping = _SPEC[name]
    tau = m_values * tau0
    variance = np.full(m_values.shape, np.nan)
    n_terms = np.zeros(m_values.shape, dtype=int)
    edf = np.full(m_values.shape, np.nan)
    for i, m in enumerate(m_values):
        ssq, count = _sums_of_squares(name, x, int(m))
        n_terms[i] = count
        if count < 1:
            continue
        if name in ("mdev", "tdev"):
            variance[i] = ssq / (norm * m**2 * tau[i] ** 2 * count)
        else:
            variance[i] = ssq / (norm * tau[i] ** 2 * count)
        edf[i] = equivalent_degrees_of_freedom(
            alphas[i], count, int(m), d, boxes, 1 if overlapping else int(m)
        )
    if name == "tdev":
        variance = variance * tau**2 / 3.0
    lower, upper = chi2_bounds(variance, edf, confidence)
    return Deviation(
        name=name,
        unit="s" if name == "tdev" else "1",
        tau_s=tau.astype(float),
        averaging_factor=m_values,
        deviation=np.sqrt(variance),
        lower=np.sqrt(lower),
        upper=np.sqrt(upper),
        n_terms=n_terms,
        edf=edf,
        noise_alpha=alphas,
        confidence=confidence,
    )


def _make(name: str, summary: str):
    def func(
        data: np.ndarray,
        sample_interval_s: float,
        data_type: str = "phase",
        averaging_factors=None,
        confidence: float = DEFAULT_CONFIDENCE,
        noise_alpha=None,
    ) -> Deviation:
        return _deviation(
            name, data, sample_interval_s, data_type, averaging_factors, confidence, noise_alpha
        )

    func.__doc__ = f"""{summary}

    data: phase in s (data_type="phase") or fractional frequency (data_type="frequency")
    at a uniform sample_interval_s > 0, no gaps. averaging_factors: integers m (tau = m
    sample_interval_s), default octaves 1, 2, 4, ... confidence: two-sided level of the
    chi-squared bounds (default 0.683). noise_alpha: IEEE Std 1139 exponent (-2..2) for
    the EDF, scalar or per tau; default identified per tau by lag-1 autocorrelation.
    Formula: module docstring (NIST SP 1065 section 5.2).
    """
    return func


allan_deviation = _make("adev", "Allan deviation (non-overlapping), dimensionless.")
overlapping_allan_deviation = _make("oadev", "Overlapping Allan deviation, dimensionless.")
modified_allan_deviation = _make("mdev", "Modified Allan deviation, dimensionless.")
time_deviation_s = _make("tdev", "Time deviation TDEV = tau MDEV / sqrt(3), in seconds.")
hadamard_deviation = _make("hdev", "Hadamard deviation (non-overlapping), dimensionless.")
overlapping_hadamard_deviation = _make("ohdev", "Overlapping Hadamard deviation, dimensionless.")


def stability_table(
    data: np.ndarray,
    sample_interval_s: float,
    data_type: str = "phase",
    averaging_factors=None,
    confidence: float = DEFAULT_CONFIDENCE,
    noise_alpha=None,
) -> StabilityTable:
    """All six statistics at common taus (octaves by default), for a `deviations` table.

    Arguments as for :func:`allan_deviation`. The noise type used for the EDF is
    identified once per tau and shared by all statistics (source recorded per row:
    "given", "lag1_acf", "nearest_tau_lag1_acf" or "assumed_white_fm"). Confidence bounds
    are statistical only and assume the data free of drift, steps and outliers.
    """
    x = _as_phase(data, float(sample_interval_s), data_type)
    m_values = _factors(averaging_factors, x.size)
    alphas, sources = _noise_alphas(x, m_values, noise_alpha)
    devs = {
        name: _deviation_on_phase(name, x, float(sample_interval_s), m_values, alphas, confidence)
        for name in _STATISTICS
    }
    return StabilityTable(
        tau_s=(m_values * float(sample_interval_s)).astype(float),
        averaging_factor=m_values,
        noise_alpha=alphas,
        noise_alpha_source=sources,
        confidence=confidence,
        deviations=devs,
    )
