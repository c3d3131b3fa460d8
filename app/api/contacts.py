"""Contact plans: ``POST /v1/contact-plans`` (JSON) and ``POST /v1/contact-plans.csv`` (pass table)."""

from __future__ import annotations

import json
from importlib.resources import files
from typing import Any

from fastapi import APIRouter
from fastapi.responses import PlainTextResponse
from pydantic import ValidationError

from ..compute import ComputeDep
from ..csv_format import passes_csv
from ..deps import JsonBody, SettingsDep
from ..problems import ProblemError, validation_errors, validation_problem
from ..schemas import ContactPlanRequest, ContactPlanResponse
from ..services.contacts import contact_plan_from_request
from . import openapi_doc as doc

router = APIRouter(prefix="/v1", tags=["contacts"])


def _example(name: str) -> dict:
    """A worked request shipped with the package (app/examples/, package data in the wheel)."""
    return json.loads(files("taubudget.app").joinpath("examples", name).read_text(encoding="utf-8"))


EXAMPLE_CONTACT_PLAN_MEO = _example("contact_plan_meo.json")
EXAMPLE_CONTACT_PLAN_LEO = _example("contact_plan_leo.json")
_EXAMPLES = {
    "meo_every_pass": ("MEO clock, rubidium-class preset, synced at ground contacts",
                       EXAMPLE_CONTACT_PLAN_MEO),
    "leo_every_second_long_pass": ("LEO smallsat TLE, quartz-class preset", EXAMPLE_CONTACT_PLAN_LEO),
}


def _validate(body: Any) -> ContactPlanRequest:
    try:
        return ContactPlanRequest.model_validate(body)
    except ValidationError as exc:
        p = validation_problem(validation_errors(exc, body))
        raise ProblemError.from_problem(p) from exc


@router.post(
    "/contact-plans",
    summary="Plan resynchronisation at ground contacts",
    response_description="Passes, syncs, the worst error and whether the budget holds",
    response_model=ContactPlanResponse,
    response_model_exclude_unset=True,
    responses=doc.model_responses("The contact plan", (400, 413, 422)),
    openapi_extra=doc.json_body("ContactPlanRequest", _EXAMPLES),
)
async def create_contact_plan(body: JsonBody, settings: SettingsDep, compute: ComputeDep):
    """Find the passes over the stations, simulate syncs by the policy and check the time-error budget."""
    req = _validate(body)
    return await compute(contact_plan_from_request, req, settings)


@router.post(
    "/contact-plans.csv",
    summary="The pass table of a contact plan, as CSV",
    response_class=PlainTextResponse,
    responses={200: {"description": "CSV, caution in the '#' header", "content": {"text/csv": {}}},
               **doc.problem_responses((400, 413, 422))},
    openapi_extra=doc.json_body("ContactPlanRequest", _EXAMPLES),
)
async def contact_plan_csv(body: JsonBody, settings: SettingsDep, compute: ComputeDep):
    """The same request as /v1/contact-plans; one CSV row per pass."""
    req = _validate(body)
    plan = await compute(contact_plan_from_request, req, settings)
    return PlainTextResponse(passes_csv(plan), media_type="text/csv")
