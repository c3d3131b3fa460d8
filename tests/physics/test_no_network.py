"""No download at run time: with sockets blocked, data still load and a Sun/Moon budget runs."""

import socket

import pytest
from taubudget.physics import environment as env_mod
from taubudget.physics import ephemeris as eph_mod
from taubudget.physics.budget import BudgetInputs, compute_budget
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span


class _NoNetwork(socket.socket):
    def __init__(self, *args, **kwargs):
        raise OSError("network access attempted during a budget computation")


def test_budget_with_sockets_blocked(monkeypatch):
    monkeypatch.setattr(socket, "socket", _NoNetwork)
    monkeypatch.setattr(socket, "create_connection", _NoNetwork)
    eph_mod.ephemeris().close()  # reopen from disk below, with no network
    eph_mod.timescale.cache_clear()
    eph_mod.ephemeris.cache_clear()
    env_mod._cached.cache_clear()
    ts = eph_mod.timescale()
    start = ts.utc(2031, 7, 4)
    src = KeplerianOrbit(start, 42164.0e3, 0.0003, 0.05, 75.0, 0.0, 0.0)
    b = compute_budget(BudgetInputs(src, "TT", Span(start, 2 * 86400.0), GravityModel(4, True, True)))
    tidal = b.terms_fractional["tidal"]
    assert tidal != 0.0
    with pytest.raises(OSError):
        socket.socket()
