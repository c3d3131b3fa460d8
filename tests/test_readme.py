"""README.md's "From Python" snippet runs as written and prints the published GPS figure."""

import contextlib
import io
import re
from pathlib import Path

import pytest

README = Path(__file__).resolve().parents[1] / "README.md"

KOUBA_RATE_US_PER_DAY = 38.575008
"""Circular orbit a = 26,561.4 km, point-mass Earth, against TT (Kouba 2004, GPS Solutions 8(3))."""
PUBLISHED_DIGITS_US_PER_DAY = 5e-7  # the figure is published to 1e-6 us/day


def _snippet() -> str:
    text = README.read_text()
    section = text.split("## From Python", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```python\n(.*?)```", section, flags=re.S)
    assert len(blocks) == 1, "the section holds one python block"
    return blocks[0]


def test_from_python_snippet_runs_and_gives_the_published_rate():
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(_snippet(), "README.md", "exec"), {})
    lines = out.getvalue().splitlines()
    assert float(lines[0]) == pytest.approx(KOUBA_RATE_US_PER_DAY, abs=PUBLISHED_DIGITS_US_PER_DAY)
    offsets = [float(x) for x in lines[1].strip("[]").split()]
    # A circular point-mass orbit drifts linearly: half the day's offset at noon.
    assert abs(offsets[0]) < 1e-18  # the integral from the start to the start: zero to rounding
    assert offsets[1] == pytest.approx(offsets[2] / 2, rel=1e-7)  # numpy prints 8 digits
    assert offsets[2] == pytest.approx(KOUBA_RATE_US_PER_DAY * 1e-6, rel=1e-7)
    rate = float(lines[2])
    assert rate * 86_400e6 == pytest.approx(KOUBA_RATE_US_PER_DAY, abs=PUBLISHED_DIGITS_US_PER_DAY)
    assert float(lines[3]) == pytest.approx(KOUBA_RATE_US_PER_DAY, abs=PUBLISHED_DIGITS_US_PER_DAY)


def test_public_names_are_listed_and_load():
    import taubudget.physics as physics

    for name in physics.__all__:
        assert getattr(physics, name) is not None, name
    with pytest.raises(AttributeError):
        physics.not_a_public_name  # noqa: B018
