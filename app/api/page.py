"""The planner page at ``/`` and the API docs at ``/docs`` and ``/redoc``, all from local files.

The page is static (``app/web/``: HTML, CSS, a small plain script and the vendored uPlot
bundle); it calls the public API like any client and adds no server logic. The docs pages use
the Swagger UI and ReDoc bundles shipped inside the ``fastapi-offline`` package, so they render
with no outside network (FastAPI's defaults load them, and web fonts, from a CDN).
"""

from __future__ import annotations

from importlib.resources import files

from fastapi import APIRouter, FastAPI, Request
from fastapi.openapi.docs import get_redoc_html, get_swagger_ui_html
from fastapi.responses import FileResponse, HTMLResponse
from fastapi.staticfiles import StaticFiles

WEB_DIR = files("taubudget.app") / "web"
DOCS_ASSETS_DIR = files("fastapi_offline") / "static"
UPLOT_VERSION = "1.6.32"  # app/web/vendor/README.md

# Content-Security-Policy: the browser may load nothing from anywhere but this service. The page
# has no inline script; the Swagger UI page configures itself in one, and both docs bundles style
# with inline styles. ReDoc's bundle also asks for a logo on a CDN: this policy refuses it.
_CSP_COMMON = ("default-src 'self'; img-src 'self' data: blob:; connect-src 'self'; font-src 'self' data:; "
               "worker-src 'self' blob:; object-src 'none'; base-uri 'self'; frame-ancestors 'self'; "
               "style-src 'self' 'unsafe-inline'; ")
PAGE_CSP = _CSP_COMMON + "script-src 'self'"
DOCS_CSP = _CSP_COMMON + "script-src 'self' 'unsafe-inline'"

router = APIRouter(include_in_schema=False)


@router.get("/")
async def planner_page() -> FileResponse:
    """The planner page."""
    return FileResponse(str(WEB_DIR / "index.html"), media_type="text/html; charset=utf-8",
                        headers={"Cache-Control": "no-cache", "Content-Security-Policy": PAGE_CSP})


@router.get("/docs")
async def swagger_docs(request: Request) -> HTMLResponse:
    root = request.scope.get("root_path", "")
    return _docs(get_swagger_ui_html(
        openapi_url=f"{root}{request.app.openapi_url}", title="taubudget API",
        swagger_js_url=f"{root}/docs-assets/swagger-ui-bundle.js",
        swagger_css_url=f"{root}/docs-assets/swagger-ui.css",
        swagger_favicon_url=f"{root}/web/favicon.svg",
    ))


@router.get("/redoc")
async def redoc_docs(request: Request) -> HTMLResponse:
    root = request.scope.get("root_path", "")
    return _docs(get_redoc_html(
        openapi_url=f"{root}{request.app.openapi_url}", title="taubudget API reference",
        redoc_js_url=f"{root}/docs-assets/redoc.standalone.js",
        redoc_favicon_url=f"{root}/web/favicon.svg", with_google_fonts=False,
    ))


def _docs(response: HTMLResponse) -> HTMLResponse:
    response.headers["Content-Security-Policy"] = DOCS_CSP
    return response


def install(app: FastAPI) -> None:
    """Serve the page, its assets and the local docs on ``app`` (built with docs_url=None)."""
    app.include_router(router)
    app.mount("/web", StaticFiles(directory=str(WEB_DIR)), name="web")
    app.mount("/docs-assets", StaticFiles(directory=str(DOCS_ASSETS_DIR)), name="docs-assets")
