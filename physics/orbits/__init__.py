"""Orbit sources: states(times) -> GCRS position and velocity."""

from .base import OrbitSource, States
from .ephemeris_table import EphemerisTable
from .keplerian import KeplerianOrbit
from .numerical import NumericalOrbit
from .surface import SurfaceClock
from .tle import TleOrbit

__all__ = ["OrbitSource", "States", "EphemerisTable", "KeplerianOrbit", "NumericalOrbit", "SurfaceClock",
           "TleOrbit"]
