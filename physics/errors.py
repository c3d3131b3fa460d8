"""The one exception physics/ raises for unusable input.

It carries the parameter it concerns, the offending value and the physical reason in plain words.
Orbit sources name their own parameters in SI units (``semi_major_axis_m`` = 6e6, ``line1``): a
bare name with no dot. app/ maps those to the request's field and unit (app/services/orbits.py,
``request_error``: ``orbit.semi_major_axis_km`` = 6000.0) and turns the error into a problem+json
422 with a JSON pointer. A dotted name (``orbit.text``, ``series_step_s`` ...) or a top-level
request field (``orbit``, ``start``, ``end``) is already the request's path.
"""

from __future__ import annotations


class PhysicsInputError(ValueError):
    """Well-formed input that is physically unusable (perigee inside the Earth, ...)."""

    def __init__(self, field: str, value, reason: str):
        super().__init__(reason)
        self.field = field
        self.value = value
        self.reason = reason
