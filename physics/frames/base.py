"""What every frame of the computation provides (see geocentric.py and barycentric.py)."""

from __future__ import annotations

import numpy as np

from ..constants import C2_M2_PER_S2, L_G
from ..errors import PhysicsInputError
from ..quadrature import PanelIntegral


class Frame:
    """One frame of the computation.

    ``term_names``: the rate terms, each a row of the integrand after the total (row 0);
    ``extra_rows``: rows the quadrature carries but does not sum (r.v, ...); ``primary_term``: the
    term holding the central body's monopole (it carries half the eccentricity term).
    ``evaluate(t_s)`` returns ``physics.rate.NodeRates``; ``rows(t_s)`` stacks them for the
    quadrature. ``mean_reference_rate(term_rates)``: the reference's mean rate against TT from the
    fitted term rates. ``bounded_parts(q)``: the bounded terms of known form removed before the
    secular fit (``physics.budget.fit.BoundedPart``). ``omitted_terms()`` and ``describe()``: what
    the model leaves out and what it is.
    """

    name: str
    coordinate_time: str
    term_names: tuple[str, ...]
    extra_rows: tuple[str, ...] = ("r_dot_v",)
    primary_term: str

    def __init__(self, source, reference, gravity, span, env):
        self.source, self.reference, self.gravity, self.span, self.env = source, reference, gravity, span, env

    @property
    def row_names(self) -> tuple[str, ...]:
        return ("total",) + self.term_names + self.extra_rows

    def evaluate(self, t_s):  # pragma: no cover - abstract
        raise NotImplementedError

    def _extra(self, nr) -> list:
        return [nr.r_dot_v_m2_per_s]

    def rows(self, t_s: np.ndarray) -> np.ndarray:
        """(rows, N) integrand at the nodes; PhysicsInputError at the first node that failed."""
        nr = self.evaluate(t_s)
        if (nr.code != 0).any():
            first = int(np.argmax(nr.code != 0))
            msg = nr.messages.get(int(nr.code[first]), "propagation failed")
            raise PhysicsInputError(
                "orbit", None, f"the orbit cannot be propagated over the span: SGP4 reports error "
                f"{int(nr.code[first])}: {msg}", at=self.span.times(float(t_s[first])),
            )
        return np.vstack([nr.total] + [nr.terms[n] for n in self.term_names] + self._extra(nr))

    def _row_part(self, q: PanelIntegral, row_name: str, scale: float, name: str, booked: dict):
        """A BoundedPart scale * (row(t) - row(0)) from an extra row of the integrand."""
        from ..budget.fit import BoundedPart

        row = self.row_names.index(row_name)
        start = float(q.values_at(np.array([0.0]), rows=[row])[0][0])
        return BoundedPart(name, lambda t_s: scale * (q.values_at(t_s, rows=[row])[0] - start), booked,
                           lambda ppp: scale * (q.values_on_fine_grid(ppp, rows=[row])[0] - start))

    def eccentricity_part(self, q: PanelIntegral):
        """-(2/c^2)(r.v - r.v_0) per TT second (TN36 eq. 10.10): half in the velocity term, half in
        the primary's potential (two-body identity v^2/2 + GM/r = 3GM/(2a) + 2 d(r.v)/dt)."""
        return self._row_part(q, "r_dot_v", -2.0 / ((1.0 - L_G) * C2_M2_PER_S2), "eccentricity_term",
                              {"velocity": 0.5, self.primary_term: 0.5})

    def eccentricity_start_s(self, q: PanelIntegral) -> float:
        """The absolute eccentricity term -(2/c^2) r.v at the span start, s (IS-GPS-200's F e sqrt(A)
        sin E is absolute; the bounded part counts from the start)."""
        row = self.row_names.index("r_dot_v")
        return float(-2.0 / ((1.0 - L_G) * C2_M2_PER_S2) * q.values_at(np.array([0.0]), rows=[row])[0][0])

    def bounded_parts(self, q: PanelIntegral) -> list:
        return [self.eccentricity_part(q)]
