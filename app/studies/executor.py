"""Run studies on Dask: a dispatcher thread leases a study, feeds its unfinished items to the cluster
and writes each result to the store as it finishes.

The cluster is an embedded ``LocalCluster`` (worker processes, one thread each, sized to the
machine) unless ``DASK_SCHEDULER_ADDRESS`` names an external scheduler; the code path is the
same. A worker plugin loads the timescale and the ephemeris once per worker process. At most a
window of items is in flight (a few per worker thread) and a result is released as soon as it is
stored, so the server's memory does not grow with the study. A worker that dies loses only its
in-flight items, which Dask reruns elsewhere; a server that dies loses nothing: items without a
result are run again by whichever dispatcher next leases the study, and the store keeps exactly
one result per item.
"""

from __future__ import annotations

import json
import logging
import os
import socket
import threading
import time
import uuid

from ..problems import TYPE_INTERNAL, problem
from ..settings import Settings
from .items import item_settings, preload, run_item
from .store import Store

log = logging.getLogger("taubudget.studies")

SCATTER_DEFAULTS_BYTES = 64_000
"""Defaults larger than this (an embedded orbit file) are sent to the workers once, not per item."""


class PreloadPlugin:
    """Dask worker plugin: load the timescale and ephemeris when a worker process starts."""

    name = "taubudget-preload"

    def setup(self, worker=None):
        preload()

    def teardown(self, worker=None):
        pass


def _plugin():
    from distributed import WorkerPlugin

    class _Preload(PreloadPlugin, WorkerPlugin):
        pass

    return _Preload()


def embedded_workers(settings: Settings) -> int:
    return settings.DASK_WORKERS or max(1, os.cpu_count() or 1)


def connect(settings: Settings):
    """A Dask client: to DASK_SCHEDULER_ADDRESS, or to a new embedded local cluster."""
    from distributed import Client, LocalCluster

    if settings.DASK_SCHEDULER_ADDRESS:
        client = Client(settings.DASK_SCHEDULER_ADDRESS, timeout="30s", set_as_default=False)
    else:
        # No dashboard; the scheduler's small HTTP server (health routes) on a free loopback port
        # rather than its default 8787, which another cluster on the machine may hold.
        cluster = LocalCluster(n_workers=embedded_workers(settings), threads_per_worker=1, processes=True,
                               host="127.0.0.1", dashboard_address=None, silence_logs=logging.WARNING,
                               scheduler_kwargs={"dashboard": False, "dashboard_address": "127.0.0.1:0"})
        client = Client(cluster, set_as_default=False)
    client.register_plugin(_plugin(), name=PreloadPlugin.name)
    return client


class StudyRunner:
    """One dispatcher per server process; several replicas share the store through leases."""

    def __init__(self, store: Store, settings: Settings, poll_s: float = 1.0):
        self.store, self.settings, self.poll_s = store, settings, poll_s
        self.owner = f"{socket.gethostname()}:{os.getpid()}:{uuid.uuid4().hex[:8]}"
        self._settings_json = item_settings(settings).model_dump_json()
        self._wake = threading.Event()
        self._stop = threading.Event()
        self._thread: threading.Thread | None = None
        self._client = None
        self._lock = threading.Lock()

    # --- life cycle ----------------------------------------------------------------------

    def start(self) -> None:
        if self._thread is None:
            self._thread = threading.Thread(target=self._loop, name="taubudget-studies", daemon=True)
            self._thread.start()

    def wake(self) -> None:
        self._wake.set()

    def stop(self, timeout_s: float = 30.0) -> None:
        self._stop.set()
        self._wake.set()
        if self._thread is not None:
            self._thread.join(timeout_s)
        with self._lock:
            client, self._client = self._client, None
        if client is not None:
            cluster = client.cluster
            client.close()
            if cluster is not None:
                cluster.close()

    def client(self):
        with self._lock:
            if self._client is None:
                self._client = connect(self.settings)
            return self._client

    # --- the dispatcher --------------------------------------------------------------------

    def _loop(self) -> None:
        while not self._stop.is_set():
            try:
                study = self.store.claim(self.owner, self.settings.STUDY_LEASE_SECONDS)
                if study is None:
                    self._wake.wait(self.poll_s)
                    self._wake.clear()
                    continue
                self.run_study(study.id, study.kind, study.spec)
            except Exception:  # the store or the cluster is unreachable: log, wait, try again
                log.exception("study dispatcher: retrying in %.0f s", self.poll_s)
                self._stop.wait(self.poll_s)

    def run_study(self, study_id: str, kind: str, spec: dict) -> None:
        """Run the study's unfinished items until none is left, it is cancelled or the lease is lost."""
        from distributed import as_completed

        client = self.client()
        ac = as_completed(loop=client.loop)
        defaults = spec.get("defaults", {})
        if len(json.dumps(defaults)) > SCATTER_DEFAULTS_BYTES:
            defaults = client.scatter(defaults, broadcast=True, hash=False)
        nthreads = sum(client.nthreads().values()) or 1
        window = max(4, 3 * nthreads)
        lease_s = self.settings.STUDY_LEASE_SECONDS
        in_flight: dict = {}  # future -> item index
        buffer: list = []
        last_index, exhausted = -1, False
        next_renew = time.monotonic() + lease_s / 3
        next_state_check = time.monotonic() + 0.5
        try:
            while not self._stop.is_set():
                while len(in_flight) < window and not exhausted:
                    if not buffer:
                        buffer = self.store.unfinished_items(study_id, last_index, limit=2 * window)
                        if not buffer:
                            exhausted = True
                            break
                        last_index = buffer[-1].index
                    item = buffer.pop(0)
                    fut = client.submit(run_item, kind, defaults, item.parameters, item.payload,
                                        self._settings_json, pure=False, retries=1)
                    in_flight[fut] = item.index
                    ac.add(fut)
                if not in_flight:
                    break
                if not ac.has_ready():
                    with ac.thread_condition:
                        ac.thread_condition.wait(timeout=0.5)
                done = ac.next_batch(block=False)
                outcomes = []
                for fut in done:
                    index = in_flight.pop(fut)
                    if fut.status == "finished":
                        status, body = fut.result()
                        outcomes.append((index, status, body))
                    elif fut.status == "error":
                        log.error("study %s item %d: %r", study_id, index, fut.exception())
                        outcomes.append((index, 500, problem(
                            500, "Internal error", "The item could not be computed on the cluster (a worker "
                            "failed repeatedly on it); this is not a fault of your input.", TYPE_INTERNAL,
                            [{"pointer": "", "detail": "worker failure"}])))
                    # a cancelled future (scheduler restart) keeps its item unfinished: it runs again
                    fut.release()
                now = time.monotonic()
                if outcomes or now >= next_state_check:
                    next_state_check = now + 0.5
                    current = self.store.get(study_id)
                    if current is None or current.state != "running":
                        break  # cancelled (or deleted): nothing more is stored, in-flight items are dropped
                self.store.record_results(study_id, outcomes)
                if now >= next_renew:
                    next_renew = now + lease_s / 3
                    if not self.store.renew(study_id, self.owner, lease_s):
                        break  # another dispatcher took the study over, or it was cancelled
        finally:
            for fut in in_flight:
                fut.cancel()
            in_flight.clear()
        if self.store.finish_if_complete(study_id) is None:
            self.store.release(study_id, self.owner)
