"""Contact plans: passes over ground stations, the time error between syncs, and the pass table as CSV.

``POST /v1/contact-plans`` and ``taubudget contacts REQUEST.json`` read a
``ContactPlanRequest``: the budget request's orbit, reference, span and gravity,
plus ``stations``, ``sync_policy``, ``clock``, ``time_error_budget_ns`` and
``k_sigma``. ``contact_plan_from_request`` returns the response JSON as a dict;
``passes_csv`` renders its pass table. Field names carry units and are a
contract: add fields, never rename or drop one. Offsets are clock minus reference.
"""

from __future__ import annotations

import csv
import io
from typing import Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, model_validator
from taubudget.physics.budget import CAUTION, compute_budget
from taubudget.physics.clock import ClockModel
from taubudget.physics.contacts import (
    GroundStation,
    SyncPolicy,
    clock_error_model,
    contact_time_s,
    downlink,
    eligible_passes,
    find_passes,
    greedy_syncs,
    largest_stride_meeting_budget,
    select_sync_passes,
    simulate_syncs,
    simulation_grid,
)
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError

from .model_base import StrictModel
from .schemas import BudgetRequest, ClockIn
from .service import budget_inputs, clock_model
from .settings import Settings, get_settings

MAX_STATIONS = 50
MAX_PASSES = 5000


_Strict = StrictModel


class _Open(BaseModel):
    model_config = ConfigDict(extra="allow")


class StationIn(_Strict):
    """A ground station on the WGS-84 ellipsoid."""

    name: str = Field(min_length=1, max_length=80)
    latitude_deg: float = Field(ge=-90, le=90, description="Geodetic latitude, deg")
    longitude_deg: float = Field(ge=-180, le=360, description="Longitude, deg east")
    height_m: float = Field(0.0, ge=-500, le=10_000, description="Height above the WGS-84 ellipsoid, m")
    elevation_mask_deg: float = Field(10.0, ge=-5, le=89, description="Lowest usable elevation, deg")
    geoid_undulation_m: float | None = Field(
        None, ge=-120, le=120, description="Geoid height N for the station clock's own rate, m")


class SyncPolicyIn(_Strict):
    """Which contacts synchronise the satellite clock (a sync resets its time offset)."""

    kind: Literal["every_pass", "every_nth_pass", "min_duration", "min_elevation", "fixed_interval"] = (
        "every_pass")
    every_n: int = Field(1, ge=1, le=10_000, description="every_nth_pass: sync at every Nth eligible pass")
    min_duration_s: float = Field(0.0, ge=0, description="Only passes at least this long, s")
    min_elevation_deg: float | None = Field(
        None, ge=-5, le=90, description="Only passes culminating this high, deg")
    interval_s: float | None = Field(
        None, gt=0,
        description="fixed_interval: first eligible contact once this long has run since the last sync, s")
    sync_at: Literal["aos", "culmination", "los"] = "culmination"
    reestimate_frequency: bool = Field(False, description="A sync also re-estimates the frequency offset")
    frequency_residual_fractional: float = Field(
        0.0, description="Fractional frequency offset left after a re-estimate (dimensionless)")

    @model_validator(mode="after")
    def _needs(self):
        if self.kind == "fixed_interval" and self.interval_s is None:
            raise ValueError("a fixed_interval policy needs interval_s")
        if self.kind == "min_duration" and self.min_duration_s <= 0:
            raise ValueError("a min_duration policy needs min_duration_s > 0")
        if self.kind == "min_elevation" and self.min_elevation_deg is None:
            raise ValueError("a min_elevation policy needs min_elevation_deg")
        return self


class ContactPlanRequest(BudgetRequest):
    """A budget request plus ground stations, a sync policy and a time-error budget."""

    stations: list[StationIn] = Field(min_length=1, max_length=MAX_STATIONS)
    sync_policy: SyncPolicyIn = Field(default_factory=SyncPolicyIn)
    clock: ClockIn | None = Field(None, description="Oscillator model (the budget's clock block); "
                                  "none: relativity only")
    time_error_budget_ns: float = Field(gt=0, description="Allowed |time error| of the k-sigma envelope, ns")
    k_sigma: float = Field(3.0, ge=0, le=10, description="Multiplier of the 1-sigma stochastic error")
    relativistic_offset: Literal["after_preset", "after_correction", "raw"] = Field(
        "after_preset", description="Which relativistic offset the clock carries: after the frequency preset "
        "(default), also after the user-segment eccentricity correction, or with no preset")

    @model_validator(mode="after")
    def _unique_names(self):
        names = [s.name for s in self.stations]
        if len(set(names)) != len(names):
            raise ValueError("station names must be unique")
        if self.orbit.type == "surface":
            raise ValueError("a contact plan needs a satellite orbit (keplerian or tle), not a surface clock")
        return self


# --- Response models (OpenAPI documentation; the route returns the dict as is) ------------


class SignalPointOut(_Open):
    time_utc: str
    range_km: float
    light_time_us: float = Field(description="GCRS light time incl. Shapiro delay, TCG microseconds")
    sagnac_correction_ns: float = Field(description="2 omega A / c^2 for the Earth-fixed range, ns")
    shapiro_delay_ps: float
    range_rate_m_per_s: float
    fractional_frequency_shift: float = Field(description="f_received/f_emitted - 1 seen by the station")
    first_order_doppler_shift: float
    gravitational_shift: float
    time_dilation_shift: float


class PassOut(_Open):
    station: str
    aos_utc: str
    los_utc: str
    culmination_utc: str
    duration_s: float
    max_elevation_deg: float
    offset_at_aos_ns: float = Field(description="Free-running offset since the span start (no syncs), ns")
    offset_at_los_ns: float
    light_time_us: float = Field(description="At culmination")
    sagnac_correction_ns: float = Field(description="At culmination")
    fractional_frequency_shift: float = Field(description="At culmination")
    aos_at_span_start: bool
    los_at_span_end: bool
    used_for_sync: bool
    signal_path: dict[str, SignalPointOut]


class SyncOut(_Open):
    time_utc: str
    station: str
    pass_index: int
    error_before_sync_ns: float
    sigma_before_sync_ns: float
    bound_before_sync_ns: float
    time_since_previous_sync_s: float


class ContactPlanResponse(_Open):
    """Passes, syncs and whether the k-sigma time error stays inside the budget. Planning estimates."""

    passes: list[PassOut]
    syncs: list[SyncOut]
    worst_error_ns: float = Field(description="Largest |error| + k sigma between syncs, ns")
    worst_error_time_utc: str
    worst_gap_s: float
    meets_budget: bool
    time_error_budget_ns: float
    k_sigma: float
    recommendation: dict
    budget: dict
    model: dict
    caution: str


# --- The plan ------------------------------------------------------------------------------


def _stations(req: ContactPlanRequest) -> list[GroundStation]:
    return [GroundStation(s.name, s.latitude_deg, s.longitude_deg, s.height_m, s.elevation_mask_deg,
                          s.geoid_undulation_m) for s in req.stations]


def _residual_fn(budget, which: str):
    if which == "after_correction":
        return budget.after_correction_s
    if which == "raw":
        return lambda t: budget.offset_s(np.atleast_1d(np.asarray(t, dtype=float)))
    return budget.after_preset_s


def _signal_points(path, span) -> dict:
    names = ("aos", "culmination", "los")
    utc = span.utc_iso(path.reception_s)
    return {
        n: {
            "time_utc": utc[i],
            "range_km": float(path.range_m[i] / 1e3),
            "light_time_us": float(path.light_time_s[i] * 1e6),
            "sagnac_correction_ns": float(path.sagnac_correction_s[i] * 1e9),
            "shapiro_delay_ps": float(path.shapiro_delay_s[i] * 1e12),
            "range_rate_m_per_s": float(path.range_rate_m_per_s[i]),
            "fractional_frequency_shift": float(path.fractional_frequency_shift[i]),
            "first_order_doppler_shift": float(path.first_order_doppler_shift[i]),
            "gravitational_shift": float(path.gravitational_shift[i]),
            "time_dilation_shift": float(path.time_dilation_shift[i]),
        }
        for i, n in enumerate(names)
    }


def contact_plan_from_request(req: ContactPlanRequest, settings: Settings | None = None) -> dict:
    """Compute the contact-plan JSON for one request (planning estimate; carries ``caution``)."""
    settings = settings or get_settings()
    inputs = budget_inputs(req, settings)
    if getattr(inputs.source, "frame", "GCRS") != "GCRS":
        raise PhysicsInputError(
            "orbit.center", getattr(req.orbit, "center", None),
            "ground contacts are planned for Earth-centred orbits (Keplerian around the Earth, TLE, "
            "state vectors and Earth-orbit files)",
        )
    inputs.series_step_s = None  # the plan does not need the budget's series
    budget = compute_budget(inputs)
    span, src = inputs.span, inputs.source
    env = environment_for(span)
    stations = _stations(req)
    passes = find_passes(src, span, stations, env.orientation)
    if len(passes) > MAX_PASSES:
        raise PhysicsInputError("end", None, f"the span has {len(passes)} passes, above this service's limit "
                                f"of {MAX_PASSES}; shorten the span or use fewer stations")

    clock = clock_model(req.clock) if req.clock is not None else ClockModel(name="ideal")
    pol = req.sync_policy
    err = clock_error_model(clock.h_alpha, clock.drift_per_day, clock.initial_fractional_frequency,
                            clock.initial_time_offset_s, clock.f_h_hz, pol.reestimate_frequency,
                            pol.frequency_residual_fractional)
    residual = _residual_fn(budget, req.relativistic_offset)
    policy = SyncPolicy(pol.kind, pol.every_n, pol.min_duration_s, pol.min_elevation_deg, pol.interval_s,
                        pol.sync_at)
    budget_s = req.time_error_budget_ns * 1e-9
    k = req.k_sigma

    # Free-running offset at AOS and LOS: relativistic part plus the clock's deterministic part.
    aos = np.array([p.aos_s for p in passes])
    los = np.array([p.los_s for p in passes])

    def free_running(t):
        if t.size == 0:
            return t
        return residual(t) + err(t, np.zeros_like(t))[0]

    off_aos, off_los = free_running(aos), free_running(los)

    paths: dict[int, dict] = {}
    for k_sta, sta in enumerate(stations):
        idx = [i for i, p in enumerate(passes) if p.station_index == k_sta]
        if not idx:
            continue
        t_r = np.concatenate([[passes[i].aos_s, passes[i].culmination_s, passes[i].los_s] for i in idx])
        path = downlink(src, sta, span, t_r, env, inputs.gravity)
        for j, i in enumerate(idx):
            sub = type(path)(**{f: getattr(path, f)[3 * j:3 * j + 3] for f in path.__dataclass_fields__})
            paths[i] = _signal_points(sub, span)

    sync_idx = select_sync_passes(passes, policy)
    sync_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in sync_idx])
    cand_idx = eligible_passes(passes, policy)
    cand_t = np.array([contact_time_s(passes[i], policy.sync_at) for i in cand_idx])
    grid = simulation_grid(span.duration_s, np.concatenate([sync_t, cand_t]))
    sim = simulate_syncs(sync_t, span.duration_s, err, residual, k, budget_s, grid)
    greedy = greedy_syncs(cand_t, span.duration_s, err, residual, k, budget_s, grid)
    stride = largest_stride_meeting_budget(cand_t, span.duration_s, err, residual, k, budget_s, grid_s=grid)

    used = set(sync_idx)
    pass_rows = []
    for i, p in enumerate(passes):
        sp = paths[i]
        times = span.utc_iso([p.aos_s, p.los_s, p.culmination_s])
        pass_rows.append({
            "station": p.station,
            "aos_utc": times[0], "los_utc": times[1], "culmination_utc": times[2],
            "duration_s": p.duration_s, "max_elevation_deg": p.max_elevation_deg,
            "offset_at_aos_ns": float(off_aos[i] * 1e9), "offset_at_los_ns": float(off_los[i] * 1e9),
            "light_time_us": sp["culmination"]["light_time_us"],
            "sagnac_correction_ns": sp["culmination"]["sagnac_correction_ns"],
            "fractional_frequency_shift": sp["culmination"]["fractional_frequency_shift"],
            "aos_at_span_start": p.aos_at_span_start, "los_at_span_end": p.los_at_span_end,
            "used_for_sync": i in used,
            "signal_path": sp,
        })
    order = np.argsort(sync_t, kind="stable")
    sync_rows, prev = [], 0.0
    for pos, j in enumerate(order):
        i = sync_idx[j]
        t = float(sync_t[j])
        sync_rows.append({
            "time_utc": span.utc_iso(t)[0], "station": passes[i].station, "pass_index": int(i),
            "error_before_sync_ns": float(sim.error_before_sync_s[pos] * 1e9),
            "sigma_before_sync_ns": float(sim.sigma_before_sync_s[pos] * 1e9),
            "bound_before_sync_ns": float(sim.bound_before_sync_s[pos] * 1e9),
            "time_since_previous_sync_s": t - prev,
        })
        prev = t
    greedy_passes = [cand_idx[c] for c in greedy.candidate_indices]
    return {
        "passes": pass_rows,
        "syncs": sync_rows,
        "worst_error_ns": sim.worst_bound_s * 1e9,
        "worst_error_time_utc": span.utc_iso(sim.worst_bound_time_s)[0],
        "worst_gap_s": sim.worst_gap_s,
        "meets_budget": sim.meets_budget,
        "time_error_budget_ns": req.time_error_budget_ns,
        "k_sigma": k,
        "recommendation": {
            "method": greedy.method,
            "meets_budget": greedy.feasible,
            "sync_count": len(greedy_passes),
            "sync_times_utc": span.utc_iso(greedy.sync_times_s) if len(greedy_passes) else [],
            "pass_indices": greedy_passes,
            "first_violation_utc": None if greedy.first_violation_s is None
            else span.utc_iso(greedy.first_violation_s)[0],
            "largest_pass_stride_meeting_budget": stride,
            "stride_note": "every Nth eligible pass in time order, N = 1.. tried in turn",
        },
        "budget": {
            "mean_fractional_rate": budget.data["mean_fractional_rate"],
            "mean_rate_us_per_day": budget.data["mean_rate_us_per_day"],
            "frequency_preset_fractional": budget.data["frequency_preset_fractional"],
            "periodic_amplitude_ns": budget.data["periodic"]["amplitude_ns"],
        },
        "model": {
            "relativistic_offset": req.relativistic_offset,
            "clock": clock.name,
            "clock_h_alpha": {str(a): float(h) for a, h in clock.h_alpha.items()},
            "clock_drift_per_day": clock.drift_per_day,
            "sync": "a sync resets the time offset (and, if asked, the frequency offset); the noise is "
            "taken to restart at each sync; the span start is a sync",
            "elevation": "geometric elevation above the geodetic horizon, no refraction",
            "signal_path": "downlink satellite -> station; GCRS light time with Shapiro delay; Sagnac "
            "2 omega A / c^2; one-way shift to first order in 1/c^2 with first-order Doppler",
            "reference": req.reference if isinstance(req.reference, str) else req.reference.model_dump(),
        },
        "start_utc": span.utc_iso(0.0)[0],
        "end_utc": span.utc_iso(span.duration_s)[0],
        "span_s": span.duration_s,
        "caution": CAUTION,
    }


# --- CSV ----------------------------------------------------------------------------------

PASS_COLUMNS = (
    "station", "aos_utc", "los_utc", "culmination_utc", "duration_s", "max_elevation_deg",
    "offset_at_aos_ns", "offset_at_los_ns", "light_time_us", "sagnac_correction_ns",
    "fractional_frequency_shift", "used_for_sync",
)
_LINE = "\r\n"  # RFC 4180 line break


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        return repr(v)
    return str(v)


def passes_csv(plan: dict) -> str:
    """The pass table of a contact plan as CSV (RFC 4180), after '#' comment lines with the caution."""
    buf = io.StringIO()
    for line in (
        "# taubudget contact plan; offsets are clock minus reference, free-running since the span start",
        f"# caution: {plan['caution']}",
        f"# span: {plan['start_utc']} .. {plan['end_utc']}",
        f"# meets_budget: {_cell(plan['meets_budget'])}; worst_error_ns: {_cell(plan['worst_error_ns'])}; "
        f"worst_gap_s: {_cell(plan['worst_gap_s'])}",
    ):
        buf.write(line + _LINE)
    w = csv.writer(buf, lineterminator=_LINE)
    w.writerow(PASS_COLUMNS)
    for p in plan["passes"]:
        w.writerow([_cell(p[c]) for c in PASS_COLUMNS])
    return buf.getvalue()
