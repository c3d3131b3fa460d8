"""An app with an embedded Dask cluster of two worker processes and a throw-away SQLite store."""

from __future__ import annotations

import pytest
from fastapi.testclient import TestClient
from taubudget.app.main import create_app
from taubudget.app.settings import Settings


@pytest.fixture(scope="module")
def study_client(tmp_path_factory):
    data_dir = tmp_path_factory.mktemp("studies")
    settings = Settings(DATA_DIR=str(data_dir), DASK_WORKERS=2, MAX_STUDY_ITEMS=50, MAX_NODES=200_000,
                        MAX_QUEUED_STUDY_ITEMS=40, STUDY_LEASE_SECONDS=10)
    with TestClient(create_app(settings)) as c:
        yield c


@pytest.fixture(scope="session")
def postgres():
    """A real PostgreSQL server on a free loopback port for the whole session (stopped at its end)."""
    from support.postgres import Postgres
    from support.studies import free_port

    server = Postgres(free_port())
    server.start()
    try:
        yield server
    finally:
        server.stop()
