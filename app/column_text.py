"""One column of numbers as text (plain text or one-column CSV), for measured clock data.

Accepted: one number per line; blank lines and lines starting with ``#`` are skipped;
a first non-comment line that is not a number is taken as a column heading. Comment
lines of the form ``# key: value`` (or ``key = value``) are collected as metadata, so a
file can carry its own ``sample_interval_s`` and ``data_type``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

_SPLIT = re.compile(r"[,;\s]+")
_META = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*[:=]\s*(\S.*?)\s*$")


class ColumnError(ValueError):
    """A line that is not one finite number; ``line`` is 1-based."""

    def __init__(self, line: int, reason: str):
        super().__init__(f"line {line}: {reason}")
        self.line, self.reason = line, reason


class TooManyValues(ValueError):
    def __init__(self, limit: int):
        super().__init__(f"more than {limit} values")
        self.limit = limit


@dataclass
class Column:
    values: list[float]
    heading: str | None = None
    metadata: dict[str, str] = field(default_factory=dict)


def parse_column(text: str, max_values: int | None = None) -> Column:
    """The numbers of a one-column text; ColumnError names the first bad line."""
    out = Column(values=[])
    for number, raw in enumerate(text.lstrip("\ufeff").splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            m = _META.match(line)
            if m:
                out.metadata.setdefault(m.group(1).lower(), m.group(2))
            continue
        tokens = [t for t in _SPLIT.split(line) if t]
        if len(tokens) != 1:
            raise ColumnError(number, f"expected one value per line, found {len(tokens)}")
        token = tokens[0].strip('"')
        try:
            value = float(token)
        except ValueError:
            if not out.values and out.heading is None:
                out.heading = token
                continue
            raise ColumnError(number, f"{token[:40]!r} is not a number") from None
        if not math.isfinite(value):
            raise ColumnError(number, f"{token!r} is not finite (gaps are not supported)")
        out.values.append(value)
        if max_values is not None and len(out.values) > max_values:
            raise TooManyValues(max_values)
    return out
