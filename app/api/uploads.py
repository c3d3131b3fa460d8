"""Multipart uploads of orbit files on the budget routes: the parts become a request or a batch.

Parts of a ``multipart/form-data`` body:

- ``file`` (a file part; without that name, the first file part): the orbit file (OMM, OPM,
  OEM, SP3, TLE file; its type detected by app/formats/files.py) or, as before, a whole
  request or batch JSON document.
- ``request`` (on the batch route also ``defaults``): JSON, as text or as a file part, with
  the rest of the request, everything but the orbit. An ``orbit`` object there may hold the
  orbit's options (object_id, encoding, interpolation_degree, force_model).
- any other text field: one top-level request field (``start``, ``end``, ``duration_days``,
  ``reference``, ``series_step_s``, ...) or one orbit option (``type``, ``object_id``,
  ``encoding``, ``interpolation_degree``, ``force_model``). A value starting with ``{`` or
  ``[`` is read as JSON (``gravity``, ``clock``, a ground-clock ``reference``); other values
  stay text and the request model converts them (``"1.5"`` to a number, ``"true"`` to a
  boolean), so a bad one is a 422 naming the field.

The size limits are the service's usual ones, checked before any work: the body bytes
(``MAX_BODY_BYTES``, by the middleware), the parsers' text and record limits, the number of
objects of a batch (``MAX_BATCH_ITEMS``) and the node estimate (``MAX_BATCH_NODES``).
Every error entry of a multipart request carries ``part``: the part its value came from.
"""

from __future__ import annotations

import json
from contextlib import aclosing, asynccontextmanager
from dataclasses import dataclass, field

from fastapi import Request
from fastapi.concurrency import run_in_threadpool
from pydantic import ValidationError
from starlette.datastructures import UploadFile
from starlette.formparsers import MultiPartException, MultiPartParser
from taubudget.physics.errors import PhysicsInputError

from ..deps import MAX_JSON_DEPTH, json_depth, parse_json, too_deep
from ..formats import FormatError, format_sources
from ..formats.files import ORBIT_OPTIONS, orbit_from_file
from ..formats.models import TEXT_ORBITS
from ..problems import (
    TYPE_MALFORMED_BODY,
    TYPE_TOO_LARGE,
    ProblemError,
    physics_problem,
    validation_errors,
    validation_problem,
)
from ..services.orbits import gravity_block
from ..settings import Settings

_MODEL_OF_TYPE = {m.model_fields["type"].annotation.__args__[0]: m for m in TEXT_ORBITS}
MAX_FORM_FIELDS = 50
"""Form fields a request has at most (the request model has fewer than 20)."""


def is_multipart(request: Request) -> bool:
    return request.headers.get("content-type", "").lower().startswith("multipart/form-data")


@dataclass
class Upload:
    """The parts of one multipart body, decoded."""

    file_part: str | None = None  # name of the part the file came from
    file_name: str | None = None
    file_text: str | None = None
    json_part: str | None = None  # 'request' or 'defaults'
    json_text: str | None = None
    fields: dict[str, str] = field(default_factory=dict)


def _problem(status: int, title: str, detail: str, errors: list[dict], type_: str | None = None,
             **extra) -> ProblemError:
    kw = {"type_": type_} if type_ else {}
    return ProblemError(status, title, detail, errors=errors, **kw, **extra)


def _invalid(errors: list[dict], what: str = "The upload") -> ProblemError:
    p = validation_problem(errors, what)
    return ProblemError.from_problem(p)


def _decode(raw: bytes, part: str) -> str:
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise _problem(400, "Malformed body", f"Part {part!r} is not UTF-8 text: {exc.reason} at byte "
                       f"{exc.start}.", [{"pointer": "", "part": part, "detail": "not UTF-8"}],
                       TYPE_MALFORMED_BODY) from exc


class _InMemoryParser(MultiPartParser):
    """starlette's multipart parser with file parts kept in memory: a part spools to a temporary
    file only above ``spool_max_size``, which is set above the body limit, so an upload never
    touches the disk (and needs no writable temporary directory)."""

    def __init__(self, *args, spool_max_size: int, **kwargs):
        super().__init__(*args, **kwargs)
        self.spool_max_size = spool_max_size


@asynccontextmanager
async def _form(request: Request):
    """The multipart form, parsed in memory within the body limit (MAX_BODY_BYTES)."""
    limit = request.app.state.settings.MAX_BODY_BYTES
    try:
        async with aclosing(request.stream()) as stream:
            form = await _InMemoryParser(request.headers, stream, max_fields=MAX_FORM_FIELDS,
                                         spool_max_size=limit + 1).parse()
    except MultiPartException as exc:
        raise _problem(400, "Malformed body", f"The multipart body is malformed: {exc.message}",
                       [{"pointer": "", "detail": exc.message}], TYPE_MALFORMED_BODY) from exc
    try:
        yield form
    finally:
        await form.close()


async def read_upload(request: Request, json_parts: tuple[str, ...]) -> Upload:
    """Read the parts; a body without any file part is a 400 naming what is missing."""
    up = Upload()
    async with _form(request) as form:
        files = [(k, v) for k, v in form.multi_items() if isinstance(v, UploadFile)]
        texts = [(k, v) for k, v in form.multi_items() if isinstance(v, str)]
        names = [k for k, _ in files + texts]
        for name in dict.fromkeys(names):
            if names.count(name) > 1:
                raise _invalid([{"pointer": "", "part": name,
                                 "detail": f"part {name!r} is given {names.count(name)} times"}])
        json_given = [k for k in json_parts if k in names]
        if len(json_given) > 1:
            raise _invalid([{"pointer": "", "part": json_given[1],
                             "detail": f"give the request fields in one part, not both "
                                       f"{' and '.join(repr(k) for k in json_given)}"}])
        if json_given:
            up.json_part = json_given[0]
            value = form[up.json_part]
            up.json_text = value if isinstance(value, str) else _decode(await value.read(), up.json_part)
        orbit_files = [(k, v) for k, v in files if k not in json_parts]
        named = [(k, v) for k, v in orbit_files if k == "file"]
        chosen = (named or orbit_files or [None])[0]
        if chosen is None:
            raise _problem(400, "No file uploaded",
                           "A multipart request needs the orbit file (or the request JSON document) as "
                           "a file part named 'file'.", [{"pointer": "", "part": "file",
                                                          "detail": "no file part 'file'"}],
                           TYPE_MALFORMED_BODY)
        up.file_part, upload = chosen
        up.file_name = upload.filename
        raw = await upload.read()
        for k, _ in orbit_files:
            if k != up.file_part:
                raise _invalid([{"pointer": "", "part": k,
                                 "detail": "one orbit file per request; this file part is not read"}])
        up.fields = {k: v for k, v in texts if k not in json_parts}
    if not raw.strip():
        raise _problem(400, "Empty body", f"The uploaded file part {up.file_part!r} is empty.",
                       [{"pointer": "", "part": up.file_part, "detail": "empty file"}], TYPE_MALFORMED_BODY)
    up.file_text = _decode(raw, up.file_part)
    return up


def json_document(up: Upload, marker: str):
    """The file as a whole JSON document (the older upload of a request/batch), or None.

    It is one when it is the only part and a JSON object holding ``marker`` ("orbit" for a
    request, "items" for a batch); an OMM in JSON is an array or an object of OMM keywords.
    """
    if up.json_text is not None or up.fields:
        return None
    text = up.file_text.lstrip("\ufeff \t\r\n")
    if not text.startswith("{"):
        return None
    doc = parse_json(up.file_text.encode())  # malformed JSON is the 400 it always was
    return doc if isinstance(doc, dict) and marker in doc else None


def _field_value(name: str, value: str):
    s = value.strip()
    if s[:1] in "{[":
        try:
            doc = json.loads(s)
        except json.JSONDecodeError as exc:
            raise _problem(400, "Malformed JSON", f"Form field {name!r} starts like JSON but is not: "
                           f"{exc.msg} at column {exc.colno}.",
                           [{"pointer": f"/{name}", "part": name, "detail": exc.msg}],
                           TYPE_MALFORMED_BODY) from exc
        except RecursionError as exc:
            raise too_deep(name) from exc
        if json_depth(doc) > MAX_JSON_DEPTH:
            raise too_deep(name)
        return doc
    return value


class Parts:
    """Which multipart part each request field came from: JSON pointer prefix -> part name."""

    def __init__(self, prefix: str = ""):
        self.prefix = prefix
        self.by_pointer: dict[str, str] = {}

    def add(self, pointer: str, part: str) -> None:
        self.by_pointer[self.prefix + pointer] = part

    def part_of(self, pointer: str) -> str | None:
        best = None
        for p, part in self.by_pointer.items():
            if (pointer == p or pointer.startswith(p + "/")) and (best is None or len(p) > len(best[0])):
                best = (p, part)
        return best[1] if best else None

    def annotate(self, errors: list[dict]) -> list[dict]:
        out = []
        for e in errors:
            part = self.part_of(e["pointer"])
            out.append({**e, "part": part} if part else dict(e))
        return out


def _rest_of_request(up: Upload, parts: Parts, pointer_prefix: str) -> tuple[dict, dict]:
    """(request fields, orbit options) from the JSON part and the form fields."""
    rest: dict = {}
    if up.json_text is not None:
        try:
            doc = parse_json(up.json_text.encode())
        except ProblemError as exc:
            raise _problem(exc.status, exc.title, f"Part {up.json_part!r}: {exc.detail}",
                           [{**e, "part": up.json_part} for e in exc.errors], exc.type) from exc
        if up.json_part == "request" and isinstance(doc, dict) and set(doc) == {"defaults"}:
            doc = doc["defaults"]
        if not isinstance(doc, dict):
            raise _invalid([{"pointer": pointer_prefix, "part": up.json_part,
                             "detail": "must be a JSON object of request fields"}])
        for bad in ("items", "defaults"):
            if bad in doc:
                raise _invalid([{"pointer": f"{pointer_prefix}/{bad}", "part": up.json_part,
                                 "detail": "the objects come from the uploaded file; send the fields "
                                           "they share as one JSON object"}])
        rest = dict(doc)
        for key in rest:
            parts.add(f"/{key}", up.json_part)
    options = rest.pop("orbit", {})
    if not isinstance(options, dict):
        raise _invalid([{"pointer": f"{pointer_prefix}/orbit", "part": up.json_part,
                         "detail": "the orbit comes from the file; 'orbit' may only hold its options "
                                   f"({', '.join(ORBIT_OPTIONS)})"}])
    for name, value in up.fields.items():
        if name == "type":  # the file's type, not a request field
            continue
        target, ptr = (options, f"/orbit/{name}") if name in ORBIT_OPTIONS else (rest, f"/{name}")
        if name in target:
            raise _invalid([{"pointer": pointer_prefix + ptr, "part": name,
                             "detail": f"given both in the {up.json_part!r} part and as a form field"}])
        target[name] = _field_value(name, value)
        parts.add(ptr, name)
    return rest, options


def _orbit_block(up: Upload, options: dict, parts: Parts, pointer_prefix: str) -> dict:
    file_type = up.fields.get("type")
    parts.add("/orbit", up.file_part)
    parts.add("/orbit/type", "type" if file_type is not None else up.file_part)
    parts.add("/orbit/text", up.file_part)
    try:
        return orbit_from_file(up.file_text, file_type.strip() if file_type else None, options)
    except FormatError as exc:
        ptr = "/orbit/type" if exc.keyword in ("type", "RINEX VERSION / TYPE") else f"/orbit/{exc.keyword}"
        if exc.keyword not in ("type", "text", "RINEX VERSION / TYPE"):
            part = parts.part_of(parts.prefix + ptr)
        else:
            part = up.file_part
        raise _invalid([{"pointer": pointer_prefix + ptr, "part": part, "detail": str(exc)}]) from exc


def budget_body(up: Upload) -> tuple[dict, Parts]:
    """The BudgetRequest JSON of a single-budget upload, and where each field came from."""
    parts = Parts()
    rest, options = _rest_of_request(up, parts, "")
    rest["orbit"] = _orbit_block(up, options, parts, "")
    return rest, parts


def upload_physics_problem(exc: PhysicsInputError, parts: Parts, prefix: str = "") -> ProblemError:
    p = physics_problem(exc, prefix)
    p["errors"] = parts.annotate(p["errors"])
    return ProblemError.from_problem(p)


def upload_validation_problem(exc: ValidationError, body: dict, parts: Parts,
                              what: str = "The request") -> ProblemError:
    p = validation_problem(parts.annotate(validation_errors(exc, body)), what)
    return ProblemError.from_problem(p)


@dataclass
class FileBatch:
    """An uploaded multi-object orbit file as batch entries: one per object, in file order."""

    defaults: dict
    entries: list[tuple[dict, object, object]]  # (item {"id": ...}, orbit model, source)
    parts: Parts


async def file_batch(up: Upload, settings: Settings) -> FileBatch:
    """Parse the file once; each object becomes an item whose ``id`` is the object's id."""
    parts = Parts("/defaults")
    defaults, options = _rest_of_request(up, parts, "/defaults")
    orbit = _orbit_block(up, options, parts, "/defaults")
    model = _MODEL_OF_TYPE.get(orbit["type"])
    if model is None:
        raise _invalid([{"pointer": "/defaults/orbit/type", "part": parts.part_of("/defaults/orbit/type"),
                         "detail": f"type {orbit['type']!r} is not an orbit file type; use one of "
                                   f"{', '.join(_MODEL_OF_TYPE)}"}], "The batch")
    try:
        orbit_in = model.model_validate(orbit, strict=False)  # options from form fields are text
    except ValidationError as exc:
        errors = validation_errors(exc, orbit, prefix="/defaults/orbit")
        raise _invalid(parts.annotate(errors), "The batch") from exc
    try:
        objects = await run_in_threadpool(format_sources, orbit_in, "orbit",
                                          gravity_block(defaults.get("gravity"), strict=False))
    except PhysicsInputError as exc:
        raise upload_physics_problem(exc, parts, "/defaults") from exc
    if len(objects) > settings.MAX_BATCH_ITEMS:
        raise ProblemError(
            413, "Batch too large",
            f"The uploaded file holds {len(objects)} objects, above this service's limit of "
            f"{settings.MAX_BATCH_ITEMS} batch items (setting TAUBUDGET_MAX_BATCH_ITEMS); split the file.",
            TYPE_TOO_LARGE, [{"pointer": "/items", "part": up.file_part,
                              "detail": f"at most {settings.MAX_BATCH_ITEMS} objects"}],
            limit_name="MAX_BATCH_ITEMS", limit=settings.MAX_BATCH_ITEMS,
        )
    entries = [({"id": ident}, orbit_in.model_copy(update={"object_id": ident}), source)
               for ident, source in objects]
    return FileBatch(defaults, entries, parts)
