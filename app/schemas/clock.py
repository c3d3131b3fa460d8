"""The oscillator: the request's ``clock`` block and the ``clock_error`` response block."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field
from taubudget.physics.clock import PRESETS as _CLOCK_PRESETS

from ..model_base import OpenModel as _Open
from ..model_base import StrictModel as _Strict


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
    relativistic_residual: Literal["after_correction", "after_preset"] = Field(
        description="Which relativistic offset the clock carries (round-1 names, kept): after_preset = "
        "after the frequency offset (preset); after_correction = also after the user's eccentricity "
        "correction; see relativistic_residual_description")
    relativistic_residual_description: str | None = Field(
        None, description="relativistic_residual in the trade's words")
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
        "it may exceed the span (see max_free_running_beyond_span); null when not asked or not "
        "reached within free_running_search_horizon_s")
    budget_reached_within_span: bool | None = Field(
        description="True when the budget is reached inside the span (exact relativistic residual)")
    max_free_running_beyond_span: bool | None = Field(
        None, description="True when max_free_running_s lies past the span, where the relativistic "
        "residual is continued from its fitted line and orbital harmonics (an extrapolation)")
    free_running_search_horizon_s: float | None = Field(
        None, description="How far past the sync the free-running search looked, s")
    max_free_running_basis: str | None = Field(
        None, description="How max_free_running_s was found, in words")
    clock_model: ClockModelOut
    series: ClockSeriesOut | None
    note: str
