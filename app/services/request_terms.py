"""Physics errors in the request's terms: its field path, its unit, and which block a runtime error concerns.

physics/ names its own parameters in SI (``semi_major_axis_m`` = 6e6, ``r_gcrs_m``, ``coverage``;
physics/errors.py). This module maps them to the request: ``orbit.semi_major_axis_km`` = 6000.0,
``orbit.position_gcrs_km`` in km, ``orbit.force_model.earth_zonal_degree`` for a state vector's own
field, and, for an orbit given as a file, the file's ``text`` (the error is about what the file
says). Errors raised while the sources are evaluated (an ephemeris that does not cover the span,
a numerical propagation too long) carry their source; ``request_terms`` finds the block that
built it. Instants stay skyfield Times here; app/present/errors.py writes them in UTC.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager

from taubudget.physics.errors import PhysicsInputError

from ..formats.models import TEXT_ORBITS, StateVectorOrbitIn
from ..present.errors import is_time, utc_text
from ..schemas.orbits import KeplerianOrbitIn


def _km(value):
    """m -> km, for a number or a vector (list)."""
    if isinstance(value, list | tuple):
        return [x / 1e3 for x in value]
    return value / 1e3


COMMON_FIELDS: dict[str, tuple[str, Callable | None]] = {
    "semi_major_axis_m": ("semi_major_axis_km", _km),
    "zonal_degree": ("gravity.earth_zonal_degree", None),
}
"""A physics parameter (SI) -> the request's field under the block and its unit conversion.
Parameters with the same name and unit in both (eccentricity, inclination_deg, latitude_deg,
line1, ...) are not listed. A field starting with "gravity." is the request's top-level block."""

REQUEST_FIELDS: dict[type, dict[str, tuple[str, Callable | None]]] = {
    KeplerianOrbitIn: COMMON_FIELDS,
    StateVectorOrbitIn: {
        "r_gcrs_m": ("position_gcrs_km", _km),
        "v_gcrs_m_per_s": ("velocity_gcrs_km_per_s", _km),
        "zonal_degree": ("force_model.earth_zonal_degree", None),
        "epoch": ("epoch", None),
    },
}
"""Per request model, where its source's parameters differ from ``COMMON_FIELDS`` (a state vector
carries its own force model, so its zonal degree is not the budget's ``gravity`` block)."""

TOP_LEVEL = ("orbit", "reference", "start", "end")
"""Fields physics may name that are already the request's own top-level fields."""


def _coverage_text(source) -> str:
    """An ephemeris table's coverage in UTC: each stretch without a gap (touching segments as one)."""
    stretches = source.covered() if hasattr(source, "covered") else source.coverage()
    return "; ".join(f"{utc_text(t[0])} to {utc_text(t[1])}" for t in stretches)


def request_error(exc: PhysicsInputError, prefix: str,
                  model: type | object | None = None) -> PhysicsInputError:
    """``exc`` (a source's own parameter, SI) as the request's field under ``prefix`` in its unit.

    ``model``: the request model (or its class) of the block; an orbit given as a file maps every
    parameter to ``<prefix>.text``. Errors already naming a request path (dotted, or a top-level
    field) pass unchanged.
    """
    if exc.field is None or "." in exc.field or exc.field in TOP_LEVEL:
        return exc
    cls = model if isinstance(model, type) or model is None else type(model)
    kw = {"source": exc.source, "at": exc.at, "instants": exc.instants}
    if cls is not None and issubclass(cls, TEXT_ORBITS):
        if exc.field == "coverage" and hasattr(exc.source, "coverage"):
            # The instants (the span's end, the data's last point) are in the reason; the file's
            # text has no value to quote.
            return PhysicsInputError(f"{prefix}.text", None, f"{exc.reason}; the data cover "
                                     f"{_coverage_text(exc.source)}", **kw)
        # A number in the source's SI unit is not what the file says; an instant (an OPM's epoch)
        # is, and is written in UTC.
        value = exc.value if is_time(exc.value) else None
        return PhysicsInputError(f"{prefix}.text", value, f"{exc.field}: {exc.reason}", **kw)
    fields = {**COMMON_FIELDS, **REQUEST_FIELDS.get(cls, {})} if cls is not None else COMMON_FIELDS
    name, convert = fields.get(exc.field, (exc.field, None))
    field = name if name.startswith("gravity.") else f"{prefix}.{name}"
    value = convert(exc.value) if convert is not None and exc.value is not None else exc.value
    return PhysicsInputError(field, value, exc.reason, **kw)


@contextmanager
def request_terms(*blocks: tuple[object, str, object]) -> Iterator[None]:
    """Map an error raised while evaluating the sources to the block that built the source.

    ``blocks``: (source, request prefix, request model) for each source in play (the clock's orbit,
    a reference clock, a link station). An error with no source, or another one, passes unchanged.
    """
    try:
        yield
    except PhysicsInputError as exc:
        for source, prefix, model in blocks:
            if exc.source is not None and exc.source is source:
                raise request_error(exc, prefix, model) from None
        raise
