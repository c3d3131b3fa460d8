"""taubudget's service layer: HTTP routes, CLI, request validation and presentation.

Installed as ``taubudget.app``; importing the folder under the bare name ``app`` is refused so that
it can never shadow (or be shadowed by) a user's own ``app`` module.
"""

if __name__ != "taubudget.app":  # pragma: no cover - exercised by tests/app/test_packaging.py
    raise ImportError(f"import this package as taubudget.app, not {__name__!r}")
