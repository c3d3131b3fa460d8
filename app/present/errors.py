"""A physics input error in words: its instants written in UTC.

physics/ writes no calendar text: an error about an instant carries it as a skyfield Time in
``at`` or in ``value``, and instants its reason names by a phrase in ``instants``
(physics/errors.py). The problem+json body and the CLI both show errors through ``shown``, so the
time format is written once, here.
"""

from __future__ import annotations

from taubudget.physics.errors import PhysicsInputError

from .budget import UTC_S, utc_time


def utc_text(t) -> str:
    """A skyfield Time as ISO 8601 UTC text to the second (trailing Z)."""
    return utc_time(t, UTC_S)


def instant_text(t) -> str:
    """A skyfield Time as ISO 8601 UTC text, to the millisecond when it is not on a whole second
    (an instant a fraction of a second past the data must not read as the data's last point)."""
    half_ms = t.ts.tt_jd(t.whole, t.tt_fraction + 0.0005 / 86400.0)  # strftime truncates: round
    text = half_ms.utc_strftime("%Y-%m-%dT%H:%M:%S.%f")[:-3]
    return f"{text[:-4]}Z" if text.endswith(".000") else f"{text}Z"


def is_time(value) -> bool:
    """Whether ``value`` is an instant (a skyfield Time), which ``shown`` writes in UTC."""
    return hasattr(value, "utc_strftime") and hasattr(value, "tt")


def shown(exc: PhysicsInputError) -> tuple[str | None, object, str]:
    """(field, value, reason) with skyfield Times written in UTC: a Time value becomes its text,
    each instant the reason names by a phrase (``exc.instants``) is written beside that phrase,
    and an instant in ``at`` that neither already gives is added to the reason."""
    value = utc_text(exc.value) if is_time(exc.value) else exc.value
    reason = exc.reason
    written = [value]  # instants the text already gives
    for phrase, t in getattr(exc, "instants", ()):
        when = instant_text(t)
        written += [when, utc_text(t)]
        if phrase in reason:
            reason = reason.replace(phrase, f"{phrase} ({when})", 1)
        else:
            reason = f"{reason} ({phrase} {when})"
    if exc.at is not None:
        when = utc_text(exc.at)
        if when not in written:
            reason = f"{reason} (at {when})"
    return exc.field, value, reason
