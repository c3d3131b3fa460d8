"""The README's quick-start GET answers the figure the README quotes next to it.

Outside truth: the quoted 38.575008 us/day is the published point-mass GPS figure (Kouba 2004,
GPS Solutions 8(3):170-180; DESIGN.md check values).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

README = (Path(__file__).resolve().parents[2] / "README.md").read_text()
PUBLISHED_US_PER_DAY = 38.575008  # Kouba 2004
QUOTED_DIGITS = 1e-6  # the README quotes six decimals


def test_readme_get_example_prints_the_quoted_rate(client):
    url = re.search(r"curl -s '(?:http://)?localhost:8000(/v1/budgets\.csv\?[^']+)'", README).group(1)
    quoted = float(re.search(r"gives `mean_rate_us_per_day` ([0-9.]+)", README).group(1))
    assert quoted == PUBLISHED_US_PER_DAY
    r = client.get(url)
    assert r.status_code == 200, r.text
    assert float(r.text) == pytest.approx(quoted, abs=QUOTED_DIGITS)
