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
from typing import Annotated, Any

from fastapi import Depends, Request
from fastapi.concurrency import run_in_threadpool
from taubudget.physics.cancel import DEADLINE_REASON, CancelToken, ComputationCancelled, cancellation

from .problems import TYPE_BUSY, TYPE_CANCELLED, TYPE_DEADLINE, ProblemError

DISCONNECT_POLL_S = 0.25
"""How often a running computation looks whether its client is still connected, s."""


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
