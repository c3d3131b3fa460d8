"""Helpers shared by physics tests: invented fixtures and a budget shortcut."""

from __future__ import annotations

from taubudget.app.present.budget import budget as present_budget
from taubudget.physics.budget import BudgetInputs, BudgetResult, compute_budget
from taubudget.physics.orbits import KeplerianOrbit
from taubudget.physics.rate import GravityModel
from taubudget.physics.span import Span

POINT_MASS = GravityModel(earth_zonal_degree=0, sun=False, moon=False)

# An invented LEO smallsat TLE (our own elements; checksums computed).
LEO_TLE = (
    "1 99871U 27901A   27060.25000000  .00001100  00000-0  21000-4 0  9994",
    "2 99871  97.6000 211.0000 0012000  96.3000  15.3000 15.12000000  1237",
)


def kepler_budget(ts, a_km, e, duration_s, gravity=POINT_MASS, reference="TT", m0_deg=10.0,
                  inc_deg=55.0, series_step_s=None, nominal_frequency_hz=None, **kw):
    start = ts.utc(2027, 3, 1)
    span = Span(start, duration_s)
    src = KeplerianOrbit(start, a_km * 1e3, e, inc_deg, 30.0, 40.0, m0_deg)
    inputs = BudgetInputs(src, reference, span, gravity, series_step_s=series_step_s,
                          nominal_frequency_hz=nominal_frequency_hz, **kw)
    return src, span, as_dict(compute_budget(inputs))


def as_dict(result: BudgetResult) -> dict:
    """A typed budget result as the API presents it (ns, ISO times), through the app's presenter."""
    return present_budget(result, result.reference)
