"""Budget routes: one request, a batch, and the CSV/text view for spreadsheets."""

from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import Annotated, Any

from fastapi import APIRouter, Query, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import PlainTextResponse, Response
from pydantic import TypeAdapter, ValidationError
from taubudget.physics.budget import CAUTION
from taubudget.physics.cancel import checkpoint
from taubudget.physics.errors import PhysicsInputError

from .. import csv_format
from ..compute import ComputeDep, checked_json_response
from ..deps import SettingsDep, parse_json
from ..problems import (
    TYPE_CANCELLED,
    TYPE_INTERNAL,
    TYPE_TOO_LARGE,
    ProblemError,
    physics_problem,
    problem,
    validation_errors,
    validation_problem,
)
from ..schemas import (
    EXAMPLE_BATCH_REQUEST,
    EXAMPLE_GROUND_REQUEST,
    EXAMPLE_HELIOCENTRIC_REQUEST,
    EXAMPLE_LEO_J2_REQUEST,
    EXAMPLE_LUNAR_REQUEST,
    EXAMPLE_REQUEST,
    BatchRequest,
    BatchResponse,
    BudgetRequest,
    BudgetResponse,
)
from ..schemas.orbits import Orbit
from ..services.budget import budget_from_request, merge_item, orbit_source, planned_cost_of
from ..studies import table as study_table
from . import openapi_doc as doc
from . import uploads
from .query import BudgetQuery, QueryConflict, to_request, with_parameters

router = APIRouter(prefix="/v1", tags=["budgets"])
log = logging.getLogger("taubudget.batch")
ORBIT_ADAPTER = TypeAdapter(Orbit)


def _validate(body: Any) -> BudgetRequest:
    try:
        return BudgetRequest.model_validate(body)
    except ValidationError as exc:
        raise ProblemError.from_problem(validation_problem(validation_errors(exc, body))) from exc


def _parse_budget(raw: bytes) -> BudgetRequest:
    """JSON body -> BudgetRequest (in a worker thread: a body may be megabytes of orbit text)."""
    return _validate(parse_json(raw))


def _validate_batch(payload: Any) -> BatchRequest:
    try:
        return BatchRequest.model_validate(payload)
    except ValidationError as exc:
        raise ProblemError.from_problem(validation_problem(validation_errors(exc, payload),
                                                           "The batch")) from exc


def _parse_batch(raw: bytes) -> BatchRequest:
    return _validate_batch(parse_json(raw))


@router.post(
    "/budgets",
    summary="Compute the drift budget of one clock",
    response_model=BudgetResponse,
    response_model_exclude_unset=True,
    responses=doc.model_responses("The budget", (400, 413, 422)),
    openapi_extra=doc.budget_body({
        "meo_circular_point_mass": ("Circular MEO orbit, point-mass Earth, against TT",
                                    EXAMPLE_REQUEST),
        "leo_j2_tai": ("Low orbit as Brouwer mean elements in J2..J4 with tides, against TAI",
                       EXAMPLE_LEO_J2_REQUEST),
        "ground_clock": ("A clock on a mountain laboratory, against TT", EXAMPLE_GROUND_REQUEST),
        "lunar_surface_clock": ("A clock on the Moon against TT (BCRS; TT along the geocentre)",
                                EXAMPLE_LUNAR_REQUEST),
        "heliocentric_probe": ("A cruise probe against TDB with light time to a station",
                               EXAMPLE_HELIOCENTRIC_REQUEST),
    }),
)
async def create_budget(request: Request, settings: SettingsDep, compute: ComputeDep):
    """Compute the drift budget of one clock against one reference over one span."""
    return await checked_json_response(BudgetResponse, await _budget(request, settings, compute))


async def _budget(request: Request, settings, compute) -> dict:
    if not uploads.is_multipart(request):
        req = await run_in_threadpool(_parse_budget, await request.body())
        return await compute(budget_from_request, req, settings)
    up = await uploads.read_upload(request, ("request",))
    document = uploads.json_document(up, "orbit")
    if document is not None:  # the request JSON itself, uploaded as a file
        req = _validate(document)
        return await compute(budget_from_request, req, settings)
    body, parts = uploads.budget_body(up)
    try:
        req = BudgetRequest.model_validate(body, strict=False)  # form fields are text
    except ValidationError as exc:
        raise uploads.upload_validation_problem(exc, body, parts) from exc
    try:
        return await compute(budget_from_request, req, settings)
    except PhysicsInputError as exc:
        raise uploads.upload_physics_problem(exc, parts) from exc


# --- Batch ---------------------------------------------------------------------------


def _item_prefix(i: int, top: str | None, item: dict, defaults: dict) -> str:
    """Point into ``defaults`` when the bad top-level key came from there, else into the item."""
    if top and top not in item and top in defaults:
        return "/defaults"
    return f"/items/{i}"


def _item_validation_problem(i: int, exc: ValidationError, merged: dict, item: dict,
                             defaults: dict) -> dict:
    errors = []
    for err in validation_errors(exc, merged):
        top = err["pointer"].split("/")[1] if err["pointer"] else None
        errors.append({**err, "pointer": _item_prefix(i, top, item, defaults) + err["pointer"]})
    return validation_problem(errors, f"Item {i}")


def _item_physics_problem(i: int, exc: PhysicsInputError, item: dict, defaults: dict) -> dict:
    top = exc.field.split(".")[0] if exc.field else None
    return physics_problem(exc, _item_prefix(i, top, item, defaults))


def _item_id(i: int, item: Any, seen: set) -> tuple[Any, dict | None]:
    if not isinstance(item, dict):
        return None, validation_problem(
            [{"pointer": f"/items/{i}", "detail": "each item must be a JSON object (a request with an id)"}],
            f"Item {i}")
    if "id" not in item:
        return None, validation_problem(
            [{"pointer": f"/items/{i}/id", "detail": "required field is missing: every item needs an id"}],
            f"Item {i}")
    ident = item["id"]
    if isinstance(ident, bool) or not isinstance(ident, str | int) or (
            isinstance(ident, str) and not 0 < len(ident) <= 200):
        return ident if isinstance(ident, str | int) and not isinstance(ident, bool) else None, \
            validation_problem([{"pointer": f"/items/{i}/id",
                                 "detail": "id must be a string of 1 to 200 characters or an integer"}],
                               f"Item {i}")
    if ident in seen:
        return ident, validation_problem(
            [{"pointer": f"/items/{i}/id", "detail": f"id {ident!r} is used by an earlier item"}],
            f"Item {i}")
    seen.add(ident)
    return ident, None


@router.post(
    "/budgets/batch",
    summary="Compute budgets for many clocks",
    response_model=BatchResponse,
    response_model_exclude_unset=True,
    responses=doc.model_responses("One result per item, in order", (400, 413, 422)),
    openapi_extra=doc.batch_body({
        "two_satellites": ("Two navigation satellites sharing defaults", EXAMPLE_BATCH_REQUEST),
    }),
)
async def create_batch(request: Request, settings: SettingsDep, compute: ComputeDep):
    """Compute one budget per item; a bad item gets its own problem and the others still run.
    With ``Accept: text/csv``: one CSV row per item (as /v1/budgets/batch.csv)."""
    result = await _batch(request, settings, compute)
    if "text/csv" in request.headers.get("accept", ""):
        return _batch_csv(result)
    return await checked_json_response(BatchResponse, result)


@router.post(
    "/budgets/batch.csv",
    summary="Budgets for many clocks, one CSV row per item",
    response_class=Response,
    responses={200: {"description": "CSV: id, status, headline figures, problem; caution in the '#' header",
                     "content": {"text/csv": {}}}, **doc.problem_responses((400, 413, 422))},
    openapi_extra=doc.batch_body({
        "two_satellites": ("Two navigation satellites sharing defaults", EXAMPLE_BATCH_REQUEST),
    }),
)
async def create_batch_csv(request: Request, settings: SettingsDep, compute: ComputeDep):
    """The same batch as /v1/budgets/batch, answered as a trade table (one row per item)."""
    return _batch_csv(await _batch(request, settings, compute))


def _batch_csv(result: dict) -> Response:
    return Response(study_table.batch_csv(result), media_type="text/csv; charset=utf-8",
                    headers={"Content-Disposition": 'inline; filename="batch.csv"'})


async def _batch(request: Request, settings, compute) -> dict:
    if uploads.is_multipart(request):
        up = await uploads.read_upload(request, ("request", "defaults"))
        payload = uploads.json_document(up, "items")
        if payload is None:  # an orbit file: one item per object in it
            plan = await uploads.file_batch(up, settings)
            return await _run_batch(plan.entries, plan.defaults, settings, compute, strict=False)
        batch = _validate_batch(payload)
    else:
        batch = await run_in_threadpool(_parse_batch, await request.body())
    if len(batch.items) > settings.MAX_BATCH_ITEMS:
        raise ProblemError(
            413, "Batch too large",
            f"The batch has {len(batch.items)} items, above this service's limit of "
            f"{settings.MAX_BATCH_ITEMS} (setting TAUBUDGET_MAX_BATCH_ITEMS); split it.",
            TYPE_TOO_LARGE, [{"pointer": "/items", "detail": f"at most {settings.MAX_BATCH_ITEMS} items"}],
            limit_name="MAX_BATCH_ITEMS", limit=settings.MAX_BATCH_ITEMS,
        )
    return await _run_batch([(item, None, None) for item in batch.items], batch.defaults, settings, compute)


@dataclass
class _BatchPlan:
    results: list[dict]
    planned: list[tuple[int, BudgetRequest, dict, Any]]
    total_nodes: int
    total_bytes: int


def _shared_orbit(defaults: dict, strict: bool):
    """The defaults' orbit validated once for every item that does not give its own (a
    40,000-line OEM in ``defaults`` is validated and parsed once, not once per item), or None when
    the defaults have no valid orbit (each item then reports its own errors)."""
    orbit = defaults.get("orbit")
    if not isinstance(orbit, dict):
        return None
    try:
        return ORBIT_ADAPTER.validate_python(orbit, strict=None if strict else False)
    except ValidationError:
        return None


def _plan_batch(entries: list[tuple[Any, Any, Any]], defaults: dict, settings, strict: bool) -> _BatchPlan:
    """Validate every item, build its orbit source and estimate its cost: runs in the bounded
    compute path (a worker thread, under the deadline), never on the event loop."""
    results: list[dict] = []
    planned: list[tuple[int, BudgetRequest, dict, Any]] = []
    seen: set = set()
    total_nodes = total_bytes = 0
    shared = _shared_orbit(defaults, strict) if any(o is None for _, o, _ in entries) else None
    # By gravity block: Keplerian elements follow its zonal field, a state vector its forces.
    shared_sources: dict[tuple, Any] = {}
    for i, (item, orbit, source) in enumerate(entries):
        checkpoint()
        ident, bad = _item_id(i, item, seen)
        if bad is None:
            merged = merge_item(defaults, item)
            uses_shared = orbit is None and shared is not None and "orbit" not in item
            if orbit is not None:
                merged["orbit"] = orbit
            elif uses_shared:
                merged["orbit"] = shared
            try:
                req = BudgetRequest.model_validate(merged, strict=None if strict else False)
                if uses_shared:
                    g = req.gravity
                    key = (g.earth_zonal_degree, g.sun, g.moon)
                    if key not in shared_sources:
                        try:
                            shared_sources[key] = orbit_source(req)
                        except PhysicsInputError as exc:
                            shared_sources[key] = exc
                    source = shared_sources[key]
                    if isinstance(source, PhysicsInputError):
                        raise source
                cost = planned_cost_of(req, settings, source)
                total_nodes += cost.nodes
                total_bytes += cost.response_bytes
                planned.append((i, req, item, source))
            except ValidationError as exc:
                bad = _item_validation_problem(i, exc, merged, item, defaults)
            except PhysicsInputError as exc:
                bad = _item_physics_problem(i, exc, item, defaults)
        results.append({"id": ident, "status": 200 if bad is None else bad["status"],
                        "budget": None, "problem": bad})
    return _BatchPlan(results, planned, total_nodes, total_bytes)


def _batch_too_large(detail: str, item_detail: str, limit_name: str, limit: int, **estimate) -> ProblemError:
    return ProblemError(413, "Batch too large", detail, TYPE_TOO_LARGE,
                        [{"pointer": "/items", "detail": item_detail}], limit_name=limit_name, limit=limit,
                        **estimate)


async def _run_batch(entries: list[tuple[Any, Any, Any]], defaults: dict, settings,
                     compute, strict: bool = True) -> dict:
    """Validate and estimate every item up front, then compute; ``entries``: (item, orbit, source),
    where orbit and source are given for the objects of an uploaded file (parsed once).
    ``strict``: JSON types (a JSON batch) or text converted (form fields of an upload)."""
    plan = await compute(_plan_batch, entries, defaults, settings, strict)
    results, total_nodes = plan.results, plan.total_nodes
    if total_nodes > settings.MAX_BATCH_NODES:
        raise _batch_too_large(
            f"The batch needs an estimated {total_nodes} quadrature nodes (items x nodes per item, "
            f"20 per initial panel), above this service's limit of {settings.MAX_BATCH_NODES} "
            "(setting TAUBUDGET_MAX_BATCH_NODES); shorten the spans or split the batch.",
            f"estimated {total_nodes} nodes", "MAX_BATCH_NODES", settings.MAX_BATCH_NODES,
            estimated_nodes=total_nodes)
    if plan.total_bytes > settings.MAX_RESPONSE_BYTES:
        raise _batch_too_large(
            f"The batch's response would be up to {plan.total_bytes / 1e6:.1f} MB, above this service's "
            f"limit of {settings.MAX_RESPONSE_BYTES / 1e6:g} MB (setting TAUBUDGET_MAX_RESPONSE_BYTES); "
            "use longer series steps or split the batch.",
            f"estimated {plan.total_bytes} bytes", "MAX_RESPONSE_BYTES", settings.MAX_RESPONSE_BYTES,
            estimated_bytes=plan.total_bytes)
    for i, req, item, source in plan.planned:
        try:
            results[i]["budget"] = await compute(budget_from_request, req, settings, source)
        except PhysicsInputError as exc:
            results[i]["problem"] = _item_physics_problem(i, exc, item, defaults)
            results[i]["status"] = 422
        except ProblemError as exc:  # this item's deadline, or no slot: its own problem
            if exc.type == TYPE_CANCELLED:
                raise  # the client went away: stop the batch
            results[i]["problem"] = exc.to_dict()
            results[i]["status"] = exc.status
        except Exception:  # a bug in one item must not hide the others' results
            log.exception("batch item %d failed", i)
            results[i]["problem"] = problem(500, "Internal error",
                                            "The service failed on this item; this is a bug in the "
                                            "service, not in your input.", TYPE_INTERNAL,
                                            [{"pointer": f"/items/{i}", "detail": "internal error"}])
            results[i]["status"] = 500
    ok = sum(1 for r in results if r["status"] == 200)
    return {"items": results, "succeeded": ok, "failed": len(results) - ok,
            "estimated_nodes": total_nodes, "caution": CAUTION}


# --- CSV and single numbers for spreadsheets ---------------------------------------------

_FIELD_HINTS = {
    "preset_frequency_hz": "it needs nominal_frequency_hz",
    "nominal_frequency_hz": "it needs nominal_frequency_hz",
    "periodic.dominant_period_s": "the span is too short to tell a period",
    "eccentricity_correction.analytic_amplitude_ns": "it exists for Keplerian orbits only",
    **{name: "it needs clock_preset" for name in csv_format.CLOCK_SUMMARY_FIELDS},
    "clock_error.time_error_budget_ns": "it needs clock_preset and time_error_budget_ns",
    "clock_error.budget_reached_within_span": "it needs clock_preset and time_error_budget_ns",
    "clock_error.max_free_running_beyond_span": "it needs clock_preset and time_error_budget_ns",
    "clock_error.max_free_running_s": "it needs clock_preset and time_error_budget_ns, and the k-sigma "
    "bound must reach the budget within the search horizon (clock_error.free_running_search_horizon_s)",
}


def _query_problem(errors: list[dict]) -> ProblemError:
    errors = with_parameters(errors)
    return ProblemError.from_problem(validation_problem(errors, "The query"))


async def budget_from_query(request: Request, q: BudgetQuery, settings,
                            compute) -> tuple[BudgetRequest, dict]:
    """The request spelled as query parameters, validated and computed (problems name the parameter)."""
    names = [k for k, _ in request.query_params.multi_items()]
    repeated = sorted({n for n in names if names.count(n) > 1})
    if repeated:
        raise ProblemError(422, "Invalid request", "The query repeats "
                           f"{', '.join(repeated)}; give each parameter once.",
                           errors=[{"pointer": f"/{n}", "parameter": n, "detail": "given more than once"}
                                   for n in repeated])
    try:
        body = to_request(q)
    except QueryConflict as exc:
        errors = [{"pointer": "/orbit", "parameter": n, "detail": exc.detail} for n in exc.names]
        raise ProblemError(422, "Invalid request", f"The query is invalid: {exc.detail}.",
                           errors=errors) from exc
    try:
        req = BudgetRequest.model_validate(body, strict=False)  # typed by BudgetQuery from text
    except ValidationError as exc:
        raise _query_problem(validation_errors(exc, body)) from exc
    try:
        result = await compute(budget_from_request, req, settings)
    except PhysicsInputError as exc:
        p = physics_problem(exc)
        p["errors"] = with_parameters(p["errors"])
        raise ProblemError.from_problem(p) from exc
    return req, result


@router.get(
    "/budgets.csv",
    summary="A budget as CSV, or one summary number as text",
    response_class=Response,
    responses=doc.csv_responses((400, 422)),
)
async def budget_csv(request: Request, q: Annotated[BudgetQuery, Query()], settings: SettingsDep,
                     compute: ComputeDep):
    """The budget of the request spelled as query parameters: CSV, or with field= one number."""
    req, result = await budget_from_query(request, q, settings, compute)
    if q.field is not None:
        try:
            text = csv_format.field_text(result, q.field)
        except csv_format.MissingValue as exc:
            why = _FIELD_HINTS.get(q.field, "the budget has no such value")
            detail = f"{q.field} has no value for this request: {why}"
            raise ProblemError(422, "No value", detail + ".", errors=[
                {"pointer": "/field", "parameter": "field", "detail": detail}]) from exc
        # A single number cannot carry the caution in its body: it travels as a header.
        return PlainTextResponse(text, headers={"X-Taubudget-Caution": CAUTION})
    if req.series_step_s is not None:
        text = await run_in_threadpool(csv_format.series_csv, result)  # 200,000 rows: off the loop
        name = "budget-series.csv"
    else:
        text = csv_format.summary_csv(result)
        name = "budget.csv"
    return Response(text, media_type="text/csv; charset=utf-8",
                    headers={"Content-Disposition": f'inline; filename="{name}"'})

