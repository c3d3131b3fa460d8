"""The one registry of orbit types covers exactly the request's ``Orbit`` union."""

from typing import get_args

from taubudget.app.schemas import Orbit
from taubudget.app.services.orbits import ORBIT_BUILDERS


def test_every_orbit_model_of_the_request_has_one_builder():
    union_members = set(get_args(get_args(Orbit)[0]))
    assert union_members == set(ORBIT_BUILDERS)
    assert {m.model_fields["type"].annotation.__args__[0] for m in union_members} >= {
        "keplerian", "tle", "surface", "state_vector"}
