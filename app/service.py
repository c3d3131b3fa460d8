"""Turn a validated request into physics inputs, run the budget, return plain data.

No HTTP here: the CLI and the web routes both call ``budget_from_request``.
Physics input errors (``PhysicsInputError``) pass through; callers map them.
"""

from __future__ import annotations

from taubudget.physics import budget as budget_mod
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.ephemeris import timescale
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import KeplerianOrbit, SurfaceClock, TleOrbit
from taubudget.physics.orbits.barycentric import BodySurfaceClock, CentredKeplerianOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

from .formats import FORMAT_ORBITS, build_format_source
from .schemas import BudgetRequest, ClockIn, KeplerianOrbitIn, SurfaceClockIn, TleOrbitIn
from .settings import Settings, get_settings


def _time(dt):
    return timescale().from_datetime(dt)


def build_source(orbit, prefix: str = "orbit"):
    if isinstance(orbit, FORMAT_ORBITS):
        return build_format_source(orbit, prefix)
    ts = timescale()
    center = getattr(orbit, "center", "earth")
    if isinstance(orbit, KeplerianOrbitIn) and center != "earth":
        if orbit.j2_secular:
            raise PhysicsInputError(f"{prefix}.j2_secular", True, "J2 secular drift is modelled for "
                                    "Earth-centred orbits only")
        return CentredKeplerianOrbit(
            center, _time(orbit.epoch), orbit.semi_major_axis_km * 1e3, orbit.eccentricity,
            orbit.inclination_deg, orbit.ra_of_asc_node_deg, orbit.arg_of_pericenter_deg,
            orbit.mean_anomaly_deg, reference_plane=orbit.reference_plane,
        )
    if isinstance(orbit, SurfaceClockIn) and center != "earth":
        if prefix == "reference":
            raise PhysicsInputError("reference.center", center, "a surface reference clock must be on "
                                    "the Earth; for a lunar reference use \"lunar_surface\"")
        if orbit.geoid_undulation_m is not None or orbit.orthometric_height_m is not None:
            raise PhysicsInputError(f"{prefix}.geoid_undulation_m", orbit.geoid_undulation_m,
                                    "geoid undulation and orthometric height apply to Earth clocks only")
        return BodySurfaceClock(center, orbit.latitude_deg, orbit.longitude_deg, orbit.height_m)
    if isinstance(orbit, KeplerianOrbitIn):
        if orbit.reference_plane != "icrf_equator":
            raise PhysicsInputError(f"{prefix}.reference_plane", orbit.reference_plane,
                                    "Earth-centred elements are referred to the GCRS equator")
        return KeplerianOrbit(
            _time(orbit.epoch), orbit.semi_major_axis_km * 1e3, orbit.eccentricity,
            orbit.inclination_deg, orbit.ra_of_asc_node_deg, orbit.arg_of_pericenter_deg,
            orbit.mean_anomaly_deg, j2_secular=orbit.j2_secular,
        )
    if isinstance(orbit, TleOrbitIn):
        return TleOrbit(orbit.line1, orbit.line2, ts, orbit.name)
    if isinstance(orbit, SurfaceClockIn):
        return SurfaceClock(
            orbit.latitude_deg, orbit.longitude_deg, orbit.height_m,
            orbit.geoid_undulation_m, orbit.orthometric_height_m, field_prefix=prefix,
        )
    raise TypeError(f"unsupported orbit {type(orbit).__name__}")  # pragma: no cover


def build_span(req: BudgetRequest, settings: Settings) -> Span:
    start = _time(req.start)
    if req.end is not None:
        duration_s = (req.end - req.start).total_seconds()
        # TT seconds: UTC spans that cross a leap second are one second longer in TT.
        duration_s = float((_time(req.end).tt - start.tt) * SECONDS_PER_DAY)
        field = "end"
    else:
        duration_s = req.duration_days * SECONDS_PER_DAY
        field = "duration_days"
    days = duration_s / SECONDS_PER_DAY
    if not duration_s >= budget_mod.MIN_SPAN_S:
        raise PhysicsInputError(
            field, duration_s / SECONDS_PER_DAY if field == "duration_days" else req.end.isoformat(),
            f"the span of {duration_s:.3g} s is shorter than the {budget_mod.MIN_SPAN_S:g} s a budget needs",
        )
    if days > settings.MAX_SPAN_DAYS:
        raise PhysicsInputError(
            field, round(days, 6),
            f"the span of {days:.3f} days exceeds this service's limit of {settings.MAX_SPAN_DAYS:g} days",
        )
    return Span(start, duration_s)


def budget_inputs(req: BudgetRequest, settings: Settings | None = None,
                  source=None) -> budget_mod.BudgetInputs:
    """Physics inputs of a request; ``source``: the orbit source when the caller already built it
    (one object of an uploaded multi-object file), else built from ``req.orbit``."""
    settings = settings or get_settings()
    source = build_source(req.orbit) if source is None else source
    reference = req.reference
    if isinstance(reference, SurfaceClockIn):
        reference = build_source(reference, prefix="reference")
    span = build_span(req, settings)
    _check_numerical_cost(source, span, settings)
    if req.series_step_s is not None:
        points = span.duration_s / req.series_step_s
        if points > settings.MAX_SERIES_POINTS:
            raise PhysicsInputError(
                "series_step_s", req.series_step_s,
                f"a step of {req.series_step_s:g} s over the span gives {points:.0f} series points, "
                f"above this service's limit of {settings.MAX_SERIES_POINTS}",
            )
    g = req.gravity
    return budget_mod.BudgetInputs(
        source=source, reference=reference, span=span,
        gravity=GravityModel(g.earth_zonal_degree, g.sun, g.moon),
        series_step_s=req.series_step_s, nominal_frequency_hz=req.nominal_frequency_hz,
        max_nodes=settings.MAX_NODES, max_series_points=settings.MAX_SERIES_POINTS,
        frame=None if req.frame == "auto" else req.frame,
        link_station=_link_station(req),
    )


def _check_numerical_cost(source, span: Span, settings: Settings):
    """Refuse up front a numerical propagation longer than MAX_NUMERICAL_REVOLUTIONS orbits."""
    from taubudget.physics.orbits import NumericalOrbit

    if not isinstance(source, NumericalOrbit):
        return
    revolutions = span.duration_s / source.period_s()
    if revolutions > settings.MAX_NUMERICAL_REVOLUTIONS:
        raise PhysicsInputError(
            "end", round(span.duration_s / SECONDS_PER_DAY, 6),
            f"a state-vector orbit is integrated numerically, and this span covers {revolutions:.0f} "
            f"revolutions, above this service's limit of {settings.MAX_NUMERICAL_REVOLUTIONS} "
            "(TAUBUDGET_MAX_NUMERICAL_REVOLUTIONS); shorten the span or give mean elements (TLE/OMM)",
        )


def _link_station(req: BudgetRequest):
    st = req.link_station
    if st is None:
        return None
    if st.center != "earth":
        raise PhysicsInputError("link_station.center", st.center, "the link station must be on the Earth")
    return SurfaceClock(st.latitude_deg, st.longitude_deg, st.height_m, st.geoid_undulation_m,
                        st.orthometric_height_m, field_prefix="link_station")


def budget_from_request(req: BudgetRequest, settings: Settings | None = None, source=None) -> dict:
    """Compute the budget JSON for one request (``source``: see ``budget_inputs``)."""
    inputs = budget_inputs(req, settings, source)
    # Refuse an unusable clock block before the integration runs, and build its model once.
    model = clock_model(req.clock) if req.clock is not None else None
    if model is None and req.monte_carlo_runs is not None:
        raise PhysicsInputError("monte_carlo_runs", req.monte_carlo_runs,
                                "a Monte Carlo exceedance needs a 'clock' block to simulate")
    if model is None and req.time_error_budget_ns is not None:
        raise PhysicsInputError("time_error_budget_ns", req.time_error_budget_ns,
                                "a time-error budget needs a 'clock' block to compare against")
    if req.monte_carlo_runs is not None and req.time_error_budget_ns is None:
        raise PhysicsInputError("monte_carlo_runs", req.monte_carlo_runs,
                                "a Monte Carlo exceedance needs time_error_budget_ns")
    budget = budget_mod.compute_budget(inputs)
    out = budget.to_dict()
    out["reference"] = req.reference if isinstance(req.reference, str) else req.reference.model_dump()
    out["start_utc"] = inputs.span.utc_iso(0.0)[0]
    out["end_utc"] = inputs.span.utc_iso(inputs.span.duration_s)[0]
    out["span_s"] = inputs.span.duration_s
    if model is not None:
        out["clock_error"] = clock_error(req, budget, inputs.span, model)
    return out


# --- Helpers for batches (additive) ----------------------------------------------------

_SPAN_KEYS = ("end", "duration_days")


def merge_item(defaults: dict, item: dict) -> dict:
    """One batch item over the batch defaults, per top-level key; ``id`` is removed.

    An item that names ``end`` or ``duration_days`` drops both from the defaults, so a
    default duration and an item's own end do not collide.
    """
    base = dict(defaults)
    if any(k in item for k in _SPAN_KEYS):
        for k in _SPAN_KEYS:
            base.pop(k, None)
    base.update(item)
    base.pop("id", None)
    return base


def estimate_nodes(req: BudgetRequest, settings: Settings | None = None, source=None) -> int:
    """Cheap up-front estimate of the quadrature nodes one request needs.

    The integrator starts with panels of ``physics.budget.initial_panel_s`` (a fraction
    of the orbital period within the panel limits) and
    ``physics.quadrature.NODES_PER_PANEL`` nodes each; adaptive splitting near a
    high-eccentricity perigee adds more, which the per-request ``MAX_NODES`` still
    bounds. Raises ``PhysicsInputError`` for an unusable orbit or span.
    """
    import math

    from taubudget.physics.budget import initial_panel_s
    from taubudget.physics.quadrature import NODES_PER_PANEL

    settings = settings or get_settings()
    source = build_source(req.orbit) if source is None else source
    span = build_span(req, settings)
    return NODES_PER_PANEL * max(1, math.ceil(span.duration_s / initial_panel_s(source)))


# --- The oscillator's own time error (additive) ------------------------------------------

PRESET_LABEL = "typical values, replace with your unit's data"

CLOCK_NOTE = (
    "Time error after a synchronisation at the span start: the relativistic residual plus a "
    "Gaussian power-law noise model with ageing. Real clocks also show steps, frequency jumps, "
    "temperature and radiation effects that the model lacks, so the k-sigma bound is a planning "
    "figure, not a guarantee. Flicker FM uses the t sigma_y(t) approximation (optimistic by ~20%)."
)


def clock_model(c: ClockIn):
    """A physics.clock.ClockModel from the request's clock block; PhysicsInputError if unusable."""
    from taubudget.physics.clock import NOISE_NAMES, ClockModel

    given = [n for n in ("preset", "h_alpha", "adev_points") if getattr(c, n) is not None]
    if len(given) != 1:
        raise PhysicsInputError(
            f"clock.{given[1]}" if len(given) > 1 else "clock", None,
            "give exactly one noise description: 'preset', 'h_alpha' or 'adev_points'"
            + (f" (got {', '.join(given)})" if given else ""),
        )
    common = {
        "initial_fractional_frequency": c.initial_fractional_frequency,
        "initial_time_offset_s": c.initial_time_offset_ns * 1e-9,
        "f_h_hz": c.f_h_hz,
    }
    if c.drift_per_day is not None:
        common["drift_per_day"] = c.drift_per_day
    if c.preset is not None:
        return ClockModel.from_preset(c.preset, **common)
    if c.h_alpha is not None:
        by_name = {v: k for k, v in NOISE_NAMES.items()}
        h = {by_name[name]: value for name, value in c.h_alpha.model_dump().items() if value is not None}
        if (2 in h or 1 in h) and c.f_h_hz is None:
            raise PhysicsInputError("clock.f_h_hz", None,
                                    "white and flicker PM need the measurement bandwidth f_h_hz")
        if not any(h.values()):
            raise PhysicsInputError("clock.h_alpha", None, "give at least one positive h_alpha coefficient")
        return ClockModel(h_alpha=h, name="custom h_alpha", **common)
    tau = [p[0] for p in c.adev_points]
    adev = [p[1] for p in c.adev_points]
    need = 5 if c.f_h_hz is not None else 3
    if len(tau) < need:
        raise PhysicsInputError(
            "clock.adev_points", len(tau),
            f"fitting {need} power-law terms needs at least {need} ADEV points"
            + (" (f_h_hz adds the two PM terms)" if c.f_h_hz is not None else ""),
        )
    try:
        return ClockModel(adev_tau_s=tuple(tau), adev=tuple(adev), name="fitted to adev_points", **common)
    except ValueError as exc:
        raise PhysicsInputError("clock.adev_points", None, str(exc)) from exc


def _model_out(c: ClockIn, model) -> dict:
    from taubudget.physics.clock import NOISE_NAMES, PRESETS

    if c.preset is not None:
        source, label = "preset", f"{PRESET_LABEL}: {PRESETS[c.preset].description}"
    elif c.h_alpha is not None:
        source, label = "h_alpha", "the user's power-law coefficients"
    else:
        source, label = "adev_points", "power-law fit to the user's Allan deviation points"
    fit = None
    if model.fit is not None:
        f = model.fit
        fit = {"tau_s": f.tau_s.tolist(), "adev": f.adev.tolist(), "adev_fit": f.adev_fit.tolist(),
               "relative_residual": f.relative_residual.tolist(),
               "rms_relative_residual": float(f.rms_relative_residual)}
    return {
        "source": source, "name": model.name, "label": label,
        "h_alpha": {NOISE_NAMES[int(a)]: float(h) for a, h in sorted(model.h_alpha.items(), reverse=True)},
        "drift_per_day": float(model.drift_per_day),
        "initial_fractional_frequency": float(model.initial_fractional_frequency),
        "initial_time_offset_ns": float(model.initial_time_offset_s * 1e9),
        "f_h_hz": model.f_h_hz, "fit": fit,
    }


def clock_error(req: BudgetRequest, budget, span: Span, model=None) -> dict:
    """The ``clock_error`` block: relativistic residual plus the oscillator, after a sync at t = 0."""
    import math

    import numpy as np
    from taubudget.physics.timing_budget import combined_max_free_running_s, combined_time_error

    model = clock_model(req.clock) if model is None else model
    if req.apply_eccentricity_correction:
        residual, residual_name = budget.after_correction_s, "after_correction"
    else:
        residual, residual_name = budget.after_preset_s, "after_preset"
    t_end = span.duration_s
    end = combined_time_error(residual, model, np.array([t_end]), req.k_sigma)
    out = {
        "elapsed_s": t_end,
        "relativistic_residual": residual_name,
        "relativistic_residual_ns": float(end.relativistic_residual_s[0] * 1e9),
        "initial_time_offset_ns": float(end.initial_time_offset_s[0] * 1e9),
        "initial_frequency_ns": float(end.initial_frequency_s[0] * 1e9),
        "ageing_ns": float(end.ageing_s[0] * 1e9),
        "deterministic_ns": float(end.deterministic_s[0] * 1e9),
        "stochastic_1sigma_ns": float(end.sigma_s[0] * 1e9),
        "stochastic_1sigma_components_ns": {k: float(v[0] * 1e9) for k, v in end.sigma_components_s.items()},
        "k_sigma": req.k_sigma,
        "k_sigma_bound_ns": float(end.bound_s[0] * 1e9),
        "time_error_budget_ns": req.time_error_budget_ns,
        "max_free_running_s": None,
        "budget_reached_within_span": None,
        "clock_model": _model_out(req.clock, model),
        "series": None,
        "note": CLOCK_NOTE,
    }
    if req.time_error_budget_ns is not None:
        t_free = combined_max_free_running_s(residual, model, req.time_error_budget_ns * 1e-9,
                                             req.k_sigma, t_end)
        reached = math.isfinite(t_free)
        out["max_free_running_s"] = t_free if reached else None
        out["budget_reached_within_span"] = reached
    if req.monte_carlo_runs is not None:
        out["exceedance"] = _exceedance(req, model, residual, t_end)
    series = budget.data.get("series")
    if series is not None:
        t = np.asarray(series["elapsed_s"], dtype=float)
        s = combined_time_error(residual, model, t, req.k_sigma)
        out["series"] = {
            "time_utc": series["time_utc"], "elapsed_s": series["elapsed_s"],
            "deterministic_ns": (s.deterministic_s * 1e9).tolist(),
            "sigma_ns": (s.sigma_s * 1e9).tolist(),
            "bound_ns": (s.bound_s * 1e9).tolist(),
        }
    return out


MONTE_CARLO_MAX_SAMPLES = 4_000_000
"""Runs x time steps a Monte Carlo request may simulate (bounded work)."""


def _exceedance(req: BudgetRequest, model, residual, t_end: float) -> dict:
    """Monte Carlo probability that |deterministic + noise| passes the budget within the span."""
    import numpy as np
    from taubudget.physics.clock import exceedance_probability

    steps = max(16, min(4096, MONTE_CARLO_MAX_SAMPLES // req.monte_carlo_runs))
    step_s = t_end / steps
    grid = np.arange(steps + 1) * step_s
    est = exceedance_probability(
        req.time_error_budget_ns * 1e-9, t_end, step_s, model.h_alpha,
        initial_time_offset_s=model.initial_time_offset_s,
        initial_fractional_frequency=model.initial_fractional_frequency,
        drift_per_day=model.drift_per_day, residual_t_s=grid, residual_offset_s=residual(grid),
        n_realisations=req.monte_carlo_runs, seed=req.monte_carlo_seed,
    )
    first = est.first_exceedance_s[np.isfinite(est.first_exceedance_s)]
    return {
        "probability": est.probability,
        "standard_error": est.standard_error,
        "runs": est.n_realisations,
        "exceeded": est.n_exceeded,
        "seed": req.monte_carlo_seed,
        "step_s": step_s,
        "horizon_s": t_end,
        "median_first_exceedance_s": float(np.median(first)) if first.size else None,
        "method": "Kasdin & Walter (1992) power-law noise, sampled at step_s; the white and flicker "
        "PM terms see the step's Nyquist bandwidth",
    }


# --- Frequency stability of measured data (additive) -------------------------------------

STABILITY_CAUTION = (
    "Planning estimate only. The confidence bounds are statistical and assume Gaussian power-law "
    "noise of one type at each tau; drift, steps, outliers and gaps in the data are not detected "
    "and make them optimistic. Check the data before feeding the result into a clock budget."
)


def stability_from_data(data, data_type: str, sample_interval_s: float, confidence: float,
                        settings: Settings | None = None) -> dict:
    """The deviations table (ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV at octave taus) as plain data."""
    import math

    import numpy as np
    from taubudget.physics.clock import stability_table

    settings = settings or get_settings()
    n = len(data)
    if n > settings.MAX_STABILITY_POINTS:
        raise PhysicsInputError(
            "data", n, f"{n} samples are above this service's limit of {settings.MAX_STABILITY_POINTS} "
            "(setting TAUBUDGET_MAX_STABILITY_POINTS); decimate or split the record")
    n_phase = n + 1 if data_type == "frequency" else n
    if n_phase < 3:
        raise PhysicsInputError("data", n, "at least 3 phase points (2 frequency samples) are needed")
    if not (sample_interval_s > 0 and math.isfinite(sample_interval_s)):
        raise PhysicsInputError("sample_interval_s", sample_interval_s, "must be positive and finite")
    try:
        table = stability_table(np.asarray(data, dtype=float), float(sample_interval_s), data_type,
                                confidence=float(confidence))
    except ValueError as exc:
        raise PhysicsInputError("data", None, str(exc)) from exc
    return {
        "deviations": table.rows(),
        "n_samples": n,
        "n_phase_points": n_phase,
        "data_type": data_type,
        "sample_interval_s": float(sample_interval_s),
        "confidence": float(confidence),
        "caution": STABILITY_CAUTION,
    }
