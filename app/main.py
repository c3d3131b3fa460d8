"""The HTTP service: ``create_app(settings)`` builds it; ``app`` is what uvicorn serves.

Startup (lifespan) loads the timescale and the DE421 ephemeris once per worker;
``/readyz`` reports ready after that. Budgets run in a thread pool, so the
probes keep answering while a long budget computes.
"""

from __future__ import annotations

import gc
import json
from contextlib import asynccontextmanager

from fastapi import FastAPI
from fastapi.concurrency import run_in_threadpool
from fastapi.openapi.utils import get_openapi
from pydantic.json_schema import models_json_schema
from taubudget.physics.budget import CAUTION
from taubudget.physics.ephemeris import ephemeris, timescale

from . import problems, schemas
from .access import install_access_control, log_startup
from .api import budgets, clock, contacts, figures, health, page, reference, studies
from .deps import BodyTooLarge
from .settings import Settings, get_settings
from .studies import runtime as studies_runtime
from .studies.expand import StudyRequest

DESCRIPTION = f"""Relativistic clock-offset budgets for satellites and ground clocks.

Send an orbit (Keplerian elements around the Earth, Sun, Moon or Mars; a TLE; a state vector; a
CCSDS OMM/OPM/OEM, SP3 or TLE file; or a clock on the Earth, Moon or Mars), a reference (TT, TAI,
GPS, TCG, TCB, TDB, lunar_surface or a ground clock) and a span; get the mean rate, its
decomposition, the frequency preset, the periodic part and the accumulated offset (clock minus
reference), with an optional clock model and contact planning. Errors are RFC 9457 problem+json.

**Caution.** {CAUTION}
"""

# Models the routes reference by name in their hand-written OpenAPI fragments.
_DOCUMENTED = [
    (schemas.BudgetRequest, "validation"),
    (schemas.BatchRequest, "validation"),
    (schemas.BudgetResponse, "serialization"),
    (schemas.BatchResponse, "serialization"),
    (schemas.ReferenceResponse, "serialization"),
    (schemas.HealthResponse, "serialization"),
    (schemas.Problem, "serialization"),
    (schemas.StabilityRequest, "validation"),
    (schemas.StabilityResponse, "serialization"),
    (schemas.ContactPlanRequest, "validation"),
    (schemas.ContactPlanResponse, "serialization"),
    (StudyRequest, "validation"),
]


class BodySizeLimit:
    """ASGI middleware: refuse bodies over ``max_bytes`` (Content-Length or streamed) with 413."""

    def __init__(self, app, max_bytes: int):
        self.app, self.max_bytes = app, max_bytes

    async def __call__(self, scope, receive, send):
        if scope["type"] != "http":
            return await self.app(scope, receive, send)
        for key, value in scope.get("headers", []):
            if key == b"content-length":
                try:
                    too_big = int(value) > self.max_bytes
                except ValueError:
                    too_big = False
                if too_big:
                    return await self._refuse(scope, send)
        received = 0

        async def limited_receive():
            nonlocal received
            message = await receive()
            if message["type"] == "http.request":
                received += len(message.get("body", b""))
                if received > self.max_bytes:
                    raise BodyTooLarge(self.max_bytes)
            return message

        return await self.app(scope, limited_receive, send)

    async def _refuse(self, scope, send):
        body = BodyTooLarge(self.max_bytes).to_dict(scope.get("path"))
        payload = json.dumps(body).encode()
        await send({"type": "http.response.start", "status": 413, "headers": [
            (b"content-type", problems.PROBLEM_MEDIA_TYPE.encode()),
            (b"content-length", str(len(payload)).encode()),
            (b"connection", b"close"),
        ]})
        await send({"type": "http.response.body", "body": payload})


def _load_data(app: FastAPI) -> None:
    timescale()
    app.state.timescale_loaded = True
    eph = ephemeris()
    app.state.ephemeris_loaded = len(eph.segments) > 0


def _quiet_collector() -> None:
    """Keep the cyclic garbage collector's pauses short: a full collection holds the GIL, and
    with it the event loop and ``/healthz``, for a walk over every tracked object. The objects of
    start-up (modules, timescale, ephemeris) are frozen out of those walks (Python's
    ``gc.freeze``): while a 40,000-line OEM is parsed the longest probe fell from ~0.47 s to
    ~0.07 s on the development machine (tests/app/test_loopback_reliability.py)."""
    gc.collect()
    gc.freeze()


@asynccontextmanager
async def lifespan(app: FastAPI):
    log_startup(app.state.settings)
    await run_in_threadpool(_load_data, app)
    _quiet_collector()
    async with studies_runtime.lifespan(app):
        yield


def _openapi(app: FastAPI):
    def build():
        if app.openapi_schema:
            return app.openapi_schema
        doc = get_openapi(title=app.title, version=app.version, description=app.description,
                          routes=app.routes)
        _, defs = models_json_schema(_DOCUMENTED, ref_template="#/components/schemas/{model}")
        doc.setdefault("components", {}).setdefault("schemas", {}).update(defs.get("$defs", {}))
        app.openapi_schema = doc
        return doc

    return build


def create_app(settings: Settings | None = None) -> FastAPI:
    """Build the service with ``settings`` (default: from TAUBUDGET_* environment variables)."""
    settings = settings or get_settings()
    app = FastAPI(title="taubudget", version="0.1.0", description=DESCRIPTION, lifespan=lifespan,
                  docs_url=None, redoc_url=None)  # local docs: api/page.py
    app.state.settings = settings
    app.state.timescale_loaded = False
    app.state.ephemeris_loaded = False
    problems.install(app)
    app.add_middleware(BodySizeLimit, max_bytes=settings.MAX_BODY_BYTES)
    install_access_control(app, settings)  # API keys, then CORS outermost
    app.include_router(budgets.router)
    app.include_router(figures.router)
    app.include_router(clock.router)
    app.include_router(contacts.router)
    app.include_router(reference.router)
    app.include_router(health.router)
    app.include_router(studies.router)
    page.install(app)
    app.openapi = _openapi(app)
    return app


app = create_app()
