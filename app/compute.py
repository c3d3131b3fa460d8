"""Bounded concurrency for the CPU-bound work of the routes.

Each worker process runs at most ``MAX_CONCURRENT_COMPUTATIONS`` budgets, contact plans or
stability tables at once (one budget may hold a few hundred MB at the node limit); a request
that cannot start within ``COMPUTE_QUEUE_WAIT_SECONDS`` gets a 503 problem with Retry-After
instead of piling onto the thread pool. Scale out with workers and replicas (deploy/SCALING.md).
"""

from __future__ import annotations

import asyncio
from typing import Annotated, Any

from fastapi import Depends, Request
from fastapi.concurrency import run_in_threadpool

from .problems import TYPE_BUSY, ProblemError


def _slots(request: Request) -> asyncio.Semaphore:
    state = request.app.state
    if getattr(state, "compute_slots", None) is None:
        state.compute_slots = asyncio.Semaphore(state.settings.MAX_CONCURRENT_COMPUTATIONS)
    return state.compute_slots


class Compute:
    """Run a blocking function in the thread pool once a computation slot is free."""

    def __init__(self, request: Request):
        self.slots = _slots(request)
        self.wait_s = request.app.state.settings.COMPUTE_QUEUE_WAIT_SECONDS

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
        try:
            return await run_in_threadpool(fn, *args)
        finally:
            self.slots.release()


ComputeDep = Annotated[Compute, Depends(Compute)]
