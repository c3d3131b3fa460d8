"""A wheel built from a clean checkout installs into a fresh venv, serves the OpenAPI page's worked
contact-plan examples from its package data, and puts no top-level ``app`` or ``physics`` into
site-packages (they would collide with a user's own modules)."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
import sysconfig
import venv
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

CHECK_INSTALLED = r"""
import importlib.util, json, sys, sysconfig
from pathlib import Path
from starlette.testclient import TestClient
import taubudget.app.main as main

site = Path(sysconfig.get_paths()["purelib"])
doc = TestClient(main.create_app()).get("/openapi.json").json()
body = doc["paths"]["/v1/contact-plans"]["post"]["requestBody"]["content"]["application/json"]
print(json.dumps({
    "main_file": main.__file__,
    "examples": {k: v["value"] for k, v in body["examples"].items()},
    "bare": {n: importlib.util.find_spec(n) is not None for n in ("app", "physics")},
    "top_level": sorted(p.name for p in site.iterdir()),
}))
"""


def _clean_checkout(dest: Path) -> Path:
    """The files git tracks, as a fresh clone would hold them (untracked files left behind)."""
    listed = subprocess.run(["git", "ls-files", "-z"], cwd=ROOT, capture_output=True, check=True).stdout
    for name in filter(None, listed.decode().split("\0")):
        src, dst = ROOT / name, dest / name
        dst.parent.mkdir(parents=True, exist_ok=True)
        if src.is_symlink():
            dst.symlink_to(src.readlink())
        elif src.exists():
            shutil.copy2(src, dst)
    return dest


@pytest.mark.slow
def test_wheel_from_a_clean_checkout_serves_the_examples(tmp_path):
    src = _clean_checkout(tmp_path / "src")
    dist = tmp_path / "dist"
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--quiet", "--no-deps", "--no-build-isolation",
                    "--no-index", "-w", str(dist), str(src)], check=True, capture_output=True, cwd=tmp_path)
    (wheel,) = dist.glob("taubudget-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    tops = {n.split("/")[0] for n in names}
    assert tops == {"taubudget", wheel.name.split("-py")[0] + ".dist-info"}, tops
    assert "taubudget/app/examples/contact_plan_meo.json" in names

    env_dir = tmp_path / "venv"
    venv.EnvBuilder(with_pip=True).create(env_dir)
    py = env_dir / "bin" / "python"
    target_site = subprocess.run([str(py), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"],
                                 capture_output=True, text=True, check=True).stdout.strip()
    # The dependencies come from this environment (no network); its own editable taubudget does
    # not: a path added by a .pth line does not have its .pth files processed.
    Path(target_site, "zz_test_dependencies.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    subprocess.run([str(py), "-m", "pip", "install", "--quiet", "--no-deps", "--no-index", str(wheel)],
                   check=True, capture_output=True)
    out = subprocess.run([str(py), "-c", CHECK_INSTALLED], cwd=tmp_path, capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    found = json.loads(out.stdout)

    assert found["main_file"].startswith(target_site)  # the wheel's copy, not the checkout's
    assert found["bare"] == {"app": False, "physics": False}
    assert "app" not in found["top_level"] and "physics" not in found["top_level"]
    examples = found["examples"]
    assert set(examples) == {"meo_every_pass", "leo_every_second_long_pass"}
    shipped = json.loads((ROOT / "app" / "examples" / "contact_plan_meo.json").read_text())
    assert examples["meo_every_pass"] == shipped and shipped["stations"]
    assert examples["leo_every_second_long_pass"]["stations"]
