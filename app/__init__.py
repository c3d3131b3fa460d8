"""taubudget's service layer: HTTP routes, CLI, request validation and presentation.

From Python, the request dicts the API takes work too::

    from taubudget.app import budget_result, budget_response
    result = budget_result({"orbit": {...}, "reference": "TT", "start": ..., "duration_days": 1})
    result.mean_fractional_rate          # a typed physics.budget.BudgetResult, SI units
    budget_response({...})["mean_rate_us_per_day"]   # the response JSON, as POST /v1/budgets

Installed as ``taubudget.app``; importing the folder under the bare name ``app`` is refused so that
it can never shadow (or be shadowed by) a user's own ``app`` module.
"""

from importlib import import_module

if __name__ != "taubudget.app":  # pragma: no cover - exercised by tests/app/test_packaging.py
    raise ImportError(f"import this package as taubudget.app, not {__name__!r}")

_PUBLIC = {
    "budget_result": (".services.budget", "budget_result"),
    "budget_response": (".services.budget", "budget_from_request"),
    "BudgetRequest": (".schemas", "BudgetRequest"),
}

__all__ = sorted(_PUBLIC)


def __getattr__(name: str):
    """Load a public name on first use (PEP 562), so ``import taubudget.app.x`` stays cheap."""
    try:
        module, attr = _PUBLIC[name]
    except KeyError:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}") from None
    value = getattr(import_module(module, __name__), attr)
    globals()[name] = value
    return value
