"""Optional access control (API keys) and browser access (CORS), from settings.

API keys: ``TAUBUDGET_API_KEYS`` maps a name to a key (``{"planning-desk": "..."}``); several
keys may be active at once, so one can be rotated out without stopping the others. When at
least one is set, every ``/v1`` route needs a key: in the ``X-API-Key`` header (or
``Authorization: Bearer <key>``), or, on GET routes only (spreadsheets fetch URLs and cannot set
headers), as the ``api_key`` query parameter. The parameter is removed from the request before
the route (and the server's access log) sees it. The probes, the page and the API document stay
open. The name of the key that matched is put in the request scope (``state["api_key_name"]``)
for logs and studies; the key itself never is. Without keys the service is open, as before, and
the start-up log says so.

CORS: ``TAUBUDGET_CORS_ORIGINS`` lists the origins whose pages may call the API (none by
default: browsers on other origins are refused by their own same-origin policy).
"""

from __future__ import annotations

import hmac
import json
import logging
from urllib.parse import parse_qsl, urlencode

from starlette.middleware.cors import CORSMiddleware

from .problems import PROBLEM_MEDIA_TYPE, TYPE_UNAUTHORIZED, problem

log = logging.getLogger("uvicorn.error")  # the server's own log, shown by `taubudget serve`
KEY_HEADER = b"x-api-key"
KEY_PARAMETER = "api_key"
PROTECTED_PREFIX = "/v1"


def _matching_name(keys: dict[str, str], given: str | None) -> str | None:
    """The name of the key equal to ``given`` (constant-time comparison against every key)."""
    if not given:
        return None
    found = None
    for name, key in keys.items():
        if hmac.compare_digest(key.encode(), given.encode()):
            found = name
    return found


class ApiKeys:
    """ASGI middleware: a ``/v1`` request without a valid key gets a 401 problem."""

    def __init__(self, app, keys: dict[str, str]):
        self.app, self.keys = app, {k: v for k, v in keys.items() if v}

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http" or not self.keys or not _protected(scope["path"]):
            return await self.app(scope, receive, send)
        given, where = _header_key(scope)
        if given is None and scope["method"] in ("GET", "HEAD"):
            given, where = _query_key(scope)
        name = _matching_name(self.keys, given)
        if name is None:
            return await _refuse(scope, send, where)
        scope.setdefault("state", {})["api_key_name"] = name
        return await self.app(scope, receive, send)


def _protected(path: str) -> bool:
    return path == PROTECTED_PREFIX or path.startswith(PROTECTED_PREFIX + "/")


def _header_key(scope) -> tuple[str | None, str]:
    for key, value in scope.get("headers", []):
        if key == KEY_HEADER:
            return value.decode("latin-1").strip(), "header X-API-Key"
        if key == b"authorization" and value[:7].lower() == b"bearer ":
            return value[7:].decode("latin-1").strip(), "header Authorization"
    return None, "header X-API-Key"


def _query_key(scope) -> tuple[str | None, str]:
    """The ``api_key`` parameter, removed from the query string in place (so neither the route
    nor the server's access log sees it)."""
    raw = scope.get("query_string", b"").decode("latin-1")
    pairs = parse_qsl(raw, keep_blank_values=True)
    keys = [v for k, v in pairs if k == KEY_PARAMETER]
    if not keys:
        return None, "header X-API-Key"
    scope["query_string"] = urlencode([(k, v) for k, v in pairs if k != KEY_PARAMETER]).encode("latin-1")
    return keys[0] if len(keys) == 1 else None, "query parameter api_key"


async def _refuse(scope, send, where: str):
    body = problem(
        401, "API key required",
        "This service requires an API key on /v1 routes: send it in the X-API-Key header (or "
        "'Authorization: Bearer <key>'); GET routes also take the query parameter api_key.",
        TYPE_UNAUTHORIZED, [{"pointer": "", "detail": f"no valid key in the {where}"}], scope.get("path"))
    payload = json.dumps(body).encode()
    await send({"type": "http.response.start", "status": 401, "headers": [
        (b"content-type", PROBLEM_MEDIA_TYPE.encode()),
        (b"content-length", str(len(payload)).encode()),
        (b"www-authenticate", b'ApiKey header="X-API-Key"'),
    ]})
    await send({"type": "http.response.body", "body": payload})


def install_access_control(app, settings) -> None:
    """Add the key check and, when origins are set, CORS (outermost, so preflights need no key)."""
    keys = {k: v for k, v in settings.API_KEYS.items() if v}
    app.add_middleware(ApiKeys, keys=keys)
    if settings.CORS_ORIGINS:
        app.add_middleware(
            CORSMiddleware, allow_origins=list(settings.CORS_ORIGINS), allow_credentials=False,
            allow_methods=["GET", "POST", "DELETE"],
            allow_headers=["Content-Type", "Accept", "X-API-Key", "Authorization"],
            expose_headers=["X-Taubudget-Caution", "Retry-After", "Content-Disposition", "Location"],
            max_age=600,
        )


def log_startup(settings) -> None:
    """Say at start-up whether the service is open or which keys (by name) it accepts."""
    names = sorted(k for k, v in settings.API_KEYS.items() if v)
    if names:
        log.info("API keys required on /v1 routes; %d key(s) accepted: %s", len(names), ", ".join(names))
    else:
        log.warning("no API keys set (TAUBUDGET_API_KEYS): the service is OPEN to anyone who can "
                    "reach it; put it behind a gateway or set keys")
    if settings.CORS_ORIGINS:
        log.info("CORS: pages from %s may call the API", ", ".join(settings.CORS_ORIGINS))
