"""Orbit sources: states(times) -> GCRS position and velocity."""

from .base import OrbitSource, States
from .keplerian import KeplerianOrbit
from .surface import SurfaceClock
from .tle import TleOrbit

__all__ = ["OrbitSource", "States", "KeplerianOrbit", "SurfaceClock", "TleOrbit"]
