"""Cooperative cancellation of long computations: a token that the long loops check.

The caller (app/, the CLI, a study worker) makes a ``CancelToken`` with a deadline in seconds
and may ``cancel(reason)`` it from another thread (a client that went away). Physics code
does not know who the caller is: the long loops (quadrature refinement levels and node
blocks, the numerical integrator's right-hand side, the pass search) call ``checkpoint()``,
which raises ``ComputationCancelled`` once the token is cancelled or past its deadline. The
token in force is set for the duration of one computation with ``cancellation(token)``;
without one, ``checkpoint()`` costs a context-variable lookup and never raises.

A checkpoint sits wherever a loop can run for more than ~10 ms, so a cancelled computation
stops within a fraction of a second and its worker thread (and compute slot) is free again.
"""

from __future__ import annotations

import contextlib
import contextvars
import threading
import time


class ComputationCancelled(RuntimeError):
    """The computation was stopped: its deadline passed or its caller cancelled it."""

    def __init__(self, reason: str, deadline_s: float | None, elapsed_s: float):
        super().__init__(reason)
        self.reason = reason
        self.deadline_s = deadline_s
        self.elapsed_s = elapsed_s


DEADLINE_REASON = "deadline"
"""``ComputationCancelled.reason`` when the deadline passed (otherwise the caller's reason)."""


class CancelToken:
    """A deadline (seconds from creation, or None) plus a flag that any thread may set."""

    def __init__(self, deadline_s: float | None = None):
        self.deadline_s = deadline_s
        self.started = time.monotonic()
        self._expires = None if deadline_s is None else self.started + deadline_s
        self._flag = threading.Event()
        self.reason: str | None = None

    def cancel(self, reason: str) -> None:
        """Ask the computation to stop at its next checkpoint (thread-safe)."""
        if not self._flag.is_set():
            self.reason = reason
            self._flag.set()

    def elapsed_s(self) -> float:
        return time.monotonic() - self.started

    def is_cancelled(self) -> bool:
        if self._flag.is_set():
            return True
        if self._expires is not None and time.monotonic() >= self._expires:
            self.cancel(DEADLINE_REASON)
            return True
        return False

    def check(self) -> None:
        """Raise ``ComputationCancelled`` if cancelled or past the deadline."""
        if self.is_cancelled():
            raise ComputationCancelled(self.reason or DEADLINE_REASON, self.deadline_s, self.elapsed_s())


_ACTIVE: contextvars.ContextVar[CancelToken | None] = contextvars.ContextVar("taubudget_cancel",
                                                                               default=None)


@contextlib.contextmanager
def cancellation(token: CancelToken | None):
    """Make ``token`` the one that ``checkpoint()`` checks inside this block (this thread/context)."""
    handle = _ACTIVE.set(token)
    try:
        yield token
    finally:
        _ACTIVE.reset(handle)


def current_token() -> CancelToken | None:
    return _ACTIVE.get()


def checkpoint() -> None:
    """Raise ``ComputationCancelled`` if the computation in force was cancelled; else nothing."""
    token = _ACTIVE.get()
    if token is not None:
        token.check()
