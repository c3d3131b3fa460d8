"""A study (or a batch) as a trade table: one CSV row per item, swept parameters + headline figures.

Headline figures (empty where an item has none): the mean rate (µs/day and fractional), the
frequency preset, the periodic amplitude, the residual after the user-segment eccentricity
correction, the longest free-running time within the time-error budget, whether the budget is
met, and a contact plan's worst error; a failed item fills ``status`` and ``problem`` instead.
Every cell goes through app/csv_safety.py: text a user supplied (ids, swept text values, problem
details quoting them) is neutralised when it would start a formula; numbers stay numbers.
"""

from __future__ import annotations

import csv
import io
import json
from collections.abc import Iterable, Iterator
from typing import Any

from taubudget.physics.budget import CAUTION

from ..csv_safety import safe_cell

HEADLINE_COLUMNS = (
    "mean_rate_us_per_day",
    "mean_fractional_rate",
    "frequency_preset_fractional",
    "preset_frequency_hz",
    "periodic_amplitude_ns",
    "residual_after_correction_ns",
    "max_free_running_s",
    "meets_budget",
    "worst_error_ns",
)
_LINE = "\r\n"  # RFC 4180


def _get(d: Any, *path: str) -> Any:
    for key in path:
        if not isinstance(d, dict):
            return None
        d = d.get(key)
    return d


def headline(status: int, body: dict) -> dict[str, Any]:
    """The headline figures of one item's budget or contact plan (``body``); {} for a problem."""
    if status != 200:
        return {}
    if "passes" in body:  # a contact plan: its budget block and the plan's own verdict
        b = body.get("budget") or {}
        return {
            "mean_rate_us_per_day": b.get("mean_rate_us_per_day"),
            "mean_fractional_rate": b.get("mean_fractional_rate"),
            "frequency_preset_fractional": b.get("frequency_preset_fractional"),
            "periodic_amplitude_ns": b.get("periodic_amplitude_ns"),
            "meets_budget": body.get("meets_budget"),
            "worst_error_ns": body.get("worst_error_ns"),
        }
    ce = body.get("clock_error") or {}
    reached = ce.get("budget_reached_within_span")
    return {
        "mean_rate_us_per_day": body.get("mean_rate_us_per_day"),
        "mean_fractional_rate": body.get("mean_fractional_rate"),
        "frequency_preset_fractional": body.get("frequency_preset_fractional"),
        "preset_frequency_hz": body.get("preset_frequency_hz"),
        "periodic_amplitude_ns": _get(body, "periodic", "amplitude_ns"),
        "residual_after_correction_ns": _get(body, "eccentricity_correction", "residual_after_correction_ns"),
        "max_free_running_s": ce.get("max_free_running_s"),
        # The k-sigma time error stays inside the budget over the whole span when it is never reached.
        "meets_budget": None if reached is None else not reached,
    }


def cell(value: Any) -> str:
    """One CSV cell: numbers as numbers (full precision), text neutralised against formula injection
    (app/csv_safety.py); a swept object or list value is written as compact JSON."""
    if isinstance(value, dict | list):
        value = json.dumps(value, separators=(",", ":"))
    return safe_cell(value)


def rows(records: Iterable[tuple[Any, dict | None, int, dict]],
         parameter_names: list[str]) -> Iterator[list[str]]:
    """CSV rows (header first) from (id, parameters, status, body) records."""
    yield ["id", "status", *parameter_names, *HEADLINE_COLUMNS, "problem"]
    for ident, params, status, body in records:
        fig = headline(status, body)
        yield [cell(ident), str(status), *(cell((params or {}).get(n)) for n in parameter_names),
               *(cell(fig.get(c)) for c in HEADLINE_COLUMNS),
               "" if status == 200 else cell(body.get("detail", ""))]


def header_lines(what: str) -> list[list[str]]:
    """The field,value block above the table (no '#' comment lines: a CSV reader keeps these rows,
    and the caution stays in one quoted cell), then the empty row that separates it from the table,
    as in the budget CSV."""
    return [["field", "value"],
            ["description", f"taubudget {what}; offsets are clock minus reference; one row per item"],
            ["caution", CAUTION], []]


def render_lines(header: list[list[str]], table: Iterable[list[str]]) -> Iterator[str]:
    """The CSV text in pieces (the header block, then one row each), for streaming."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator=_LINE)
    writer.writerows([safe_cell(c) for c in row] for row in header)
    yield buf.getvalue()
    buf.seek(0)
    buf.truncate()
    for row in table:
        writer.writerow(row)
        yield buf.getvalue()
        buf.seek(0)
        buf.truncate()


def batch_csv(response: dict) -> str:
    """The /v1/budgets/batch response (or a local batch) as CSV, one row per item."""
    records = ((it["id"], None, it["status"], it["budget"] if it["status"] == 200 else it["problem"])
               for it in response["items"])
    return "".join(render_lines(header_lines("batch"), rows(records, [])))
