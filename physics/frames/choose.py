"""Which frame a budget is computed in (DESIGN.md, "Frame choice")."""

from __future__ import annotations

from ..errors import PhysicsInputError
from ..timescales import needs_positions, scale
from .barycentric import BarycentricFrame
from .geocentric import GeocentricFrame

FRAMES = {"GCRS": GeocentricFrame, "BCRS": BarycentricFrame}


def choose_frame(source, reference) -> str:
    """GCRS for Earth-centred clocks against Earth references; BCRS otherwise.

    A clock whose source is Earth-centred (Keplerian around the Earth, TLE, Earth surface) is
    computed in the GCRS unless the reference's rate against TT depends on where the Earth or Moon
    is (TCB, TDB, lunar_surface in the time-scale table); every other source in the BCRS. The GCRS
    tidal expansion holds well inside the Earth's Hill sphere (~1.5e6 km).
    """
    if getattr(source, "frame", "GCRS") == "BCRS":
        return "BCRS"
    if isinstance(reference, str) and needs_positions(reference):
        return "BCRS"
    return "GCRS"


def build_frame(source, reference, gravity, span, env, forced: str | None = None):
    """The frame object for a budget; ``forced``: "GCRS" or "BCRS" (None: ``choose_frame``)."""
    if isinstance(reference, str):
        try:
            scale(reference)
        except ValueError as exc:
            raise PhysicsInputError("reference", reference, str(exc)) from None
    auto = choose_frame(source, reference)
    name = forced or auto
    if name not in FRAMES:
        raise PhysicsInputError("frame", name, "the frames are GCRS and BCRS")
    if name == "GCRS" and auto == "BCRS":
        raise PhysicsInputError(
            "frame", "GCRS",
            "this clock or reference needs the barycentric frame (an orbit around the Sun, Moon or "
            "Mars, a clock on the Moon or Mars, or a TCB, TDB or lunar_surface reference): use "
            "\"frame\": \"BCRS\" or \"auto\"",
        )
    return FRAMES[name](source, reference, gravity, span, env)
