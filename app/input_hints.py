"""Plain-words messages for input forms people commonly type: what was wrong and the form expected.

pydantic says "unable to parse string as a number" or "Input should have timezone info"; a user
who typed a decimal comma, a date without a time, or a leap second needs to be told which form the
service takes. ``hint(err)`` returns such a message for one pydantic error dict, or None.
"""

from __future__ import annotations

import re
from datetime import date

ISO_EXAMPLE = "2027-03-01T00:00:00Z"
"""The time form the API documents: ISO 8601 in UTC with a trailing Z (or an offset)."""

_DECIMAL_COMMA = re.compile(r"^\s*[+-]?\d+,\d+(?:[eE][+-]?\d+)?\s*$")
_DATE_ONLY = re.compile(r"^\s*\d{4}-\d{2}-\d{2}\s*$")
_LEAP_SECOND = re.compile(r"^\s*(\d{4})-(\d{2})-(\d{2})T23:59:60(?:\.\d+)?(Z|[+-]00:?00)?\s*$")
_NUMBER_ERRORS = ("float_parsing", "int_parsing", "float_type", "int_type")
_TIME_ERRORS = ("timezone_aware", "datetime_parsing", "datetime_from_date_parsing", "datetime_type")


_JD_OF_ORDINAL_0H = 1_721_424.5
"""Julian date of 0h UTC on proleptic Gregorian ordinal 0 (so 2017-01-01 -> 2457754.5)."""


def _utc_had_leap_second_after(day: date) -> bool:
    """True if UTC inserted a leap second at the end of ``day`` (skyfield's builtin leap table,
    whose ``leap_dates`` are the Julian dates of the 0h UTC that follows each leap second)."""
    from taubudget.physics.ephemeris import timescale

    next_day_jd = day.toordinal() + 1 + _JD_OF_ORDINAL_0H
    return bool(any(abs(float(jd) - next_day_jd) < 1e-6 for jd in timescale().leap_dates))


def _leap_second_message(text: str, m: re.Match) -> str:
    try:
        day = date(int(m.group(1)), int(m.group(2)), int(m.group(3)))
    except ValueError:
        return f"'{text}' is not a calendar date; expected ISO 8601 UTC such as {ISO_EXAMPLE}"
    if m.group(4) is None:
        return f"'{text}' has no time zone; write UTC with a trailing Z, e.g. {ISO_EXAMPLE}"
    if not _utc_had_leap_second_after(day):
        return (f"'{text}' names second 60, but UTC inserted no leap second at the end of "
                f"{day.isoformat()}; expected ISO 8601 UTC such as {ISO_EXAMPLE}")
    nxt = date.fromordinal(day.toordinal() + 1).isoformat()
    return (f"'{text}' is a real UTC leap second, but times here are held as calendar date-times, "
            "which have no second 60, so a leap-second label is refused rather than silently moved; "
            f"give {day.isoformat()}T23:59:59Z or {nxt}T00:00:00Z (one second later)")


def hint(err: dict) -> str | None:
    """A message naming the expected form for a number or time the user mistyped, else None."""
    kind = err.get("type")
    value = err.get("input")
    if not isinstance(value, str):
        return None
    text = value.strip()
    if kind in _NUMBER_ERRORS:
        if _DECIMAL_COMMA.match(text):
            return (f"'{value}' uses a decimal comma; numbers take a decimal point, e.g. "
                    f"{text.replace(',', '.')}")
        return f"'{value}' is not a number; expected a number with a decimal point, e.g. 26561.4"
    if kind in _TIME_ERRORS:
        leap = _LEAP_SECOND.match(text)
        if leap:
            return _leap_second_message(text, leap)
        if _DATE_ONLY.match(text):
            return (f"'{value}' is a date without a time; expected an ISO 8601 UTC date and time, "
                    f"e.g. {text}T00:00:00Z")
        if kind == "timezone_aware":
            return (f"'{value}' has no time zone; expected ISO 8601 UTC with a trailing Z or an "
                    f"offset, e.g. {ISO_EXAMPLE}")
        return f"'{value}' is not an ISO 8601 date and time; expected UTC such as {ISO_EXAMPLE}"
    return None


_JSON_NUMBER_THEN_COMMA = re.compile(r"(-?\d+),\s*$")
_LEADING_DIGITS = re.compile(r"^\d+")


def json_decimal_comma_hint(text: str, pos: int) -> str | None:
    """If a JSON syntax error at ``pos`` follows a number written with a decimal comma, say so."""
    before = _JSON_NUMBER_THEN_COMMA.search(text[max(0, pos - 40):pos])
    after = _LEADING_DIGITS.match(text[pos:pos + 40])
    if before is None or after is None:
        return None
    typed = f"{before.group(1)},{after.group(0)}"
    return (f"{typed} looks like a number with a decimal comma; JSON numbers take a decimal point, "
            f"e.g. {before.group(1)}.{after.group(0)}")
