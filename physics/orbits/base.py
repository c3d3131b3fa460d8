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

from ..constants import EARTH_EQUATORIAL_RADIUS_M, MIN_ORBIT_PERIGEE_ALTITUDE_M
from ..errors import PhysicsInputError


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

    def check_span(self, span, start_name: str = "the span's start", end_name: str = "the span's end",
                   gaps: bool = True) -> None:
        """Refuse, before any work, a span the source cannot give states over (``PhysicsInputError``).

        A source that can compute any instant (elements, a propagator) accepts every span; a table of
        states refuses a span reaching outside its data (``EphemerisTable``). ``start_name`` and
        ``end_name`` are what the span's ends are called in the reason (a caller whose span is the
        range of its own epochs names them so); ``gaps``: whether a gap inside the data that the
        span crosses is refused too (a caller asking for separate epochs leaves gaps to ``states``).
        """

    def begin_evaluation(self) -> None:
        """A budget is about to evaluate this source: forget what an earlier evaluation left (a
        table's interpolation-error maxima), so a source reused across items or requests reports
        this budget's figures only. Sources without such state do nothing."""

    def budget_warnings(self, span, rate_precision_fractional: float) -> list[str]:
        """Warnings about this source's states over ``span``, once a budget has evaluated them.

        ``rate_precision_fractional``: the budget's precision (fractional rate); a source warns
        where its own errors may exceed it. Called after the integration, so a source may judge
        the nodes it was asked for.
        """
        return []


def check_perigee_altitude(perigee_radius_m: float, field: str, value) -> None:
    """Refuse an Earth orbit whose perigee lies below MIN_ORBIT_PERIGEE_ALTITUDE_M (100 km).

    perigee_radius_m: geocentric, m; field, value: the request field to name. Below that altitude
    the atmosphere ends a satellite's flight within its first revolutions (see the constant).
    """
    altitude_m = perigee_radius_m - EARTH_EQUATORIAL_RADIUS_M
    if altitude_m < MIN_ORBIT_PERIGEE_ALTITUDE_M:
        raise PhysicsInputError(
            field, value,
            f"perigee altitude {altitude_m / 1e3:.0f} km is below {MIN_ORBIT_PERIGEE_ALTITUDE_M / 1e3:.0f} "
            "km, the boundary of space used by the FAI: the atmosphere there brings a satellite down "
            "within its first revolutions, so a drag-free orbit is meaningless (the threshold is a "
            "convention, common practice); raise the orbit, or model a clock on the ground with "
            "\"type\": \"surface\"",
        )
