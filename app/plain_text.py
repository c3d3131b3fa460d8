"""Plain-text layout for the command line: every human-readable line fits in ``TEXT_WIDTH`` columns.

Only the text rendering goes through here; ``--json``, ``--csv`` and HTTP bodies are written
elsewhere and never wrapped.
"""

from __future__ import annotations

import textwrap

TEXT_WIDTH = 100
"""Columns of the CLI's plain-text output (tables, key/value summaries and prose)."""


def wrap(text: str, hang: int | str = 0, width: int = TEXT_WIDTH) -> list[str]:
    """``text`` as lines of at most ``width`` columns; continuation lines indented by ``hang``
    (a count of spaces or the indent itself). Words are never split, hyphens never break a line
    (ISO times, negative numbers and option names stay whole), so only a single word longer than
    the line can overflow it."""
    indent = " " * hang if isinstance(hang, int) else hang
    return textwrap.wrap(text, width, subsequent_indent=indent, break_long_words=False,
                         break_on_hyphens=False) or [""]


def fill(text: str, hang: int | str = 0, width: int = TEXT_WIDTH) -> str:
    """``wrap`` joined into one string."""
    return "\n".join(wrap(text, hang, width))


def key_value_lines(rows: list[tuple[str, str]], key_width: int | None = None) -> list[str]:
    """``key  value`` rows, keys padded to one column; a long value continues under its own
    column. A row with an empty value prints the key alone."""
    width = max(len(k) for k, _ in rows) if key_width is None else key_width
    out: list[str] = []
    for key, value in rows:
        if not value:
            out.append(key.rstrip())
            continue
        out += wrap(f"{key:<{width}}  {value}", width + 2)
    return out
