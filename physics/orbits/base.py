"""The orbit-source interface: states at an array of node times, in one frame.

An orbit source turns TT seconds since a span's start into positions and
velocities in the GCRS (metres, m/s). Sources never raise part-way through an
array: a node they cannot compute gets NaN and a non-zero ``code`` with a
message in ``messages``; the caller decides what that means (app/ maps it to
an HTTP 422).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass
class States:
    """Clock positions and velocities at N nodes, GCRS."""

    r_gcrs_m: np.ndarray
    v_gcrs_m_per_s: np.ndarray
    code: np.ndarray  # int, 0 where the state is valid
    messages: dict[int, str] = field(default_factory=dict)
    r_dot_v_m2_per_s: np.ndarray | None = None  # relative to the primary (BCRS sources)
    r_geocentric_m: np.ndarray | None = None  # Earth-centred sources carried into the BCRS
    frame: str = "GCRS"  # "BCRS" for barycentric sources: then the r/v arrays are BCRS vectors
    sin_lat: np.ndarray | None = None  # Earth-fixed geocentric sin(latitude), when the source has it

    @property
    def r_m(self) -> np.ndarray:
        """Position in this States' ``frame``, m."""
        return self.r_gcrs_m

    @property
    def v_m_per_s(self) -> np.ndarray:
        """Velocity in this States' ``frame``, m/s."""
        return self.v_gcrs_m_per_s


class OrbitSource:
    """Base class of orbit sources; subclasses implement ``states``.

    Attributes a subclass sets:
    - ``kind``: short name for the model description ("keplerian", "tle", "surface").
    - ``is_surface``: True for a clock fixed on the Earth (normal gravity field).
    """

    kind = "abstract"
    is_surface = False
    frame = "GCRS"

    def states(self, span, t_s: np.ndarray, orientation) -> States:  # pragma: no cover
        raise NotImplementedError

    def period_s(self) -> float | None:
        """Anomalistic period of the orbit, s, or None for a surface clock."""
        return None

    def epoch(self):
        """Epoch (skyfield Time) of the elements, or None."""
        return None

    def describe(self) -> dict:
        return {"type": self.kind}
