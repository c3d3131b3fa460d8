"""Budgets as CSV (RFC 4180) and as single numbers for spreadsheet cells.

Layout (every line readable by a CSV reader; no comment lines): a ``field,value``
block (description and caution first, then the summary figures); when the request
has ``series_step_s``, an empty row and the series table (one row per output time)
follow. Contact plans: the same field,value block, an empty row, the pass table.
Floats are written with ``repr``:
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
from .present.terms import RATE_TERM_TRADE_NAMES

SUMMARY_FIELDS: tuple[str, ...] = (
    "mean_fractional_rate",
    "mean_rate_us_per_day",
    *(f"terms_fractional.{name}" for name in TERM_NAMES),
    *(f"rate_terms_fractional.{RATE_TERM_TRADE_NAMES.get(name, name)}" for name in TERM_NAMES),
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
    *(f"rate_terms_fractional.{RATE_TERM_TRADE_NAMES.get(name, name)}" for name in BCRS_TERM_NAMES
      if name not in ("velocity", "time_scale")),
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


BUDGET_DESCRIPTION = "taubudget drift budget; offsets are clock minus reference"


def _metadata_rows(budget: dict) -> list[list[str]]:
    """What the '#' lines used to say, as field,value rows a CSV reader keeps (caution included)."""
    return [["description", BUDGET_DESCRIPTION], ["caution", budget["caution"]]]


def _render(header: list[list[str]], rows: list[list[str]], table: list[list[str]] | None = None) -> str:
    """RFC 4180 text: ``header`` + ``rows`` as one field,value block; then, if given, an empty row
    and ``table`` (its own header row first). Every cell goes through the formula-injection guard."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator=_LINE)
    writer.writerows([safe_text(cell) for cell in row] for row in header + rows)
    if table is not None:
        writer.writerow([])
        writer.writerows([safe_text(cell) for cell in row] for row in table)
    return buf.getvalue()


def summary_csv(budget: dict) -> str:
    """The summary block: ``field,value`` rows, the description and caution first."""
    rows = [[k, format_value(v)] for k, v in summary_rows(budget)]
    return _render([["field", "value"]] + _metadata_rows(budget), rows)


def series_csv(budget: dict) -> str:
    """The summary block, an empty row, then one row per output time (needs ``series_step_s``)."""
    series = budget["series"]
    table = [list(SERIES_COLUMNS)]
    columns = [series[c] for c in SERIES_COLUMNS]
    clock_series = (budget.get("clock_error") or {}).get("series")
    if clock_series is not None:
        table[0] += [f"clock_{c}" for c in CLOCK_SERIES_COLUMNS]
        columns += [clock_series[c] for c in CLOCK_SERIES_COLUMNS]
    for values in zip(*columns, strict=True):
        table.append([format_value(v) for v in values])
    rows = [[k, format_value(v)] for k, v in summary_rows(budget)]
    return _render([["field", "value"]] + _metadata_rows(budget), rows, table)


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
    "offset_at_aos_ns", "offset_at_los_ns", "error_at_aos_with_syncs_ns", "bound_at_aos_with_syncs_ns",
    "bound_before_sync_ns",
    "light_time_us", "sagnac_correction_ns", "fractional_frequency_shift", "used_for_sync",
    "sync_count",
)

PLAN_SUMMARY_FIELDS = ("start_utc", "end_utc", "span_s", "meets_budget", "worst_error_ns",
                       "worst_error_time_utc", "worst_gap_s", "time_error_budget_ns", "k_sigma")


def passes_csv(plan: dict) -> str:
    """A contact plan as CSV (RFC 4180): a field,value block (description, caution, the plan's
    figures, the recommendation in words, what the offset columns mean), an empty row, the passes."""
    rec = plan.get("recommendation") or {}
    head = [["field", "value"],
            ["description", "taubudget contact plan; offsets are clock minus reference"],
            ["caution", plan["caution"]]]
    rows = [[k, format_value(plan[k])] for k in PLAN_SUMMARY_FIELDS if k in plan]
    rows += [
        ["recommendation", rec.get("summary", "")],
        ["max_time_between_syncs_s", format_value(rec.get("max_time_between_syncs_s"))],
        ["largest_pass_stride_meeting_budget", format_value(rec.get("largest_pass_stride_meeting_budget"))],
        ["fixed_interval_s_meeting_budget", format_value(rec.get("fixed_interval_s_meeting_budget"))],
        ["offset_at_aos_ns", "free-running offset since the span start, ignoring syncs (so is _los_)"],
        ["bound_at_aos_with_syncs_ns", "|error| + k_sigma x 1-sigma at AOS with the plan's syncs applied"],
    ]
    table = [list(PASS_COLUMNS)] + [[format_value(p.get(c)) for c in PASS_COLUMNS] for p in plan["passes"]]
    return _render(head, rows, table)
