"""Read taubudget's CSV with the csv module alone: a field,value block, then (after an empty row)
an optional table. No line filtering: every line must be CSV."""

from __future__ import annotations

import csv
import io


def split_blocks(text: str) -> tuple[dict[str, str], list[dict[str, str]] | None]:
    """(field -> value of the leading block, rows of the table after the first empty row or None)."""
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == ["field", "value"], rows[0]
    end = rows.index([]) if [] in rows else len(rows)
    fields = {r[0]: r[1] for r in rows[1:end]}
    assert all(len(r) == 2 for r in rows[1:end])
    if end == len(rows):
        return fields, None
    header, body = rows[end + 1], rows[end + 2:]
    assert all(len(r) == len(header) for r in body)
    return fields, [dict(zip(header, r, strict=True)) for r in body]
