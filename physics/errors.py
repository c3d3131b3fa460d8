"""The one exception physics/ raises for unusable input.

It carries the request field it concerns (as a dotted path, e.g.
``orbit.eccentricity``), the offending value and the physical reason in plain
words, so that app/ can turn it into a problem+json 422 without guessing.
"""

from __future__ import annotations


class PhysicsInputError(ValueError):
    """Well-formed input that is physically unusable (perigee inside the Earth, ...)."""

    def __init__(self, field: str, value, reason: str):
        super().__init__(reason)
        self.field = field
        self.value = value
        self.reason = reason
