"""A physics input error in words: its instants written in UTC.

physics/ writes no calendar text: an error about an instant carries it as a skyfield Time in
``at`` or in ``value`` (physics/errors.py). The problem+json body and the CLI both show errors
through ``shown``, so the time format is written once, here.
"""

from __future__ import annotations

from taubudget.physics.errors import PhysicsInputError

UTC_S = "%Y-%m-%dT%H:%M:%SZ"


def utc_text(t) -> str:
    """A skyfield Time as ISO 8601 UTC text to the second (trailing Z)."""
    return t.utc_strftime(UTC_S)


def is_time(value) -> bool:
    """Whether ``value`` is an instant (a skyfield Time), which ``shown`` writes in UTC."""
    return hasattr(value, "utc_strftime") and hasattr(value, "tt")


def shown(exc: PhysicsInputError) -> tuple[str | None, object, str]:
    """(field, value, reason) with skyfield Times written in UTC: a Time value becomes its text,
    and an instant in ``at`` that the value does not already give is added to the reason."""
    value = utc_text(exc.value) if is_time(exc.value) else exc.value
    reason = exc.reason
    if exc.at is not None:
        when = utc_text(exc.at)
        if when != value:
            reason = f"{reason} (at {when})"
    return exc.field, value, reason
