"""Dependencies shared by the routes, as ``Annotated`` aliases."""

from __future__ import annotations

import json
from typing import Annotated, Any

from fastapi import Depends, Request

from .input_hints import json_decimal_comma_hint
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


MAX_JSON_DEPTH = 32
"""Deepest nesting of arrays and objects in a request (a batch item's clock ADEV point is at
depth 6). Deeper documents are refused before anything walks them recursively."""


def json_depth(doc: Any) -> int:
    """Nesting depth of a parsed JSON value (a scalar is 0), counted without recursion."""
    deepest, stack = 0, [(doc, 1)]
    while stack:
        value, depth = stack.pop()
        if isinstance(value, dict):
            children = value.values()
        elif isinstance(value, list):
            children = value
        else:
            continue
        deepest = max(deepest, depth)
        if deepest > MAX_JSON_DEPTH:
            return deepest
        stack.extend((c, depth + 1) for c in children)
    return deepest


def too_deep(part: str | None = None) -> ProblemError:
    where = f"Part {part!r} nests" if part else "The body nests"
    err = {"pointer": "" if part is None else f"/{part}", "detail": f"nesting deeper than {MAX_JSON_DEPTH}"}
    if part is not None:
        err["part"] = part
    return ProblemError(400, "Malformed JSON", f"{where} arrays or objects too deeply (more than "
                        f"{MAX_JSON_DEPTH} deep); no request field needs that.", TYPE_MALFORMED_BODY, [err])


MAX_INTEGER_DIGITS = 40
"""Longest integer literal accepted in a JSON body: no request field needs more digits."""


def _parse_int(text: str) -> int:
    # Python's own limit (4300 digits) would answer with advice about its interpreter settings.
    if len(text.lstrip("-")) > MAX_INTEGER_DIGITS:
        raise ValueError(f"an integer of {len(text.lstrip('-'))} digits; no request field needs more "
                         f"than {MAX_INTEGER_DIGITS}")
    return int(text)


def parse_json(raw: bytes) -> Any:
    """Parse a request body as JSON whatever its content type; malformed -> 400 problem."""
    if not raw.strip():
        raise ProblemError(400, "Empty body", "The request has no body; send the request as JSON.",
                           TYPE_MALFORMED_BODY, [{"pointer": "", "detail": "empty body"}])
    try:
        text = raw.decode("utf-8-sig")
        doc = json.loads(text, parse_constant=_reject_constant, parse_int=_parse_int)
    except UnicodeDecodeError as exc:
        raise ProblemError(400, "Malformed body", f"The body is not UTF-8 text: {exc.reason} at "
                           f"byte {exc.start}.", TYPE_MALFORMED_BODY,
                           [{"pointer": "", "detail": "not UTF-8"}]) from exc
    except json.JSONDecodeError as exc:
        comma = json_decimal_comma_hint(exc.doc, exc.pos)
        raise ProblemError(400, "Malformed JSON", f"The body is not valid JSON: {exc.msg} at line "
                           f"{exc.lineno}, column {exc.colno}" + (f"; {comma}." if comma else "."),
                           TYPE_MALFORMED_BODY, [{"pointer": "", "detail": comma or exc.msg}]) from exc
    except ValueError as exc:
        raise ProblemError(400, "Malformed JSON", f"The body is not valid JSON: {exc}.",
                           TYPE_MALFORMED_BODY, [{"pointer": "", "detail": str(exc)}]) from exc
    except RecursionError as exc:
        raise too_deep() from exc
    if json_depth(doc) > MAX_JSON_DEPTH:
        raise too_deep()
    return doc


async def read_json_body(request: Request) -> Any:
    """The request body parsed as JSON; the content type is not required to say JSON."""
    return parse_json(await request.body())


JsonBody = Annotated[Any, Depends(read_json_body)]
