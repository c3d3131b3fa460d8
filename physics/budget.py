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

from .cancel import checkpoint
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
from .orbits.barycentric import BarycentricSource, EarthSourceInBcrs
from .potential.earth import omitted_zonal_size
from .quadrature import DEFAULT_TOL_FRACTIONAL, NodeBudgetExceeded, integrate
from .rate import TERM_NAMES, GravityModel, integrand_terms
from .rate_bcrs import BCRS_REFERENCES, BCRS_TERM_NAMES, bcrs_integrand_terms
from .solar_system import solar_system_for
from .span import Span
from .threads import single_threaded_blas

BCRS_ONLY_REFERENCES = ("TCB", "TDB", "lunar_surface")
TT_FAR_FROM_EARTH = (
    "TT is taken along the geocentre: dTT/dTCB = (1 - L_G)(1 - (v_E^2/2 + U_ext(x_E))/c^2) "
    "(IERS Conventions 2010, TN36 eq. 10.4 without the position term v_E.(x - x_E)/c^2)"
)


def choose_frame(source, reference) -> str:
    """GCRS for Earth-centred clocks against Earth references; BCRS otherwise.

    The boundary: a clock whose source is Earth-centred (Keplerian around the
    Earth, TLE, Earth surface) is computed in the GCRS unless the reference is a
    barycentric or lunar scale; every other source is computed in the BCRS.
    The GCRS tidal expansion holds well inside the Earth's Hill sphere (~1.5e6 km).
    """
    if getattr(source, "frame", "GCRS") == "BCRS":
        return "BCRS"
    if isinstance(reference, str) and reference in BCRS_ONLY_REFERENCES:
        return "BCRS"
    return "GCRS"

CAUTION = (
    "Planning estimate only. These figures come from a first-order relativistic model with the "
    "terms listed under 'model'; flight use needs independent verification against the "
    "mission's own standards, orbit products and clock data."
)

FIT_POINTS_PER_PANEL = 8
"""Samples per panel for the secular fit (16 per orbit at T/2 panels: 4 harmonics resolved)."""

FINE_POINTS_PER_PANEL = 24
"""Uniform samples per panel for extremes and fits (48 per orbit at T/2 panels: the sampled
extreme of a sinusoid is within 1 - cos(pi/48) = 0.2 % of the true one)."""

HARMONICS = 4
"""Orbital-period harmonics fitted jointly with the secular line."""

MAX_PANEL_S = 12 * 3600.0
"""Longest first panel, s: half a day, so the Moon's semi-diurnal tide has 20 nodes per cycle
(the tail test splits panels where the integrand needs more)."""

MIN_PANEL_S = 60.0

PANELS_PER_PERIOD = 1.0
"""First panels span 1/PANELS_PER_PERIOD of an orbit (then halved where the tail test fails;
full-orbit panels fail it for LEO, whose rate is rich in harmonics)."""

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
    frame: str | None = None  # None: automatic (``choose_frame``); "GCRS" or "BCRS" to force
    link_station: object = None  # SurfaceClock: light time and Shapiro delay to it (BCRS series)


MIN_SPAN_S = 1.0
"""Shortest span a budget integrates, s: below it no rate or periodic part is meaningful."""


TLE_MAX_EPOCH_DISTANCE_DAYS = 365.0
"""Refuse SGP4 propagation farther than this from the element epoch, days."""

TLE_WARN_EPOCH_DISTANCE_DAYS = 30.0
"""Warn beyond this: mean elements lose accuracy over weeks (common practice)."""


def _check_tle_epoch(src, span: Span) -> list[str]:
    """Refuse SGP4 propagation a year or more from the TLE epoch; warn beyond a month."""
    epoch = src.epoch() if hasattr(src, "epoch") else None
    if epoch is None or getattr(src, "kind", "") != "tle":
        return []
    e = float(span.seconds_after_start(epoch))  # epoch - start, s
    nearest = 0.0 if 0.0 <= e <= span.duration_s else min(abs(e), abs(e - span.duration_s))
    days = nearest / SECONDS_PER_DAY
    if days > TLE_MAX_EPOCH_DISTANCE_DAYS:
        raise PhysicsInputError(
            "start", span.start.utc_strftime("%Y-%m-%d"),
            f"the span lies {days:.0f} days from the TLE epoch; SGP4 mean elements are not meant to "
            f"be propagated that far (limit {TLE_MAX_EPOCH_DISTANCE_DAYS:.0f} days): use recent elements",
        )
    if days > TLE_WARN_EPOCH_DISTANCE_DAYS:
        return [f"the span lies {days:.0f} days from the TLE epoch: SGP4 positions degrade over weeks "
                "(drag, solar activity); treat the periodic part with care"]
    return []


def _check_span(span: Span):
    if not span.duration_s >= MIN_SPAN_S:
        raise PhysicsInputError(
            "end", span.duration_s,
            f"the span of {span.duration_s:.3g} s is shorter than the {MIN_SPAN_S:g} s a budget needs",
        )
    jd0 = float(span.start.tdb)
    jd1 = jd0 + span.duration_s / SECONDS_PER_DAY
    if jd0 < DE421_FIRST_JD_TDB or jd1 > DE421_LAST_JD_TDB:
        raise PhysicsInputError(
            "end" if jd0 >= DE421_FIRST_JD_TDB else "start",
            span.start.utc_strftime("%Y-%m-%d") if jd0 < DE421_FIRST_JD_TDB else None,
            "the span must lie inside the DE421 ephemeris (1899-07-30 to 2053-10-07) that "
            "supplies the Sun and Moon positions",
        )


def initial_panel_s(source, nodes_scale: float = 1.0) -> float:
    """Length of the first panels, s: 1/PANELS_PER_PERIOD of the orbit, within [MIN, MAX]_PANEL_S."""
    period = source.period_s()
    base = MAX_PANEL_S if period is None else min(MAX_PANEL_S, period / PANELS_PER_PERIOD)
    return max(MIN_PANEL_S, base) / nodes_scale


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
    # Remove the chord first so the solve sees only the small departures from it. The basis
    # is small and well conditioned (columns of order 1, near-orthogonal over >= 1 period), so
    # the weighted normal equations are solved directly: O(N m^2), no SVD of an N x m matrix.
    chord = rows[:, :1] + (rows[:, -1:] - rows[:, :1]) * (t_s / span_s)[None, :]
    bw = basis * weights[:, None]
    coef = np.linalg.solve(bw.T @ basis, bw.T @ (rows - chord).T).T
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


def _periodic_components(periodic, t_s, period_s, harmonic_coef, span_s, limit=3):
    """Largest periodic components as [(period_s, amplitude_s)], largest first.

    With the orbital harmonics fitted: those harmonics (above 1 % of the largest). With a
    period but too short a span: that period alone (amplitude from the peak-to-peak). Surface
    clocks over a day or more: peaks of a Hann-windowed periodogram. Otherwise empty.
    """
    if harmonic_coef is not None and len(harmonic_coef):
        amps = np.hypot(harmonic_coef[0::2], harmonic_coef[1::2])
        order = np.argsort(amps)[::-1]
        keep = [k for k in order if amps[k] >= 0.01 * amps[order[0]]][:limit]
        return [(period_s / (k + 1), float(amps[k])) for k in keep]
    if period_s is not None:
        return [(period_s, 0.5 * float(periodic.max() - periodic.min()))]
    if span_s < SECONDS_PER_DAY:
        return []
    n = 8192
    grid = np.linspace(0.0, span_s, n, endpoint=False)
    x = np.interp(grid, t_s, periodic)
    x = x - x.mean()
    spec = np.abs(np.fft.rfft(x * np.hanning(n))) * (4.0 / n)  # Hann coherent gain 1/2
    freqs = np.fft.rfftfreq(n, d=span_s / n)
    peaks = [i for i in range(2, len(spec) - 1) if spec[i] > spec[i - 1] and spec[i] >= spec[i + 1]]
    peaks.sort(key=lambda i: spec[i], reverse=True)
    return [(float(1.0 / freqs[i]), float(spec[i])) for i in peaks[:limit] if spec[i] > 0.0]


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


def _near_base_body(src, ref, span, ss, env) -> bool:
    """Whether the clock stays within POSITION_TERM_RANGE_M of the position term's base body."""
    from .rate_bcrs import POSITION_TERM_RANGE_M, position_term_base

    t = np.linspace(0.0, span.duration_s, 33)
    base = position_term_base(ref)
    x = src.states_bcrs(span, t, ss, env.orientation).r_m
    return bool(np.max(np.linalg.norm(x - ss.position_m(base, t), axis=1)) < POSITION_TERM_RANGE_M)


def _omitted_terms_bcrs(src, grav, reference=None) -> list[dict]:
    out = [
        {"term": "post_newtonian_c4", "size_fractional": 1e-16,
         "note": "O(c^-4) terms of the BCRS metric: (U/c^2)^2 ~ 1e-16 at 1 au (TN36 section 10.1)"},
        {"term": "asteroids_and_minor_bodies", "size_fractional": 1e-17,
         "note": "not in the potential sum; TN36 attributes ~1.15e-16 of L_C to c^-4 terms and asteroids"},
        {"term": "planetary_oblateness_and_satellites", "size_fractional": 1e-18,
         "note": "planets are point masses at their system barycentres"},
    ]
    center = getattr(src, "center", None)
    if center == "moon":
        out.append({"term": "moon_zonal_harmonics", "size_fractional": 2.03e-4 * 0.5 * 2.82e6 / C2_M2_PER_S2,
                    "note": "lunar J2 = 2.03e-4 (common practice) at the surface; point-mass Moon used"})
    if center == "mars":
        out.append({"term": "mars_zonal_harmonics", "size_fractional": 1.96e-3 * 0.5 * 1.26e7 / C2_M2_PER_S2,
                    "note": "Mars J2 = 1.96e-3 (common practice) at the surface; point-mass Mars used"})
    if reference == "lunar_surface":
        # The reference clock sits on a point-mass Moon's mean equatorial sphere. Its J2 term there
        # is +(J2/2) GM_M/R_M (P2(0) = -1/2); the Earth's tide averaged over the equator is
        # GM_E R_M^2/(4 r^3) ~ 5 m^2/s^2 (P2 averages to P2(0) P2(sin beta) ~ 1/4), ~5e-17.
        out.append({"term": "lunar_surface_reference_moon_zonal_harmonics",
                    "size_fractional": 2.03e-4 * 0.5 * 2.82e6 / C2_M2_PER_S2,
                    "note": "the lunar_surface reference uses a point-mass Moon: lunar J2 = 2.03e-4 "
                    "(common practice) on its equator is left out; the Earth's tide averaged over "
                    "the lunar equator (~5e-17) is left out too"})
    if isinstance(src, EarthSourceInBcrs):
        out.append({"term": "gcrs_to_bcrs_lorentz_terms", "size_fractional": 1e-16,
                    "note": "the geocentric state is added to the geocentre's without the O(c^-2) "
                    "Lorentz terms of the transformation"})
    return out


LIGHT_TIME_ITERATIONS = 4
"""Fixed-point iterations of the light-time equation; each gains a factor v/c ~ 1e-4."""

MAX_ITERATED_LIGHT_TIME_S = 3000.0
"""Up to this light time the emission state comes from the span's coarse grids (which extend one
hour before the start); beyond it the geometric value at the reception time is reported."""


def _signal_path_to_earth(src, span, t_s, ss, orientation, station=None) -> dict:
    """One-way light time (clock -> geocentre, and clock -> ``station``) and solar Shapiro delay.

    Reception at the series time t at the geocentre (or the station, a SurfaceClock carried
    into the BCRS); emission at t - tau with |x_clock(t - tau) - x_rx(t)| = c (tau - Shapiro),
    solved by fixed-point iteration. Shapiro delay (2 GM_sun/c^3) ln((r1 + r2 + rho)/(r1 + r2 -
    rho)) (TN36 eq. 11.17, the Sun only; the Earth's own term, < 0.03 ns for lunar links, is left
    out). Coordinate light times in TDB-compatible seconds (DE421's units: distances/c; TDB
    keeps TT's mean rate, so t - tau stays in TT seconds; a TCB light time would be longer by
    L_B tau, 20 us at 1300 s); planning values, not a link model.
    """
    from .constants import C_M_PER_S

    def one_way(x_rx):
        xs_rx = ss.position_m("sun", t_s)

        def from_emission_at(t_tx):
            x_tx = src.states_bcrs(span, t_tx, ss, orientation).r_m
            rho = np.linalg.norm(x_tx - x_rx, axis=1)
            r1 = np.linalg.norm(x_tx - ss.position_m("sun", t_tx), axis=1)
            r2 = np.linalg.norm(x_rx - xs_rx, axis=1)
            shapiro = 2 * GM_SUN_M3_PER_S2 / C_M_PER_S**3 * np.log((r1 + r2 + rho) / (r1 + r2 - rho))
            return rho / C_M_PER_S + shapiro, shapiro

        tau = np.linalg.norm(src.states_bcrs(span, t_s, ss, orientation).r_m - x_rx, axis=1) / C_M_PER_S
        iterated = bool(np.all(tau < MAX_ITERATED_LIGHT_TIME_S))
        if not iterated:
            tau, shapiro = from_emission_at(t_s)
        for _ in range(LIGHT_TIME_ITERATIONS if iterated else 0):
            tau, shapiro = from_emission_at(t_s - tau)
        return tau, shapiro, iterated

    xe = ss.position_m("earth", t_s)
    tau, shapiro, iterated = one_way(xe)
    out = {"light_time_to_earth_s": tau.tolist(), "shapiro_delay_to_earth_s": shapiro.tolist(),
           "light_time_method": "iterated from emission to reception" if iterated
           else "geometric at the reception time (light time beyond the coarse grid's margin)"}
    if station is not None:
        r_sta, _ = orientation.itrs_to_gcrs(station.r_itrs_m, t_s)
        tau_s, shapiro_s, _ = one_way(xe + r_sta)
        out["light_time_to_station_s"] = tau_s.tolist()
        out["shapiro_delay_to_station_s"] = shapiro_s.tolist()
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
    orbital_period_s: float | None = None

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
    single_threaded_blas()
    span = inputs.span
    _check_span(span)
    warnings = _check_tle_epoch(inputs.source, span)
    env = environment_for(span)
    src, ref, grav = inputs.source, inputs.reference, inputs.gravity
    frame = inputs.frame or choose_frame(src, ref)
    if frame == "GCRS" and choose_frame(src, ref) == "BCRS":
        raise PhysicsInputError(
            "frame", "GCRS",
            "this clock or reference needs the barycentric frame (an orbit around the Sun, Moon or "
            "Mars, a clock on the Moon or Mars, or a TCB, TDB or lunar_surface reference): use "
            "\"frame\": \"BCRS\" or \"auto\"",
        )
    if frame == "BCRS":
        if not isinstance(ref, str) or ref not in BCRS_REFERENCES:
            raise PhysicsInputError(
                "reference", None if not isinstance(ref, str) else ref,
                "a barycentric (BCRS) budget takes the references TT, TAI, GPS, TCG, TCB, TDB or "
                "lunar_surface; a ground reference clock is only available near the Earth (GCRS)",
            )
        ss = solar_system_for(span)
        bsrc = src if isinstance(src, BarycentricSource) else EarthSourceInBcrs(src)
        term_names = BCRS_TERM_NAMES
        primary_term = bsrc.primary_term

        def evaluate(t_s):
            return bcrs_integrand_terms(bsrc, ref, t_s, grav, ss, env.orientation, span)
    else:
        term_names = TERM_NAMES
        primary_term = "monopole"

        def evaluate(t_s):
            return integrand_terms(src, ref, t_s, grav, env)
    rows_names = ("total",) + term_names + ("r_dot_v",) + (("ve_dot_r",) if frame == "BCRS" else ())

    def fun(t_s):
        nr = evaluate(t_s)
        if (nr.code != 0).any():
            first = int(np.argmax(nr.code != 0))
            msg = nr.messages.get(int(nr.code[first]), "propagation failed")
            when = span.utc_iso(t_s[first])[0]
            raise PhysicsInputError(
                "orbit", None, f"the orbit cannot be propagated over the span: at {when} SGP4 "
                f"reports error {int(nr.code[first])}: {msg}",
            )
        terms = [nr.terms[name] for name in term_names]
        extra = [nr.v_earth_dot_r_m2_per_s] if frame == "BCRS" else []
        return np.vstack([nr.total] + terms + [nr.r_dot_v_m2_per_s] + extra)

    try:
        breaks = src.panel_breaks_s(span) if hasattr(src, "panel_breaks_s") else None
        q = integrate(
            fun, 0.0, span.duration_s, initial_panel_s(src, inputs.nodes_scale),
            tol_fractional=inputs.tol_fractional, max_nodes=inputs.max_nodes, breakpoints_s=breaks,
        )
    except NodeBudgetExceeded as exc:
        raise PhysicsInputError(
            "end", None,
            f"the span needs {exc.nodes_needed} quadrature nodes, above this service's limit of "
            f"{exc.max_nodes}; shorten the span or split it",
        ) from exc

    checkpoint()  # between the integration and the fits and fine grids
    if not np.all(np.isfinite(q.values[0])):
        raise PhysicsInputError(
            "orbit", None, "the clock's rate is not finite at some nodes: check the inputs for "
            "NaN, infinite or extreme values",
        )
    rv_row = rows_names.index("r_dot_v")
    rv0 = q.values_at(np.array([0.0]), rows=[rv_row])[0][0]
    ecc_scale = 1.0 / ((1.0 - L_G) * C2_M2_PER_S2)
    use_position_term = frame == "BCRS" and _near_base_body(bsrc, ref, span, ss, env)
    if use_position_term:
        ve_row = rows_names.index("ve_dot_r")
        ver0 = q.values_at(np.array([0.0]), rows=[ve_row])[0][0]

    def periodic_parts(points_per_panel):
        """Eccentricity term -(2/c^2)(r.v - r.v_0) and, in the BCRS near the Earth or Moon, the
        position term -(v_B.(x - x_B) - ...)/c^2 (TN36 eq. 10.4), both in s on the fine grid."""
        ecc_t = -2.0 * ecc_scale * (q.values_on_fine_grid(points_per_panel, rows=[rv_row])[0] - rv0)
        if not use_position_term:
            return ecc_t, np.zeros_like(ecc_t)
        return ecc_t, -(q.values_on_fine_grid(points_per_panel, rows=[ve_row])[0] - ver0) / C2_M2_PER_S2

    # Secular fit on a grid of FIT_POINTS_PER_PANEL samples per panel, every term at once. The
    # eccentricity term (and the position term) are bounded total derivatives: they are removed
    # before the fit, and each of the velocity and the primary's potential carries half the
    # eccentricity term (the position term is booked against the velocity term).
    t_fit = q.fine_grid_s(FIT_POINTS_PER_PANEL)
    cum = q.cumulative_on_fine_grid(FIT_POINTS_PER_PANEL, rows=list(range(rv_row)))  # r.v not integrated
    ecc_fit, pos_fit = periodic_parts(FIT_POINTS_PER_PANEL)
    term_rows = {name: cum[1 + i] for i, name in enumerate(term_names)}
    term_rows["velocity"] = term_rows["velocity"] - 0.5 * ecc_fit - pos_fit
    term_rows[primary_term] = term_rows[primary_term] - 0.5 * ecc_fit
    period = src.period_s()
    fit_rows = np.vstack([cum[0] - ecc_fit - pos_fit] + [term_rows[n] for n in term_names] + [cum[0]])
    coef, basis = _fit_secular(t_fit, _trapezoid_weights(t_fit), fit_rows, period, span.duration_s)
    slope = coef[:, 1]
    rate_vs_tt = slope[0]
    term_slopes = dict(zip(term_names, slope[1:1 + len(term_names)], strict=True))
    harmonic_total = coef[-1, 2:] if coef.shape[1] > 2 else None

    # Reference's own rate against TT, to express rates per reference second.
    if frame == "BCRS":
        y_ref = -term_slopes["reference"]
    elif isinstance(ref, str):
        y_ref = 0.0 if ref in ("TT", "TAI", "GPS") else L_G / (1.0 - L_G)
    else:
        y_ref = -term_slopes["reference_clock"]
    mean_rate = rate_vs_tt / (1.0 + y_ref)
    terms_fractional = {k: v / (1.0 + y_ref) for k, v in term_slopes.items()}

    # Extremes and amplitudes on the finer grid: only the total and the bounded terms.
    t_fine = q.fine_grid_s(FINE_POINTS_PER_PANEL)
    weights = _trapezoid_weights(t_fine)
    total = q.cumulative_on_fine_grid(FINE_POINTS_PER_PANEL, rows=[0])[0]
    ecc, position_term = periodic_parts(FINE_POINTS_PER_PANEL)
    tc = t_fine - 0.5 * span.duration_s
    periodic = total - rate_vs_tt * tc
    periodic = periodic - np.sum(weights * periodic) / np.sum(weights)
    residual = total - ecc - rate_vs_tt * tc
    residual = residual - np.sum(weights * residual) / np.sum(weights)

    p2p = float(periodic.max() - periodic.min())
    components = _periodic_components(periodic, t_fine, period, harmonic_total, span.duration_s)
    dominant = components[0][0] if components else None
    ecc_amp = 0.5 * float(ecc.max() - ecc.min())
    i_ext = int(np.argmax(np.abs(total)))

    if frame == "GCRS":
        states0 = src.states(span, np.array([0.0]), env.orientation)
        mean_r = float(np.linalg.norm(states0.r_gcrs_m[0]))
        if src.kind == "keplerian":
            mean_r = src.a_m
    else:
        mean_r = float(getattr(src, "a_m", 0.0))

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
            "components": [{"period_s": p, "amplitude_ns": a * 1e9} for p, a in components],
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
    data["frame"] = frame
    data["model"] = {
        "frame": "GCRS",
        "coordinate_time": "TCG",
        "rate_equation": "dtau/dTCG = 1 - (v^2/2 + U_E + U_tid)/c^2 (IERS Conventions 2010, "
        "TN36 eq. 10.6); dTT/dTCG = 1 - L_G",
        "included_terms": [k for i, k in enumerate(term_names) if np.any(np.abs(cum[1 + i]) > 0)],
        "earth_field": "GRS80 normal field + gamma*N (ground clock)" if src.is_surface
        else ("point mass" if grav.earth_zonal_degree == 0
              else f"EGM2008 zonal J2..J{grav.earth_zonal_degree}"),
        "tides": list(grav.bodies()),
        "ephemeris": "JPL DE421 (skyfield-data), coarse grid + cubic spline",
        "orbit": src.describe(),
        "omitted_terms": _omitted_terms(inputs, mean_r) if frame == "GCRS" else [],
        "secular_fit": "line fitted to the eccentricity-corrected offset"
        + (f" jointly with {HARMONICS} harmonics of the {period:.1f} s orbital period"
           if period is not None and span.duration_s >= period else ""),
        "integration": f"adaptive Gauss-Legendre panels, {q.nodes_s.shape[1]} nodes each, "
        f"tolerance {inputs.tol_fractional:g} s/s",
    }
    if frame == "BCRS":
        data["model"].update({
            "frame": "BCRS",
            "coordinate_time": "TCB",
            "rate_equation": "dtau/dTCB = 1 - (v^2/2 + sum_b GM_b/|x - x_b|)/c^2 (first order, "
            "TN36 eq. 10.3); TDB = TCB - L_B (TCB - T0) + TDB0 (TN36 eq. 10.1)",
            "tt_convention": TT_FAR_FROM_EARTH,
            "tides": "full potentials of the Sun, Moon and planets (system barycentres), DE421",
            "orbit": (bsrc.describe()),
            "omitted_terms": _omitted_terms_bcrs(bsrc, grav, ref),
        })
        data["tt_convention"] = TT_FAR_FROM_EARTH
        data["position_term"] = {
            "amplitude_ns": 0.5 * float(position_term.max() - position_term.min()) * 1e9,
            "note": "-(v_B.(x - x_B))/c^2 with B the Earth (the Moon for lunar_surface): for TT the part "
            "of TCB - TCG that TT along the geocentre leaves out (TN36 eq. 10.4); a bounded total "
            "derivative, kept in the offset and the periodic part, removed before the secular fit "
            "(only for clocks within 2e6 km of B)",
        }
    data["omitted_terms"] = data["model"]["omitted_terms"]

    checkpoint()
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
        if frame == "BCRS":
            data["series"].update(_signal_path_to_earth(bsrc, span, ts_out, ss, env.orientation,
                                                        inputs.link_station))
    else:
        data["series"] = None
    data["warnings"] = warnings
    data["caution"] = CAUTION
    return Budget(data, q.node_count, q, float(rate_vs_tt), ecc_scale, float(rv0),
                  rows_names.index("r_dot_v"), orbital_period_s=period)
