"""Hostile inputs that once gave a 500: deep XML, deep JSON in a form field, uploads with no
writable temporary directory. Each now gets a 4xx naming the part, or is served."""

from __future__ import annotations

import json
import tempfile
from pathlib import Path

from taubudget.app.deps import MAX_JSON_DEPTH
from taubudget.app.formats.ndm import MAX_XML_DEPTH

FORMATS = Path(__file__).resolve().parents[2] / "sample_orbits" / "formats"
SPAN = {"start": "2027-03-01T01:00:00Z", "end": "2027-03-01T17:00:00Z"}
DEEP = 1000  # the reproducer: ~1,000 levels (Python's default recursion limit is 1,000)


def _deep_xml(message: str) -> str:
    """A 7 KB XML 'message' nested DEEP elements deep."""
    return f"<{message}>" + "<a>" * DEEP + "x" + "</a>" * DEEP + f"</{message}>"


def test_deep_xml_upload_is_a_422_naming_the_file_part(client, problem_of):
    for message in ("oem", "omm", "opm"):
        upload = {"file": (f"deep.{message}.xml", _deep_xml(message).encode())}
        resp = client.post("/v1/budgets", files=upload, data={**SPAN, "type": message})
        body = problem_of(resp, 422)
        err = body["errors"][0]
        assert err["part"] == "file" and err["pointer"] == "/orbit/text"
        assert f"more than {MAX_XML_DEPTH} deep" in err["detail"]


def test_deep_xml_in_a_json_body_is_a_422_naming_the_text(client, problem_of):
    resp = client.post("/v1/budgets", json={**SPAN, "orbit": {"type": "oem", "text": _deep_xml("oem")}})
    body = problem_of(resp, 422)
    assert body["errors"][0]["pointer"] == "/orbit/text"


def test_a_deep_form_field_is_a_400_naming_the_part(client, problem_of):
    deep = "[" * DEEP + "]" * DEEP
    upload = {"file": ("nav3.oem", (FORMATS / "kestrel_nav3.oem").read_bytes())}
    resp = client.post("/v1/budgets", files=upload, data={**SPAN, "gravity": deep})
    body = problem_of(resp, 400)
    assert body["errors"][0]["part"] == "gravity"
    assert f"more than {MAX_JSON_DEPTH} deep" in body["detail"]


def test_json_just_below_the_recursion_limit_is_refused_before_validation(client, problem_of):
    body = {**SPAN, "orbit": {"type": "oem", "text": "x"}, "clock": json.loads("[" * 900 + "]" * 900)}
    resp = client.post("/v1/budgets", content=json.dumps(body))
    assert "more than 32 deep)" in problem_of(resp, 400)["detail"]


def test_a_request_within_the_depth_limits_still_parses(client):
    upload = {"file": ("nav3.xml", (FORMATS / "kestrel_nav3_oem.xml").read_bytes())}
    resp = client.post("/v1/budgets", files=upload,
                       data={"start": "2027-03-01T01:00:00Z", "end": "2027-03-01T03:00:00Z",
                             "gravity": '{"earth_zonal_degree": 2, "sun": false, "moon": false}'})
    assert resp.status_code == 200, resp.text  # the XML sample covers 4 h


def test_uploads_over_one_megabyte_need_no_temporary_directory(client, monkeypatch):
    """starlette spools file parts over 1 MB to a temporary file; uploads stay in memory."""
    text = (FORMATS / "kestrel_nav3.oem").read_text()
    head, rest = text.split("META_START", 1)
    padding = "".join(f"COMMENT padding line {i:07d} of an invented ephemeris\n" for i in range(30_000))
    big = head + padding + "META_START" + rest
    assert 1_100_000 < len(big) < 5_000_000  # over starlette's 1 MB spool, under the body limit
    monkeypatch.setattr(tempfile, "tempdir", "/nonexistent/no-temporary-directory")
    resp = client.post("/v1/budgets", files={"file": ("big.oem", big.encode())},
                       data={**SPAN, "gravity": '{"earth_zonal_degree": 2, "sun": false, "moon": false}'})
    assert resp.status_code == 200, resp.text
