"""Physics names its own parameters in SI units; the app maps them to request fields and units."""

import pytest
from taubudget.app.schemas import KeplerianOrbitIn
from taubudget.app.schemas.orbits import GravityIn
from taubudget.app.services.orbits import build_source
from taubudget.physics import KeplerianOrbit, Span, compute_budget
from taubudget.physics.errors import PhysicsInputError

EPOCH = "2027-03-01T00:00:00Z"


def test_keplerian_orbit_names_its_si_parameter(ts):
    with pytest.raises(PhysicsInputError) as info:
        KeplerianOrbit(ts.utc(2027, 3, 1), 6.0e6, 0.0, 55.0, 0.0, 0.0, 0.0)
    assert (info.value.field, info.value.value) == ("semi_major_axis_m", 6.0e6)
    assert "below the Earth's equatorial radius" in info.value.reason


def test_the_app_maps_it_to_the_request_field_and_unit():
    orbit = KeplerianOrbitIn(type="keplerian", epoch=EPOCH, semi_major_axis_km=6000.0, eccentricity=0.0,
                             inclination_deg=55.0)
    with pytest.raises(PhysicsInputError) as info:
        build_source(orbit, prefix="orbit")
    assert (info.value.field, info.value.value) == ("orbit.semi_major_axis_km", 6000.0)


def test_a_lowercase_scale_name_fails_before_any_integration(ts):
    start = ts.utc(2027, 3, 1)
    orbit = KeplerianOrbit(start, 26_561.4e3, 0.0, 55.0, 0.0, 0.0, 0.0)
    with pytest.raises(PhysicsInputError) as info:
        compute_budget(orbit, "tt", Span(start, 86_400.0))
    assert info.value.field == "reference" and info.value.value == "tt"
    assert "case-sensitive" in info.value.reason and "TT, TAI, GPS" in info.value.reason


def test_the_app_maps_the_zonal_degree_to_the_gravity_block():
    orbit = KeplerianOrbitIn(type="keplerian", epoch=EPOCH, semi_major_axis_km=7000.0, eccentricity=0.0,
                             inclination_deg=55.0)
    with pytest.raises(PhysicsInputError) as info:
        # a degree the request schema refuses, built unvalidated to reach the physics check
        build_source(orbit, prefix="orbit", gravity=GravityIn.model_construct(earth_zonal_degree=1))
    assert (info.value.field, info.value.value) == ("gravity.earth_zonal_degree", 1)


def test_the_error_pickles_without_its_source():
    """A Dask worker may hand an error back to the scheduler: it pickles, its instant kept, the
    (possibly large) orbit source left behind."""
    import pickle

    from taubudget.physics.ephemeris import timescale

    at = timescale().utc(2027, 3, 1, 12)
    exc = PhysicsInputError("coverage", at, "outside the data", source=object(), at=at)
    back = pickle.loads(pickle.dumps(exc))
    assert (back.field, back.reason, back.source) == ("coverage", "outside the data", None)
    assert back.at.utc_strftime("%Y-%m-%dT%H:%M:%SZ") == "2027-03-01T12:00:00Z"
