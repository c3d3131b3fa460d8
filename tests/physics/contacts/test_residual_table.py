"""The tabulated residual returns the residual's own values (looked up at its points, evaluated elsewhere)."""

from __future__ import annotations

import numpy as np
from taubudget.physics.contacts.residual_table import TabulatedResidual


def test_lookups_equal_the_function_and_misses_are_evaluated():
    calls = []

    def residual(t):
        calls.append(np.size(t))
        return 1e-9 * np.sin(2 * np.pi * np.asarray(t) / 5400.0)  # a LEO-like periodic term, s

    grid = np.linspace(0.0, 86_400.0, 2001)
    table = TabulatedResidual(residual, grid)
    assert calls == [2001]
    np.testing.assert_array_equal(table(grid[::7]), residual(grid[::7]))
    calls.clear()
    t = np.array([0.0, 123.4, grid[5], 86_400.0, 50_000.5])
    out = table(t)
    assert calls == [2]  # only the two instants off the grid were evaluated
    np.testing.assert_array_equal(out, residual(t))
