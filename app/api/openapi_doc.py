"""OpenAPI fragments for the routes: request bodies, examples, problem responses.

The routes parse their bodies themselves (to accept JSON without a JSON content
type), so FastAPI cannot infer the request schemas; these fragments name them by
reference, and ``app.main`` adds the referenced models to ``components``.
"""

from __future__ import annotations

from ..problems import PROBLEM_MEDIA_TYPE

_ERROR_TEXT = {
    400: "Malformed body (not JSON, empty, not UTF-8, or a multipart batch without a file)",
    413: "Over a size limit (body bytes, batch items or estimated quadrature nodes)",
    422: "Invalid or physically unusable input; 'errors' names each field by JSON pointer",
    500: "A bug in the service (never caused by input); no internal details",
    503: "Not ready: the timescale and ephemeris are not loaded yet",
}


def ref(name: str) -> dict:
    return {"$ref": f"#/components/schemas/{name}"}


def problem_responses(statuses) -> dict:
    return {s: {"description": _ERROR_TEXT[s], "content": {PROBLEM_MEDIA_TYPE: {"schema": ref("Problem")}}}
            for s in (*statuses, 500)}


def model_responses(description: str, errors, example: dict | None = None) -> dict:
    """The 200 of a route with ``response_model`` (FastAPI generates its schema from the model, so
    the document shows what the route really returns) plus its problem responses."""
    ok: dict = {"description": description}
    if example is not None:
        ok["content"] = {"application/json": {"example": example}}
    return {200: ok, **problem_responses(errors)}


def _examples(examples: dict) -> dict:
    return {key: {"summary": summary, "value": value} for key, (summary, value) in examples.items()}


def json_body(model: str, examples: dict) -> dict:
    """A required JSON request body of ``model``; any content type is read as JSON."""
    return {"requestBody": {
        "required": True,
        "description": "JSON; sent without a JSON content type it is still read as JSON.",
        "content": {"application/json": {"schema": ref(model), "examples": _examples(examples)}},
    }}


_FILE_TYPES = ["omm", "opm", "oem", "sp3", "tle_file"]


def budget_body(examples: dict) -> dict:
    """JSON (BudgetRequest), or a multipart upload of an orbit file plus the rest of the request."""
    body = json_body("BudgetRequest", examples)
    body["requestBody"]["description"] = (
        "JSON (BudgetRequest; read as JSON whatever the content type), or multipart/form-data: the "
        "orbit file (OMM, OPM, OEM, SP3, TLE file; type detected) as part 'file', and the rest of the "
        "request as a JSON part 'request' or as form fields (start, end or duration_days, reference, "
        "series_step_s, ...; object_id and the other orbit options too). Error entries name the part.")
    body["requestBody"]["content"]["multipart/form-data"] = {"schema": {
        "type": "object", "required": ["file"],
        "properties": {
            "file": {"type": "string", "format": "binary", "description": "The orbit file"},
            "request": {"type": "string", "description": "JSON: the request without its orbit"},
            "type": {"type": "string", "enum": _FILE_TYPES, "description": "The file's type (detected "
                     "when omitted)"},
            "start": {"type": "string", "format": "date-time"},
            "end": {"type": "string", "format": "date-time"},
            "duration_days": {"type": "number"},
            "reference": {"type": "string"},
            "series_step_s": {"type": "number"},
            "object_id": {"type": "string", "description": "Which object, when the file holds several"},
        },
    }}
    return body


def batch_body(examples: dict) -> dict:
    body = json_body("BatchRequest", examples)
    body["requestBody"]["description"] = (
        "JSON (BatchRequest), or multipart/form-data with part 'file' holding either the batch JSON "
        "document or an orbit file with many objects (TLE file, OMM with several objects, SP3 with "
        "several satellites, OEM with several objects): one item per object, its id the object's id, "
        "the shared request fields from a JSON part 'defaults' (or 'request') or form fields.")
    body["requestBody"]["content"]["multipart/form-data"] = {
        "schema": {
            "type": "object", "required": ["file"],
            "properties": {"file": {"type": "string", "format": "binary",
                                    "description": "The batch JSON document, or an orbit file"},
                           "defaults": {"type": "string",
                                        "description": "JSON: the fields every object's request shares"},
                           "type": {"type": "string", "enum": _FILE_TYPES},
                           "start": {"type": "string", "format": "date-time"},
                           "duration_days": {"type": "number"},
                           "reference": {"type": "string"}},
        },
    }
    return body


CSV_EXAMPLE = (
    "field,value\r\n"
    "description,taubudget drift budget; offsets are clock minus reference\r\n"
    "caution,\"Planning estimate only. ...\"\r\n"
    "mean_fractional_rate,4.4646999955239707e-10\r\n"
    "mean_rate_us_per_day,38.57500796132711\r\n"
)


def csv_responses(errors) -> dict:
    return {
        200: {
            "description": "CSV (summary block, or one row per output time with series_step_s); "
            "with field=, that single value as text/plain at full double precision",
            "content": {
                "text/csv": {"schema": {"type": "string"}, "example": CSV_EXAMPLE},
                "text/plain": {"schema": {"type": "string"}, "example": "38.57500796132711"},
            },
        },
        **problem_responses(errors),
    }
