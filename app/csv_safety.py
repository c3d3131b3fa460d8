"""Cells that are safe to open in a spreadsheet: CSV formula injection neutralised.

A spreadsheet reads a cell that begins with ``=``, ``+``, ``-`` or ``@`` as a formula, and
tab or carriage return can hide such a start (OWASP, "CSV Injection"). Every CSV the service
writes passes its cells through ``safe_cell``: a text cell with such a start gets a leading
apostrophe (``'=HYPERLINK(...)``), which spreadsheets show as text and do not evaluate; the
csv module then quotes the cell as RFC 4180 requires. Numbers stay numbers: ints and floats
are written with ``repr`` (full double precision), and text that is exactly a decimal number
(``-24.65``, ``-1.5e-10``) is left alone, so negative offsets remain numeric in a sheet.

Call it from any CSV writer (budgets, contact plans, batches, studies):
``writer.writerow(safe_row(values))``.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from typing import Any

TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
"""Leading characters a spreadsheet may take as the start of a formula (OWASP)."""

_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")


def safe_text(text: str) -> str:
    """``text`` with a leading apostrophe when it would start a formula and is not a number."""
    if text.startswith(TRIGGERS) and not _NUMBER.fullmatch(text):
        return "'" + text
    return text


def plain_text(value: Any) -> str:
    """A scalar as text: floats at full double precision (``repr``), booleans as true/false,
    None as empty, anything else as ``str``."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value)
    return str(value)


def safe_cell(value: Any) -> str:
    """The text of one CSV cell: ``plain_text`` neutralised by ``safe_text`` (numbers pass)."""
    return safe_text(plain_text(value))


def safe_row(values: Iterable[Any]) -> list[str]:
    return [safe_cell(v) for v in values]
