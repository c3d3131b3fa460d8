"""The project installs as ``taubudget.app`` / ``taubudget.physics``, never as bare ``app``/``physics``."""

import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def test_every_subpackage_is_listed_for_installation():
    """A new folder with an __init__.py that pyproject.toml does not list would be missing from the wheel."""
    config = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    on_disk = {
        "taubudget." + ".".join(init.parent.relative_to(ROOT).parts)
        for top in ("app", "physics")
        for init in (ROOT / top).rglob("__init__.py")
    }
    assert set(config["packages"]) == on_disk
    assert config["package-dir"] == {"taubudget.app": "app", "taubudget.physics": "physics"}


@pytest.mark.parametrize("bare", ["app", "physics"])
def test_bare_names_are_refused(bare, tmp_path):
    """Run from the repository root, where the folders are importable by their bare names."""
    out = subprocess.run([sys.executable, "-c", f"import {bare}"], cwd=ROOT, capture_output=True, text=True)
    assert out.returncode != 0
    assert f"taubudget.{bare}" in out.stderr
