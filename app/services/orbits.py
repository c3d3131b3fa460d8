"""The one registry of orbit types: a request's orbit block -> a physics orbit source.

``ORBIT_BUILDERS`` maps each request model of the ``Orbit`` union (app/schemas/orbits.py, and the
file formats of app/formats/models.py) to the function that builds its source. A new orbit type is
one model plus one entry here. Sources raise ``PhysicsInputError`` naming their own SI parameters;
``build_source`` maps them to the request's field and unit (request_terms.py).
"""

from __future__ import annotations

from collections.abc import Callable

from pydantic import ValidationError
from taubudget.physics.ephemeris import timescale
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.orbits import KeplerianOrbit, SurfaceClock, TleOrbit
from taubudget.physics.orbits.barycentric import BodySurfaceClock, CentredKeplerianOrbit

from ..formats import FORMAT_ORBITS, build_format_source
from ..schemas.orbits import GravityIn, KeplerianOrbitIn, SurfaceClockIn, TleOrbitIn
from .request_terms import request_error


def _time(dt):
    return timescale().from_datetime(dt)


def _keplerian(orbit: KeplerianOrbitIn, prefix: str, gravity=None):
    zonal_degree = gravity.earth_zonal_degree if gravity is not None else 0
    if orbit.center != "earth":
        if orbit.j2_secular:
            raise PhysicsInputError(f"{prefix}.j2_secular", True, "J2 secular drift is modelled for "
                                    "Earth-centred orbits only")
        if orbit.element_type is not None:
            raise PhysicsInputError(f"{prefix}.element_type", orbit.element_type, "osculating and "
                                    "mean elements are distinguished for Earth orbits in a zonal "
                                    "field; elements around another centre are two-body")
        return CentredKeplerianOrbit(
            orbit.center, _time(orbit.epoch), orbit.semi_major_axis_km * 1e3, orbit.eccentricity,
            orbit.inclination_deg, orbit.ra_of_asc_node_deg, orbit.arg_of_pericenter_deg,
            orbit.mean_anomaly_deg, reference_plane=orbit.reference_plane,
        )
    if orbit.reference_plane != "icrf_equator":
        raise PhysicsInputError(f"{prefix}.reference_plane", orbit.reference_plane,
                                "Earth-centred elements are referred to the GCRS equator")
    if orbit.j2_secular and orbit.element_type == "osculating" and zonal_degree >= 2:
        raise PhysicsInputError(f"{prefix}.j2_secular", True, "j2_secular means mean elements; it "
                                "contradicts element_type \"osculating\"")
    element_type = orbit.element_type or ("mean" if orbit.j2_secular else "osculating")
    return KeplerianOrbit(
        _time(orbit.epoch), orbit.semi_major_axis_km * 1e3, orbit.eccentricity,
        orbit.inclination_deg, orbit.ra_of_asc_node_deg, orbit.arg_of_pericenter_deg,
        orbit.mean_anomaly_deg, j2_secular=orbit.j2_secular, element_type=element_type,
        zonal_degree=zonal_degree,
    )


def ellipsoidal_height_m(block: SurfaceClockIn, prefix: str) -> float:
    """The clock's height above the ellipsoid: ``height_m`` as given, or H + N from an orthometric
    height and a geoid undulation when ``height_m`` is omitted (an orthometric height alone does
    not place the clock: the geoid's height above the ellipsoid is needed)."""
    if block.orthometric_height_m is None or "height_m" in block.model_fields_set:
        return block.height_m
    if block.geoid_undulation_m is None:
        raise PhysicsInputError(
            f"{prefix}.orthometric_height_m", block.orthometric_height_m,
            "an orthometric height H needs the geoid undulation N (geoid_undulation_m) to place the clock "
            "on the ellipsoid (h = H + N), or the ellipsoidal height height_m with it")
    return block.orthometric_height_m + block.geoid_undulation_m


def _surface(orbit: SurfaceClockIn, prefix: str, gravity=None):
    if orbit.center != "earth":
        if prefix == "reference":
            raise PhysicsInputError("reference.center", orbit.center, "a surface reference clock must be "
                                    "on the Earth; for a lunar reference use \"lunar_surface\"")
        if orbit.geoid_undulation_m is not None or orbit.orthometric_height_m is not None:
            raise PhysicsInputError(f"{prefix}.geoid_undulation_m", orbit.geoid_undulation_m,
                                    "geoid undulation and orthometric height apply to Earth clocks only")
        return BodySurfaceClock(orbit.center, orbit.latitude_deg, orbit.longitude_deg, orbit.height_m)
    return SurfaceClock(
        orbit.latitude_deg, orbit.longitude_deg, ellipsoidal_height_m(orbit, prefix),
        orbit.geoid_undulation_m, orbit.orthometric_height_m,
    )


def _tle(orbit: TleOrbitIn, prefix: str, gravity=None):
    return TleOrbit(orbit.line1, orbit.line2, timescale(), orbit.name)


ORBIT_BUILDERS: dict[type, Callable] = {
    KeplerianOrbitIn: _keplerian,
    TleOrbitIn: _tle,
    SurfaceClockIn: _surface,
    **{model: build_format_source for model in FORMAT_ORBITS},
}
"""Request model -> builder(orbit, prefix, gravity) of its physics source."""


def gravity_block(block, strict: bool | None = None):
    """A request's ``gravity`` block as the model, read before the whole request is validated (to
    build an orbit file's sources once for all its items); None when it is not valid, and the
    request's own validation then names the problem. ``strict=False``: form-field text."""
    try:
        return GravityIn.model_validate(block or {}, strict=strict)
    except ValidationError:
        return None


def build_source(orbit, prefix: str = "orbit", gravity=None):
    """The physics orbit source of a request's orbit block (``prefix``: its request path).

    ``gravity``: the request's gravity block (``earth_zonal_degree``, ``sun``, ``moon``; None: a
    point-mass Earth with no third bodies for elements, ForceModelIn's defaults for a numerical
    propagation). Keplerian elements around the Earth follow its zonal field; a state vector or
    OPM without its own ``force_model`` is propagated under it, so the trajectory and the clock's
    rate use one field.
    """
    try:
        builder = ORBIT_BUILDERS[type(orbit)]
    except KeyError:  # pragma: no cover - the Orbit union and the registry are checked by a test
        raise TypeError(f"unsupported orbit {type(orbit).__name__}") from None
    try:
        return builder(orbit, prefix, gravity)
    except PhysicsInputError as exc:
        raise request_error(exc, prefix, orbit) from None
