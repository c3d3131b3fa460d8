"""Frequency stability of measured data (``POST /v1/clock-stability``)."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from ..model_base import OpenModel as _Open
from ..model_base import StrictModel as _Strict


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
        "_lower/_upper bounds, _n_terms and _edf; noise_alpha and its noise_type name")
    clock_block: dict | None = Field(
        None, description="The result as a budget's 'clock' block ({'adev_points': [[tau_s, oadev], ...]}); "
        "null with too few points")
    clock_block_note: str | None = Field(None, description="How clock_block is fitted and what it lacks")
    n_samples: int
    n_phase_points: int
    data_type: str
    sample_interval_s: float
    confidence: float
    caution: str
