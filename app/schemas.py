"""Request and response models of the budget API (the CLI reads the same JSON).

Field names carry their units and are a contract: scripts and spreadsheets
are written against them. Add fields; never rename or drop one.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import AwareDatetime, BaseModel, ConfigDict, Field, model_validator
from taubudget.physics.clock import PRESETS as _CLOCK_PRESETS

from .formats.models import (
    OemOrbitIn,
    OmmOrbitIn,
    OpmOrbitIn,
    Sp3OrbitIn,
    StateVectorOrbitIn,
    TleFileOrbitIn,
)
from .model_base import StrictModel, ZonalGravityModel

_Strict = StrictModel


class KeplerianOrbitIn(_Strict):
    """Two-body elements around the Earth (GCRS; mean elements with j2_secular), or around the
    Sun, the Moon or Mars (axes of the ICRF equator, or the J2000 ecliptic; BCRS budget)."""

    type: Literal["keplerian"]
    center: Literal["earth", "sun", "moon", "mars"] = "earth"
    reference_plane: Literal["icrf_equator", "ecliptic_j2000"] = Field(
        "icrf_equator", description="Axes of the elements: ICRF/GCRS equator, or the J2000 ecliptic "
        "(centres other than the Earth)")
    epoch: AwareDatetime = Field(description="Epoch of the elements, ISO 8601 UTC")
    semi_major_axis_km: float = Field(gt=0, description="Semi-major axis, km")
    eccentricity: float = Field(ge=0, description="Eccentricity (elliptic: < 1)")
    inclination_deg: float = Field(ge=0, le=180)
    ra_of_asc_node_deg: float = 0.0
    arg_of_pericenter_deg: float = 0.0
    mean_anomaly_deg: float = 0.0
    j2_secular: bool = Field(False, description="Drift node, perigee and mean anomaly at J2 rates")


class TleOrbitIn(_Strict):
    """A two-line element set, propagated with SGP4."""

    type: Literal["tle"]
    line1: str = Field(min_length=1, max_length=80)
    line2: str = Field(min_length=1, max_length=80)
    name: str | None = Field(None, max_length=80)


class SurfaceClockIn(_Strict):
    """A clock fixed on the surface: the Earth (WGS-84 geodetic coordinates, height above the
    ellipsoid), or the Moon or Mars (planetocentric coordinates, height above the mean sphere,
    IAU rotation elements)."""

    type: Literal["surface"]
    center: Literal["earth", "moon", "mars"] = "earth"
    latitude_deg: float = Field(ge=-90, le=90)
    longitude_deg: float = Field(ge=-180, le=360)
    height_m: float = Field(0.0, description="Height above the WGS-84 ellipsoid (Earth) or the mean "
                            "sphere (Moon: 1737.4 km, Mars: 3389.5 km), m")
    geoid_undulation_m: float | None = Field(None, description="Geoid height N above the ellipsoid, m")
    orthometric_height_m: float | None = Field(None, description="Height above the geoid, m")


Orbit = Annotated[KeplerianOrbitIn | TleOrbitIn | SurfaceClockIn | OmmOrbitIn | OpmOrbitIn | OemOrbitIn
                  | Sp3OrbitIn | TleFileOrbitIn | StateVectorOrbitIn, Field(discriminator="type")]


class GravityIn(ZonalGravityModel):
    """Terms of the clock's rate (default zonal degree 4)."""


class HAlphaIn(_Strict):
    """Power-law noise coefficients h_alpha, keyed by noise name (IEEE Std 1139).

    S_y(f) = sum h_alpha f^alpha; each coefficient is in Hz^(-alpha-1): white_pm (alpha 2,
    Hz^-3), flicker_pm (1, Hz^-2), white_fm (0, Hz^-1 = s), flicker_fm (-1, dimensionless),
    random_walk_fm (-2, Hz). Omitted terms are 0. The PM terms need ``f_h_hz``.
    """

    # Upper bounds far above any oscillator keep every derived figure a finite double.
    white_pm: float | None = Field(None, ge=0, le=1e-6, description="h_2, Hz^-3 (needs f_h_hz)")
    flicker_pm: float | None = Field(None, ge=0, le=1e-6, description="h_1, Hz^-2 (needs f_h_hz)")
    white_fm: float | None = Field(None, ge=0, le=1e-6, description="h_0, Hz^-1")
    flicker_fm: float | None = Field(None, ge=0, le=1e-6, description="h_-1, dimensionless")
    random_walk_fm: float | None = Field(None, ge=0, le=1e-6, description="h_-2, Hz")


_AdevPoint = Annotated[list[Annotated[float, Field(gt=0, le=1e10)]], Field(min_length=2, max_length=2)]


class ClockIn(_Strict):
    """The satellite's oscillator: a preset, or its own noise model, plus ageing and offsets.

    Give ``preset`` (typical figures of a generic oscillator class, to be replaced by your
    unit's data), or ``h_alpha``, or ``adev_points`` (fitted to h_alpha by least squares).
    ``drift_per_day`` overrides a preset's ageing. Times are counted from a synchronisation
    at the start of the span.
    """

    preset: Literal[tuple(_CLOCK_PRESETS)] | None = Field(  # type: ignore[valid-type]
        None, description="Generic oscillator class with typical figures (common practice)")
    h_alpha: HAlphaIn | None = None
    adev_points: list[_AdevPoint] | None = Field(
        None, min_length=1, max_length=200,
        description="Allan deviation points [[tau_s, adev], ...], tau_s in s")
    drift_per_day: float | None = Field(
        None, ge=-1e-6, le=1e-6,
        description="Linear fractional frequency drift (ageing) per day; default 0 or the preset's")
    initial_fractional_frequency: float = Field(
        0.0, ge=-1e-4, le=1e-4, description="Fractional frequency offset left after calibration at the sync")
    initial_time_offset_ns: float = Field(
        0.0, ge=-1e12, le=1e12, description="Time offset at the sync, clock minus reference, ns")
    f_h_hz: float | None = Field(
        None, gt=0, le=1e12, description="Measurement bandwidth for the PM terms, Hz")


class BudgetRequest(_Strict):
    """One clock, one reference, one span."""

    orbit: Orbit
    reference: Literal["TT", "TAI", "GPS", "TCG", "TCB", "TDB", "lunar_surface"] | SurfaceClockIn = Field(
        "TT", description="TT, TAI, GPS, TCG; TCB, TDB or lunar_surface (barycentric budget); or a "
        "clock on the Earth's surface")
    frame: Literal["auto", "GCRS", "BCRS"] = Field(
        "auto", description="auto: GCRS for Earth-centred clocks against Earth references, BCRS otherwise")
    link_station: SurfaceClockIn | None = Field(
        None, description="A ground station on the Earth: BCRS series gain the light time and Shapiro "
        "delay from the clock to it")
    start: AwareDatetime
    end: AwareDatetime | None = None
    duration_days: float | None = Field(None, gt=0)
    gravity: GravityIn = Field(default_factory=GravityIn)
    series_step_s: float | None = Field(None, gt=0)
    nominal_frequency_hz: float | None = Field(None, gt=0)
    clock: ClockIn | None = Field(None, description="The oscillator; adds 'clock_error' to the budget")
    time_error_budget_ns: float | None = Field(
        None, gt=0, le=1e15,
        description="Allowed |time error| after a sync, ns; gives max_free_running_s (needs clock)")
    k_sigma: float = Field(3.0, ge=0, le=10, description="Multiplier of the 1-sigma stochastic time error")
    apply_eccentricity_correction: bool = Field(
        True, description="The user segment removes the eccentricity term -(2/c^2) r.v from the residual")
    monte_carlo_runs: int | None = Field(
        None, ge=10, le=5000, description="Simulated noise realisations (Kasdin-Walter) for the "
        "probability that |time error| exceeds time_error_budget_ns within the span (needs clock)")
    monte_carlo_seed: int = Field(0, ge=0, le=2**32 - 1, description="Seed of the Monte Carlo run")

    @model_validator(mode="after")
    def _span(self):
        if self.end is None and self.duration_days is None:
            raise ValueError("give either 'end' or 'duration_days'")
        if self.end is not None and self.duration_days is not None:
            raise ValueError("give 'end' or 'duration_days', not both")
        if self.end is not None and self.end <= self.start:
            raise ValueError("'end' must be after 'start'")
        return self


EXAMPLE_REQUEST = {
    "orbit": {
        "type": "keplerian", "center": "earth", "epoch": "2027-03-01T00:00:00Z",
        "semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
        "ra_of_asc_node_deg": 0.0, "arg_of_pericenter_deg": 0.0, "mean_anomaly_deg": 0.0,
    },
    "reference": "TT",
    "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False},
    "series_step_s": 900, "nominal_frequency_hz": 10230000.0,
}


# --- Response models (documentation and schema checks; additive) ----------------------
# The routes return the physics output as is; these models describe it for the OpenAPI
# page. ``extra="allow"`` so that a field added by physics/ is documented as allowed
# rather than dropped.


class _Open(BaseModel):
    model_config = ConfigDict(extra="allow")


class PeriodicOut(_Open):
    amplitude_ns: float = Field(description="Half the peak-to-peak periodic offset after the preset, ns")
    peak_to_peak_ns: float
    dominant_period_s: float | None = Field(description="Period of the largest periodic component, s")


class EccentricityCorrectionOut(_Open):
    amplitude_ns: float = Field(description="Amplitude of -(2/c^2) r.v over the span, ns")
    residual_after_correction_ns: float
    residual_peak_to_peak_ns: float
    formula: str
    analytic_amplitude_ns: float | None = Field(None, description="2 sqrt(a GM) e / c^2 (Keplerian only), ns")


class OmittedTermOut(_Open):
    term: str
    size_fractional: float = Field(description="Order of magnitude of the omitted rate term, fractional")
    note: str


class SeriesOut(_Open):
    time_utc: list[str]
    elapsed_s: list[float]
    offset_ns: list[float] = Field(description="Accumulated offset, clock minus reference, ns")
    periodic_ns: list[float]
    eccentricity_term_ns: list[float]


class ClockModelOut(_Open):
    source: Literal["preset", "h_alpha", "adev_points"]
    name: str
    label: str = Field(
        description="What the figures are; presets: typical values, replace with your unit's data")
    h_alpha: dict[str, float] = Field(description="Coefficients by noise name, IEEE Std 1139 units")
    drift_per_day: float
    initial_fractional_frequency: float
    initial_time_offset_ns: float
    f_h_hz: float | None
    fit: dict | None = Field(None, description="Fit of h_alpha to adev_points, with relative residuals")


class ClockSeriesOut(_Open):
    time_utc: list[str]
    elapsed_s: list[float]
    deterministic_ns: list[float]
    sigma_ns: list[float]
    bound_ns: list[float] = Field(description="|deterministic_ns| + k_sigma * sigma_ns")


class ClockErrorOut(_Open):
    """Time error of the clock after a sync at the span start (clock minus reference), at the span end."""

    elapsed_s: float = Field(description="Time since the sync at which the figures apply (span end), s")
    relativistic_residual: Literal["after_correction", "after_preset"]
    relativistic_residual_ns: float
    initial_time_offset_ns: float
    initial_frequency_ns: float
    ageing_ns: float
    deterministic_ns: float = Field(description="Sum of the four parts above, ns")
    stochastic_1sigma_ns: float
    stochastic_1sigma_components_ns: dict[str, float]
    k_sigma: float
    k_sigma_bound_ns: float = Field(description="|deterministic_ns| + k_sigma * stochastic_1sigma_ns")
    time_error_budget_ns: float | None
    max_free_running_s: float | None = Field(
        description="Longest time after the sync before the k-sigma bound reaches the budget, s; "
        "null when not asked or not reached within the span")
    budget_reached_within_span: bool | None
    clock_model: ClockModelOut
    series: ClockSeriesOut | None
    note: str


class BudgetResponse(_Open):
    """A drift budget: the same JSON as ``taubudget budget --json``. Offsets are clock minus reference."""

    mean_fractional_rate: float = Field(
        description="Mean rate against the reference, s/s (positive: the clock gains)")
    mean_rate_us_per_day: float
    terms_fractional: dict[str, float]
    frequency_preset_fractional: float = Field(
        description="Fractional frequency offset that nulls the mean rate")
    preset_frequency_hz: float | None
    nominal_frequency_hz: float | None
    offset_at_end_ns: float
    offset_extreme_ns: float
    offset_extreme_time_utc: str
    offset_min_ns: float
    offset_max_ns: float
    periodic: PeriodicOut
    eccentricity_correction: EccentricityCorrectionOut
    integration_error_estimate_ps: float
    integration_error_estimate_ps_per_day: float
    nodes_used: int
    panels_used: int
    model: dict
    omitted_terms: list[OmittedTermOut]
    series: SeriesOut | None
    clock_error: ClockErrorOut | None = Field(None, description="Present when the request has a clock")
    caution: str = Field(description="Planning-estimate caution; travels with every budget")
    reference: str | dict
    start_utc: str
    end_utc: str
    span_s: float = Field(description="Span in TT seconds")


class ProblemFieldError(_Open):
    pointer: str = Field(description="JSON pointer (RFC 6901) to the bad field of the request body")
    detail: str
    parameter: str | None = Field(None, description="Query parameter name, for query-string requests")


class Problem(_Open):
    """RFC 9457 problem details."""

    type: str
    title: str
    status: int
    detail: str
    instance: str | None = None
    errors: list[ProblemFieldError] = Field(default_factory=list)


class BatchRequest(_Strict):
    """Many budgets in one call. Each item is a BudgetRequest plus an ``id``, merged over ``defaults``.

    Merging is per top-level key: an item's key replaces the same key of ``defaults``
    whole (an item's ``gravity`` object replaces the default one). An item that gives
    ``end`` or ``duration_days`` drops the other from the defaults.
    """

    items: list[Any] = Field(
        min_length=1, description="Requests with an 'id' each; validated one by one",
        json_schema_extra={"items": {"type": "object"}},
    )
    defaults: dict = Field(default_factory=dict, description="Keys shared by every item")


class BatchResultItem(_Open):
    id: str | int | None
    status: int = Field(description="200, or the status of this item's problem")
    budget: BudgetResponse | None = None
    problem: Problem | None = None


class BatchResponse(_Open):
    items: list[BatchResultItem]
    succeeded: int
    failed: int
    estimated_nodes: int = Field(description="Up-front node estimate that was checked against the limit")
    caution: str


class ConstantOut(_Open):
    name: str
    value: float | int | str | dict
    doc: str = Field(description="Unit and source, from physics/constants.py")


class ReferenceResponse(_Open):
    constants: list[ConstantOut]
    sources: dict[str, str]
    models: dict
    versions: dict[str, str]
    limits: dict[str, float | int]
    caution: str


class HealthResponse(_Open):
    status: str
    timescale: bool | None = None
    ephemeris: bool | None = None


EXAMPLE_LEO_J2_REQUEST = {
    "orbit": {
        "type": "keplerian", "epoch": "2027-05-10T00:00:00Z",
        "semi_major_axis_km": 7078.137, "eccentricity": 0.0011, "inclination_deg": 97.9,
        "ra_of_asc_node_deg": 40.0, "arg_of_pericenter_deg": 90.0, "mean_anomaly_deg": 15.0,
        "j2_secular": True,
    },
    "reference": "TAI",
    "start": "2027-05-10T00:00:00Z", "duration_days": 0.5,
    "gravity": {"earth_zonal_degree": 4, "sun": True, "moon": True},
}
"""An invented sun-synchronous-like low orbit with J2 drift, half a day against TAI."""

EXAMPLE_GROUND_REQUEST = {
    "orbit": {"type": "surface", "latitude_deg": 46.61, "longitude_deg": 10.27, "height_m": 1200.0,
              "geoid_undulation_m": 48.0},
    "reference": "TT",
    "start": "2027-01-01T00:00:00Z", "duration_days": 1.0,
}
"""An invented mountain-laboratory clock against TT."""

EXAMPLE_LUNAR_REQUEST = {
    "orbit": {"type": "surface", "center": "moon", "latitude_deg": -12.5, "longitude_deg": 23.4,
              "height_m": 0.0},
    "reference": "TT",
    "start": "2028-01-01T00:00:00Z", "duration_days": 27.55,
    "series_step_s": 86400,
}
"""An invented lunar-surface beacon clock against TT (barycentric budget) over one month."""

EXAMPLE_HELIOCENTRIC_REQUEST = {
    "orbit": {"type": "keplerian", "center": "sun", "reference_plane": "ecliptic_j2000",
              "epoch": "2030-04-01T00:00:00Z", "semi_major_axis_km": 188000000.0, "eccentricity": 0.2,
              "inclination_deg": 1.5, "ra_of_asc_node_deg": 40.0, "arg_of_pericenter_deg": 200.0,
              "mean_anomaly_deg": 10.0},
    "reference": "TDB",
    "start": "2030-04-01T00:00:00Z", "duration_days": 10.0,
    "series_step_s": 86400,
    "link_station": {"type": "surface", "latitude_deg": -30.2, "longitude_deg": 149.1, "height_m": 300.0},
}
"""An invented heliocentric cruise probe against TDB, with the light time to a ground station."""

EXAMPLE_BATCH_REQUEST = {
    "defaults": {
        "reference": "GPS", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
        "gravity": {"earth_zonal_degree": 2, "sun": True, "moon": True},
    },
    "items": [
        {"id": "kestrel-01", "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                                       "semi_major_axis_km": 26561.4, "eccentricity": 0.004,
                                       "inclination_deg": 55.0, "mean_anomaly_deg": 10.0}},
        {"id": "kestrel-02", "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                                       "semi_major_axis_km": 26561.4, "eccentricity": 0.012,
                                       "inclination_deg": 55.0, "ra_of_asc_node_deg": 60.0},
         "nominal_frequency_hz": 10230000.0},
    ],
}
"""Two invented navigation satellites sharing reference, span and gravity."""


# --- Frequency stability of measured data (additive) ------------------------------------


class StabilityRequest(_Strict):
    """Measured clock data at a uniform sample interval, for ``POST /v1/clock-stability``."""

    # Bounds keep every sum of squares and every chi-squared quantile a finite double.
    data: list[Annotated[float, Field(ge=-1e30, le=1e30)]] = Field(
        min_length=3, description="Phase (time error, s) or fractional frequency")
    data_type: Literal["phase", "frequency"] = "phase"
    sample_interval_s: float = Field(ge=1e-12, le=1e9, description="Sample interval tau0, s")
    confidence: float = Field(0.683, ge=0.01, le=0.9999, description="Two-sided confidence of the bounds")


class StabilityResponse(_Open):
    deviations: list[dict] = Field(
        description="One row per tau: tau_s; adev, oadev, mdev, hdev, ohdev and tdev_s, each with "
        "_lower/_upper bounds, _n_terms and _edf")
    n_samples: int
    n_phase_points: int
    data_type: str
    sample_interval_s: float
    confidence: float
    caution: str


EXAMPLE_STABILITY_REQUEST = {
    "data": [892, 809, 823, 798, 671, 644, 883, 903, 677],
    "data_type": "frequency", "sample_interval_s": 1.0, "confidence": 0.683,
}
"""The NBS 9-point data set (NIST SP 1065, Table 30), as fractional frequency."""
