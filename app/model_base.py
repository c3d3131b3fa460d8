"""Bases shared by the request and response models of app/schemas/ and app/formats/models.py."""

from __future__ import annotations

from typing import Annotated

from pydantic import AwareDatetime, BaseModel, BeforeValidator, ConfigDict, Field, model_validator


class StrictModel(BaseModel):
    """Unknown fields are refused by name; NaN and infinities are not numbers here; types are
    strict: a number must be a JSON number (not "26561.4"), a boolean true or false (not 0 or
    "yes"). Routes whose values arrive as text (query strings, multipart form fields, metadata
    of uploaded files) validate with ``model_validate(..., strict=False)`` and so still convert
    "1.5" and "true", with a 422 naming the field for text that is not a number."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False, strict=True)


def _integral_number(value):
    """A JSON number with no fractional part as the integer it is (JSON has one number type, and
    JSON Schema's "integer" admits 2.0); 2.5, "2" and true stay refused by the strict check."""
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


Integer = Annotated[int, BeforeValidator(_integral_number)]
"""An integer request field: 2 or 2.0 (what a script computing it as a float writes), not 2.5, "2"
or true."""

UtcDateTime = Annotated[AwareDatetime, Field(strict=False)]
"""A time with its offset: JSON has no time type, so ISO 8601 text is the strict form here."""


class OpenModel(BaseModel):
    """A response block: fields added later are documented as allowed rather than dropped."""

    model_config = ConfigDict(extra="allow")


class ZonalGravityModel(StrictModel):
    """Which gravity terms act: Earth zonal degree (subclasses set its default), Sun, Moon."""

    earth_zonal_degree: Integer = Field(4, ge=0, le=6, description="0 = point mass; 2..6 = EGM2008 J2..Jn")
    sun: bool = True
    moon: bool = True

    @model_validator(mode="after")
    def _no_degree_one(self):
        if self.earth_zonal_degree == 1:
            raise ValueError("earth_zonal_degree 1 has no meaning in a geocentric field; use 0 or 2..6")
        return self
