"""The page and the docs pages reference only assets this service serves, and those ship in the package.

(The browser test, test_page_browser.py, checks what a real browser requests; these checks are
the cheap static half: every referenced asset answers 200 and is listed as package data.)
"""

from __future__ import annotations

import fnmatch
import re
import tomllib
from pathlib import Path

import pytest
from taubudget.app.api.page import DOCS_CSP, PAGE_CSP

ROOT = Path(__file__).resolve().parents[2]
WEB = ROOT / "app" / "web"
NOT_SHIPPED = {"screenshot.png"}  # the README's picture
_REF = re.compile(r"""(?:src|href)=["']([^"'#]+)["']""")


def _refs(html: str) -> list[str]:
    return _REF.findall(html)


def test_every_page_file_is_package_data():
    patterns = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]["package-data"][
        "taubudget.app"]
    files = {p.relative_to(ROOT / "app").as_posix() for p in WEB.rglob("*") if p.is_file()}
    shipped = {f for f in files if any(fnmatch.fnmatch(f, pat) for pat in patterns)}
    assert files - shipped == {f"web/{n}" for n in NOT_SHIPPED}


@pytest.mark.parametrize("path, policy", [("/", PAGE_CSP), ("/docs", DOCS_CSP), ("/redoc", DOCS_CSP)])
def test_pages_load_only_local_assets(client, path, policy):
    r = client.get(path)
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/html")
    assert r.headers["content-security-policy"] == policy
    refs = _refs(r.text)
    assert refs, "no assets found: the pattern no longer matches the page"
    for ref in refs:
        assert ref.startswith("/"), f"{path} refers to {ref}, outside this service"
        if ref.startswith(("/web/", "/docs-assets/")):
            assert client.get(ref).status_code == 200, ref
    assert "fonts.googleapis" not in r.text and "cdn." not in r.text


def test_page_policy_allows_only_this_service():
    for policy in (PAGE_CSP, DOCS_CSP):
        sources = {tok for part in policy.split(";") for tok in part.split()[1:]}
        assert sources <= {"'self'", "'unsafe-inline'", "'none'", "data:", "blob:"}, sources
    assert "'unsafe-inline'" not in PAGE_CSP.split("script-src")[1]
