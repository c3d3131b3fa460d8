"""The one exception physics/ raises for unusable input.

It carries the parameter it concerns, the offending value and the physical reason in plain words.
Orbit sources name their own parameters in SI units (``semi_major_axis_m`` = 6e6, ``line1``): a
bare name with no dot. app/ maps those to the request's field and unit (app/services/orbits.py,
``request_error``: ``orbit.semi_major_axis_km`` = 6000.0) and turns the error into a problem+json
422 with a JSON pointer. A dotted name (``orbit.text``, ``series_step_s`` ...) or a top-level
request field (``orbit``, ``start``, ``end``) is already the request's path.

Errors raised while a source is evaluated (an ephemeris that does not cover the span, a numerical
propagation too long) carry ``source``, the orbit source that raised them, so the app knows which
request block (the clock's orbit, a reference clock, a link station) they concern. An error about
an instant carries it in ``at`` (a skyfield Time) and a ``value`` may be a skyfield Time: physics
writes no calendar text; the app writes both in UTC. A reason that names several instants by a
phrase ("the span's end lies 74 s after the data's last point") lists them in ``instants`` as
(phrase, Time) pairs; the app writes each instant in UTC beside its phrase.
"""

from __future__ import annotations


class PhysicsInputError(ValueError):
    """Well-formed input that is physically unusable (perigee inside the Earth, ...)."""

    def __init__(self, field: str, value, reason: str, *, source=None, at=None, instants=()):
        super().__init__(reason)
        self.field = field
        self.value = value
        self.reason = reason
        self.source = source
        self.at = at
        self.instants = tuple(instants)  # (phrase in ``reason``, skyfield Time) pairs

    def __reduce__(self):
        """Picklable (a Dask worker may hand one back): the source object stays behind."""
        return (_rebuild, (type(self), self.field, self.value, self.reason, self.at, self.instants))


def _rebuild(cls, field, value, reason, at, instants=()):
    return cls(field, value, reason, at=at, instants=instants)
