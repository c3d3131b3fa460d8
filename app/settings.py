"""Service limits and options, from environment variables (prefix TAUBUDGET_).

Units are in the names: TAUBUDGET_MAX_NODES=3000000, TAUBUDGET_COMPUTE_DEADLINE_SECONDS=120 and so on.
"""

from __future__ import annotations

import functools

from pydantic_settings import BaseSettings, SettingsConfigDict


class Settings(BaseSettings):
    model_config = SettingsConfigDict(env_prefix="TAUBUDGET_", extra="ignore")

    # Work is bounded by its estimated cost (nodes, series points, response bytes; app/compute.py),
    # not by days: a 2-year surface clock is ~30,000 nodes. The span cap is an outer bound only.
    MAX_SPAN_DAYS: float = 36_525.0
    MAX_NODES: int = 3_000_000
    MAX_SERIES_POINTS: int = 200_000
    MAX_RESPONSE_BYTES: int = 20_000_000  # upper bound of a budget's JSON, checked before work
    MAX_BATCH_ITEMS: int = 500
    MAX_BATCH_NODES: int = 20_000_000
    MAX_BODY_BYTES: int = 5_000_000
    MAX_STABILITY_POINTS: int = 100_000  # ~3.5 s of EDF work per request at the limit
    MAX_CONCURRENT_COMPUTATIONS: int = 2  # per worker process: budgets, plans, stability tables
    COMPUTE_QUEUE_WAIT_SECONDS: float = 30.0  # then 503 with Retry-After
    MAX_NUMERICAL_REVOLUTIONS: int = 250  # DOP853 state-vector orbits: ~0.04 s per LEO revolution
    # (counted from the state's epoch to the far end of the span, not only over the span)
    COMPUTE_DEADLINE_SECONDS: float = 120.0  # one computation (a budget, a batch item, a plan); then 504
    # Access control and browsers (deploy/SCALING.md): API keys by name, e.g.
    # TAUBUDGET_API_KEYS='{"planning-desk": "<long random key>"}'; none set = open service.
    API_KEYS: dict[str, str] = {}
    CORS_ORIGINS: list[str] = []  # e.g. '["https://tool.example.org"]'; none by default
    # Connections (taubudget serve): headers must arrive within HEADER_TIMEOUT_SECONDS, an idle
    # keep-alive connection closes after KEEP_ALIVE_SECONDS, a header block is at most MAX_HEADER_BYTES.
    HEADER_TIMEOUT_SECONDS: float = 10.0
    KEEP_ALIVE_SECONDS: int = 5
    MAX_HEADER_BYTES: int = 16_384
    # Studies (app/studies/): durable jobs on Dask. DATABASE_URL empty: SQLite in DATA_DIR.
    DATA_DIR: str = ""  # empty: $XDG_DATA_HOME/taubudget (~/.local/share/taubudget)
    DATABASE_URL: str = ""  # e.g. postgresql+psycopg://user:pw@host/db; empty: sqlite in DATA_DIR
    DASK_SCHEDULER_ADDRESS: str = ""  # e.g. tcp://scheduler:8786; empty: an embedded local cluster
    DASK_WORKERS: int = 0  # embedded cluster's worker processes; 0: one per CPU
    MAX_STUDY_SPAN_DAYS: float = 7305.0  # a study item's span (20 years); its cost is bounded by MAX_NODES
    STUDY_ITEM_DEADLINE_SECONDS: float = 1800.0  # one study item (background work); then a 504 problem
    MAX_STUDY_ITEMS: int = 20_000  # items one study may hold (a sweep's product is checked before expansion)
    MAX_QUEUED_STUDY_ITEMS: int = 200_000  # unfinished items of all studies; beyond: 429 + Retry-After
    STUDY_LEASE_SECONDS: float = 30.0  # a replica's claim on a running study; taken over after expiry
    STUDY_RETRY_AFTER_SECONDS: int = 60  # Retry-After of a 429/503 from the studies routes
    DEFAULT_HOST: str = "127.0.0.1"
    DEFAULT_PORT: int = 8000


@functools.lru_cache(maxsize=1)
def get_settings() -> Settings:
    return Settings()
