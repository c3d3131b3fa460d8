"""Request models for orbits given as open-format text or as a GCRS state vector.

They join the ``Orbit`` union of app/schemas.py (discriminated on ``type``):

- ``{"type": "omm" | "opm" | "oem" | "sp3" | "tle_file", "text": "...", "object_id": null}``:
  the message or file as text; ``object_id`` picks one object when the text holds several
  (an OMM/OEM OBJECT_ID or OBJECT_NAME, a TLE name or catalogue number, an SP3 satellite ID
  such as "G05"). An OMM's encoding (KVN, XML, JSON, CSV) is detected unless ``encoding``
  says it.
- ``{"type": "state_vector", "epoch": ..., "position_gcrs_km": [x, y, z],
  "velocity_gcrs_km_per_s": [vx, vy, vz]}``: propagated numerically.

OPM and state-vector orbits take an optional ``force_model`` for the propagation. Without it
a budget propagates them under the request's ``gravity`` block (the terms of the clock rate),
so the trajectory and the rate see one field; where there is no gravity block (measured clock
residuals), ForceModelIn's defaults apply: every EGM2008 zonal term the field carries, J2..J6,
plus the Sun and the Moon.
"""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from ..model_base import Integer, StrictModel, UtcDateTime, ZonalGravityModel
from .common import MAX_TEXT_CHARS

_Strict = StrictModel


class ForceModelIn(ZonalGravityModel):
    """Forces of the numerical propagation (not of the clock rate). Omitted, a budget's propagation
    uses the budget's own ``gravity`` block, so the orbit and the clock's rate see one field; where
    there is no gravity block (measured clock residuals) these defaults apply."""

    earth_zonal_degree: Integer = Field(6, ge=0, le=6, description="0 = point mass; 2..6 = EGM2008 J2..Jn")


_RATE_DEGREE = ZonalGravityModel.model_fields["earth_zonal_degree"].default  # the gravity block's
_FORCE_DEGREE = ForceModelIn.model_fields["earth_zonal_degree"].default

FORCE_MODEL_FIELD = Field(
    None, description="Forces of the numerical propagation. Omitted: the request's gravity block "
    "(Earth zonal degree, Sun, Moon), so the trajectory and the clock's rate use one field; a request "
    f"that omits gravity too gets the gravity block's defaults, J2..J{_RATE_DEGREE}, Sun and Moon. Give it "
    "to propagate with other forces than the rate's (e.g. a realistic orbit under a point-mass rate "
    f"model). Where there is no gravity block (clock residuals): J2..J{_FORCE_DEGREE}, Sun and Moon.")


_TEXT = Field(min_length=1, max_length=MAX_TEXT_CHARS * 2,
              description=f"The file's text (parsers refuse more than {MAX_TEXT_CHARS:,} characters)")
_OBJECT = Field(None, max_length=80, description="Which object, when the text holds several")


class OmmOrbitIn(_Strict):
    """A CCSDS OMM (KVN, XML, JSON or CSV with the 17 mean-element keys), propagated with SGP4."""

    type: Literal["omm"]
    text: str = _TEXT
    object_id: str | None = _OBJECT
    encoding: Literal["kvn", "xml", "json", "csv"] | None = Field(None, description="Detected when omitted")


class OpmOrbitIn(_Strict):
    """A CCSDS OPM (KVN or XML): its state vector, propagated numerically."""

    type: Literal["opm"]
    text: str = _TEXT
    object_id: str | None = _OBJECT
    force_model: ForceModelIn | None = FORCE_MODEL_FIELD


class OemOrbitIn(_Strict):
    """A CCSDS OEM (KVN or XML), interpolated as its segments say; never extrapolated."""

    type: Literal["oem"]
    text: str = _TEXT
    object_id: str | None = _OBJECT


class Sp3OrbitIn(_Strict):
    """An IGS SP3-c/SP3-d file; ``object_id`` is the satellite ID (e.g. "G05")."""

    type: Literal["sp3"]
    text: str = _TEXT
    object_id: str | None = _OBJECT
    interpolation_degree: Integer = Field(9, ge=3, le=15, description="Lagrange degree (SP3 names none)")


class TleFileOrbitIn(_Strict):
    """A file of two-line element sets (optional name lines); one object, or all in a batch."""

    type: Literal["tle_file"]
    text: str = _TEXT
    object_id: str | None = _OBJECT


class StateVectorOrbitIn(_Strict):
    """A GCRS state vector at an epoch, propagated numerically."""

    type: Literal["state_vector"]
    epoch: UtcDateTime = Field(description="Epoch of the state, ISO 8601 UTC")
    position_gcrs_km: list[float] = Field(min_length=3, max_length=3, description="GCRS position, km")
    velocity_gcrs_km_per_s: list[float] = Field(min_length=3, max_length=3,
                                                description="GCRS velocity (dx/dTCG), km/s")
    force_model: ForceModelIn | None = FORCE_MODEL_FIELD


TEXT_ORBITS = (OmmOrbitIn, OpmOrbitIn, OemOrbitIn, Sp3OrbitIn, TleFileOrbitIn)
FORMAT_ORBITS = TEXT_ORBITS + (StateVectorOrbitIn,)
