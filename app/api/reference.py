"""GET /v1/reference: the constants, models and sources behind the numbers."""

from __future__ import annotations

import ast
import functools
import importlib.metadata
import inspect
import platform
import re

import taubudget.physics.constants as constants_mod
from fastapi import APIRouter
from taubudget.physics.budget import CAUTION
from taubudget.physics.ephemeris import versions
from taubudget.physics.rate import TERM_NAMES

from ..deps import SettingsDep
from ..schemas import ReferenceResponse
from . import openapi_doc as doc

router = APIRouter(prefix="/v1", tags=["reference"])


def _jsonable(value):
    if isinstance(value, dict):
        return {str(k): _jsonable(v) for k, v in value.items()}
    return value


@functools.lru_cache(maxsize=1)
def constants_table() -> tuple[dict, ...]:
    """Every public constant of physics/constants.py with the docstring that follows it."""
    tree = ast.parse(inspect.getsource(constants_mod))
    out = []
    body = tree.body
    for node, nxt in zip(body, body[1:] + [None], strict=True):
        if not isinstance(node, ast.Assign | ast.AnnAssign):
            continue
        targets = node.targets if isinstance(node, ast.Assign) else [node.target]
        names = [t.id for t in targets if isinstance(t, ast.Name)]
        doc_text = ""
        value = nxt.value if isinstance(nxt, ast.Expr) else None
        if isinstance(value, ast.Constant) and isinstance(value.value, str):
            doc_text = " ".join(value.value.split())
        for name in names:
            # hasattr: the file on disk may be newer than the imported module
            if name.startswith("_") or not name.isupper() or not hasattr(constants_mod, name):
                continue
            out.append({"name": name, "value": _jsonable(getattr(constants_mod, name)), "doc": doc_text})
    return tuple(out)


@functools.lru_cache(maxsize=1)
def sources_table() -> dict[str, str]:
    """The source abbreviations listed in physics/constants.py's module docstring."""
    text = constants_mod.__doc__ or ""
    out: dict[str, str] = {}
    for m in re.finditer(r"^- ([A-Za-z0-9-]+): (.*?)(?=^- |^\S|\Z)", text, re.M | re.S):
        out[m.group(1)] = " ".join(m.group(2).split())
    return out


MODELS = {
    "rate_equation": {
        "near_earth": "dtau/dTCG = 1 - (v^2/2 + U_E + U_tid)/c^2 (IERS Conventions 2010, TN36 eq. 10.6)",
        "to_tt": "dtau/dTT = (dtau/dTCG)/(1 - L_G); TAI and GPS time share TT's rate",
        "ground_clock": "rate against TT = (W0 - W)/c^2, W = normal (GRS80) potential + centrifugal, "
        "corrected by the geoid undulation the request gives",
        "terms": list(TERM_NAMES),
    },
    "orbit_sources": {
        "keplerian": "elements in the GCRS around the Earth, osculating (default) or Brouwer mean "
        "(element_type); the orbit follows the zonal field of gravity.earth_zonal_degree: Brouwer's "
        "first-order J2 theory with short-period terms (and the J3 long-period term), its speed "
        "made consistent with the field's energy; two-body with a point-mass field",
        "tle": "two-line elements propagated with SGP4 (WGS-72), TEME rotated to GCRS",
        "surface": "a clock fixed on the rotating Earth at WGS-84 geodetic coordinates",
    },
    "references": {
        "TT": "Terrestrial Time", "TAI": "International Atomic Time (TT rate)",
        "GPS": "GPS system time (TT rate)", "TCG": "Geocentric Coordinate Time",
        "surface": "a ground clock given as a SurfaceClock object (JSON requests only)",
    },
    "earth_gravity": "point mass (degree 0) or EGM2008 zonal J2..J6 for satellites; GRS80 normal "
    "field for ground clocks",
    "tides": "Sun and Moon tidal potential from JPL DE421",
    "integration": "adaptive Gauss-Legendre panels; error estimate reported with each budget",
    "sign_convention": "offset = clock minus reference; positive rate: the clock gains",
    "units": "SI inside; public field names carry their unit",
}


def _versions() -> dict[str, str]:
    out = dict(versions())
    for dist in ("taubudget", "fastapi", "pydantic", "uvicorn"):
        try:
            out[dist] = importlib.metadata.version(dist)
        except importlib.metadata.PackageNotFoundError:  # pragma: no cover
            out[dist] = "not installed"
    out["python"] = platform.python_version()
    return out


@router.get(
    "/reference",
    summary="Constants, models, sources and versions",
    response_model=ReferenceResponse,
    response_model_exclude_unset=True,
    responses=doc.model_responses("What the numbers rest on", (), example={
        "constants": [{"name": "L_G", "value": 6.969290134e-10,
                       "doc": "1 - d(TT)/d(TCG), dimensionless (defining; ...)"}],
        "sources": {"TN36": "IERS Conventions (2010), IERS Technical Note No. 36, ..."},
        "models": {"tides": "Sun and Moon tidal potential from JPL DE421"},
        "versions": {"skyfield": "1.49", "ephemeris": "JPL DE421 (skyfield-data)"},
        "limits": {"MAX_NODES": 3000000}, "caution": "Planning estimate only. ...",
    }),
)
async def reference(settings: SettingsDep):
    """The constants (with unit and source), models, published sources and library versions used."""
    limits = {k: v for k, v in settings.model_dump().items() if k.startswith("MAX_")}
    return {
        "constants": list(constants_table()), "sources": sources_table(), "models": MODELS,
        "versions": _versions(), "limits": limits, "caution": CAUTION,
    }
