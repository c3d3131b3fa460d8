"""A budget: the request, its response, and batches of budgets.

Field names carry their units and are a contract: scripts and spreadsheets
are written against them. Add fields; never rename or drop one.
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import Field, model_validator

from ..model_base import Integer, UtcDateTime
from ..model_base import OpenModel as _Open
from ..model_base import StrictModel as _Strict
from ..present.terms import RATE_TERM_DESCRIPTIONS
from .clock import ClockErrorOut, ClockIn
from .orbits import GravityIn, Orbit, SurfaceClockIn
from .problems import Problem


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
    start: UtcDateTime
    end: UtcDateTime | None = None
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
        True, description="The user segment removes the eccentricity term -(2/c^2) r.v around the "
        "clock's own centre from the residual (where one is offered: not for a clock fixed on the "
        "Moon or Mars); false keeps it in the residual and the clock error")
    monte_carlo_runs: Integer | None = Field(
        None, ge=10, le=5000, description="Simulated noise realisations (Kasdin-Walter) for the "
        "probability that |time error| exceeds time_error_budget_ns within the span (needs clock)")
    monte_carlo_seed: Integer = Field(0, ge=0, le=2**32 - 1, description="Seed of the Monte Carlo run")

    @model_validator(mode="after")
    def _span(self):
        if self.end is None and self.duration_days is None:
            raise ValueError("give either 'end' or 'duration_days'")
        if self.end is not None and self.duration_days is not None:
            raise ValueError("give 'end' or 'duration_days', not both")
        if self.end is not None and self.end <= self.start:
            raise ValueError("'end' must be after 'start'")
        return self


# --- Response models -------------------------------------------------------------------
# ``extra="allow"`` so that a field added later is documented as allowed rather than dropped.


class PeriodicOut(_Open):
    amplitude_ns: float = Field(
        description="The clock's own periodic part: half the peak-to-peak offset after the preset, "
        "without the coordinate position term and, for a clock that does not ride with the Earth "
        "against TT, TAI, GPS or TCG, without TDB - TT (BCRS budgets), ns; extremes refined")
    peak_to_peak_ns: float
    dominant_period_s: float | None = Field(description="Period of the largest periodic component, s")
    position_term_amplitude_ns: float = Field(
        0.0, description="Half the peak-to-peak coordinate position term -(v_B.(x - x_B))/c^2 "
        "(TN36 eq. 10.4) of the clock minus the reference's; 0 in the GCRS, ns")
    amplitude_with_position_term_ns: float | None = Field(
        None, description="Half the peak-to-peak periodic offset after the preset, position term "
        "included (what the offset series shows), ns")
    peak_to_peak_with_position_term_ns: float | None = None


class EccentricityCorrectionOut(_Open):
    applicable: bool = Field(
        True, description="Whether a user-segment correction -(2/c^2) r.v around the clock's own "
        "centre exists (false for a clock fixed on the Moon or Mars)")
    applied: bool = Field(
        True, description="Whether the residual figures include it (applicable and "
        "apply_eccentricity_correction)")
    amplitude_ns: float = Field(description="Amplitude of -(2/c^2) r.v over the span (extremes refined), ns")
    residual_after_correction_ns: float = Field(
        description="Largest |periodic part - correction| over the span, of the clock's own periodic part "
        "(as periodic.amplitude_ns: for a barycentric budget without the coordinate position term, "
        "which position_term reports), ns")
    residual_peak_to_peak_ns: float
    residual_after_correction_with_position_term_ns: float | None = Field(
        None, description="Barycentric budgets: the same with the coordinate position term kept, as a "
        "comparison in barycentric coordinates sees it, ns")
    formula: str
    analytic_amplitude_ns: float | None = Field(
        None, description="2 sqrt(a GM) e / c^2 (IS-GPS-200's F e sqrt(A)) with the orbit's mean a and e: "
        "the Brouwer mean elements in a zonal field (model.orbit gives them), the given elements in a "
        "point-mass field; Keplerian orbits only, ns")


class OmittedTermOut(_Open):
    term: str
    size_fractional: float = Field(description="Order of magnitude of the omitted rate term, fractional")
    note: str


class SeriesOut(_Open):
    time_utc: list[str]
    elapsed_s: list[float]
    offset_ns: list[float] = Field(description="Accumulated offset, clock minus reference, ns")
    periodic_ns: list[float] = Field(
        description="The offset with the secular line (the mean rate) removed, mean zero over the span: "
        "every bounded part together (the eccentricity term, J2 and tidal periodic terms, and for a "
        "barycentric budget the position term and the host body's orbital term), ns")
    eccentricity_term_ns: list[float] = Field(
        description="The absolute eccentricity term -(2/c^2) r.v at each time, as IS-GPS-200's "
        "F e sqrt(A) sin E (not counted from the span start); 0 where no correction is offered, ns")


class BudgetResponse(_Open):
    """A drift budget: the same JSON as ``taubudget budget --json``. Offsets are clock minus reference."""

    mean_fractional_rate: float = Field(
        description="Mean rate against the reference, s/s (positive: the clock gains)")
    mean_rate_us_per_day: float
    terms_fractional: dict[str, float] = Field(
        description="Share of each rate term, fractional, under the round-1 names (kept for one "
        "version; deprecated): monopole = earth_monopole, zonal = earth_zonal, tidal = sun_moon_tidal, "
        "reference_scale (GCRS) and time_scale (BCRS) = time_scale_rate, reference_clock = "
        "ground_reference_clock; see rate_terms_fractional")
    rate_terms_fractional: dict[str, float] | None = Field(
        None, description="The same terms under the trade's names: " + "; ".join(
            f"{k}: {v}" for k, v in RATE_TERM_DESCRIPTIONS.items()))
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
