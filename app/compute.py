"""The bounded compute path: every heavy computation of the service goes through here.

Three steps, in this order, for a route, a batch item or a study item:

1. **estimate** the cost before any work (``estimate_cost``: quadrature nodes, including the
   numerical propagation from an orbit's epoch to the span; series points; the response size);
2. **check** it against the settings (``Cost.check``): over a limit is a 413/422 problem naming
   the limit and the estimate, before anything runs;
3. **run** it with a deadline and a cancellation token (``run_bounded`` in any thread or worker
   process, or ``Compute`` in a route): at most ``MAX_CONCURRENT_COMPUTATIONS`` per worker
   process, off the event loop, stopped cooperatively (``physics.cancel``) when
   ``COMPUTE_DEADLINE_SECONDS`` pass or the client disconnects. The slot is released when the
   work has actually stopped; the client (if still there) gets a 504 problem naming the deadline.

A request that cannot start within ``COMPUTE_QUEUE_WAIT_SECONDS`` gets a 503 problem with
Retry-After instead of piling onto the thread pool. Scale out with workers and replicas
(deploy/SCALING.md).
"""

from __future__ import annotations

import asyncio
import contextlib
import json
import math
from dataclasses import dataclass
from typing import Annotated, Any

from fastapi import Depends, Request
from fastapi.concurrency import run_in_threadpool
from fastapi.responses import Response
from taubudget.physics.budget import initial_panel_s, series_point_count
from taubudget.physics.cancel import DEADLINE_REASON, CancelToken, ComputationCancelled, cancellation
from taubudget.physics.constants import SECONDS_PER_DAY
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.frames.choose import choose_frame
from taubudget.physics.orbits.numerical import NumericalOrbit
from taubudget.physics.quadrature import NODES_PER_PANEL

from .problems import TYPE_BUSY, TYPE_CANCELLED, TYPE_DEADLINE, ProblemError

DISCONNECT_POLL_S = 0.25
"""How often a running computation looks whether its client is still connected, s."""


# --- 1. and 2.: estimate and check ----------------------------------------------------------

# Upper bounds of the JSON text of one series row (Starlette's compact separators): a float's
# repr is at most 24 characters ("-1.2345678901234567e-308") plus a comma, a UTC time string
# 27 characters plus quotes and a comma.
FLOAT_BYTES = 25
TIME_BYTES = 30
BASE_ROW_BYTES = TIME_BYTES + 4 * FLOAT_BYTES  # time_utc, elapsed_s, offset, periodic, eccentricity
BCRS_ROW_BYTES = 2 * FLOAT_BYTES  # light time and Shapiro delay to the Earth
STATION_ROW_BYTES = 2 * FLOAT_BYTES  # the same to a link station
CLOCK_ROW_BYTES = TIME_BYTES + 4 * FLOAT_BYTES  # time_utc, elapsed_s, deterministic, sigma, bound
FIXED_RESPONSE_BYTES = 64_000
"""Everything but the series: figures, model block, omitted terms, clock model (~10 KB measured)."""


@dataclass(frozen=True)
class Cost:
    """What one budget will cost, estimated from the request alone, before any work."""

    nodes: int  # quadrature nodes of the first pass (initial panels x NODES_PER_PANEL)
    series_points: int  # exact number of output times (0 without a series)
    response_bytes: int  # upper bound of the JSON response
    numerical_revolutions: float | None = None  # orbits integrated (state vectors), epoch included


def estimate_cost(source, reference, span, series_step_s: float | None = None, frame: str | None = None,
                  clock: bool = False, link_station: bool = False) -> Cost:
    """The cost of a budget of ``source`` against ``reference`` (string or physics source) over
    ``span``: cheap (no propagation), exact for the series, an upper bound for the response."""
    nodes = NODES_PER_PANEL * max(1, math.ceil(span.duration_s / initial_panel_s(source)))
    points = series_point_count(span.duration_s, series_step_s) if series_step_s else 0
    row = BASE_ROW_BYTES + (CLOCK_ROW_BYTES if clock else 0)
    if (frame or choose_frame(source, reference)) == "BCRS":
        row += BCRS_ROW_BYTES + (STATION_ROW_BYTES if link_station else 0)
    revolutions = source.propagation_revolutions(span) if isinstance(source, NumericalOrbit) else None
    return Cost(nodes, points, FIXED_RESPONSE_BYTES + points * row, revolutions)


def check_cost(cost: Cost, settings, source=None, span=None, span_field: str = "end") -> None:
    """Refuse, before any work, a cost over the settings: ``PhysicsInputError`` (a 422 naming the
    field) whose reason names the estimate and the limit. ``span_field``: the request field that
    sets the span length ("end" or "duration_days")."""
    revolutions = cost.numerical_revolutions
    if revolutions is not None and revolutions > settings.MAX_NUMERICAL_REVOLUTIONS:
        _refuse_numerical(revolutions, source, span, settings, span_field)
    if cost.nodes > settings.MAX_NODES:
        days = span.duration_s / SECONDS_PER_DAY if span is not None else None
        raise PhysicsInputError(
            span_field, None if days is None else round(days, 6),
            f"the span needs an estimated {cost.nodes} quadrature nodes, above this service's limit of "
            f"{settings.MAX_NODES} (TAUBUDGET_MAX_NODES); shorten the span or split it",
        )
    if cost.series_points > settings.MAX_SERIES_POINTS:
        raise PhysicsInputError(
            "series_step_s", None,
            f"the series has {cost.series_points} points (the span end included), above this service's "
            f"limit of {settings.MAX_SERIES_POINTS} (TAUBUDGET_MAX_SERIES_POINTS); use a longer step",
        )
    if cost.response_bytes > settings.MAX_RESPONSE_BYTES:
        raise PhysicsInputError(
            "series_step_s", None,
            f"the response would be up to {cost.response_bytes / 1e6:.1f} MB ({cost.series_points} series "
            f"points), above this service's limit of {settings.MAX_RESPONSE_BYTES / 1e6:g} MB "
            "(TAUBUDGET_MAX_RESPONSE_BYTES); use a longer step",
        )


def _refuse_numerical(revolutions: float, source, span, settings, span_field: str = "end"):
    in_span = span.duration_s / source.period_s()
    to_span = revolutions - in_span
    # The epoch is the source's own parameter (a Time): the caller's ``request_terms`` names the
    # request block that gave it (a state vector's epoch, an OPM's text).
    field, value = (("epoch", source.epoch()) if to_span > in_span
                    else (span_field, round(span.duration_s / SECONDS_PER_DAY, 6)))
    reason = (f"a state-vector orbit is integrated numerically from its epoch: an estimated "
              f"{revolutions:.0f} revolutions ({to_span:.0f} from the epoch to the span, {in_span:.0f} "
              f"over it), above this service's limit of {settings.MAX_NUMERICAL_REVOLUTIONS} "
              "(TAUBUDGET_MAX_NUMERICAL_REVOLUTIONS); give a state nearer the span, shorten the span, "
              "or give mean elements (TLE/OMM)")
    raise PhysicsInputError(field, value, reason, source=source if field == "epoch" else None)


# --- 3.: run -----------------------------------------------------------------------------------


def run_bounded(fn, *args: Any, token: CancelToken | None = None, **kwargs: Any) -> Any:
    """Run ``fn(*args, **kwargs)`` in this thread under ``token`` (a ``physics.cancel.CancelToken``
    with the deadline in seconds): the physics loops stop with ``ComputationCancelled`` once the
    token is cancelled or past its deadline. For callers outside a route (the CLI, study workers)."""
    with cancellation(token):
        return fn(*args, **kwargs)


def deadline_problem(exc: ComputationCancelled) -> ProblemError:
    """The problem a client gets when its computation was stopped (deadline or cancellation)."""
    if exc.reason == DEADLINE_REASON:
        return ProblemError(
            504, "Deadline exceeded",
            f"The computation was stopped after {exc.elapsed_s:.1f} s: this service gives one "
            f"computation at most {exc.deadline_s:g} s (setting TAUBUDGET_COMPUTE_DEADLINE_SECONDS). "
            "Shorten the span, coarsen the series step or split the work.", TYPE_DEADLINE,
            [{"pointer": "", "detail": f"deadline of {exc.deadline_s:g} s exceeded"}],
            limit_name="COMPUTE_DEADLINE_SECONDS", limit=exc.deadline_s, elapsed_s=round(exc.elapsed_s, 3),
        )
    return ProblemError(503, "Computation cancelled", f"The computation was cancelled: {exc.reason}.",
                        TYPE_CANCELLED, [{"pointer": "", "detail": exc.reason}])


def _slots(request: Request) -> asyncio.Semaphore:
    state = request.app.state
    if getattr(state, "compute_slots", None) is None:
        state.compute_slots = asyncio.Semaphore(state.settings.MAX_CONCURRENT_COMPUTATIONS)
    return state.compute_slots


class Compute:
    """Run a blocking function in the thread pool once a computation slot is free, with the
    deadline ``COMPUTE_DEADLINE_SECONDS`` and cancellation when the client disconnects."""

    def __init__(self, request: Request):
        self.request = request
        self.slots = _slots(request)
        settings = request.app.state.settings
        self.wait_s = settings.COMPUTE_QUEUE_WAIT_SECONDS
        self.deadline_s = settings.COMPUTE_DEADLINE_SECONDS

    async def _watch_client(self, token: CancelToken) -> None:
        is_disconnected = getattr(self.request, "is_disconnected", None)
        if is_disconnected is None:
            return
        while True:
            if await is_disconnected():
                token.cancel("the client disconnected")
                return
            await asyncio.sleep(DISCONNECT_POLL_S)

    async def __call__(self, fn, *args: Any) -> Any:
        try:
            await asyncio.wait_for(self.slots.acquire(), timeout=self.wait_s)
        except TimeoutError as exc:
            raise ProblemError(
                503, "Busy", f"All computation slots of this worker stayed busy for {self.wait_s:g} s; "
                "retry later, or send the work to another replica.", TYPE_BUSY,
                [{"pointer": "", "detail": "no computation slot free"}],
                headers={"Retry-After": str(max(1, int(self.wait_s)))},
            ) from exc
        token = CancelToken(self.deadline_s)
        watcher = asyncio.create_task(self._watch_client(token))
        try:
            return await run_in_threadpool(run_bounded, fn, *args, token=token)
        except ComputationCancelled as exc:
            raise deadline_problem(exc) from exc
        finally:
            watcher.cancel()
            with contextlib.suppress(asyncio.CancelledError):
                await watcher
            self.slots.release()  # the thread has returned: the work has really stopped


ComputeDep = Annotated[Compute, Depends(Compute)]


# --- Rendering large responses off the event loop ----------------------------------------------

_JSON_OPTIONS = {"ensure_ascii": False, "allow_nan": False, "separators": (",", ":")}
RENDER_SLICE = 4096
"""List elements encoded per ``json.dumps`` call: the C encoder holds the GIL for one call, so a
20 MB series is encoded in ~1 ms slices and the event loop keeps answering between them."""


def _encode(value: Any, out: list[str]) -> None:
    if isinstance(value, dict) and all(isinstance(k, str) for k in value):
        out.append("{")
        for i, (k, v) in enumerate(value.items()):
            out.append(("," if i else "") + json.dumps(k, **_JSON_OPTIONS) + ":")
            _encode(v, out)
        out.append("}")
    elif isinstance(value, list) and len(value) > RENDER_SLICE:
        out.append("[")
        for i in range(0, len(value), RENDER_SLICE):
            piece = value[i:i + RENDER_SLICE]
            if any(isinstance(v, dict | list) for v in piece):
                parts: list[str] = []
                for j, v in enumerate(piece):
                    parts.append("," if (i or j) else "")
                    _encode(v, parts)
                out.append("".join(parts))
            else:
                out.append(("," if i else "") + json.dumps(piece, **_JSON_OPTIONS)[1:-1])
        out.append("]")
    else:
        out.append(json.dumps(value, **_JSON_OPTIONS))


def render_json(content: Any) -> bytes:
    """The same bytes as Starlette's JSONResponse, encoded in slices (see RENDER_SLICE)."""
    out: list[str] = []
    _encode(content, out)
    return "".join(out).encode("utf-8")


async def checked_json_response(model, content: Any) -> Response:
    """``content`` checked against the route's response ``model`` and rendered, both in a worker
    thread. FastAPI would validate and encode an async route's return value on the event loop,
    where a 20 MB series held the liveness probe; the route keeps ``response_model`` for its
    OpenAPI schema, and the body is the presented dict exactly as before."""
    def check_and_render() -> bytes:
        model.model_validate(content)  # a ValidationError here is a server fault: a 500
        return render_json(content)

    body = await run_in_threadpool(check_and_render)
    return Response(body, media_type="application/json")
