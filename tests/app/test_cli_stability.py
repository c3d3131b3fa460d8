"""``taubudget stability FILE`` on the invented sample record, against allantools (test-only reference).

allantools (A. Wallin et al., general-purpose frequency-stability library) is used only
here, as an outside implementation of the NIST SP 1065 estimators: ADEV, OADEV, MDEV,
TDEV and HDEV of the same phase data must agree to rounding.
"""

from __future__ import annotations

import json
from pathlib import Path

import allantools
import numpy as np
import pytest
from taubudget.app.cli import main

SAMPLE = Path(__file__).resolve().parents[2] / "sample_orbits" / "measured_phase_demo.txt"
SAMPLE_INTERVAL_S = 10.0  # stated in the file's header
ROUNDING = 1e-9  # relative: different summation orders only


def _phase_column(path: Path) -> np.ndarray:
    lines = [ln for ln in path.read_text().splitlines() if ln.strip() and not ln.startswith("#")]
    assert lines[0] == "phase_s"
    return np.array([float(v) for v in lines[1:]])


def test_json_output_matches_allantools(capsys):
    assert main(["stability", str(SAMPLE), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    x = _phase_column(SAMPLE)
    assert out["n_samples"] == x.size >= 2000
    assert out["sample_interval_s"] == SAMPLE_INTERVAL_S and out["data_type"] == "phase"
    rows = out["deviations"]
    taus = np.array([r["tau_s"] for r in rows])
    np.testing.assert_array_equal(taus, SAMPLE_INTERVAL_S * 2.0 ** np.arange(taus.size))
    rate = 1.0 / SAMPLE_INTERVAL_S
    for ours, theirs in (("adev", allantools.adev), ("oadev", allantools.oadev),
                         ("mdev", allantools.mdev), ("tdev_s", allantools.tdev),
                         ("hdev", allantools.hdev)):
        ref_taus, ref, _, _ = theirs(x, rate=rate, data_type="phase", taus=taus)
        got = {r["tau_s"]: r[ours] for r in rows}
        for tau, value in zip(ref_taus, ref, strict=True):
            assert got[float(tau)] == pytest.approx(value, rel=ROUNDING), (ours, tau)
    assert out["caution"].startswith("Planning estimate")


def test_table_output_lists_every_tau(capsys):
    assert main(["stability", str(SAMPLE)]) == 0
    text = capsys.readouterr().out
    assert "tau_s" in text and "tdev (s)" in text
    body = [ln for ln in text.splitlines() if ln[:12].strip().replace(".", "").isdigit()]
    assert [float(ln.split()[0]) for ln in body][:3] == [10.0, 20.0, 40.0]
    assert "Planning estimate" in text


def test_the_file_header_can_be_overridden(capsys):
    assert main(["stability", str(SAMPLE), "--sample-interval-s", "1", "--json"]) == 0
    rows_1s = json.loads(capsys.readouterr().out)["deviations"]
    assert main(["stability", str(SAMPLE), "--json"]) == 0
    rows_10s = json.loads(capsys.readouterr().out)["deviations"]
    # Phase data: ADEV scales as 1/tau0 for the same samples (x differences over tau).
    assert rows_1s[0]["adev"] == pytest.approx(10.0 * rows_10s[0]["adev"], rel=ROUNDING)


def test_missing_sample_interval_and_bad_lines_exit_2(tmp_path, capsys):
    bare = tmp_path / "bare.txt"
    bare.write_text("1e-9\n2e-9\n4e-9\n3e-9\n")
    assert main(["stability", str(bare)]) == 2
    assert "sample-interval-s" in capsys.readouterr().err
    bad = tmp_path / "bad.txt"
    bad.write_text("# sample_interval_s: 1\n1e-9\n2e-9\nnope\n")
    assert main(["stability", str(bad)]) == 2
    assert "line 4" in capsys.readouterr().err
