"""A residual evaluated once at the instants a contact plan looks at.

The plan's searches (the policy's simulation, the greedy recommendation, the largest stride over
passes, the fixed interval) evaluate the relativistic residual on the same simulation grid again
and again (once per stride tried). ``TabulatedResidual`` evaluates it once at the grid's instants
and looks those up; any other instant is evaluated as before, so the values are the residual's
own, not an interpolation.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np


class TabulatedResidual:
    """``residual(t_s) -> s`` evaluated once at ``points_s`` (TT s since the span start)."""

    def __init__(self, residual: Callable, points_s):
        self._residual = residual
        self._t = np.unique(np.asarray(points_s, dtype=float))
        self._v = np.asarray(residual(self._t), dtype=float) if self._t.size else np.empty(0)

    def __call__(self, t_s) -> np.ndarray:
        t = np.atleast_1d(np.asarray(t_s, dtype=float))
        if self._t.size == 0:
            return self._residual(t)
        i = np.clip(np.searchsorted(self._t, t), 0, self._t.size - 1)
        hit = self._t[i] == t
        out = np.empty(t.shape)
        out[hit] = self._v[i[hit]]
        if not hit.all():
            out[~hit] = self._residual(t[~hit])
        return out
