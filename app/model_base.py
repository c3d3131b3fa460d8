"""Bases shared by the request and response models of app/schemas/ and app/formats/models.py."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, Field, model_validator


class StrictModel(BaseModel):
    """Unknown fields are refused by name; NaN and infinities are not numbers here."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)


class OpenModel(BaseModel):
    """A response block: fields added later are documented as allowed rather than dropped."""

    model_config = ConfigDict(extra="allow")


class ZonalGravityModel(StrictModel):
    """Which gravity terms act: Earth zonal degree (subclasses set its default), Sun, Moon."""

    earth_zonal_degree: int = Field(4, ge=0, le=6, description="0 = point mass; 2..6 = EGM2008 J2..Jn")
    sun: bool = True
    moon: bool = True

    @model_validator(mode="after")
    def _no_degree_one(self):
        if self.earth_zonal_degree == 1:
            raise ValueError("earth_zonal_degree 1 has no meaning in a geocentric field; use 0 or 2..6")
        return self
