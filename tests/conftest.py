"""Suite-wide settings.

Under CI (the CI environment variable set, as .ci/run's runner does) hypothesis runs
derandomized: the same examples every time, so a green local run of `CI=true pytest` predicts
the CI result. Locally, without CI, examples are fresh on each run and keep exploring.
"""

from __future__ import annotations

import os
import tempfile

from hypothesis import settings

# Studies keep a SQLite store in the data directory: never the user's own during tests.
os.environ.setdefault("TAUBUDGET_DATA_DIR", tempfile.mkdtemp(prefix="taubudget-test-data-"))

settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")
