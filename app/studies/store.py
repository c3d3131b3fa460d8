"""The study store: every query on studies, their items and results, in one module (SQLAlchemy Core).

One database URL: SQLite in the data directory by default (WAL journal, nothing to install) or
PostgreSQL for several API replicas sharing the store. The schema carries a version number
(table ``schema_version``); a database written by a newer version is refused rather than guessed
at. Results have the primary key (study, item): ``record_result`` inserts with ON CONFLICT DO
NOTHING, so an item that runs twice (a retried task, a restarted server) lands exactly once.

A running study is leased by one dispatcher (``claim``): a replica renews its lease while it
works and any replica may take the study over once the lease has expired (a killed server).
Times are Unix seconds (float) so both dialects store them alike.
"""

from __future__ import annotations

import json
import os
import time
import uuid
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from sqlalchemy import (
    Column,
    Float,
    ForeignKey,
    Integer,
    MetaData,
    String,
    Table,
    Text,
    and_,
    case,
    create_engine,
    delete,
    event,
    exists,
    func,
    or_,
    select,
    update,
)
from sqlalchemy.engine import Engine

SCHEMA_VERSION = 1
"""Bump with a migration step in ``_MIGRATIONS`` whenever the tables change."""

ACTIVE_STATES = ("queued", "running")
STATES = ("queued", "running", "done", "failed", "cancelled")

metadata = MetaData()

schema_version = Table("schema_version", metadata, Column("version", Integer, nullable=False))

studies = Table(
    "studies", metadata,
    Column("id", String(36), primary_key=True),
    Column("kind", String(20), nullable=False),  # budget | contact_plan
    Column("origin", String(10), nullable=False),  # batch | file | sweep
    Column("name", String(200)),
    Column("state", String(12), nullable=False, index=True),
    Column("total", Integer, nullable=False),
    Column("spec", Text, nullable=False),  # JSON: the defaults (sweep base) and the sweep's parameters
    Column("created_at", Float, nullable=False),
    Column("started_at", Float),
    Column("finished_at", Float),
    Column("lease_owner", String(64)),
    Column("lease_expires_at", Float),
)

items = Table(
    "study_items", metadata,
    Column("study_id", String(36), ForeignKey("studies.id", ondelete="CASCADE"), primary_key=True),
    Column("item_index", Integer, primary_key=True, autoincrement=False),
    Column("item_id", Text, nullable=False),  # JSON: the item's id (string or integer)
    Column("parameters", Text),  # JSON: the swept fields' values (sweeps), else null
    Column("payload", Text),  # JSON: the item's own request fields (batches and files)
)

results = Table(
    "study_results", metadata,
    Column("study_id", String(36), ForeignKey("studies.id", ondelete="CASCADE"), primary_key=True),
    Column("item_index", Integer, primary_key=True, autoincrement=False),
    Column("status", Integer, nullable=False),
    Column("body", Text, nullable=False),  # JSON: the result, or the problem when status != 200
    Column("finished_at", Float, nullable=False),
)

_MIGRATIONS: dict[int, list[str]] = {}
"""version -> SQL statements that take a database from version - 1 to version (none yet)."""


class SchemaTooNew(RuntimeError):
    pass


def default_data_dir() -> Path:
    base = os.environ.get("XDG_DATA_HOME") or str(Path.home() / ".local" / "share")
    return Path(base) / "taubudget"


def database_url(settings) -> str:
    """The settings' DATABASE_URL, else a SQLite file in DATA_DIR (the default data directory)."""
    if settings.DATABASE_URL:
        return settings.DATABASE_URL
    data_dir = Path(settings.DATA_DIR) if settings.DATA_DIR else default_data_dir()
    return f"sqlite:///{data_dir / 'studies.sqlite3'}"


def sqlite_path(url: str) -> Path | None:
    return Path(url.removeprefix("sqlite:///")) if url.startswith("sqlite:///") else None


@dataclass(frozen=True)
class Study:
    id: str
    kind: str
    origin: str
    name: str | None
    state: str
    total: int
    spec: dict
    created_at: float
    started_at: float | None
    finished_at: float | None


@dataclass(frozen=True)
class Progress:
    done: int  # items with a result of status 200
    failed: int  # items with a problem


@dataclass(frozen=True)
class Item:
    index: int
    id: Any
    parameters: dict | None
    payload: dict | None


@dataclass(frozen=True)
class ResultRow:
    index: int
    id: Any
    parameters: dict | None
    status: int
    body: dict


def _dumps(obj) -> str:
    return json.dumps(obj, separators=(",", ":"), allow_nan=False)


class Store:
    """Studies, items and results in one SQL database."""

    def __init__(self, url: str):
        self.url = url
        path = sqlite_path(url)
        if path is not None:
            path.parent.mkdir(parents=True, exist_ok=True)
        self.engine: Engine = create_engine(url, pool_pre_ping=True)
        if self.engine.dialect.name == "sqlite":
            event.listen(self.engine, "connect", _sqlite_pragmas)
        try:
            self._migrate()
        except BaseException:
            self.engine.dispose()
            raise

    def close(self) -> None:
        self.engine.dispose()

    # --- schema -----------------------------------------------------------------------

    def _migrate(self) -> None:
        with self.engine.begin() as conn:
            metadata.create_all(conn, checkfirst=True)
            found = conn.execute(select(schema_version.c.version)).scalar()
            if found is None:
                conn.execute(schema_version.insert().values(version=SCHEMA_VERSION))
                return
            if found > SCHEMA_VERSION:
                raise SchemaTooNew(f"the study database {self.url!r} has schema version {found}, newer than "
                                   f"this program's {SCHEMA_VERSION}; upgrade taubudget")
            for version in range(found + 1, SCHEMA_VERSION + 1):
                for statement in _MIGRATIONS.get(version, []):
                    conn.exec_driver_sql(statement)
            conn.execute(update(schema_version).values(version=SCHEMA_VERSION))

    def version(self) -> int:
        with self.engine.connect() as conn:
            return conn.execute(select(schema_version.c.version)).scalar_one()

    # --- studies ----------------------------------------------------------------------

    def create_study(self, kind: str, origin: str, name: str | None, spec: dict,
                     entries: Iterable[tuple[Any, dict | None, dict | None]], total: int,
                     chunk: int = 1000) -> str:
        """Insert a study and its items (``entries``: (id, parameters, payload), streamed in chunks)."""
        return self.submit(kind, origin, name, spec, entries, total, chunk).id

    def submit(self, kind: str, origin: str, name: str | None, spec: dict,
               entries: Iterable[tuple[Any, dict | None, dict | None]], total: int,
               chunk: int = 1000) -> Study:
        """``create_study``, returning the study as inserted (read in the same transaction, so a
        dispatcher that leases it at once cannot change what the submission reports)."""
        study_id = uuid.uuid4().hex
        with self.engine.begin() as conn:
            conn.execute(studies.insert().values(
                id=study_id, kind=kind, origin=origin, name=name, state="queued", total=total,
                spec=_dumps(spec), created_at=time.time()))
            rows: list[dict] = []
            n = 0
            for ident, params, payload in entries:
                rows.append({"study_id": study_id, "item_index": n, "item_id": _dumps(ident),
                             "parameters": None if params is None else _dumps(params),
                             "payload": None if payload is None else _dumps(payload)})
                n += 1
                if len(rows) >= chunk:
                    conn.execute(items.insert(), rows)
                    rows = []
            if rows:
                conn.execute(items.insert(), rows)
            if n != total:
                raise ValueError(f"expected {total} items, got {n}")
            row = conn.execute(select(studies).where(studies.c.id == study_id)).mappings().one()
        return _study(row)

    def get(self, study_id: str) -> Study | None:
        with self.engine.connect() as conn:
            row = conn.execute(select(studies).where(studies.c.id == study_id)).mappings().first()
        return None if row is None else _study(row)

    def list(self, limit: int = 100, offset: int = 0) -> list[Study]:
        q = select(studies).order_by(studies.c.created_at.desc(), studies.c.id).limit(limit).offset(offset)
        with self.engine.connect() as conn:
            return [_study(r) for r in conn.execute(q).mappings()]

    def progress(self, study_id: str) -> Progress:
        ok = func.coalesce(func.sum(case((results.c.status == 200, 1), else_=0)), 0)
        q = select(ok, func.count()).where(results.c.study_id == study_id)
        with self.engine.connect() as conn:
            done, n = conn.execute(q).one()
        return Progress(int(done), int(n) - int(done))

    def queued_items(self) -> int:
        """Items without a result across the active studies (the queue's length)."""
        active = select(func.coalesce(func.sum(studies.c.total), 0)).where(studies.c.state.in_(ACTIVE_STATES))
        joined = results.join(studies, results.c.study_id == studies.c.id)
        finished = select(func.count()).select_from(joined).where(studies.c.state.in_(ACTIVE_STATES))
        with self.engine.connect() as conn:
            return int(conn.execute(active).scalar_one()) - int(conn.execute(finished).scalar_one())

    def cancel(self, study_id: str) -> bool:
        """Mark an active study cancelled; False when it had already finished."""
        with self.engine.begin() as conn:
            active = and_(studies.c.id == study_id, studies.c.state.in_(ACTIVE_STATES))
            r = conn.execute(update(studies).where(active)
                             .values(state="cancelled", finished_at=time.time(), lease_owner=None))
        return r.rowcount == 1

    def delete(self, study_id: str) -> None:
        with self.engine.begin() as conn:
            conn.execute(delete(results).where(results.c.study_id == study_id))
            conn.execute(delete(items).where(items.c.study_id == study_id))
            conn.execute(delete(studies).where(studies.c.id == study_id))

    # --- the dispatcher's side ---------------------------------------------------------

    def claim(self, owner: str, lease_s: float) -> Study | None:
        """Lease the oldest active study that no live dispatcher holds; mark it running."""
        now = time.time()
        free = or_(studies.c.lease_owner.is_(None), studies.c.lease_owner == owner,
                   studies.c.lease_expires_at < now)
        with self.engine.connect() as conn:
            candidates = conn.execute(select(studies.c.id).where(studies.c.state.in_(ACTIVE_STATES), free)
                                      .order_by(studies.c.created_at, studies.c.id).limit(5)).scalars().all()
        for study_id in candidates:
            with self.engine.begin() as conn:
                r = conn.execute(
                    update(studies).where(studies.c.id == study_id, studies.c.state.in_(ACTIVE_STATES), free)
                    .values(state="running", lease_owner=owner, lease_expires_at=now + lease_s,
                            started_at=func.coalesce(studies.c.started_at, now)))
            if r.rowcount == 1:
                return self.get(study_id)
        return None

    def renew(self, study_id: str, owner: str, lease_s: float) -> bool:
        """Extend the lease; False when the study was cancelled or another dispatcher took it."""
        with self.engine.begin() as conn:
            r = conn.execute(update(studies).where(studies.c.id == study_id, studies.c.lease_owner == owner,
                                                   studies.c.state == "running")
                             .values(lease_expires_at=time.time() + lease_s))
        return r.rowcount == 1

    def release(self, study_id: str, owner: str) -> None:
        with self.engine.begin() as conn:
            conn.execute(update(studies).where(studies.c.id == study_id, studies.c.lease_owner == owner)
                         .values(lease_owner=None, lease_expires_at=None))

    def unfinished_items(self, study_id: str, after_index: int = -1, limit: int = 500) -> list[Item]:
        """Items of the study without a result, in index order, after ``after_index``."""
        has_result = exists().where(results.c.study_id == items.c.study_id,
                                    results.c.item_index == items.c.item_index)
        q = (select(items).where(items.c.study_id == study_id, items.c.item_index > after_index, ~has_result)
             .order_by(items.c.item_index).limit(limit))
        with self.engine.connect() as conn:
            return [_item(r) for r in conn.execute(q).mappings()]

    def record_result(self, study_id: str, index: int, status: int, body: dict) -> bool:
        """Store one item's outcome once; False when it was already stored (a retried item)."""
        return self.record_results(study_id, [(index, status, body)]) == 1

    def record_results(self, study_id: str, outcomes: list[tuple[int, int, dict]]) -> int:
        if not outcomes:
            return 0
        rows = [{"study_id": study_id, "item_index": i, "status": s, "body": _dumps(b),
                 "finished_at": time.time()} for i, s, b in outcomes]
        # RETURNING lists the rows actually inserted (a duplicate returns nothing, on both dialects).
        stmt = self._insert_ignoring_duplicates().returning(results.c.item_index)
        with self.engine.begin() as conn:
            return len(conn.execute(stmt, rows).all())

    def _insert_ignoring_duplicates(self):
        name = self.engine.dialect.name
        if name == "sqlite":
            from sqlalchemy.dialects.sqlite import insert
        elif name == "postgresql":
            from sqlalchemy.dialects.postgresql import insert
        else:  # pragma: no cover - only the two documented dialects are supported
            raise RuntimeError(f"unsupported database dialect {name!r}")
        return insert(results).on_conflict_do_nothing(index_elements=["study_id", "item_index"])

    def finish_if_complete(self, study_id: str) -> str | None:
        """Mark a running study done (or failed when no item succeeded) once every item has a result."""
        p = self.progress(study_id)
        study = self.get(study_id)
        if study is None or study.state != "running" or p.done + p.failed < study.total:
            return None
        state = "failed" if study.total and p.done == 0 else "done"
        with self.engine.begin() as conn:
            conn.execute(update(studies).where(studies.c.id == study_id, studies.c.state == "running")
                         .values(state=state, finished_at=time.time(), lease_owner=None,
                                 lease_expires_at=None))
        return state

    # --- reading results ---------------------------------------------------------------

    def iter_results(self, study_id: str, page: int = 50) -> Iterator[ResultRow]:
        """Finished items in index order, read a page at a time (memory stays flat: a page is small
        because one result with a long series can be megabytes)."""
        last = -1
        while True:
            q = (select(items.c.item_index, items.c.item_id, items.c.parameters, results.c.status,
                        results.c.body)
                 .join(results, and_(results.c.study_id == items.c.study_id,
                                     results.c.item_index == items.c.item_index))
                 .where(items.c.study_id == study_id, items.c.item_index > last)
                 .order_by(items.c.item_index).limit(page))
            with self.engine.connect() as conn:
                rows = conn.execute(q).all()
            if not rows:
                return
            for idx, ident, params, status, body in rows:
                yield ResultRow(idx, json.loads(ident), None if params is None else json.loads(params),
                                status, json.loads(body))
            last = rows[-1][0]

    def result_counts(self, study_id: str) -> dict[int, int]:
        """item index -> number of stored results (always 1: the primary key; tests read it)."""
        q = select(results.c.item_index, func.count()).where(results.c.study_id == study_id) \
            .group_by(results.c.item_index)
        with self.engine.connect() as conn:
            return dict(conn.execute(q).all())


def _sqlite_pragmas(dbapi_conn, _record):
    cur = dbapi_conn.cursor()
    cur.execute("PRAGMA journal_mode=WAL")  # readers do not block the dispatcher's writes
    cur.execute("PRAGMA busy_timeout=30000")
    cur.execute("PRAGMA foreign_keys=ON")
    cur.execute("PRAGMA synchronous=NORMAL")
    cur.close()


def _study(row) -> Study:
    return Study(row["id"], row["kind"], row["origin"], row["name"], row["state"], row["total"],
                 json.loads(row["spec"]), row["created_at"], row["started_at"], row["finished_at"])


def _item(row) -> Item:
    return Item(row["item_index"], json.loads(row["item_id"]),
                None if row["parameters"] is None else json.loads(row["parameters"]),
                None if row["payload"] is None else json.loads(row["payload"]))
