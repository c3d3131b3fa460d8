"""Bounded concurrency: a worker runs at most MAX_CONCURRENT_COMPUTATIONS at once, then 503."""

import asyncio
import time
from types import SimpleNamespace

import pytest
from taubudget.app.compute import Compute
from taubudget.app.problems import ProblemError
from taubudget.app.settings import Settings


def _request(slots: int, wait_s: float):
    state = SimpleNamespace(settings=Settings(MAX_CONCURRENT_COMPUTATIONS=slots,
                                              COMPUTE_QUEUE_WAIT_SECONDS=wait_s))
    return SimpleNamespace(app=SimpleNamespace(state=state))


def test_a_full_worker_answers_503_with_retry_after():
    request = _request(slots=1, wait_s=0.05)

    async def scenario():
        slow = asyncio.create_task(Compute(request)(time.sleep, 0.4))
        await asyncio.sleep(0.1)  # the slow job holds the only slot
        with pytest.raises(ProblemError) as info:
            await Compute(request)(lambda: "never")
        await slow
        after = await Compute(request)(lambda: "ran")
        return info.value, after

    err, after = asyncio.run(scenario())
    assert err.status == 503 and err.headers["Retry-After"] == "1"
    assert "busy" in err.detail
    assert after == "ran"  # the slot is released once the slow job ends


def test_jobs_within_the_limit_run_side_by_side():
    request = _request(slots=2, wait_s=5.0)

    async def scenario():
        t0 = time.monotonic()
        await asyncio.gather(Compute(request)(time.sleep, 0.3), Compute(request)(time.sleep, 0.3))
        return time.monotonic() - t0

    assert asyncio.run(scenario()) < 0.55  # two 0.3 s jobs overlapped
