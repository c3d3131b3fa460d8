"""The studies' store and dispatcher of one app, opened lazily and closed with the app.

The store opens on the first studies request, or at start-up when there is already a database to
resume (a SQLite file in the data directory, or any DATABASE_URL): a restarted server picks up the
unfinished items of its running studies without waiting for a client. The Dask cluster starts
with the first study the dispatcher leases, so an app that never runs a study never starts one.
"""

from __future__ import annotations

import logging
import threading
from contextlib import asynccontextmanager

from fastapi.concurrency import run_in_threadpool

from ..settings import Settings
from .executor import StudyRunner
from .store import Store, database_url, sqlite_path

log = logging.getLogger("taubudget.studies")


class Studies:
    def __init__(self, settings: Settings):
        self.settings = settings
        self.url = database_url(settings)
        self._lock = threading.Lock()
        self.store: Store | None = None
        self.runner: StudyRunner | None = None

    def open(self) -> Store:
        """The store (opened, schema checked) with its dispatcher running."""
        with self._lock:
            if self.store is None:
                store = Store(self.url)
                runner = StudyRunner(store, self.settings)
                runner.start()
                self.store, self.runner = store, runner
                log.info("studies: store %s, %s", _safe_url(self.url),
                         f"Dask scheduler {self.settings.DASK_SCHEDULER_ADDRESS}"
                         if self.settings.DASK_SCHEDULER_ADDRESS else "embedded Dask cluster")
            return self.store

    def has_database(self) -> bool:
        path = sqlite_path(self.url)
        return path is None or path.exists()

    def close(self) -> None:
        with self._lock:
            runner, store = self.runner, self.store
            self.runner = self.store = None
        if runner is not None:
            runner.stop()
        if store is not None:
            store.close()


def _safe_url(url: str) -> str:
    """The URL without its password, for logs."""
    from sqlalchemy.engine import make_url

    return make_url(url).render_as_string(hide_password=True)


def studies_of(app) -> Studies:
    state = app.state
    if getattr(state, "studies", None) is None:
        state.studies = Studies(state.settings)
    return state.studies


@asynccontextmanager
async def lifespan(app):
    """Resume unfinished studies at start-up (when a database exists); stop the dispatcher at shutdown."""
    studies = studies_of(app)
    if studies.has_database():
        try:
            await run_in_threadpool(studies.open)
        except Exception:  # the routes report an unreachable store as 503; the app still serves budgets
            log.exception("studies: the store could not be opened at start-up")
    try:
        yield
    finally:
        await run_in_threadpool(studies.close)
