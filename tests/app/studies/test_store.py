"""The study store on SQLite and on a real PostgreSQL server: schema version, exactly-once results,
unfinished items, leases (the same tests on both dialects)."""

from __future__ import annotations

import pytest
from sqlalchemy import text
from taubudget.app.studies.store import SCHEMA_VERSION, SchemaTooNew, Store


@pytest.fixture(params=["sqlite", "postgresql"])
def store(request, tmp_path):
    if request.param == "sqlite":
        url = f"sqlite:///{tmp_path / 'studies.sqlite3'}"
    else:
        url = request.getfixturevalue("postgres").new_database()
    s = Store(url)
    yield s
    s.close()


def _study(store, n=5):
    entries = ((i, {"x": i}, None) for i in range(n))
    return store.create_study("budget", "sweep", "t", {"defaults": {}}, entries, n)


def test_schema_is_versioned_and_a_newer_database_is_refused(tmp_path, store):
    assert store.version() == SCHEMA_VERSION
    with store.engine.begin() as conn:
        conn.execute(text("UPDATE schema_version SET version = :v"), {"v": SCHEMA_VERSION + 1})
    with pytest.raises(SchemaTooNew, match="newer"):
        Store(store.url)


def test_a_result_lands_once_however_often_it_is_recorded(store):
    sid = _study(store)
    assert store.record_result(sid, 2, 200, {"v": 1}) is True
    assert store.record_result(sid, 2, 200, {"v": 2}) is False  # a retried item
    assert store.record_results(sid, [(2, 422, {"detail": "x"}), (3, 422, {"detail": "y"})]) == 1
    assert store.result_counts(sid) == {2: 1, 3: 1}
    rows = list(store.iter_results(sid))
    assert [(r.index, r.status, r.body) for r in rows] == [(2, 200, {"v": 1}), (3, 422, {"detail": "y"})]
    assert rows[0].parameters == {"x": 2}
    p = store.progress(sid)
    assert (p.done, p.failed) == (1, 1)


def test_unfinished_items_skip_the_finished_ones_page_by_page(store):
    sid = _study(store, 7)
    store.record_results(sid, [(1, 200, {}), (4, 200, {})])
    first = store.unfinished_items(sid, limit=3)
    assert [i.index for i in first] == [0, 2, 3]
    assert [i.index for i in store.unfinished_items(sid, first[-1].index, limit=3)] == [5, 6]
    assert store.queued_items() == 5


def test_one_dispatcher_holds_a_study_until_its_lease_expires(store):
    sid = _study(store)
    assert store.claim("a", lease_s=60).id == sid
    assert store.get(sid).state == "running"
    assert store.claim("b", lease_s=60) is None  # a live lease
    assert store.claim("a", lease_s=-1).id == sid  # the holder may claim again (its lease now expired)
    assert store.claim("c", lease_s=60).id == sid  # an expired lease is taken over (a killed server)
    assert store.claim("b", lease_s=60) is None
    assert store.renew(sid, "a", 60) is False and store.renew(sid, "c", 60) is True


def test_finishing_and_cancelling(store):
    sid = _study(store, 2)
    store.claim("a", 60)
    store.record_results(sid, [(0, 422, {})])
    assert store.finish_if_complete(sid) is None
    store.record_results(sid, [(1, 422, {})])
    assert store.finish_if_complete(sid) == "failed"  # no item succeeded
    assert store.cancel(sid) is False  # already finished
    other = _study(store, 2)
    assert store.cancel(other) is True and store.get(other).state == "cancelled"
    assert store.claim("a", 60) is None
    done = _study(store, 1)
    store.claim("a", 60)
    store.record_results(done, [(0, 200, {})])
    assert store.finish_if_complete(done) == "done"
    assert store.queued_items() == 0
