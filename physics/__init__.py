"""taubudget's physics: orbit sources, potentials, proper-time rates, quadrature and budgets (SI).

The public names, for a notebook or a script (SI units; times are skyfield ``Time`` objects, and
TT seconds since a span's start)::

    from taubudget.physics import KeplerianOrbit, Span, compute_budget, timescale
    ts = timescale()
    start = ts.utc(2027, 3, 1)
    orbit = KeplerianOrbit(start, 26_561.4e3, 0.01, 55.0, 0.0, 0.0, 0.0)
    result = compute_budget(orbit, "TT", Span(start, 86_400.0))
    result.mean_fractional_rate, result.offset_s([0.0, 43_200.0, 86_400.0])

``compute_budget`` also takes a ``BudgetInputs`` (every option); the result is a ``BudgetResult`` (frozen,
SI, documented in physics/budget/result.py). The names load on first use.

Installed as ``taubudget.physics``; importing the folder under the bare name ``physics`` is refused
so that it can never shadow (or be shadowed by) a user's own ``physics`` module.
"""

from importlib import import_module

if __name__ != "taubudget.physics":  # pragma: no cover - exercised by tests/app/test_packaging.py
    raise ImportError(f"import this package as taubudget.physics, not {__name__!r}")

_PUBLIC = {
    # what a budget takes
    "timescale": ".ephemeris",
    "Span": ".span",
    "GravityModel": ".rate",
    "KeplerianOrbit": ".orbits",
    "TleOrbit": ".orbits",
    "SurfaceClock": ".orbits",
    "NumericalOrbit": ".orbits",
    "CentredKeplerianOrbit": ".orbits.barycentric",
    "BodySurfaceClock": ".orbits.barycentric",
    "REFERENCE_NAMES": ".timescales",
    # the budget and its result
    "compute_budget": ".budget",
    "BudgetInputs": ".budget",
    "BudgetResult": ".budget",
    "PhysicsInputError": ".errors",
}

__all__ = sorted(_PUBLIC)


def __getattr__(name: str):
    """Load a public name from its module on first use (PEP 562): ``import taubudget.physics.x``
    stays cheap and free of import cycles."""
    try:
        module = _PUBLIC[name]
    except KeyError:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}") from None
    value = getattr(import_module(module, __name__), name)
    globals()[name] = value
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
