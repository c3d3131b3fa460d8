"""Studies: durable batches and sweeps of budgets or contact plans, run on Dask, kept in a database."""

from __future__ import annotations

import json
import time
from datetime import UTC, datetime
from typing import Annotated, Any

from fastapi import APIRouter, Path, Query, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import JSONResponse, StreamingResponse
from pydantic import BaseModel, Field, ValidationError
from sqlalchemy.exc import SQLAlchemyError
from taubudget.physics.budget import CAUTION

from ..deps import SettingsDep, parse_json
from ..problems import (
    PROBLEM_MEDIA_TYPE,
    TYPE_BUSY,
    TYPE_TOO_LARGE,
    ProblemError,
    validation_errors,
    validation_problem,
)
from ..studies import items as study_items
from ..studies import table
from ..studies.expand import StudyRequest, Sweep
from ..studies.runtime import studies_of
from ..studies.store import Progress, Store, Study
from . import openapi_doc as doc
from . import uploads

router = APIRouter(prefix="/v1", tags=["studies"])

_STUDY_ID = r"^[0-9a-f]{32}$"


def _problems(*statuses: int) -> dict:
    text = {404: "No such study", 409: "The study has already finished",
            413: "Over a size limit (items of a study, body bytes)",
            422: "Invalid input (body, path or query); 'errors' names each field by JSON pointer",
            429: "The study queue is full; retry after Retry-After seconds",
            503: "The study store cannot be reached; retry after Retry-After seconds"}
    return {s: {"description": text[s], "content": {PROBLEM_MEDIA_TYPE: {"schema": doc.ref("Problem")}}}
            for s in statuses}


_EXAMPLE_ID = "5f0c2b7e9a4d4e1b8c3a6d2f1e0b9a87"
_EXAMPLE_URL = f"http://127.0.0.1:8000/v1/studies/{_EXAMPLE_ID}"
STATUS_EXAMPLE = {
    "id": _EXAMPLE_ID, "url": _EXAMPLE_URL, "name": "altitude trade", "kind": "budget", "origin": "sweep",
    "state": "running", "total": 24, "done": 10, "failed": 1, "elapsed_s": 4.4, "estimated_remaining_s": 5.2,
    "created_utc": "2031-03-01T09:00:00.000000Z", "started_utc": "2031-03-01T09:00:00.400000Z",
    "finished_utc": None, "parameters": ["orbit.semi_major_axis_km", "orbit.eccentricity"],
    "results_url": _EXAMPLE_URL + "/results", "results_csv_url": _EXAMPLE_URL + "/results.csv",
    "caution": CAUTION,
}


def _ok(example: Any, media_type: str = "application/json", description: str = "OK") -> dict:
    return {200: {"description": description, "content": {media_type: {"example": example}}}}


StudyId = Annotated[str, Path(pattern=_STUDY_ID, description="The id POST /v1/studies answered")]


class StudyStatus(BaseModel):
    """Where a study stands. Times are UTC; the remaining time is extrapolated from the items so far."""

    id: str
    url: str
    name: str | None
    kind: str
    origin: str = Field(description="batch (items), file (an uploaded multi-object orbit file) or sweep")
    state: str = Field(description="queued, running, done, failed (no item succeeded) or cancelled")
    total: int
    done: int = Field(description="Items with a result")
    failed: int = Field(description="Items with a problem (they do not fail the study)")
    elapsed_s: float
    estimated_remaining_s: float | None
    created_utc: str
    started_utc: str | None
    finished_utc: str | None
    parameters: list[str] = Field(description="The swept fields (columns of the CSV)")
    results_url: str
    results_csv_url: str
    caution: str = CAUTION


class StudyList(BaseModel):
    studies: list[StudyStatus]


def _iso(t: float | None) -> str | None:
    return None if t is None else datetime.fromtimestamp(t, UTC).isoformat().replace("+00:00", "Z")


def _status(request: Request, store: Store, s: Study, p: Progress | None = None) -> StudyStatus:
    """``s``'s status; ``p``: its progress, read from the store when not given."""
    p = store.progress(s.id) if p is None else p
    finished = p.done + p.failed
    if s.started_at is None:
        elapsed = 0.0
    else:
        elapsed = max(0.0, (s.finished_at or time.time()) - s.started_at)
    if s.state not in ("queued", "running"):
        remaining = 0.0
    elif finished and elapsed > 0:
        remaining = elapsed / finished * (s.total - finished)
    else:
        remaining = None
    url = str(request.url_for("get_study", study_id=s.id))
    return StudyStatus(
        id=s.id, url=url, name=s.name, kind=s.kind, origin=s.origin, state=s.state, total=s.total,
        done=p.done, failed=p.failed, elapsed_s=elapsed, estimated_remaining_s=remaining,
        created_utc=_iso(s.created_at), started_utc=_iso(s.started_at), finished_utc=_iso(s.finished_at),
        parameters=_parameter_names(s), results_url=url + "/results", results_csv_url=url + "/results.csv",
    )


def _parameter_names(s: Study) -> list[str]:
    return [p["field"] for p in (s.spec.get("sweep") or {}).get("parameters", [])]


def _unavailable(settings, exc: Exception) -> ProblemError:
    return ProblemError(
        503, "Study store unavailable", "The study database cannot be reached right now; retry later.",
        TYPE_BUSY, [{"pointer": "", "detail": type(exc).__name__}],
        headers={"Retry-After": str(settings.STUDY_RETRY_AFTER_SECONDS)})


async def _store(request: Request) -> Store:
    studies = studies_of(request.app)
    try:
        return await run_in_threadpool(studies.open)
    except SQLAlchemyError as exc:
        raise _unavailable(request.app.state.settings, exc) from exc


async def _study(request: Request, study_id: str) -> tuple[Store, Study]:
    store = await _store(request)
    s = await run_in_threadpool(store.get, study_id)
    if s is None:
        raise ProblemError(404, "No such study", f"There is no study {study_id!r} in this service's store.",
                           errors=[{"pointer": "", "detail": f"unknown study {study_id}"}])
    return store, s


def _too_many(n: int, limit: int, pointer: str) -> ProblemError:
    return ProblemError(
        413, "Study too large", f"The study has {n} items, above this service's limit of {limit} "
        "(setting TAUBUDGET_MAX_STUDY_ITEMS); split it into several studies.", TYPE_TOO_LARGE,
        [{"pointer": pointer, "detail": f"{n} items, at most {limit}"}],
        limit_name="MAX_STUDY_ITEMS", limit=limit)


def _check_sweep_fields(kind: str, sweep: Sweep, defaults: dict) -> None:
    """Refuse a sweep over a field the request does not have (checked on the first combination)."""
    first = study_items.item_request(defaults, next(sweep.combinations()), None)
    try:
        study_items.validate(kind, first)
    except ValidationError as exc:
        fields = {"/" + p.field.replace(".", "/"): i for i, p in enumerate(sweep.parameters)}
        for err in exc.errors():
            if err["type"] != "extra_forbidden":
                continue
            for e in validation_errors(exc, first):
                if e["pointer"] in fields:
                    i = fields[e["pointer"]]
                    name = sweep.parameters[i].field
                    raise ProblemError(
                        422, "Invalid request", f"The sweep is invalid at /sweep/parameters/{i}/field: "
                        f"{name} is not a field of a {kind} request.",
                        errors=[{"pointer": f"/sweep/parameters/{i}/field",
                                 "detail": f"{name} is not a request field"}]) from exc


def _check_queue(store: Store, settings, total: int) -> None:
    queued = store.queued_items()
    if queued + total > settings.MAX_QUEUED_STUDY_ITEMS:
        raise ProblemError(
            429, "Study queue full", f"The studies waiting here hold {queued} unfinished items; {total} more "
            f"would pass this service's limit of {settings.MAX_QUEUED_STUDY_ITEMS} (setting "
            "TAUBUDGET_MAX_QUEUED_STUDY_ITEMS). Retry when some have finished.", TYPE_BUSY,
            [{"pointer": "", "detail": f"{queued} items queued"}],
            headers={"Retry-After": str(settings.STUDY_RETRY_AFTER_SECONDS)},
            limit_name="MAX_QUEUED_STUDY_ITEMS", limit=settings.MAX_QUEUED_STUDY_ITEMS)


def _plan(spec: StudyRequest, settings) -> tuple[str, dict, Any, int]:
    """(origin, stored spec, entries, total) of a JSON study, bounded before it is expanded."""
    if spec.sweep is not None:
        total = spec.sweep.size()
        if total > settings.MAX_STUDY_ITEMS:
            raise _too_many(total, settings.MAX_STUDY_ITEMS, "/sweep")
        _check_sweep_fields(spec.kind, spec.sweep, spec.defaults)
        entries = ((i, params, None) for i, params in enumerate(spec.sweep.combinations()))
        stored = {"defaults": spec.defaults, "sweep": spec.sweep.model_dump(mode="json")}
        return "sweep", stored, entries, total
    total = len(spec.items)
    if total > settings.MAX_STUDY_ITEMS:
        raise _too_many(total, settings.MAX_STUDY_ITEMS, "/items")
    return "batch", {"defaults": spec.defaults}, _batch_entries(spec.items), total


def _batch_entries(raw_items: list) -> list:
    """(id, None, item) per item; ids must be unique strings or integers, as in /v1/budgets/batch."""
    seen: set = set()
    errors = []
    for i, item in enumerate(raw_items):
        ident = item.get("id") if isinstance(item, dict) else None
        if not isinstance(item, dict):
            errors.append({"pointer": f"/items/{i}", "detail": "each item must be a JSON object with an id"})
        elif isinstance(ident, bool) or not isinstance(ident, str | int) or (
                isinstance(ident, str) and not 0 < len(ident) <= 200):
            errors.append({"pointer": f"/items/{i}/id",
                           "detail": "id must be a string of 1 to 200 characters or an integer"})
        elif ident in seen:
            errors.append({"pointer": f"/items/{i}/id", "detail": f"id {ident!r} is used by an earlier item"})
        else:
            seen.add(ident)
        if len(errors) >= 20:
            break
    if errors:
        p = validation_problem(errors, "The study")
        raise ProblemError.from_problem(p)
    return [(item["id"], None, item) for item in raw_items]


async def _file_plan(request: Request, settings) -> tuple[str, str, dict, list, int]:
    """An uploaded multi-object orbit file: one item per object, the file stored once with the defaults."""
    up = await uploads.read_upload(request, ("request", "defaults"))
    document = uploads.json_document(up, "items")
    if document is not None:
        return ("json", *_json_plan(document, settings))
    kind = request.query_params.get("kind", "budget")
    if kind not in study_items.RESULT_KEY:
        raise ProblemError(422, "Invalid request", f"kind {kind!r} is not a study kind; use budget or "
                           "contact_plan.", errors=[{"pointer": "/kind", "parameter": "kind",
                                                     "detail": "budget or contact_plan"}])
    plan = await uploads.file_batch(up, settings)
    orbit = plan.entries[0][1].model_dump(mode="json", exclude={"object_id"})
    defaults = _typed_defaults(kind, {**plan.defaults, "orbit": orbit}, plan.parts)
    entries = [(item["id"], None, {"id": item["id"], "orbit": {"object_id": item["id"]}})
               for item, _, _ in plan.entries]
    return kind, "file", {"defaults": defaults}, entries, len(entries)


def _typed_defaults(kind: str, defaults: dict, parts) -> dict:
    """The defaults of a file study as JSON values: form fields arrive as text ("0.5", "true"), and
    the workers validate each item strictly, as JSON. Checked here (a 422 naming the field and its
    part before anything is stored), stored with their types, and only the fields given."""
    try:
        typed = study_items.validate(kind, defaults, strict=False)
    except ValidationError as exc:
        errors = parts.annotate(validation_errors(exc, defaults, prefix="/defaults"))
        raise ProblemError.from_problem(validation_problem(errors, "The study")) from exc
    return typed.model_dump(mode="json", exclude_unset=True) | {"orbit": defaults["orbit"]}


def _json_plan(payload: Any, settings) -> tuple[str, dict, Any, int]:
    try:
        spec = StudyRequest.model_validate(payload)
    except ValidationError as exc:
        p = validation_problem(validation_errors(exc, payload), "The study")
        raise ProblemError.from_problem(p) from exc
    origin, stored, entries, total = _plan(spec, settings)
    stored["name"] = spec.name
    return spec.kind, origin, stored, entries, total


@router.post(
    "/studies",
    summary="Submit a study (a batch, an orbit file or a sweep); it runs in the background",
    status_code=202,
    response_model=StudyStatus,
    responses={202: {"description": "Accepted: the study's id and URL"},
               **doc.problem_responses((400, 413, 422)), **_problems(429, 503)},
    openapi_extra=doc.json_body("StudyRequest", {
        "altitude_sweep": ("Circular orbits from 7,000 to 42,164 km in 12 steps x two eccentricities", {
            "kind": "budget", "name": "altitude trade",
            "defaults": {"orbit": {"type": "keplerian", "epoch": "2031-03-01T00:00:00Z",
                                   "semi_major_axis_km": 26560.0, "eccentricity": 0.0,
                                   "inclination_deg": 55.0},
                         "start": "2031-03-01T00:00:00Z", "duration_days": 1.0, "reference": "TT"},
            "sweep": {"mode": "grid", "parameters": [
                {"field": "orbit.semi_major_axis_km", "start": 7000.0, "stop": 42164.0, "count": 12},
                {"field": "orbit.eccentricity", "values": [0.0, 0.01]}]},
        }),
    }),
)
async def submit_study(request: Request, settings: SettingsDep):
    """Store the study's items and queue them; answers at once with the study's id and URL."""
    if uploads.is_multipart(request):
        plan = await _file_plan(request, settings)
        if plan[0] == "json":
            kind, origin, stored, entries, total = plan[1:]
        else:
            kind, origin, stored, entries, total = plan
            stored["name"] = None
    else:
        kind, origin, stored, entries, total = await run_in_threadpool(
            _json_plan, parse_json(await request.body()), settings)
    store = await _store(request)
    try:
        await run_in_threadpool(_check_queue, store, settings, total)
        # The answer describes the study as accepted (queued, nothing done yet): the dispatcher may
        # lease it at once; its URL gives the progress from then on.
        s = await run_in_threadpool(store.submit, kind, origin, stored.pop("name", None), stored,
                                    entries, total)
        status = _status(request, store, s, Progress(0, 0))
    except SQLAlchemyError as exc:
        raise _unavailable(settings, exc) from exc
    studies_of(request.app).runner.wake()
    return JSONResponse(status.model_dump(), status_code=202, headers={"Location": status.url})


@router.get("/studies", summary="List the studies, newest first", response_model=StudyList,
            responses={**_ok({"studies": [STATUS_EXAMPLE]}), **_problems(422, 503)})
async def list_studies(request: Request, limit: Annotated[int, Query(ge=1, le=500)] = 100,
                       offset: Annotated[int, Query(ge=0, le=1_000_000_000)] = 0):
    """The studies in the store with their progress, newest first."""
    store = await _store(request)

    def build():
        return StudyList(studies=[_status(request, store, s) for s in store.list(limit, offset)])

    return await run_in_threadpool(build)


@router.get("/studies/{study_id}", summary="A study's state and progress", response_model=StudyStatus,
            responses={**_ok(STATUS_EXAMPLE), **_problems(404, 422, 503)})
async def get_study(request: Request, study_id: StudyId):
    """State, items done and failed of the total, elapsed and estimated remaining time."""
    store, s = await _study(request, study_id)
    return await run_in_threadpool(_status, request, store, s)


@router.delete("/studies/{study_id}", summary="Cancel a study", response_model=StudyStatus,
               responses={**_ok({**STATUS_EXAMPLE, "state": "cancelled", "estimated_remaining_s": 0.0}),
                          **_problems(404, 409, 422, 503)})
async def cancel_study(request: Request, study_id: StudyId):
    """Stop a queued or running study; the results so far stay readable."""
    store, s = await _study(request, study_id)
    if not await run_in_threadpool(store.cancel, study_id):
        raise ProblemError(409, "Study finished", f"The study {study_id} is {s.state}; only a queued or "
                           "running study can be cancelled.", errors=[{"pointer": "", "detail": s.state}])
    s = await run_in_threadpool(store.get, study_id)
    return await run_in_threadpool(_status, request, store, s)


def _json_lines(store: Store, s: Study):
    key = study_items.RESULT_KEY[s.kind]
    for r in store.iter_results(s.id):
        ok = r.status == 200
        line = {"index": r.index, "id": r.id, "parameters": r.parameters, "status": r.status,
                key: r.body if ok else None, "problem": None if ok else r.body}
        yield json.dumps(line, separators=(",", ":")) + "\n"


@router.get("/studies/{study_id}/results", summary="The finished items as JSON lines",
            response_class=StreamingResponse,
            responses={**_ok('{"index":0,"id":0,"parameters":{"orbit.semi_major_axis_km":7000.0},"status":200,'
                             '"budget":{"mean_fractional_rate":-2.5343e-10},"problem":null}\n',
                             "application/x-ndjson", "One JSON object per line and finished item, in item "
                             "order: index, id, parameters (swept values), status, the budget or "
                             "contact_plan (abridged here), problem"), **_problems(404, 422, 503)})
async def study_results(request: Request, study_id: StudyId):
    """Each finished item's id, swept parameters and its result or problem, streamed from the store."""
    store, s = await _study(request, study_id)
    return StreamingResponse(_json_lines(store, s), media_type="application/x-ndjson")


def _csv(store: Store, s: Study):
    names = _parameter_names(s)
    records = ((r.id, r.parameters, r.status, r.body) for r in store.iter_results(s.id))
    yield from table.render_lines(table.header_lines(f"study {s.id} ({s.kind}, {s.state})"),
                                  table.rows(records, names))


@router.get("/studies/{study_id}/results.csv", summary="The finished items as a trade table (CSV)",
            response_class=StreamingResponse,
            responses={**_ok("field,value\r\ndescription,taubudget study ...; one row per item\r\n"
                             "caution,\"Planning estimate only. ...\"\r\n\r\n"
                             "id,status,orbit.semi_major_axis_km,mean_rate_us_per_day,...\r\n"
                             "0,200,7000.0,-21.8967,...\r\n", "text/csv",
                             "A field,value block (description, caution), an empty row, then one row per "
                             "finished item: id, status, the swept parameters, headline figures, problem"),
                       **_problems(404, 422, 503)})
async def study_results_csv(request: Request, study_id: StudyId):
    """One CSV row per finished item with its swept parameters and headline figures."""
    store, s = await _study(request, study_id)
    return StreamingResponse(_csv(store, s), media_type="text/csv; charset=utf-8",
                             headers={"Content-Disposition": f'inline; filename="study-{s.id}.csv"'})
