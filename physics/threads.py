"""Keep BLAS single-threaded for budget work.

A budget's linear algebra is many small products (10 x 10 normal equations, (N, 3) x (3, 3)
rotations). A threaded BLAS spends more time waking and spinning its threads than computing:
measured on the 2-core benchmark machine, the 30-day LEO budget took 40 ms with OpenBLAS's
default threads and 16 ms with one. Parallelism comes from running budgets side by side
(uvicorn workers, replicas), not from threads inside one budget.
"""

from __future__ import annotations

import functools


@functools.lru_cache(maxsize=1)
def single_threaded_blas():
    """Limit BLAS/OpenMP pools to one thread for the rest of the process (idempotent)."""
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=1, user_api="blas")
