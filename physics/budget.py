"""The drift budget of one clock over one span: what a timing engineer reads.

Steps (DESIGN.md, "Budget outputs"):

1. Integrate g = y_clock - y_ref (``physics.rate``) over the span with adaptive
   Gauss-Legendre panels (``physics.quadrature``); every term is integrated
   alongside the total.
2. Remove the eccentricity term exactly. For any orbit, (2/c^2) d(r.v)/dt
   carries the periodic part of v^2/2 + GM/r (two-body identity: v^2/2 + GM/r
   = 3GM/(2a) + 2 d(r.v)/dt; TN36 eq. 10.10), so the offset plus
   (2/c^2)(r.v - r.v_0) is a straight line for a Keplerian orbit, whatever
   the span.
3. Secular rate: least-squares line fitted to that corrected offset jointly
   with four harmonics of the orbital period when the span covers at least
   one period (so residual J2 and tidal periodic terms are not absorbed).
   A plain line fitted to the uncorrected offset over a non-whole number of
   orbits would tilt with the periodic term.
4. Periodic part = offset - secular line (mean removed): amplitude (half the
   peak-to-peak), peak-to-peak, dominant period; what the user-segment
   correction -(2/c^2) r.v leaves.
5. Preset: the fractional frequency offset that nulls the mean rate,
   f_set = f_nominal / (1 + y) (IS-GPS-200 section 3.3.1.1 practice).

All outputs are planning estimates.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .constants import (
    C2_M2_PER_S2,
    EARTH_EQUATORIAL_RADIUS_M,
    EARTH_J2,
    GM_EARTH_TCG_M3_PER_S2,
    GM_MOON_M3_PER_S2,
    GM_SUN_M3_PER_S2,
    L_G,
    MAX_ZONAL_DEGREE,
    SECONDS_PER_DAY,
)
from .environment import environment_for
from .ephemeris import DE421_FIRST_JD_TDB, DE421_LAST_JD_TDB
from .errors import PhysicsInputError
from .potential.earth import omitted_zonal_size
from .quadrature import DEFAULT_TOL_FRACTIONAL, NodeBudgetExceeded, integrate
from .rate import TERM_NAMES, GravityModel, integrand_terms
from .span import Span

CAUTION = (
    "Planning estimate only. These figures come from a first-order relativistic model with the "
    "terms listed under 'model'; flight use needs independent verification against the "
    "mission's own standards, orbit products and clock data."
)

FINE_POINTS_PER_PANEL = 24
"""Uniform samples per panel for extremes and fits (48 per orbit at T/2 panels: the sampled
extreme of a sinusoid is within 1 - cos(pi/48) = 0.2 % of the true one)."""

HARMONICS = 4
"""Orbital-period harmonics fitted jointly with the secular line."""

MAX_PANEL_S = 6 * 3600.0
"""Longest panel: keeps the Moon's semi-diurnal tide well resolved, s."""

MIN_PANEL_S = 60.0

MEAN_MOON_DISTANCE_M = 384_400e3  # common practice (mean Earth-Moon distance)
MEAN_SUN_DISTANCE_M = 149_597_870_700.0  # 1 au (TN36 Table 1.1)


@dataclass
class BudgetInputs:
    """Everything ``compute_budget`` needs, already validated for shape by the caller."""

    source: object
    reference: object  # "TT" | "TAI" | "GPS" | "TCG" | SurfaceClock
    span: Span
    gravity: GravityModel = field(default_factory=GravityModel)
    series_step_s: float | None = None
    nominal_frequency_hz: float | None = None
    max_nodes: int = 5_000_000
    max_series_points: int = 200_000
    tol_fractional: float = DEFAULT_TOL_FRACTIONAL
    nodes_scale: float = 1.0  # > 1 shrinks the initial panels (convergence checks)


def _check_span(span: Span):
    jd0 = float(span.start.tdb)
    jd1 = jd0 + span.duration_s / SECONDS_PER_DAY
    if jd0 < DE421_FIRST_JD_TDB or jd1 > DE421_LAST_JD_TDB:
        raise PhysicsInputError(
            "end" if jd0 >= DE421_FIRST_JD_TDB else "start",
            span.start.utc_strftime("%Y-%m-%d") if jd0 < DE421_FIRST_JD_TDB else None,
            "the span must lie inside the DE421 ephemeris (1899-07-30 to 2053-10-07) that "
            "supplies the Sun and Moon positions",
        )


def _initial_panel_s(source, nodes_scale: float) -> float:
    period = source.period_s()
    base = MAX_PANEL_S if period is None else min(MAX_PANEL_S, period / 2.0)
    return max(MIN_PANEL_S, base) / nodes_scale


def _row_index(name: str) -> int:
    return 1 + TERM_NAMES.index(name)


def _fit_secular(t_s, weights, rows, period_s, span_s):
    """Weighted LS of each row on [1, t, harmonics]; returns (coef (k, m), basis (N, m))."""
    half = 0.5 * span_s
    tc = (t_s - half) / half  # centred and scaled to [-1, 1] for conditioning
    cols = [np.ones_like(tc), tc]
    if period_s is not None and span_s >= period_s:
        w = 2.0 * np.pi / period_s
        for k in range(1, HARMONICS + 1):
            cols += [np.cos(k * w * t_s), np.sin(k * w * t_s)]
    basis = np.stack(cols, axis=1)
    sw = np.sqrt(weights)[:, None]
    # Remove the chord first so the solve sees only the small departures from it.
    chord = rows[:, :1] + (rows[:, -1:] - rows[:, :1]) * (t_s / span_s)[None, :]
    coef, *_ = np.linalg.lstsq(basis * sw, ((rows - chord).T * sw), rcond=None)
    coef = coef.T
    chord_slope = (rows[:, -1] - rows[:, 0]) / span_s
    coef[:, 0] += rows[:, 0] + chord_slope * half
    coef[:, 1] = coef[:, 1] / half + chord_slope  # back to per second
    return coef, basis


def _trapezoid_weights(t_s):
    dt = np.diff(t_s)
    w = np.zeros_like(t_s)
    w[:-1] += 0.5 * dt
    w[1:] += 0.5 * dt
    return w


def _dominant_period(periodic, t_s, period_s, harmonic_coef, span_s):
    """Period of the largest periodic component, s, or None if the span cannot tell."""
    if harmonic_coef is not None and len(harmonic_coef):
        amps = np.hypot(harmonic_coef[0::2], harmonic_coef[1::2])
        k = int(np.argmax(amps)) + 1
        return period_s / k
    if period_s is not None:
        return period_s
    # Surface clocks: periodogram of the uniformly resampled periodic part.
    if span_s < SECONDS_PER_DAY:
        return None
    n = 8192
    grid = np.linspace(0.0, span_s, n, endpoint=False)
    x = np.interp(grid, t_s, periodic)
    x = x - x.mean()
    spec = np.abs(np.fft.rfft(x * np.hanning(n)))
    freqs = np.fft.rfftfreq(n, d=span_s / n)
    if spec[1:].max() <= 0.0:
        return None
    return float(1.0 / freqs[1 + int(np.argmax(spec[1:]))])


def _omitted_terms(inputs: BudgetInputs, mean_r_m: float) -> list[dict]:
    src, grav = inputs.source, inputs.gravity
    out = []
    gm_over_rc2 = GM_EARTH_TCG_M3_PER_S2 / (mean_r_m * C2_M2_PER_S2)
    if not src.is_surface:
        if grav.earth_zonal_degree < MAX_ZONAL_DEGREE:
            out.append({
                "term": f"earth_zonal_above_degree_{grav.earth_zonal_degree}",
                "size_fractional": omitted_zonal_size(mean_r_m, grav.earth_zonal_degree)
                / C2_M2_PER_S2,
                "note": "first omitted zonal harmonic at the mean radius (EGM2008)",
            })
        out.append({
            "term": "earth_tesseral_and_sectoral_harmonics",
            "size_fractional": 2.8e-6 * np.sqrt(5.0)
            * (EARTH_EQUATORIAL_RADIUS_M / mean_r_m) ** 2 * gm_over_rc2,
            "note": "degree-2 sectoral term, EGM2008 C22/S22 (from memory); mostly periodic",
        })
        if src.kind == "keplerian":
            out.append({
                "term": "orbit_perturbations_short_period",
                "size_fractional": EARTH_J2 * (EARTH_EQUATORIAL_RADIUS_M / mean_r_m) ** 2
                * gm_over_rc2,
                "note": "the Keplerian source has no J2 short-period motion; order-of-magnitude "
                "size of the periodic J2 rate term it misses (Ashby 2003, section 9)",
            })
    else:
        out.append({
            "term": "solid_earth_tides_and_loading",
            "size_fractional": 3e-17,
            "note": "station height changes of ~0.3 m times g/c^2 (common practice); periodic",
        })
        if src.geoid_undulation_m is None:
            out.append({
                "term": "geoid_undulation",
                "size_fractional": 107.0 * 9.81 / C2_M2_PER_S2,
                "note": "no geoid_undulation_m or orthometric_height_m given: N = 0 assumed; the "
                "geoid departs from the ellipsoid by up to ~107 m",
            })
    for body, on, gm, d in (
        ("moon", grav.moon, GM_MOON_M3_PER_S2, MEAN_MOON_DISTANCE_M),
        ("sun", grav.sun, GM_SUN_M3_PER_S2, MEAN_SUN_DISTANCE_M),
    ):
        if not on:
            out.append({
                "term": f"{body}_tide",
                "size_fractional": gm * mean_r_m**2 / d**3 / C2_M2_PER_S2,
                "note": f"tidal potential of the {body} switched off (TN36 eq. 10.6)",
            })
    out.append({
        "term": "planetary_tides",
        "size_fractional": 3.25e14 * mean_r_m**2 / (4.1e10) ** 3 / C2_M2_PER_S2,
        "note": "Venus at its closest, the largest planetary tide",
    })
    out.append({
        "term": "post_newtonian_c4",
        "size_fractional": gm_over_rc2**2,
        "note": "O(c^-4) terms of the metric (TN36 section 10.1)",
    })
    out.append({
        "term": "polar_motion",
        "size_fractional": 1e-19,
        "note": "omitted from the Earth orientation (builtin timescale carries none)",
    })
    return out


@dataclass
class Budget:
    """A computed budget; ``to_dict`` gives the public JSON shape.

    The offset functions evaluate the integrated offset at any times inside the
    span (TT seconds since the start), in seconds, clock minus reference:
    ``offset_s`` as the clock runs with no preset; ``after_preset_s`` once the
    frequency preset removes the secular rate (what is left is the periodic
    part); ``after_correction_s`` once the user segment also applies the
    eccentricity correction -(2/c^2) r.v.
    """

    data: dict
    nodes_used: int
    integral: object = None
    secular_rate_per_tt_s: float = 0.0
    _ecc_scale: float = 0.0
    _rv0: float = 0.0
    _rv_row: int = -1

    def to_dict(self) -> dict:
        return self.data

    def offset_s(self, t_s) -> np.ndarray:
        return self.integral.cumulative_at(t_s, rows=[0])[0]

    def eccentricity_term_s(self, t_s) -> np.ndarray:
        rv = self.integral.values_at(t_s, rows=[self._rv_row])[0]
        return -2.0 * self._ecc_scale * (rv - self._rv0)

    def after_preset_s(self, t_s) -> np.ndarray:
        t_s = np.atleast_1d(np.asarray(t_s, dtype=float))
        return self.offset_s(t_s) - self.secular_rate_per_tt_s * t_s

    def after_correction_s(self, t_s) -> np.ndarray:
        return self.after_preset_s(t_s) - self.eccentricity_term_s(t_s)


def compute_budget(inputs: BudgetInputs) -> Budget:
    """Compute the drift budget of ``inputs.source`` against ``inputs.reference``."""
    span = inputs.span
    _check_span(span)
    env = environment_for(span)
    src, ref, grav = inputs.source, inputs.reference, inputs.gravity
    rows_names = ("total",) + TERM_NAMES + ("r_dot_v",)

    def fun(t_s):
        nr = integrand_terms(src, ref, t_s, grav, env)
        if (nr.code != 0).any():
            first = int(np.argmax(nr.code != 0))
            msg = nr.messages.get(int(nr.code[first]), "propagation failed")
            when = span.utc_iso(t_s[first])[0]
            raise PhysicsInputError(
                "orbit", None, f"the orbit cannot be propagated over the span: at {when} SGP4 "
                f"reports error {int(nr.code[first])}: {msg}",
            )
        terms = [nr.terms[name] for name in TERM_NAMES]
        return np.vstack([nr.total] + terms + [nr.r_dot_v_m2_per_s])

    try:
        q = integrate(
            fun, 0.0, span.duration_s, _initial_panel_s(src, inputs.nodes_scale),
            tol_fractional=inputs.tol_fractional, max_nodes=inputs.max_nodes,
        )
    except NodeBudgetExceeded as exc:
        raise PhysicsInputError(
            "end", None,
            f"the span needs {exc.nodes_needed} quadrature nodes, above this service's limit of "
            f"{exc.max_nodes}; shorten the span or split it",
        ) from exc

    t_fine = q.fine_grid_s(FINE_POINTS_PER_PANEL)
    rv_row = rows_names.index("r_dot_v")
    cum = q.cumulative_at(t_fine, rows=list(range(rv_row)))  # (rows, N), r.v itself not integrated
    rv = q.values_at(t_fine, rows=[rv_row])[0]
    rv0 = q.values_at(np.array([0.0]), rows=[rv_row])[0][0]
    ecc_scale = 1.0 / ((1.0 - L_G) * C2_M2_PER_S2)
    # Eccentricity term of the offset, s: -(2/c^2)(r.v - r.v_0), per TT second.
    ecc = -2.0 * ecc_scale * (rv - rv0)
    total = cum[0]
    corrected = total - ecc
    term_rows = {name: cum[_row_index(name)] for name in TERM_NAMES}
    term_rows["velocity"] = term_rows["velocity"] - 0.5 * ecc
    term_rows["monopole"] = term_rows["monopole"] - 0.5 * ecc

    period = src.period_s()
    weights = _trapezoid_weights(t_fine)
    fit_rows = np.vstack([corrected] + [term_rows[n] for n in TERM_NAMES] + [total])
    coef, basis = _fit_secular(t_fine, weights, fit_rows, period, span.duration_s)
    slope = coef[:, 1]
    rate_vs_tt = slope[0]
    term_slopes = dict(zip(TERM_NAMES, slope[1:1 + len(TERM_NAMES)], strict=True))
    harmonic_total = coef[-1, 2:] if coef.shape[1] > 2 else None

    # Reference's own rate against TT, to express rates per reference second.
    if isinstance(ref, str):
        y_ref = 0.0 if ref in ("TT", "TAI", "GPS") else L_G / (1.0 - L_G)
    else:
        y_ref = -term_slopes["reference_clock"]
    mean_rate = rate_vs_tt / (1.0 + y_ref)
    terms_fractional = {k: v / (1.0 + y_ref) for k, v in term_slopes.items()}

    tc = t_fine - 0.5 * span.duration_s
    periodic = total - rate_vs_tt * tc
    periodic = periodic - np.sum(weights * periodic) / np.sum(weights)
    residual = corrected - rate_vs_tt * tc
    residual = residual - np.sum(weights * residual) / np.sum(weights)

    p2p = float(periodic.max() - periodic.min())
    dominant = _dominant_period(periodic, t_fine, period, harmonic_total, span.duration_s)
    ecc_amp = 0.5 * float(ecc.max() - ecc.min())
    i_ext = int(np.argmax(np.abs(total)))

    states0 = src.states(span, np.array([0.0]), env.orientation)
    mean_r = float(np.linalg.norm(states0.r_gcrs_m[0]))
    if src.kind == "keplerian":
        mean_r = src.a_m

    preset = 1.0 / (1.0 + mean_rate) - 1.0
    data = {
        "mean_fractional_rate": float(mean_rate),
        "mean_rate_us_per_day": float(mean_rate * SECONDS_PER_DAY * 1e6),
        "terms_fractional": {k: float(v) for k, v in terms_fractional.items()},
        "frequency_preset_fractional": float(preset),
        "preset_frequency_hz": None
        if inputs.nominal_frequency_hz is None
        else float(inputs.nominal_frequency_hz / (1.0 + mean_rate)),
        "nominal_frequency_hz": inputs.nominal_frequency_hz,
        "offset_at_end_ns": float(q.edge_cumulative[0, -1] * 1e9),
        "offset_extreme_ns": float(total[i_ext] * 1e9),
        "offset_extreme_time_utc": span.utc_iso(t_fine[i_ext])[0],
        "offset_min_ns": float(total.min() * 1e9),
        "offset_max_ns": float(total.max() * 1e9),
        "periodic": {
            "amplitude_ns": 0.5 * p2p * 1e9,
            "peak_to_peak_ns": p2p * 1e9,
            "dominant_period_s": None if dominant is None else float(dominant),
        },
        "eccentricity_correction": {
            "amplitude_ns": ecc_amp * 1e9,
            "residual_after_correction_ns": float(np.max(np.abs(residual)) * 1e9),
            "residual_peak_to_peak_ns": float((residual.max() - residual.min()) * 1e9),
            "formula": "delta_t = -(2/c^2) r.v (TN36 eq. 10.10; IS-GPS-200 F e sqrt(A) sin E)",
        },
        "integration_error_estimate_ps": q.error_estimate_s * 1e12,
        "integration_error_estimate_ps_per_day": q.error_estimate_s * 1e12
        / (span.duration_s / SECONDS_PER_DAY),
        "nodes_used": q.node_count,
        "panels_used": int(len(q.edges_s) - 1),
    }
    if src.kind == "keplerian":
        data["eccentricity_correction"]["analytic_amplitude_ns"] = float(
            2.0 * np.sqrt(src.a_m * src.gm) * src.e / C2_M2_PER_S2 * 1e9
        )
    data["model"] = {
        "frame": "GCRS",
        "coordinate_time": "TCG",
        "rate_equation": "dtau/dTCG = 1 - (v^2/2 + U_E + U_tid)/c^2 (IERS Conventions 2010, "
        "TN36 eq. 10.6); dTT/dTCG = 1 - L_G",
        "included_terms": [k for k in TERM_NAMES if np.any(np.abs(cum[_row_index(k)]) > 0)],
        "earth_field": "GRS80 normal field + gamma*N (ground clock)" if src.is_surface
        else ("point mass" if grav.earth_zonal_degree == 0
              else f"EGM2008 zonal J2..J{grav.earth_zonal_degree}"),
        "tides": list(grav.bodies()),
        "ephemeris": "JPL DE421 (skyfield-data), coarse grid + cubic spline",
        "orbit": src.describe(),
        "omitted_terms": _omitted_terms(inputs, mean_r),
        "secular_fit": "line fitted to the eccentricity-corrected offset"
        + (f" jointly with {HARMONICS} harmonics of the {period:.1f} s orbital period"
           if period is not None and span.duration_s >= period else ""),
        "integration": f"adaptive Gauss-Legendre panels, {q.nodes_s.shape[1]} nodes each, "
        f"tolerance {inputs.tol_fractional:g} s/s",
    }
    data["omitted_terms"] = data["model"]["omitted_terms"]

    if inputs.series_step_s:
        n_pts = int(np.floor(span.duration_s / inputs.series_step_s)) + 1
        if n_pts + 1 > inputs.max_series_points:
            raise PhysicsInputError(
                "series_step_s", inputs.series_step_s,
                f"a step of {inputs.series_step_s} s gives {n_pts} series points, above the limit "
                f"of {inputs.max_series_points}",
            )
        ts_out = np.arange(n_pts) * float(inputs.series_step_s)
        if ts_out[-1] < span.duration_s - 1e-6:
            ts_out = np.append(ts_out, span.duration_s)
        c_out = q.cumulative_at(ts_out, rows=[0])
        rv_out = q.values_at(ts_out, rows=[rv_row])[0]
        ecc_out = -2.0 * ecc_scale * (rv_out - rv0)
        # Same secular line and mean as the fine-grid periodic part.
        shift = np.sum(weights * (total - rate_vs_tt * tc)) / np.sum(weights)
        per_out = c_out[0] - rate_vs_tt * (ts_out - 0.5 * span.duration_s) - shift
        data["series"] = {
            "time_utc": span.utc_iso(ts_out),
            "elapsed_s": ts_out.tolist(),
            "offset_ns": (c_out[0] * 1e9).tolist(),
            "periodic_ns": (per_out * 1e9).tolist(),
            "eccentricity_term_ns": (ecc_out * 1e9).tolist(),
        }
    else:
        data["series"] = None
    data["caution"] = CAUTION
    return Budget(data, q.node_count, q, float(rate_vs_tt), ecc_scale, float(rv0),
                  rows_names.index("r_dot_v"))
