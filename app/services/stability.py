"""Frequency stability of measured data: the deviations table as plain data."""

from __future__ import annotations

import math

import numpy as np
from taubudget.physics.errors import PhysicsInputError

from ..settings import Settings, get_settings

STABILITY_CAUTION = (
    "Planning estimate only. The confidence bounds are statistical and assume Gaussian power-law "
    "noise of one type at each tau; drift, steps, outliers and gaps in the data are not detected "
    "and make them optimistic. Check the data before feeding the result into a clock budget."
)


MIN_CLOCK_BLOCK_POINTS = 3
"""OADEV points needed for a clock block: one per fitted FM term (white, flicker, random walk)."""


def _clock_block(rows: list[dict]) -> tuple[dict | None, str]:
    """A budget ``clock`` block from the OADEV column, and a note on how to use it."""
    points = [[r["tau_s"], r["oadev"]] for r in rows if r.get("oadev") is not None and r["oadev"] > 0]
    if len(points) < MIN_CLOCK_BLOCK_POINTS:
        return None, (f"no clock block: {len(points)} OADEV points, at least {MIN_CLOCK_BLOCK_POINTS} "
                      "are needed to fit the white, flicker and random-walk FM terms")
    return {"adev_points": points}, (
        "Use clock_block as a budget's 'clock' (POST /v1/budgets, or 'taubudget budget --clock-from'): "
        "its overlapping ADEV points are fitted to the FM terms h_0, h_-1, h_-2 (see clock_error."
        "clock_model.fit for the residuals). Add drift_per_day and the sync offsets yourself: "
        "ageing is not measured by the ADEV.")


def stability_from_data(data, data_type: str, sample_interval_s: float, confidence: float,
                        settings: Settings | None = None) -> dict:
    """The deviations table (ADEV, OADEV, MDEV, TDEV, HDEV, OHDEV at octave taus) as plain data."""
    from taubudget.physics.clock import NOISE_NAMES, stability_table

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
    rows = table.rows()
    for row in rows:
        alpha = row.get("noise_alpha")
        row["noise_type"] = None if alpha is None else NOISE_NAMES.get(int(round(alpha)))
    block, note = _clock_block(rows)
    return {
        "deviations": rows,
        "clock_block": block,
        "clock_block_note": note,
        "n_samples": n,
        "n_phase_points": n_phase,
        "data_type": data_type,
        "sample_interval_s": float(sample_interval_s),
        "confidence": float(confidence),
        "caution": STABILITY_CAUTION,
    }
