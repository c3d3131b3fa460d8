"""Contact plans: ``ContactPlanRequest`` (a budget request plus ground stations, a sync policy
and a time-error budget) and the ``ContactPlanResponse`` blocks. Field names carry units and are a
contract: add fields, never rename or drop one. Offsets are clock minus reference."""

from __future__ import annotations

import json
from typing import Literal

from pydantic import Field, field_validator, model_validator

from ..model_base import Integer
from ..model_base import OpenModel as _Open
from ..model_base import StrictModel as _Strict
from ..present.terms import RELATIVISTIC_OFFSET_ALIASES
from .budget import BudgetRequest
from .clock import ClockIn

MAX_STATIONS = 50
MAX_PASSES = 5000
MAX_SYNCS = 5000
"""Most syncs a plan lists, by the policy or recommended: a fixed interval allowing more over the span
is refused before any work; the recommendation's search stops there and says so."""


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
    every_n: Integer = Field(1, ge=1, le=10_000,
                             description="every_nth_pass: sync at every Nth eligible pass")
    min_duration_s: float = Field(0.0, ge=0, description="Only passes at least this long, s")
    min_elevation_deg: float | None = Field(
        None, ge=-5, le=90, description="Only passes culminating this high, deg")
    interval_s: float | None = Field(
        None, gt=0,
        description="fixed_interval: the first eligible contact once this long has run since the last sync "
        "(the span start is one): at that instant if an eligible station is in view, else at the AOS of "
        "the next eligible pass; a long pass holds a sync every interval_s, s")
    sync_at: Literal["aos", "culmination", "los"] = Field(
        "culmination", description="Where in a pass the per-pass kinds sync (a fixed_interval sync comes "
        "when its interval has run, or at the next AOS)")
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


def station_networks() -> dict[str, list[dict]]:
    """The ground networks shipped with the package, by file stem (``app/networks/*.json``)."""
    from importlib.resources import files

    out = {}
    for entry in files("taubudget.app").joinpath("networks").iterdir():
        if entry.name.endswith(".json"):
            out[entry.name.removesuffix(".json")] = json.loads(entry.read_text(encoding="utf-8"))["stations"]
    return out


STATION_FILES = tuple(sorted(station_networks()))
"""Names a request may give in ``stations_file`` (a packaged network; never a path)."""


class ContactPlanRequest(BudgetRequest):
    """A budget request plus ground stations, a sync policy and a time-error budget."""

    stations: list[StationIn] = Field(
        default_factory=list, max_length=MAX_STATIONS,
        description="Ground stations; may be left out when stations_file names a network")
    stations_file: Literal[STATION_FILES] | None = Field(  # type: ignore[valid-type]
        None, description="A ground network shipped with the service, by name (e.g. 'ground_network', "
        "the four invented stations of sample_orbits/ground_network.json); its stations come first, "
        "then any in 'stations'. A name, never a path: the server opens no user-given file")

    @model_validator(mode="before")
    @classmethod
    def _fold_in_station_file(cls, data):
        if isinstance(data, dict) and isinstance(data.get("stations_file"), str):
            network = station_networks().get(data["stations_file"])
            if network is not None:
                return {**data, "stations": [*network, *(data.get("stations") or [])]}
        return data
    sync_policy: SyncPolicyIn = Field(default_factory=SyncPolicyIn)
    clock: ClockIn | None = Field(None, description="Oscillator model (the budget's clock block); "
                                  "none: relativity only")
    time_error_budget_ns: float = Field(gt=0, description="Allowed |time error| of the k-sigma envelope, ns")
    k_sigma: float = Field(3.0, ge=0, le=10, description="Multiplier of the 1-sigma stochastic error")
    relativistic_offset: Literal[
        "frequency_offset", "frequency_offset_and_eccentricity_correction", "uncorrected",
        "after_preset", "after_correction", "raw",
    ] = Field(
        "after_preset", description="Which relativistic offset the clock carries: 'frequency_offset' "
        "(default; the factory frequency offset, or preset, removes the mean rate), "
        "'frequency_offset_and_eccentricity_correction' (the user segment also removes -(2/c^2) r.v), "
        "'uncorrected' (no preset). The round-1 names after_preset, after_correction and raw are "
        "accepted for one version and are what the response repeats")

    @field_validator("relativistic_offset")
    @classmethod
    def _old_offset_name(cls, value: str) -> str:
        # One spelling inside: the round-1 name, which the response's model block repeats.
        return RELATIVISTIC_OFFSET_ALIASES.get(value, value)

    @model_validator(mode="after")
    def _unique_names(self):
        if not self.stations:
            raise ValueError("give 'stations' or a 'stations_file' (known: " + ", ".join(STATION_FILES) + ")")
        names = [s.name for s in self.stations]
        if len(set(names)) != len(names):
            raise ValueError("station names must be unique")
        if self.orbit.type == "surface":
            raise ValueError("a contact plan needs a satellite orbit (keplerian or tle), not a surface clock")
        return self


# --- Response models ---------------------------------------------------------------------


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
    offset_at_aos_ns: float = Field(
        description="Free-running offset since the span start, ignoring every sync (relativistic part "
        "plus the clock's deterministic part), ns; see error_at_aos_with_syncs_ns for the plan's error")
    offset_at_los_ns: float = Field(description="Free-running offset at LOS, ignoring every sync, ns")
    error_at_aos_with_syncs_ns: float | None = Field(
        None, description="Deterministic time error at AOS with the request's syncs applied, ns")
    bound_at_aos_with_syncs_ns: float | None = Field(
        None, description="|error_at_aos_with_syncs_ns| + k_sigma x 1-sigma at AOS, syncs applied, ns")
    bound_before_sync_ns: float | None = Field(
        None, description="For a pass used for a sync: |error| + k_sigma x 1-sigma just before it (the "
        "largest, when the pass holds several syncs), ns")
    light_time_us: float = Field(description="At culmination")
    sagnac_correction_ns: float = Field(description="At culmination")
    fractional_frequency_shift: float = Field(description="At culmination")
    aos_at_span_start: bool
    los_at_span_end: bool
    used_for_sync: bool
    sync_count: int | None = Field(None, description="Syncs by the policy in this pass (a fixed_interval "
                                   "policy syncs every interval_s inside a long pass)")
    signal_path: dict[str, SignalPointOut]


class SyncOut(_Open):
    time_utc: str
    station: str
    pass_index: int
    error_before_sync_ns: float
    sigma_before_sync_ns: float
    bound_before_sync_ns: float
    time_since_previous_sync_s: float


class EnvelopeOut(_Open):
    time_utc: list[str]
    elapsed_s: list[float] = Field(description="TT seconds since the span start")
    bound_ns: list[float] = Field(description="|error| + k sigma with the policy's syncs, ns; at each sync "
                                  "the value just before it, then just after it")


class ContactPlanResponse(_Open):
    """Passes, syncs and whether the k-sigma time error stays inside the budget. Planning estimates."""

    passes: list[PassOut]
    syncs: list[SyncOut]
    worst_error_ns: float = Field(description="Largest |error| + k sigma between syncs, ns")
    worst_error_time_utc: str
    worst_gap_s: float
    envelope: EnvelopeOut | None = Field(
        None, description="The k-sigma envelope for figures: at most 1500 grid samples plus both sides "
        "of every sync (worst_error_ns comes from the full grid)")
    meets_budget: bool
    time_error_budget_ns: float
    k_sigma: float
    recommendation: dict = Field(
        description="Fewest syncs (greedy, anywhere inside the eligible passes, so a long pass may hold "
        "several: 'syncs' lists them with time, station and pass), the largest pass stride meeting the "
        "budget, max_time_between_syncs_s, a fixed interval checked to meet the budget when the policy "
        "does not (fixed_interval_s_meeting_budget) and a summary in words ('sync at least every N h / "
        "every k-th pass to keep 3-sigma within X ns')")
    budget: dict
    model: dict
    caution: str
