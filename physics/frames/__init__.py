"""Frames of the computation and the Earth's orientation.

geocentric.py (GCRS, TCG coordinate time: near-Earth clocks) and barycentric.py (BCRS, TCB
coordinate time: everything else) each hold one frame object that knows its term names, how to
evaluate the integrand, its reference's rate, the bounded parts to remove before the secular fit,
its omitted terms and how to describe itself; ``choose.build_frame`` picks one. orientation.py
interpolates the Earth's orientation on a coarse grid (re-exported here).
"""

from .orientation import ERA_RATE_RAD_PER_S, ORIENTATION_GRID_STEP_S, EarthOrientation, coarse_grid_s

__all__ = ["ERA_RATE_RAD_PER_S", "ORIENTATION_GRID_STEP_S", "EarthOrientation", "coarse_grid_s"]
