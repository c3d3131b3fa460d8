"""A ``BudgetResult`` (and the other physics results) -> the response's JSON-ready data.

The only module that turns seconds into ns, us or ps and TT seconds since the span start into ISO
8601 UTC strings. Field names are a contract (app/schemas/): add fields, never rename or drop one.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
from taubudget.physics.budget import CAUTION, BudgetResult, OmittedTerm
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.span import Span

from .terms import rate_terms

NS_PER_S = 1e9
US_PER_S = 1e6
PS_PER_S = 1e12

POSITION_TERM_NOTE = (
    "coordinate position term -(v_B.(x - x_B))/c^2 of the clock's local frames (the geocentre, and the "
    "Moon inside it, for the Earth-Moon system; Mars for Mars) minus the reference's (the Moon's centre "
    "for lunar_surface): the part of TCB - TCG that TT along the geocentre leaves out (TN36 eq. 10.4); "
    "a bounded total derivative, kept in the offset, in periodic.amplitude_with_position_term_ns and in "
    "eccentricity_correction.residual_after_correction_with_position_term_ns; removed before the secular "
    "fit and from periodic.amplitude_ns, periodic.components and the residual after the correction"
)


def ns(x_s) -> float:
    return float(x_s) * NS_PER_S


def ns_list(x_s) -> list[float]:
    return (np.asarray(x_s, dtype=float) * NS_PER_S).tolist()


def us_per_day(fractional: float) -> float:
    return float(fractional) * SECONDS_PER_DAY * US_PER_S


def utc(span: Span, t_s) -> list[str]:
    """ISO 8601 UTC strings (microseconds, trailing Z) at TT seconds ``t_s`` after the span start."""
    return span.utc_iso(t_s)


def utc1(span: Span, t_s: float) -> str:
    return span.utc_iso(t_s)[0]


UTC_US = "%Y-%m-%dT%H:%M:%S.%fZ"
UTC_S = "%Y-%m-%dT%H:%M:%SZ"

_ORBIT_KM = {"mean_semi_major_axis_m": "mean_semi_major_axis_km",
             "osculating_semi_major_axis_m": "osculating_semi_major_axis_km"}
_ORBIT_NS = {"max_periodic_term_s": "max_periodic_term_ns"}
_ORBIT_TIMES = {"epoch": ("epoch_utc", UTC_US), "tle_epoch": ("tle_epoch_utc", UTC_US),
                "start": ("start_utc", UTC_S), "stop": ("stop_utc", UTC_S)}
"""An orbit source's ``describe()`` keys (SI, skyfield Times) -> the response's keys and units."""


def utc_time(t, fmt: str = UTC_US) -> str:
    """A skyfield Time as ISO 8601 UTC text (trailing Z)."""
    return t.utc_strftime(fmt)


def orbit(described: dict) -> dict:
    """An orbit source's SI description -> the response's ``model.orbit`` block (km, ns, UTC text)."""
    out = {}
    for key, value in described.items():
        if key in _ORBIT_KM:
            out[_ORBIT_KM[key]] = float(value) / 1e3
        elif key in _ORBIT_NS:
            out[_ORBIT_NS[key]] = ns(value)
        elif key in _ORBIT_TIMES and hasattr(value, "utc_strftime"):
            name, fmt = _ORBIT_TIMES[key]
            out[name] = utc_time(value, fmt)
        elif isinstance(value, dict):
            out[key] = orbit(value)
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            out[key] = [orbit(v) for v in value]
        else:
            out[key] = value
    return out


def omitted_terms(terms: Iterable[OmittedTerm]) -> list[dict]:
    return [{"term": t.name, "size_fractional": float(t.size_fractional), "note": t.note} for t in terms]


def request_reference(reference):
    """The request's reference as the response repeats it: a name, or the ground clock's block."""
    if isinstance(reference, str):
        return reference
    if hasattr(reference, "model_dump"):
        return reference.model_dump()
    return orbit(reference.describe())  # a physics source, when a caller passes the result's own reference


def _series(b: BudgetResult) -> dict | None:
    s = b.series
    if s is None:
        return None
    out = {
        "time_utc": utc(b.span, s.t_s),
        "elapsed_s": np.asarray(s.t_s, dtype=float).tolist(),
        "offset_ns": ns_list(s.offset_s),
        "periodic_ns": ns_list(s.periodic_s),
        "eccentricity_term_ns": ns_list(s.eccentricity_term_s),
    }
    for key, value in (s.signal_path or {}).items():
        out[key] = value if isinstance(value, str) else np.asarray(value, dtype=float).tolist()
    return out


def budget(b: BudgetResult, reference) -> dict:
    """The budget response (without ``clock_error``): ``reference`` as the request gave it."""
    span, ecc, per = b.span, b.eccentricity_correction, b.periodic
    days = span.duration_s / SECONDS_PER_DAY
    omitted = omitted_terms(b.omitted_terms)
    correction = {
        "applicable": ecc.applicable,
        "applied": ecc.applied,
        "amplitude_ns": ns(ecc.amplitude_s),
        "residual_after_correction_ns": ns(ecc.residual_after_correction_s),
        "residual_peak_to_peak_ns": ns(ecc.residual_peak_to_peak_s),
        "formula": ecc.formula,
    }
    if ecc.analytic_amplitude_s is not None:
        correction["analytic_amplitude_ns"] = ns(ecc.analytic_amplitude_s)
    if ecc.residual_with_position_term_s is not None:
        correction["residual_after_correction_with_position_term_ns"] = ns(ecc.residual_with_position_term_s)
    out = {
        "mean_fractional_rate": b.mean_fractional_rate,
        "mean_rate_us_per_day": us_per_day(b.mean_fractional_rate),
        "terms_fractional": dict(b.terms_fractional),
        "rate_terms_fractional": rate_terms(b.terms_fractional),
        "frequency_preset_fractional": b.preset.fractional,
        "preset_frequency_hz": b.preset.frequency_hz,
        "nominal_frequency_hz": b.preset.nominal_frequency_hz,
        "offset_at_end_ns": ns(b.offset_at_end_s),
        "offset_extreme_ns": ns(b.offset_extreme_s),
        "offset_extreme_time_utc": utc1(span, b.offset_extreme_t_s),
        "offset_min_ns": ns(b.offset_min_s),
        "offset_max_ns": ns(b.offset_max_s),
        "periodic": {
            "amplitude_ns": ns(per.amplitude_s),
            "peak_to_peak_ns": ns(per.peak_to_peak_s),
            "dominant_period_s": per.dominant_period_s,
            "components": [{"period_s": c.period_s, "amplitude_ns": ns(c.amplitude_s)}
                           for c in per.components],
            "position_term_amplitude_ns": ns(per.position_term_amplitude_s),
            "amplitude_with_position_term_ns": ns(per.amplitude_with_position_term_s
                                                  if per.amplitude_with_position_term_s is not None
                                                  else per.amplitude_s),
            "peak_to_peak_with_position_term_ns": ns(per.peak_to_peak_with_position_term_s
                                                     if per.peak_to_peak_with_position_term_s is not None
                                                     else per.peak_to_peak_s),
        },
        "eccentricity_correction": correction,
        "integration_error_estimate_ps": b.integration.error_estimate_s * PS_PER_S,
        "integration_error_estimate_ps_per_day": b.integration.error_estimate_s * PS_PER_S / days,
        "nodes_used": b.integration.nodes_used,
        "panels_used": b.integration.panels_used,
        "frame": b.frame,
        "model": {**b.model, **({"orbit": orbit(b.model["orbit"])} if "orbit" in b.model else {}),
                  "omitted_terms": omitted},
        "omitted_terms": omitted,
    }
    if b.position_term is not None:
        out["tt_convention"] = b.model.get("tt_convention")
        out["position_term"] = {"amplitude_ns": ns(b.position_term.amplitude_s), "note": POSITION_TERM_NOTE}
    out.update({
        "series": _series(b),
        "warnings": list(b.warnings),
        "caution": CAUTION,
        "reference": request_reference(reference),
        "start_utc": utc1(span, 0.0),
        "end_utc": utc1(span, span.duration_s),
        "span_s": span.duration_s,
    })
    return out
