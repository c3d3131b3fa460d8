"""The CLI's plain text fits in 100 columns on the shipped samples, and the contact table still
carries every pass of the same request's ``--json`` response.

Each text-printing verb runs once as a subprocess (all at once, so the module takes about as long
as its slowest run); the tests share the outputs. The ``study`` verbs need a running service, so
their lines (the progress bar, which ``batch`` draws too, and the ``study list`` rows) are checked
through the functions that write them, with the API's own status example at its widest.

Outside truth: the ``--json`` response of the same request (the contract the text renders), and
the standard library's ``datetime`` for the calendar (a pass's date plus its time of day, and the
'+Nd' day count of a LOS after midnight, against the JSON's ISO 8601 UTC times).
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
from datetime import datetime, timedelta
from pathlib import Path

import pytest
from taubudget.app.api.studies import STATUS_EXAMPLE
from taubudget.app.study_cli import progress_line, study_list_lines

WIDTH = 100  # columns of an ordinary terminal window: the brief for every plain-text line
SAMPLES = Path(__file__).resolve().parents[2] / "sample_orbits"
FORMATS = SAMPLES / "formats"
CLI = [sys.executable, "-m", "taubudget.app.cli"]
RUNS = {
    "budget": ["budget", SAMPLES / "lunar_beacon.json"],  # the longest prose: BCRS frame, position term
    "contacts": ["contacts", SAMPLES / "contact_plan_meo.json"],
    "stability": ["stability", SAMPLES / "measured_phase_demo.txt"],
    "clock-residuals": ["clock-residuals", FORMATS / "kestrel_constellation.sp3", "--sat", "L51",
                        "--periodic-term-in-data"],
}
CONTACTS_JSON = ["contacts", SAMPLES / "contact_plan_meo.json", "--json"]
COLUMNS = ("station", "AOS UTC", "LOS UTC", "dur s", "max el", "free-run ns", "3sig w/ syncs", "sync",
           "pre-sync ns")
ROW = re.compile(r"^(?P<station>\S.*?)\s{2,}(?P<aos>\d\d:\d\d:\d\d)\s{2}(?P<los>\d\d:\d\d:\d\d)"
                 r"(?:\+(?P<days>\d+)d)?\s+(?P<dur>\d+)\s+(?P<el>-?\d+\.\d\d)\s+(?P<free>-?\d+\.\d{3})"
                 r"(?:\s+(?P<bound>\d+\.\d{3}))?(?:\s+(?P<sync>yes))?(?:\s+(?P<before>\d+\.\d{3}))?$")
DAY = re.compile(r"^-- (\d{4}-\d\d-\d\d) UTC -+$")


@pytest.fixture(scope="module")
def outputs() -> dict[str, str]:
    """stdout of every run, started together and read once."""
    jobs = {name: [*RUNS[name]] for name in RUNS} | {"contacts --json": CONTACTS_JSON}
    procs = {name: subprocess.Popen([*CLI, *map(str, args)], stdout=subprocess.PIPE,
                                    stderr=subprocess.PIPE, text=True)
             for name, args in jobs.items()}
    out = {}
    for name, proc in procs.items():
        stdout, stderr = proc.communicate(timeout=300)
        assert proc.returncode == 0, (name, stderr)
        out[name] = stdout
    return out


def _too_wide(text: str) -> list[str]:
    return [f"{len(line)}: {line}" for line in text.splitlines() if len(line) > WIDTH]


@pytest.mark.parametrize("name", RUNS)
def test_every_line_fits(outputs, name):
    assert outputs[name].strip()
    assert not _too_wide(outputs[name]), name


def _second(iso: str) -> datetime:
    """An ISO 8601 UTC time truncated to the second (the table's resolution)."""
    return datetime.fromisoformat(iso.replace("Z", "+00:00")).replace(microsecond=0, tzinfo=None)


def _table(text: str) -> tuple[str, list[tuple[str, re.Match]]]:
    """The pass table's header and its rows, each with the date of the day line above it."""
    lines = text.splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("station "))
    rows, day = [], None
    for line in lines[start + 1:]:
        if not line:
            break
        if m := DAY.match(line):
            day = m.group(1)
            continue
        m = ROW.match(line)
        assert m and day, line
        rows.append((day, m))
    return lines[start], rows


def test_the_contact_table_carries_every_pass_of_the_json(outputs):
    plan = json.loads(outputs["contacts --json"])
    _, rows = _table(outputs["contacts"])
    assert len(rows) == len(plan["passes"]) > 0
    days = set()
    for (day, m), p in zip(rows, plan["passes"], strict=True):
        assert m["station"] == p["station"]
        aos = datetime.fromisoformat(f"{day}T{m['aos']}")
        los = datetime.fromisoformat(f"{day}T{m['los']}") + timedelta(days=int(m["days"] or 0))
        assert aos == _second(p["aos_utc"]) and los == _second(p["los_utc"]), (m.group(0), p)
        days.add(day)
        # the other columns, to their printed resolution
        assert abs(int(m["dur"]) - p["duration_s"]) <= 0.5
        assert abs(float(m["el"]) - p["max_elevation_deg"]) <= 0.005
        assert abs(float(m["free"]) - p["offset_at_aos_ns"]) <= 0.0005
        assert abs(float(m["bound"]) - p["bound_at_aos_with_syncs_ns"]) <= 0.0005
        assert (m["sync"] == "yes") == bool(p["used_for_sync"])
        before = p["bound_before_sync_ns"]
        assert (m["before"] is None) == (before is None)
        if before is not None:
            assert abs(float(m["before"]) - before) <= 0.0005
    assert len(days) > 1  # a seven-day plan: the day line changes, and passes cross midnight
    assert any(m["days"] for _, m in rows)


def test_the_legend_explains_every_column_and_names_utc(outputs):
    text = outputs["contacts"]
    header, _ = _table(text)
    legend = text.split("\n\n")[2].splitlines()
    labels = [line.split(": ", 1)[0] for line in legend if not line.startswith(" ")]
    for column in COLUMNS:
        assert column in header
        assert any(column in label for label in labels), column
    assert "UTC" in text.splitlines()[0]


def test_progress_and_study_list_lines_fit_at_their_widest():
    widest = {**STATUS_EXAMPLE, "total": 10**6, "done": 10**6 - 10**5 - 1, "failed": 10**5,
              "elapsed_s": 9.9e6, "estimated_remaining_s": 9.9e6, "kind": "contact_plan",
              "state": "cancelled", "name": "a long study name " * 12}
    for state in ("running", "cancelled"):
        line = progress_line({**widest, "state": state})
        assert len(line) <= WIDTH and "999999/1000000 finished, 100000 failed" in line, line
    lines = study_list_lines(widest)
    assert all(len(line) <= WIDTH for line in lines), lines
    assert " ".join(" ".join(lines[1:]).split()) == " ".join(widest["name"].split())
    assert lines[0].startswith(widest["id"]) and "contact_plan" in lines[0]


def test_long_station_names_and_long_passes_still_fit(outputs):
    """A name wider than the room left is cut and marked, and the legend says where it is whole;
    a LOS many days after its AOS widens its column, not the line."""
    from taubudget.app.cli import render_contacts

    plan = json.loads(outputs["contacts --json"])
    long_name = "Upper Terrace Observatory of the Long Ridge, antenna 3"
    plan["passes"][0]["station"] = long_name
    aos = _second(plan["passes"][1]["aos_utc"])
    plan["passes"][1]["los_utc"] = (aos + timedelta(days=420)).isoformat() + ".000000Z"
    text = render_contacts(plan)
    assert not _too_wide(text)
    _, rows = _table(text)
    first, second = rows[0][1], rows[1][1]
    assert first["station"].endswith("~") and long_name.startswith(first["station"][:-1])
    assert second["days"] == "420"
    assert "a name ending in '~' is cut to fit (--json and --csv give it in full)" in " ".join(text.split())
