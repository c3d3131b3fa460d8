"""``GET /v1/reference`` and ``GET /health``."""

from __future__ import annotations

from pydantic import Field

from ..model_base import OpenModel as _Open


class ConstantOut(_Open):
    name: str
    value: float | int | str | dict
    doc: str = Field(description="Unit and source, from physics/constants.py")


class ReferenceResponse(_Open):
    constants: list[ConstantOut]
    sources: dict[str, str]
    models: dict
    versions: dict[str, str]
    limits: dict[str, float | int]
    caution: str


class HealthResponse(_Open):
    status: str
    timescale: bool | None = None
    ephemeris: bool | None = None
