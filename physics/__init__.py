"""taubudget's physics: orbit sources, potentials, proper-time rates, quadrature and budgets (SI).

Installed as ``taubudget.physics``; importing the folder under the bare name ``physics`` is refused
so that it can never shadow (or be shadowed by) a user's own ``physics`` module.
"""

if __name__ != "taubudget.physics":  # pragma: no cover - exercised by tests/app/test_packaging.py
    raise ImportError(f"import this package as taubudget.physics, not {__name__!r}")
