"""One study item through the service's own compute path: request dict -> result dict or problem dict.

This module is the only place where studies touch the request models and the compute functions,
so a study item and a single ``POST /v1/budgets`` (or ``/v1/contact-plans``) give the same answer:
validate the request, check its estimated cost, run the physics, present the response. Errors
come back as values (a problem object with its HTTP status), never as exceptions: a failed item
records its problem and the study goes on.

Dask workers call ``run_item``; ``preload`` (a worker plugin's setup) loads the timescale and the
ephemeris once per worker process. An uploaded multi-object file is parsed once per process and
reused by every item that names one of its objects.
"""

from __future__ import annotations

import functools
import hashlib
import json
import logging
import threading
from typing import Any

from pydantic import ValidationError
from taubudget.physics.cancel import CancelToken, ComputationCancelled
from taubudget.physics.errors import PhysicsInputError

from ..compute import deadline_problem, run_bounded
from ..problems import (
    TYPE_INTERNAL,
    TYPE_TOO_LARGE,
    ProblemError,
    physics_problem,
    problem,
    validation_errors,
    validation_problem,
)
from ..schemas import BudgetRequest
from ..services.budget import budget_from_request, estimate_nodes, merge_item, orbit_source
from ..services.orbits import gravity_block
from ..settings import Settings

log = logging.getLogger("taubudget.studies")

RESULT_KEY = {"budget": "budget", "contact_plan": "contact_plan"}
"""The key of an item's result in the results' JSON lines, by study kind."""


def preload() -> None:
    """Load the timescale and the DE421 ephemeris into this process (once; both are cached)."""
    from taubudget.physics.ephemeris import ephemeris, timescale

    timescale()
    ephemeris()


def merged_request(defaults: dict, item: dict) -> dict:
    """One batch item over the defaults, merged as /v1/budgets/batch merges them; in addition an item
    ``orbit`` without a ``type`` adds its options to the default orbit (an uploaded file's object is
    the item ``{"id": ..., "orbit": {"object_id": ...}}``)."""
    out = merge_item(defaults, item)
    orbit, default_orbit = item.get("orbit"), defaults.get("orbit")
    if isinstance(orbit, dict) and "type" not in orbit and isinstance(default_orbit, dict):
        out["orbit"] = {**default_orbit, **orbit}
    return out


def item_request(defaults: dict, parameters: dict | None, payload: dict | None) -> dict:
    """The request of one stored item: the sweep's values set on the defaults, or the item over them."""
    from .expand import swept_request

    if parameters is not None:
        return swept_request(defaults, parameters)
    return merged_request(defaults, payload or {})


def _model(kind: str):
    if kind == "contact_plan":
        from ..schemas import ContactPlanRequest

        return ContactPlanRequest
    return BudgetRequest


def validate(kind: str, body: Any, strict: bool | None = None):
    """The request model of ``kind``; raises pydantic's ValidationError. ``strict=False`` converts
    text values (form fields)."""
    return _model(kind).model_validate(body, strict=strict)


def run_request(kind: str, body: Any, settings: Settings, source=None) -> tuple[int, dict]:
    """The shared path for one request dict: (200, response dict) or (4xx/5xx, problem dict)."""
    try:
        req = validate(kind, body)
    except ValidationError as exc:
        return 422, validation_problem(validation_errors(exc, body), "The item")
    token = CancelToken(settings.COMPUTE_DEADLINE_SECONDS)
    try:
        if kind == "contact_plan":
            from ..services.contacts import contact_plan_from_request

            _check_cost(req, settings, None)
            return 200, run_bounded(contact_plan_from_request, req, settings, token=token)
        if source is None:
            source = orbit_source(req)  # Keplerian elements follow the request's zonal field
        _check_cost(req, settings, source)
        return 200, run_bounded(budget_from_request, req, settings, source, token=token)
    except PhysicsInputError as exc:
        return 422, physics_problem(exc)
    except ComputationCancelled as exc:  # the deadline COMPUTE_DEADLINE_SECONDS passed
        p = deadline_problem(exc)
        return p.status, p.to_dict()
    except ProblemError as exc:
        return exc.status, exc.to_dict()
    except Exception:  # a bug in one item must not hide the others' results
        log.exception("study item failed")
        return 500, problem(500, "Internal error", "The service failed on this item; this is a bug in the "
                            "service, not in your input.", TYPE_INTERNAL,
                            [{"pointer": "", "detail": "internal error"}])


def _check_cost(req, settings: Settings, source) -> None:
    """Refuse an item whose estimated quadrature nodes pass MAX_NODES, before any work."""
    nodes = estimate_nodes(req, settings, source)
    if nodes > settings.MAX_NODES:
        raise ProblemError(
            413, "Item too large",
            f"The item needs an estimated {nodes} quadrature nodes, above this service's limit of "
            f"{settings.MAX_NODES} per computation (setting TAUBUDGET_MAX_NODES); shorten its span.",
            TYPE_TOO_LARGE, [{"pointer": "/end", "detail": f"estimated {nodes} nodes"}],
            limit_name="MAX_NODES", limit=settings.MAX_NODES, estimated_nodes=nodes,
        )


def item_settings(settings: Settings) -> Settings:
    """The settings a study item runs under: a mission-life span (MAX_STUDY_SPAN_DAYS) instead of the
    interactive MAX_SPAN_DAYS, and the background deadline STUDY_ITEM_DEADLINE_SECONDS instead of a
    request's; the item's cost stays bounded by MAX_NODES."""
    return settings.model_copy(update={
        "MAX_SPAN_DAYS": max(settings.MAX_SPAN_DAYS, settings.MAX_STUDY_SPAN_DAYS),
        "COMPUTE_DEADLINE_SECONDS": settings.STUDY_ITEM_DEADLINE_SECONDS,
    })


@functools.lru_cache(maxsize=8)
def _settings(settings_json: str) -> Settings:
    return Settings.model_validate_json(settings_json)


_file_lock = threading.Lock()
_file_cache: dict[str, dict] = {}
_FILE_CACHE_SIZE = 4


def _file_source(orbit: dict, gravity):
    """The source of one object of a multi-object orbit file, the file parsed once per process
    (per gravity block: the forces of a numerical propagation that gives no force_model)."""
    from ..formats import TEXT_ORBITS, format_sources

    if not (isinstance(orbit, dict) and orbit.get("object_id") and isinstance(orbit.get("text"), str)):
        return None
    whole = {k: v for k, v in orbit.items() if k != "object_id"}
    key = hashlib.sha256(json.dumps([whole, gravity], sort_keys=True, default=str).encode()).hexdigest()
    with _file_lock:
        objects = _file_cache.get(key)
    if objects is None:
        by_type = {m.model_fields["type"].annotation.__args__[0]: m for m in TEXT_ORBITS}
        model = by_type.get(whole.get("type"))
        if model is None:
            return None
        try:
            objects = dict(format_sources(model.model_validate(whole), "orbit", gravity_block(gravity)))
        except (ValidationError, PhysicsInputError):
            return None  # the item's own validation names the problem
        with _file_lock:
            if len(_file_cache) >= _FILE_CACHE_SIZE:
                _file_cache.pop(next(iter(_file_cache)))
            _file_cache[key] = objects
    return objects.get(str(orbit["object_id"]))


def run_item(kind: str, defaults: dict, parameters: dict | None, payload: dict | None,
             settings_json: str) -> tuple[int, dict]:
    """What a Dask worker runs for one study item (module-level, so it pickles by reference)."""
    body = item_request(defaults, parameters, payload)
    source = None
    if kind == "budget" and payload is not None:
        source = _file_source(body.get("orbit"), body.get("gravity"))
    status, out = run_request(kind, body, _settings(settings_json), source)
    if status == 504 and out.get("limit_name") == "COMPUTE_DEADLINE_SECONDS":  # name the study's setting
        out = {**out, "limit_name": "STUDY_ITEM_DEADLINE_SECONDS",
               "detail": out["detail"].replace("TAUBUDGET_COMPUTE_DEADLINE_SECONDS",
                                               "TAUBUDGET_STUDY_ITEM_DEADLINE_SECONDS")}
    return status, out
