"""Dependencies shared by the routes, as ``Annotated`` aliases."""

from __future__ import annotations

import json
from typing import Annotated, Any

from fastapi import Depends, Request

from .problems import TYPE_MALFORMED_BODY, TYPE_TOO_LARGE, ProblemError
from .settings import Settings


def get_app_settings(request: Request) -> Settings:
    """The settings the app was built with (``create_app(settings)``)."""
    return request.app.state.settings


SettingsDep = Annotated[Settings, Depends(get_app_settings)]


class BodyTooLarge(ProblemError):
    def __init__(self, limit: int):
        super().__init__(
            413, "Request body too large",
            f"The request body is larger than this service's limit of {limit} bytes "
            "(setting TAUBUDGET_MAX_BODY_BYTES); split the batch into smaller ones.",
            TYPE_TOO_LARGE, limit_name="MAX_BODY_BYTES", limit=limit,
        )


def _reject_constant(name: str):
    raise ValueError(f"{name} is not a JSON number (RFC 8259 has no NaN or Infinity)")


def parse_json(raw: bytes) -> Any:
    """Parse a request body as JSON whatever its content type; malformed -> 400 problem."""
    if not raw.strip():
        raise ProblemError(400, "Empty body", "The request has no body; send the request as JSON.",
                           TYPE_MALFORMED_BODY, [{"pointer": "", "detail": "empty body"}])
    try:
        text = raw.decode("utf-8-sig")
        return json.loads(text, parse_constant=_reject_constant)
    except UnicodeDecodeError as exc:
        raise ProblemError(400, "Malformed body", f"The body is not UTF-8 text: {exc.reason} at "
                           f"byte {exc.start}.", TYPE_MALFORMED_BODY,
                           [{"pointer": "", "detail": "not UTF-8"}]) from exc
    except json.JSONDecodeError as exc:
        raise ProblemError(400, "Malformed JSON", f"The body is not valid JSON: {exc.msg} at line "
                           f"{exc.lineno}, column {exc.colno}.", TYPE_MALFORMED_BODY,
                           [{"pointer": "", "detail": exc.msg}]) from exc
    except ValueError as exc:
        raise ProblemError(400, "Malformed JSON", f"The body is not valid JSON: {exc}.",
                           TYPE_MALFORMED_BODY, [{"pointer": "", "detail": str(exc)}]) from exc
    except RecursionError as exc:
        raise ProblemError(400, "Malformed JSON", "The body nests arrays or objects too deeply to be "
                           "a request.", TYPE_MALFORMED_BODY,
                           [{"pointer": "", "detail": "nesting too deep"}]) from exc


async def read_json_body(request: Request) -> Any:
    """The request body parsed as JSON; the content type is not required to say JSON."""
    return parse_json(await request.body())


JsonBody = Annotated[Any, Depends(read_json_body)]
