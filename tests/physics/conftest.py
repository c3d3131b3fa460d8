"""Shared fixtures for physics tests."""

from __future__ import annotations

import pytest
from taubudget.physics.ephemeris import timescale


@pytest.fixture(scope="session")
def ts():
    return timescale()
