"""Image routes: ``GET /v1/budgets.svg`` and ``GET /v1/budgets.png`` take the CSV route's query
parameters plus ``plot=``, so a spreadsheet's image function or a wiki page can embed a live figure."""

from __future__ import annotations

from typing import Annotated, Literal

from fastapi import APIRouter, Query, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import Response
from pydantic import Field, field_validator
from taubudget.physics.budget import CAUTION

from ..compute import ComputeDep
from ..deps import SettingsDep
from ..present import figures
from ..problems import ProblemError
from . import openapi_doc as doc
from .budgets import budget_from_query
from .query import BudgetQuery

router = APIRouter(prefix="/v1", tags=["budgets"])
_PARAMETER_OF = {"series_step_s": "series_step_s", "clock": "clock_preset"}


class FigureQuery(BudgetQuery):
    """The CSV route's parameters (without ``field``) plus the choice of figure."""

    field: str | None = Field(None, description="Not taken here (it belongs to /v1/budgets.csv): use plot=")
    plot: Literal[figures.BUDGET_PLOTS] = Field(  # type: ignore[valid-type]
        "all", description="offset, terms, periodic, envelope (needs clock_preset), or all that the budget "
        "can fill; offset and periodic need series_step_s")

    @field_validator("field")
    @classmethod
    def _not_here(cls, value):
        raise ValueError(f"field={value} belongs to /v1/budgets.csv; a figure route takes plot=")


def _responses(media_type: str) -> dict:
    return {200: {"description": "The figure (title with the reference and the span, labelled axes with "
                  "units, the caution); the caution also in the X-Taubudget-Caution header",
                  "content": {media_type: {"schema": {"type": "string", "format": "binary"}}}},
            **doc.problem_responses((400, 422))}


async def _figure(fmt: str, request: Request, q: FigureQuery, settings, compute) -> Response:
    _, result = await budget_from_query(request, q, settings, compute)
    try:
        image = await run_in_threadpool(lambda: figures.render(figures.budget_figure(result, q.plot), fmt))
    except figures.FigureUnavailable as exc:
        parameter = _PARAMETER_OF[exc.field]
        raise ProblemError(422, "No such figure for this request", f"{exc}.", errors=[
            {"pointer": f"/{parameter}", "parameter": parameter, "detail": str(exc)}]) from exc
    return Response(image, media_type=figures.MEDIA_TYPES[fmt], headers={
        "X-Taubudget-Caution": CAUTION, "Content-Disposition": f'inline; filename="budget-{q.plot}.{fmt}"'})


@router.get("/budgets.svg", summary="A budget's figure as SVG", response_class=Response,
            responses=_responses(figures.MEDIA_TYPES["svg"]))
async def budget_svg(request: Request, q: Annotated[FigureQuery, Query()], settings: SettingsDep,
                     compute: ComputeDep):
    """The budget of the query (as GET /v1/budgets.csv takes it) drawn as SVG; plot= picks the figure."""
    return await _figure("svg", request, q, settings, compute)


@router.get("/budgets.png", summary="A budget's figure as PNG", response_class=Response,
            responses=_responses(figures.MEDIA_TYPES["png"]))
async def budget_png(request: Request, q: Annotated[FigureQuery, Query()], settings: SettingsDep,
                     compute: ComputeDep):
    """The budget of the query (as GET /v1/budgets.csv takes it) drawn as PNG; plot= picks the figure."""
    return await _figure("png", request, q, settings, compute)
