"""Frequency stability of measured clock data: ``POST /v1/clock-stability``."""

from __future__ import annotations

from typing import Annotated, Literal

from fastapi import APIRouter, Query, Request
from pydantic import ValidationError

from ..column_text import ColumnError, TooManyValues, parse_column
from ..compute import ComputeDep
from ..deps import SettingsDep, parse_json
from ..problems import (
    TYPE_MALFORMED_BODY,
    TYPE_TOO_LARGE,
    ProblemError,
    validation_errors,
    validation_problem,
)
from ..schemas import EXAMPLE_STABILITY_REQUEST, StabilityRequest, StabilityResponse
from ..services.stability import stability_from_data
from . import openapi_doc as doc

router = APIRouter(prefix="/v1", tags=["clock"])

_TEXT_TYPES = ("text/", "application/csv")
_QUERY_NAMES = ("data_type", "sample_interval_s", "confidence")


def _invalid(errors: list[dict], what: str = "The request") -> ProblemError:
    p = validation_problem(errors, what)
    return ProblemError.from_problem(p)


async def _upload_text(request: Request) -> str:
    ctype = request.headers.get("content-type", "").lower()
    if ctype.startswith("multipart/form-data"):
        async with request.form() as form:
            upload = form.get("file")
            if upload is None or isinstance(upload, str):
                upload = next((v for v in form.values() if not isinstance(v, str)), None)
            if upload is None:
                raise ProblemError(400, "No file uploaded",
                                   "A multipart upload needs the data column as a file part named 'file'.",
                                   TYPE_MALFORMED_BODY, [{"pointer": "", "detail": "no file part 'file'"}])
            raw = await upload.read()
    else:
        raw = await request.body()
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ProblemError(400, "Malformed body", f"The upload is not UTF-8 text: {exc.reason} at byte "
                           f"{exc.start}.", TYPE_MALFORMED_BODY,
                           [{"pointer": "", "detail": "not UTF-8"}]) from exc


def _from_text(text: str, query: dict, max_values: int) -> StabilityRequest:
    try:
        column = parse_column(text, max_values)
    except TooManyValues as exc:
        raise ProblemError(413, "Too many samples",
                           f"The upload has more than {exc.limit} values, above this service's limit "
                           "(setting TAUBUDGET_MAX_STABILITY_POINTS); decimate or split the record.",
                           TYPE_TOO_LARGE, [{"pointer": "", "detail": f"at most {exc.limit} values"}],
                           limit_name="MAX_STABILITY_POINTS", limit=exc.limit) from exc
    except ColumnError as exc:
        raise _invalid([{"pointer": "", "detail": str(exc)}], "The uploaded column") from exc
    body = {name: column.metadata[name] for name in _QUERY_NAMES if name in column.metadata}
    body.update({k: v for k, v in query.items() if v is not None})
    body["data"] = column.values
    try:
        return StabilityRequest.model_validate(body, strict=False)  # file header and query text
    except ValidationError as exc:
        errors = validation_errors(exc, body)
        for e in errors:
            name = e["pointer"].lstrip("/")
            if name in _QUERY_NAMES:
                e["parameter"] = name
                if name not in query or query[name] is None:
                    e["detail"] += " (give it as a query parameter or a '# name: value' header line)"
        raise _invalid(errors, "The upload") from exc


@router.post(
    "/clock-stability",
    summary="Frequency stability of measured clock data",
    response_model=StabilityResponse,
    response_model_exclude_unset=True,
    responses=doc.model_responses("ADEV, OADEV, MDEV, TDEV, HDEV per tau", (400, 413, 422)),
    openapi_extra={"requestBody": {
        "required": True,
        "description": "JSON (StabilityRequest), or one column of numbers as text/plain, text/csv or a "
        "multipart file part 'file' with data_type and sample_interval_s as query parameters.",
        "content": {
            "application/json": {"schema": doc.ref("StabilityRequest"),
                                 "examples": {"nbs_9_point": {"summary": "NIST SP 1065 Table 30 data",
                                                              "value": EXAMPLE_STABILITY_REQUEST}}},
            "text/plain": {"schema": {"type": "string"},
                           "example": "# sample_interval_s: 1\n892\n809\n823\n"},
            "multipart/form-data": {"schema": {
                "type": "object", "required": ["file"],
                "properties": {"file": {"type": "string", "format": "binary"}}}},
        },
    }},
)
async def clock_stability(
    request: Request,
    settings: SettingsDep,
    compute: ComputeDep,
    data_type: Annotated[Literal["phase", "frequency"] | None, Query(
        description="Upload only: phase (s) or fractional frequency")] = None,
    sample_interval_s: Annotated[float | None, Query(
        ge=1e-12, le=1e9, description="Upload only: tau0, s")] = None,
    confidence: Annotated[float | None, Query(ge=0.01, le=0.9999, description="Upload only")] = None,
):
    """Allan, overlapping Allan, modified Allan, time and Hadamard deviations of measured data."""
    ctype = request.headers.get("content-type", "").lower()
    query = {"data_type": data_type, "sample_interval_s": sample_interval_s, "confidence": confidence}
    if ctype.startswith("multipart/form-data") or ctype.startswith(_TEXT_TYPES):
        req = _from_text(await _upload_text(request), query, settings.MAX_STABILITY_POINTS)
    else:
        given = [k for k, v in query.items() if v is not None]
        if given:
            raise _invalid([{"pointer": f"/{k}", "parameter": k,
                             "detail": "with a JSON body, give this field in the body"} for k in given],
                           "The query")
        body = parse_json(await request.body())
        if isinstance(body, dict) and isinstance(body.get("data"), list) and \
                len(body["data"]) > settings.MAX_STABILITY_POINTS:
            raise ProblemError(413, "Too many samples",
                               f"'data' has {len(body['data'])} values, above this service's limit of "
                               f"{settings.MAX_STABILITY_POINTS} (setting TAUBUDGET_MAX_STABILITY_POINTS).",
                               TYPE_TOO_LARGE, [{"pointer": "/data", "detail": "too many values"}],
                               limit_name="MAX_STABILITY_POINTS", limit=settings.MAX_STABILITY_POINTS)
        try:
            req = StabilityRequest.model_validate(body)
        except ValidationError as exc:
            raise _invalid(validation_errors(exc, body)) from exc
    result = await compute(stability_from_data, req.data, req.data_type, req.sample_interval_s,
                                     req.confidence, settings)
    return result
