"""Liveness and readiness probes."""

from __future__ import annotations

from fastapi import APIRouter, Request

from ..problems import TYPE_NOT_READY, ProblemError
from ..schemas import HealthResponse
from . import openapi_doc as doc

router = APIRouter(tags=["health"])


@router.get("/healthz", summary="Liveness", response_model=HealthResponse,
            response_model_exclude_unset=True,
            responses=doc.model_responses("The process answers", (), example={"status": "ok"}))
async def healthz():
    """The process is alive and answering (does not wait for data to load)."""
    return {"status": "ok"}


@router.get("/readyz", summary="Readiness", response_model=HealthResponse,
            response_model_exclude_unset=True,
            responses=doc.model_responses("Timescale and ephemeris loaded", (503,),
                                          example={"status": "ready", "timescale": True, "ephemeris": True}))
async def readyz(request: Request):
    """Ready once this worker has loaded the timescale and the DE421 ephemeris."""
    state = request.app.state
    loaded = {"timescale": getattr(state, "timescale_loaded", False),
              "ephemeris": getattr(state, "ephemeris_loaded", False)}
    if not all(loaded.values()):
        missing = " and ".join(k for k, v in loaded.items() if not v)
        raise ProblemError(503, "Not ready", f"This worker has not loaded the {missing} yet.",
                           TYPE_NOT_READY, [], **loaded)
    return {"status": "ready", **loaded}
