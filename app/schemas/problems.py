"""RFC 9457 problem details, as every error response carries them."""

from __future__ import annotations

from pydantic import Field

from ..model_base import OpenModel as _Open


class ProblemFieldError(_Open):
    pointer: str = Field(description="JSON pointer (RFC 6901) to the bad field of the request body")
    detail: str
    parameter: str | None = Field(None, description="Query parameter name, for query-string requests")


class Problem(_Open):
    """RFC 9457 problem details."""

    type: str
    title: str
    status: int
    detail: str
    instance: str | None = None
    errors: list[ProblemFieldError] = Field(default_factory=list)
