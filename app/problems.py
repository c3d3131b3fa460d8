"""Errors as RFC 9457 problem details (``application/problem+json``).

Every error the service returns has ``type``, ``title``, ``status``, ``detail``
(plain words, with the physical reason where there is one) and ``errors``: a
list of ``{pointer, detail}`` naming each bad field by JSON pointer (RFC 6901)
into the request body, e.g. ``/orbit/eccentricity``. Query-string requests
also carry ``parameter``, the query name the user typed.

Three sources of input errors are mapped here:

- ``physics.errors.PhysicsInputError`` (well-formed but physically unusable
  input: perigee inside the Earth, span outside the ephemeris, ...) -> 422;
- pydantic ``ValidationError`` (shape, type, range, unknown fields) -> 422;
- ``ProblemError`` raised by the app itself (malformed JSON -> 400, size
  limits -> 413, ...).

Anything else is a bug: a 500 problem without a stack trace.
"""

from __future__ import annotations

import logging
from collections.abc import Iterable, Sequence
from typing import Any

from fastapi import Request
from fastapi.encoders import jsonable_encoder
from fastapi.exceptions import RequestValidationError
from fastapi.responses import JSONResponse
from pydantic import ValidationError
from starlette.exceptions import HTTPException as StarletteHTTPException
from taubudget.physics.errors import PhysicsInputError

from .input_hints import hint
from .present.errors import shown

PROBLEM_MEDIA_TYPE = "application/problem+json"

_TYPE_BASE = "urn:taubudget:problem:"
TYPE_INVALID_REQUEST = _TYPE_BASE + "invalid-request"
TYPE_PHYSICALLY_INVALID = _TYPE_BASE + "physically-invalid"
TYPE_MALFORMED_BODY = _TYPE_BASE + "malformed-body"
TYPE_TOO_LARGE = _TYPE_BASE + "limit-exceeded"
TYPE_NOT_READY = _TYPE_BASE + "not-ready"
TYPE_INTERNAL = _TYPE_BASE + "internal-error"
TYPE_BUSY = _TYPE_BASE + "busy"
TYPE_DEADLINE = _TYPE_BASE + "deadline-exceeded"
TYPE_CANCELLED = _TYPE_BASE + "cancelled"
TYPE_UNAUTHORIZED = _TYPE_BASE + "unauthorized"

log = logging.getLogger("taubudget.problems")


class ProblemError(Exception):
    """An error the app raises on purpose; becomes a problem+json response."""

    def __init__(self, status: int, title: str, detail: str, type_: str = TYPE_INVALID_REQUEST,
                 errors: Sequence[dict] | None = None, headers: dict | None = None, **extra: Any):
        super().__init__(detail)
        self.status, self.title, self.detail, self.type = status, title, detail, type_
        self.errors = list(errors or [])
        self.headers = headers
        self.extra = extra

    @classmethod
    def from_problem(cls, p: dict) -> ProblemError:
        """The exception that renders as the problem dict ``p`` (``problem``, ``validation_problem``,
        ``physics_problem``): the one way from a problem object to a raised error."""
        core = {"type", "title", "status", "detail", "errors", "instance"}
        return cls(p["status"], p["title"], p["detail"], p["type"], p["errors"],
                   **{k: v for k, v in p.items() if k not in core})

    def to_dict(self, instance: str | None = None) -> dict:
        return problem(self.status, self.title, self.detail, self.type, self.errors, instance,
                       **self.extra)


def problem(status: int, title: str, detail: str, type_: str, errors: Iterable[dict] = (),
            instance: str | None = None, **extra: Any) -> dict:
    """The problem-details object (RFC 9457 section 3) as a plain dict."""
    out = {"type": type_, "title": title, "status": status, "detail": detail,
           "errors": list(errors)}
    if instance is not None:
        out["instance"] = instance
    out.update(extra)
    return out


def problem_response(body: dict, headers: dict | None = None) -> JSONResponse:
    return JSONResponse(jsonable_encoder(body), status_code=body["status"],
                        media_type=PROBLEM_MEDIA_TYPE, headers=headers)


# --- JSON pointers -----------------------------------------------------------------

def _escape(token) -> str:
    return str(token).replace("~", "~0").replace("/", "~1")


def pointer(parts: Iterable) -> str:
    """RFC 6901 pointer from path tokens; ``()`` is the whole document, ``""``."""
    return "".join("/" + _escape(p) for p in parts)


def dotted_to_pointer(field: str | None, prefix: str = "") -> str:
    """``orbit.semi_major_axis_km`` -> ``/orbit/semi_major_axis_km`` (after ``prefix``)."""
    if not field:
        return prefix
    return prefix + pointer(field.split("."))


def _is_union_tag(seg, data) -> bool:
    # pydantic puts the union member into the location: the discriminator value
    # ("keplerian"), a model class name ("SurfaceClockIn") or a validator label
    # ("literal['TT',...]", "function-after[...]"). Our field names are snake_case.
    if not isinstance(seg, str):
        return False
    if "[" in seg or seg[:1].isupper():
        return True
    return isinstance(data, dict) and data.get("type") == seg


def loc_to_parts(loc: Sequence, data: Any) -> list:
    """Field path of a pydantic error location in the input ``data``, union tags dropped."""
    parts: list = []
    cur = data
    for seg in loc:
        if isinstance(cur, dict) and isinstance(seg, str) and seg in cur:
            parts.append(seg)
            cur = cur[seg]
        elif isinstance(cur, list) and isinstance(seg, int):
            parts.append(seg)
            cur = cur[seg] if 0 <= seg < len(cur) else None
        elif _is_union_tag(seg, cur):
            continue
        else:
            parts.append(seg)
            cur = None
    return parts


def _message(err: dict) -> str:
    msg = err.get("msg", "invalid value")
    if err.get("type") == "extra_forbidden":
        return "unknown field; it is not part of the request schema (check its spelling and units)"
    if err.get("type") == "missing":
        return "required field is missing"
    hinted = hint(err)
    if hinted is not None:
        return hinted
    # model_validator messages arrive as "Value error, <our text>".
    return msg.removeprefix("Value error, ")


def validation_errors(exc: ValidationError | RequestValidationError, data: Any,
                      prefix: str = "", strip: int = 0) -> list[dict]:
    """``[{pointer, detail}]``, one per bad field; ``strip`` drops leading loc items.

    A value that fits no member of a union (e.g. ``reference``) gives pydantic one
    error per member; they are joined into one entry for that pointer.
    """
    by_pointer: dict[str, list[str]] = {}
    for err in exc.errors():
        loc = tuple(err.get("loc", ()))[strip:]
        ptr = prefix + pointer(loc_to_parts(loc, data))
        msgs = by_pointer.setdefault(ptr, [])
        msg = _message(err)
        if msg not in msgs:
            msgs.append(msg)
    return [{"pointer": ptr, "detail": "; or: ".join(msgs)} for ptr, msgs in by_pointer.items()]


def validation_problem(errors: list[dict], what: str = "The request") -> dict:
    """A 422 problem for ``errors``; ``what`` names the thing ("The request", "Item 3")."""
    names = ", ".join(e.get("parameter") or e["pointer"] or "(whole body)" for e in errors)
    if len(errors) == 1:
        first = errors[0]
        where = first.get("parameter") or first["pointer"] or "the top level"
        detail = f"{what} is invalid at {where}: {first['detail']}."
    else:
        detail = f"{what} has {len(errors)} invalid fields: {names}. See 'errors'."
    return problem(422, "Invalid request", detail, TYPE_INVALID_REQUEST, errors)


def physics_problem(exc: PhysicsInputError, prefix: str = "") -> dict:
    field, value, reason = shown(exc)
    ptr = dotted_to_pointer(field, prefix)
    where = field or "the request"
    given = "" if value is None else f" ({where} = {value!r})"
    detail = f"{reason[:1].upper()}{reason[1:]}{given}."
    return problem(422, "Physically unusable input", detail, TYPE_PHYSICALLY_INVALID,
                   [{"pointer": ptr, "detail": reason}])


# --- Exception handlers ---------------------------------------------------------------

def _instance(request: Request) -> str:
    return request.url.path


async def handle_problem(request: Request, exc: ProblemError):
    return problem_response(exc.to_dict(_instance(request)), headers=exc.headers)


async def handle_physics(request: Request, exc: PhysicsInputError):
    body = physics_problem(exc)
    body["instance"] = _instance(request)
    return problem_response(body)


async def handle_request_validation(request: Request, exc: RequestValidationError):
    # Query-string and path parameters: loc is ("query", name, ...).
    errors = []
    for err in exc.errors():
        loc = tuple(err.get("loc", ()))
        name = loc[1] if len(loc) > 1 else None
        errors.append({"pointer": pointer(loc[1:]), "parameter": name, "detail": _message(err)})
    body = validation_problem(errors, "The query")
    body["instance"] = _instance(request)
    return problem_response(body)


_HTTP_TITLES = {404: "Not found", 405: "Method not allowed", 406: "Not acceptable",
                415: "Unsupported media type"}


async def handle_http(request: Request, exc: StarletteHTTPException):
    title = _HTTP_TITLES.get(exc.status_code, "HTTP error")
    detail = exc.detail if isinstance(exc.detail, str) else title
    if exc.status_code == 404:
        detail = f"There is no resource at {request.url.path}; see /docs for the API."
    body = problem(exc.status_code, title, detail, "about:blank", [], _instance(request))
    return problem_response(body, headers=getattr(exc, "headers", None))


async def handle_unexpected(request: Request, exc: Exception):
    log.exception("unhandled error on %s %s", request.method, request.url.path)
    body = problem(500, "Internal error",
                   "The service failed on a valid-looking request; this is a bug in the service, "
                   "not in your input. Nothing of the internal state is shown here.",
                   TYPE_INTERNAL, [], _instance(request))
    return problem_response(body)


def install(app) -> None:
    """Register the problem+json handlers on a FastAPI app."""
    app.add_exception_handler(ProblemError, handle_problem)
    app.add_exception_handler(PhysicsInputError, handle_physics)
    app.add_exception_handler(RequestValidationError, handle_request_validation)
    app.add_exception_handler(StarletteHTTPException, handle_http)
    app.add_exception_handler(Exception, handle_unexpected)
