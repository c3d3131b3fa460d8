"""The ``study`` verbs (a client of a running service) and ``batch`` (a local run), for app/cli.py.

``taubudget study submit FILE`` posts a study (JSON: a batch or a sweep; any other file is
uploaded as a multi-object orbit file, one item per object, with ``--defaults`` holding the rest
of the request), ``study watch ID`` draws a progress bar until the study finishes, ``study
results ID [--csv]`` writes its results, ``study list`` and ``study cancel ID``. The server is
``--server`` or $TAUBUDGET_SERVER (default http://127.0.0.1:8000); a service with API keys gets
$TAUBUDGET_API_KEY in the X-API-Key header. ``taubudget batch FILE``
runs a batch or a sweep in this process (or ``--workers`` processes) through the same compute
path as the service, with a progress bar, and writes JSON (as /v1/budgets/batch) or ``--csv``.
Exit codes: 0 done, 1 the study failed or was cancelled, 2 bad input or an HTTP error.
"""

from __future__ import annotations

import json
import os
import sys
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

from .plain_text import TEXT_WIDTH, wrap

FINISHED = ("done", "failed", "cancelled")


BAR_WIDTH = (10, 30)
"""Fewest and most characters of the progress bar; it shrinks so the line fits TEXT_WIDTH."""


def progress_line(status: dict) -> str:
    """``[#####.....] 12/40 finished, 1 failed, 3 s elapsed, ~7 s left (running)``."""
    total = status["total"]
    finished = status["done"] + status["failed"]
    frac = finished / total if total else 1.0
    remaining = status.get("estimated_remaining_s")
    left = "" if remaining is None or status["state"] in FINISHED else f", ~{remaining:.0f} s left"
    text = (f"{finished}/{total} finished, {status['failed']} failed, "
            f"{status['elapsed_s']:.0f} s elapsed{left} ({status['state']})")
    width = max(BAR_WIDTH[0], min(BAR_WIDTH[1], TEXT_WIDTH - len(text) - 3))
    filled = int(round(width * frac))
    return f"[{'#' * filled}{'.' * (width - filled)}] {text}"


def study_list_lines(study: dict) -> list[str]:
    """One study of ``study list``: id, state, finished/total, kind and creation time (UTC, to the
    second) on one line; its name, if any, on the lines below, indented."""
    created = study["created_utc"].split(".")[0].rstrip("Z") + "Z"
    line = (f"{study['id']}  {study['state']:<9}  {study['done'] + study['failed']:>6}/{study['total']:<6}  "
            f"{study['kind']:<12}  {created}")
    name = (study.get("name") or "").strip()
    return [line.rstrip()] + (wrap("    " + name, 4) if name else [])


class Progress:
    """A progress bar on stderr: redrawn in place on a terminal, one line per change otherwise."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.tty = self.stream.isatty()
        self.last = None

    def show(self, status: dict) -> None:
        line = progress_line(status)
        key = (status["done"], status["failed"], status["state"])
        if self.tty:
            self.stream.write("\r" + line)
        elif key != self.last:
            self.stream.write(line + "\n")
        self.last = key
        self.stream.flush()

    def close(self) -> None:
        if self.tty:
            self.stream.write("\n")
            self.stream.flush()


# --- a small HTTP client (standard library only) ---------------------------------------------


class HttpFailure(Exception):
    def __init__(self, status: int, body: str):
        super().__init__(f"HTTP {status}")
        self.status, self.body = status, body

    def message(self) -> str:
        try:
            p = json.loads(self.body)
            return f"HTTP {self.status}: {p.get('detail') or p}"
        except ValueError:
            return f"HTTP {self.status}: {self.body[:500]}"


def _server(args) -> str:
    return (args.server or os.environ.get("TAUBUDGET_SERVER") or "http://127.0.0.1:8000").rstrip("/")


def _call(method: str, url: str, data: bytes | None = None, headers: dict | None = None):
    headers = dict(headers or {})
    key = os.environ.get("TAUBUDGET_API_KEY")
    if key:  # a service with access control (TAUBUDGET_API_KEYS on the server)
        headers["X-API-Key"] = key
    req = urllib.request.Request(url, data=data, method=method, headers=headers)
    try:
        return urllib.request.urlopen(req, timeout=60)
    except urllib.error.HTTPError as exc:
        raise HttpFailure(exc.code, exc.read().decode("utf-8", "replace")) from exc


def _json_call(method: str, url: str, data: bytes | None = None, headers: dict | None = None) -> dict:
    with _call(method, url, data, headers) as resp:
        return json.loads(resp.read())


def _multipart(file_path: Path, defaults_text: str | None) -> tuple[bytes, str]:
    boundary = uuid.uuid4().hex
    parts = [(f'Content-Disposition: form-data; name="file"; filename="{file_path.name}"\r\n'
              "Content-Type: application/octet-stream\r\n\r\n").encode() + file_path.read_bytes()]
    if defaults_text is not None:
        parts.append(b'Content-Disposition: form-data; name="defaults"\r\n\r\n' + defaults_text.encode())
    body = b"".join(f"--{boundary}\r\n".encode() + p + b"\r\n" for p in parts)
    body += f"--{boundary}--\r\n".encode()
    return body, f"multipart/form-data; boundary={boundary}"


def _read_json(path: str):
    text = sys.stdin.read() if path == "-" else Path(path).read_text(encoding="utf-8")
    return json.loads(text)


def cmd_submit(args) -> int:
    server = _server(args)
    path = Path(args.file)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        print(f"cannot read {args.file}: {exc}", file=sys.stderr)
        return 2
    try:
        json.loads(text)
        is_json = True
    except ValueError:
        is_json = False
    if is_json:
        data, ctype, query = text.encode(), "application/json", ""
    else:
        defaults = Path(args.defaults).read_text(encoding="utf-8") if args.defaults else None
        data, ctype = _multipart(path, defaults)
        query = f"?kind={args.kind}"
    try:
        status = _json_call("POST", f"{server}/v1/studies{query}", data, {"Content-Type": ctype})
    except HttpFailure as exc:
        print(f"study refused: {exc.message()}", file=sys.stderr)
        return 2
    except OSError as exc:
        print(f"cannot reach {server}: {exc}", file=sys.stderr)
        return 2
    if args.json:
        print(json.dumps(status, indent=2))
    else:
        print(f"study {status['id']}: {status['total']} items, {status['state']}\n{status['url']}")
    if args.watch:
        return _watch(server, status["id"], args.interval_s)
    return 0


def _watch(server: str, study_id: str, interval_s: float) -> int:
    bar = Progress()
    try:
        while True:
            status = _json_call("GET", f"{server}/v1/studies/{study_id}")
            bar.show(status)
            if status["state"] in FINISHED:
                break
            time.sleep(interval_s)
    finally:
        bar.close()
    return 0 if status["state"] == "done" else 1


def cmd_watch(args) -> int:
    try:
        return _watch(_server(args), args.id, args.interval_s)
    except HttpFailure as exc:
        print(exc.message(), file=sys.stderr)
        return 2


def cmd_results(args) -> int:
    suffix = "results.csv" if args.csv else "results"
    out = open(args.output, "wb") if args.output else sys.stdout.buffer  # noqa: SIM115
    try:
        with _call("GET", f"{_server(args)}/v1/studies/{args.id}/{suffix}") as resp:
            while chunk := resp.read(65536):
                out.write(chunk)
    except HttpFailure as exc:
        print(exc.message(), file=sys.stderr)
        return 2
    finally:
        if args.output:
            out.close()
        else:
            out.flush()
    return 0


def cmd_list(args) -> int:
    try:
        studies = _json_call("GET", f"{_server(args)}/v1/studies")["studies"]
    except HttpFailure as exc:
        print(exc.message(), file=sys.stderr)
        return 2
    for s in studies:
        print("\n".join(study_list_lines(s)))
    return 0


def cmd_cancel(args) -> int:
    try:
        status = _json_call("DELETE", f"{_server(args)}/v1/studies/{args.id}")
    except HttpFailure as exc:
        print(exc.message(), file=sys.stderr)
        return 2
    print(f"study {status['id']}: {status['state']}")
    return 0


# --- a local batch ---------------------------------------------------------------------------


def _local_items(payload) -> tuple[str, dict, list[tuple]]:
    """(kind, defaults, [(id, parameters, payload)]) of a batch body or a study body."""
    from pydantic import ValidationError

    from .studies.expand import StudyRequest

    if isinstance(payload, dict) and "items" in payload and not ({"kind", "sweep", "name"} & payload.keys()):
        payload = {"kind": "budget", **payload}
    try:
        spec = StudyRequest.model_validate(payload)
    except ValidationError as exc:
        raise ValueError("not a batch or study body: " + "; ".join(
            f"{'.'.join(str(p) for p in e['loc']) or '(body)'}: {e['msg']}" for e in exc.errors())) from exc
    if spec.sweep is not None:
        combos = enumerate(spec.sweep.combinations())
        return spec.kind, spec.defaults, [(i, params, None) for i, params in combos]
    entries = []
    for i, item in enumerate(spec.items):
        if not isinstance(item, dict) or "id" not in item:
            raise ValueError(f"items[{i}] needs an id")
        entries.append((item["id"], None, item))
    return spec.kind, spec.defaults, entries


def cmd_batch(args) -> int:
    from taubudget.physics.budget import CAUTION

    from .settings import get_settings
    from .studies import items as study_items
    from .studies import table

    try:
        kind, defaults, entries = _local_items(_read_json(args.file))
    except (OSError, ValueError) as exc:
        print(f"invalid batch: {exc}", file=sys.stderr)
        return 2
    settings_json = study_items.item_settings(get_settings()).model_dump_json()
    key = study_items.RESULT_KEY[kind]
    bar = Progress()
    started = time.monotonic()
    results: list[dict] = []
    counts = {"done": 0, "failed": 0}

    def record(ident, params, status, body):
        ok = status == 200
        counts["done" if ok else "failed"] += 1
        results.append({"id": ident, "parameters": params, "status": status,
                        key: body if ok else None, "problem": None if ok else body})
        elapsed = time.monotonic() - started
        n = len(results)
        bar.show({"total": len(entries), "done": counts["done"], "failed": counts["failed"],
                  "elapsed_s": elapsed, "estimated_remaining_s": elapsed / n * (len(entries) - n),
                  "state": "running" if n < len(entries) else "done"})

    try:
        if args.workers > 1:
            from concurrent.futures import ProcessPoolExecutor

            with ProcessPoolExecutor(args.workers, initializer=study_items.preload) as pool:
                futures = [pool.submit(study_items.run_item, kind, defaults, p, it, settings_json)
                           for _, p, it in entries]
                for (ident, params, _), fut in zip(entries, futures, strict=True):
                    record(ident, params, *fut.result())
        else:
            for ident, params, item in entries:
                record(ident, params, *study_items.run_item(kind, defaults, params, item, settings_json))
    finally:
        bar.close()
    ok = counts["done"]
    out = open(args.output, "w", encoding="utf-8", newline="") if args.output else sys.stdout  # noqa: SIM115
    try:
        if args.csv:
            names = list(entries[0][1]) if entries and entries[0][1] is not None else []
            records = ((r["id"], r["parameters"], r["status"], r[key] if r["status"] == 200 else r["problem"])
                       for r in results)
            for piece in table.render_lines(table.header_lines("batch"), table.rows(records, names)):
                out.write(piece)
        else:
            json.dump({"items": results, "succeeded": ok, "failed": len(results) - ok, "caution": CAUTION},
                      out, indent=2)
            out.write("\n")
    finally:
        if args.output:
            out.close()
    return 0


def add_parsers(sub) -> None:
    """Register ``study`` (submit, watch, results, list, cancel) and ``batch`` on the CLI."""
    st = sub.add_parser("study", help="submit, watch and fetch studies on a running service")
    verbs = st.add_subparsers(dest="study_verb", required=True)

    def server(p):
        p.add_argument("--server", default=None,
                       help="service URL (default: $TAUBUDGET_SERVER or http://127.0.0.1:8000)")

    s = verbs.add_parser("submit", help="submit a study: JSON (batch or sweep) or a multi-object orbit file")
    s.add_argument("file", metavar="FILE")
    server(s)
    s.add_argument("--defaults", default=None,
                   help="with an orbit file: JSON file with the rest of the request")
    s.add_argument("--kind", choices=("budget", "contact_plan"), default="budget",
                   help="with an orbit file: what each object becomes")
    s.add_argument("--watch", action="store_true", help="then draw a progress bar until it finishes")
    s.add_argument("--interval-s", type=float, default=1.0, help="polling interval of --watch, s")
    s.add_argument("--json", action="store_true", help="print the study's status JSON")
    s.set_defaults(func=cmd_submit)
    w = verbs.add_parser("watch", help="draw a progress bar until the study finishes")
    w.add_argument("id", metavar="ID")
    server(w)
    w.add_argument("--interval-s", type=float, default=1.0, help="polling interval, s")
    w.set_defaults(func=cmd_watch)
    r = verbs.add_parser("results", help="the study's results: JSON lines, or --csv one row per item")
    r.add_argument("id", metavar="ID")
    server(r)
    r.add_argument("--csv", action="store_true",
                   help="one CSV row per item (swept values + headline figures)")
    r.add_argument("-o", "--output", default=None, help="write to this file instead of stdout")
    r.set_defaults(func=cmd_results)
    ls = verbs.add_parser("list", help="the service's studies, newest first")
    server(ls)
    ls.set_defaults(func=cmd_list)
    c = verbs.add_parser("cancel", help="cancel a queued or running study")
    c.add_argument("id", metavar="ID")
    server(c)
    c.set_defaults(func=cmd_cancel)

    b = sub.add_parser("batch", help="run a batch or sweep locally with a progress bar (JSON or CSV out)")
    b.add_argument("file", metavar="FILE", help="batch JSON (items + defaults) or study JSON ('-': stdin)")
    b.add_argument("--csv", action="store_true", help="one CSV row per item instead of JSON")
    b.add_argument("-o", "--output", default=None, help="write to this file instead of stdout")
    b.add_argument("--workers", type=int, default=1, help="processes to run items in (default 1)")
    b.set_defaults(func=cmd_batch)
