"""Budgets as CSV (RFC 4180) and as single numbers for spreadsheet cells.

Layout: comment lines starting with ``#`` (the caution text, the reference and
the span), then either a ``field,value`` summary block or, when the request has
``series_step_s``, one row per output time. Floats are written with ``repr``:
the shortest text that reads back to the same double, in scientific notation
for tiny fractional values (``4.4646999955239707e-10``).
"""

from __future__ import annotations

import csv
import io
from typing import Any

from taubudget.physics.rate import TERM_NAMES
from taubudget.physics.rate_bcrs import BCRS_TERM_NAMES

from .csv_safety import plain_text, safe_text

SUMMARY_FIELDS: tuple[str, ...] = (
    "mean_fractional_rate",
    "mean_rate_us_per_day",
    *(f"terms_fractional.{name}" for name in TERM_NAMES),
    "frequency_preset_fractional",
    "preset_frequency_hz",
    "nominal_frequency_hz",
    "offset_at_end_ns",
    "offset_extreme_ns",
    "offset_extreme_time_utc",
    "offset_min_ns",
    "offset_max_ns",
    "periodic.amplitude_ns",
    "periodic.peak_to_peak_ns",
    "periodic.dominant_period_s",
    "periodic.position_term_amplitude_ns",
    "periodic.amplitude_with_position_term_ns",
    "periodic.peak_to_peak_with_position_term_ns",
    "eccentricity_correction.applicable",
    "eccentricity_correction.applied",
    "eccentricity_correction.amplitude_ns",
    "eccentricity_correction.residual_after_correction_ns",
    "eccentricity_correction.residual_peak_to_peak_ns",
    "eccentricity_correction.analytic_amplitude_ns",
    "integration_error_estimate_ps",
    "integration_error_estimate_ps_per_day",
    "nodes_used",
    "panels_used",
    "reference",
    "start_utc",
    "end_utc",
    "span_s",
    "frame",
)
"""Names accepted by ``field=``: top-level scalars and dotted paths into the budget JSON."""

CLOCK_SUMMARY_FIELDS: tuple[str, ...] = (
    "clock_error.deterministic_ns",
    "clock_error.relativistic_residual_ns",
    "clock_error.ageing_ns",
    "clock_error.initial_frequency_ns",
    "clock_error.initial_time_offset_ns",
    "clock_error.stochastic_1sigma_ns",
    "clock_error.k_sigma",
    "clock_error.k_sigma_bound_ns",
    "clock_error.time_error_budget_ns",
    "clock_error.max_free_running_s",
    "clock_error.budget_reached_within_span",
    "clock_error.max_free_running_beyond_span",
    "clock_error.clock_model.name",
)
"""Also accepted by ``field=`` and listed in the summary when the request has a clock."""

BCRS_SUMMARY_FIELDS: tuple[str, ...] = (
    *(f"terms_fractional.{name}" for name in BCRS_TERM_NAMES if name != "velocity"),
    "tt_convention",
    "position_term.amplitude_ns",
)
"""Also accepted by ``field=`` and listed in the summary for barycentric (BCRS) budgets."""

SERIES_COLUMNS = ("time_utc", "elapsed_s", "offset_ns", "periodic_ns", "eccentricity_term_ns")

CLOCK_SERIES_COLUMNS = ("deterministic_ns", "sigma_ns", "bound_ns")
"""Added as clock_<name> columns when the budget has a clock (``clock_error.series``)."""

_LINE = "\r\n"  # RFC 4180 line break


class MissingValue(LookupError):
    """The requested summary field has no value for this request (e.g. no nominal frequency)."""


def lookup(budget: dict, name: str) -> Any:
    """Value of a summary field (dotted path) in a budget; ``KeyError`` if absent."""
    cur: Any = budget
    for part in name.split("."):
        cur = cur[part]
    return cur


def format_value(value: Any) -> str:
    """Text for one CSV cell or text/plain answer, at full double precision."""
    if isinstance(value, dict):
        return ";".join(f"{k}={format_value(v)}" for k, v in value.items())
    return plain_text(value)


def summary_rows(budget: dict) -> list[tuple[str, Any]]:
    """(field, value) for every summary field present in the budget."""
    rows = []
    for name in SUMMARY_FIELDS + BCRS_SUMMARY_FIELDS + CLOCK_SUMMARY_FIELDS:
        try:
            rows.append((name, lookup(budget, name)))
        except (KeyError, TypeError):
            continue  # e.g. analytic_amplitude_ns exists for Keplerian orbits only
    return rows


def _header(budget: dict) -> list[str]:
    ref = format_value(budget.get("reference"))
    return [
        "# taubudget drift budget; offsets are clock minus reference",
        f"# caution: {budget['caution']}",
        f"# reference: {ref}",
        f"# span: {budget['start_utc']} .. {budget['end_utc']} ({format_value(budget['span_s'])} s TT)",
        f"# mean_rate_us_per_day: {format_value(budget['mean_rate_us_per_day'])}",
        f"# mean_fractional_rate: {format_value(budget['mean_fractional_rate'])}",
    ]


def _render(header: list[str], rows: list[list[str]]) -> str:
    buf = io.StringIO()
    for line in header:
        buf.write(line + _LINE)
    writer = csv.writer(buf, lineterminator=_LINE)
    writer.writerows([safe_text(cell) for cell in row] for row in rows)  # formula injection
    return buf.getvalue()


def summary_csv(budget: dict) -> str:
    """The summary block: ``field,value`` rows after the comment header."""
    rows = [["field", "value"]] + [[k, format_value(v)] for k, v in summary_rows(budget)]
    return _render(_header(budget), rows)


def series_csv(budget: dict) -> str:
    """One row per output time (needs a budget computed with ``series_step_s``)."""
    series = budget["series"]
    rows = [list(SERIES_COLUMNS)]
    columns = [series[c] for c in SERIES_COLUMNS]
    clock_series = (budget.get("clock_error") or {}).get("series")
    if clock_series is not None:
        rows[0] += [f"clock_{c}" for c in CLOCK_SERIES_COLUMNS]
        columns += [clock_series[c] for c in CLOCK_SERIES_COLUMNS]
    for values in zip(*columns, strict=True):
        rows.append([format_value(v) for v in values])
    return _render(_header(budget), rows)


def budget_csv_text(budget: dict) -> str:
    """The budget as CSV: the series table when the budget has one, else the summary block."""
    return series_csv(budget) if budget.get("series") is not None else summary_csv(budget)


def field_text(budget: dict, name: str) -> str:
    """The single value of summary field ``name`` as text; ``MissingValue`` if it has none."""
    try:
        value = lookup(budget, name)
    except (KeyError, TypeError) as exc:
        raise MissingValue(name) from exc
    if value is None:
        raise MissingValue(name)
    return format_value(value)


# --- Contact plans -------------------------------------------------------------------------

PASS_COLUMNS = (
    "station", "aos_utc", "los_utc", "culmination_utc", "duration_s", "max_elevation_deg",
    "offset_at_aos_ns", "offset_at_los_ns", "light_time_us", "sagnac_correction_ns",
    "fractional_frequency_shift", "used_for_sync",
)


def passes_csv(plan: dict) -> str:
    """The pass table of a contact plan as CSV (RFC 4180), after '#' comment lines with the caution."""
    header = [
        "# taubudget contact plan; offsets are clock minus reference, free-running since the span start",
        f"# caution: {plan['caution']}",
        f"# span: {plan['start_utc']} .. {plan['end_utc']}",
        f"# meets_budget: {format_value(plan['meets_budget'])}; "
        f"worst_error_ns: {format_value(plan['worst_error_ns'])}; "
        f"worst_gap_s: {format_value(plan['worst_gap_s'])}",
    ]
    rows = [list(PASS_COLUMNS)] + [[format_value(p[c]) for c in PASS_COLUMNS] for p in plan["passes"]]
    return _render(header, rows)
