"""Speed benchmark of contact planning (not part of the test run).

Run: .venv/bin/python tests/bench/bench_contacts.py

A 20-day LEO plan over the sample's four stations (about 400 passes). Prints the whole plan's time,
the bare pass search's (the propagation over the span, physics.contacts.find_passes), and the
plan with the residual evaluated afresh by every search (the naive alternative to
physics/contacts/residual_table.py), with the ratios. Process CPU seconds, best of 3.
"""

from __future__ import annotations

import json
import sys
import time
from pathlib import Path
from unittest import mock

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from taubudget.app.schemas.contacts import ContactPlanRequest  # noqa: E402
from taubudget.app.services import contacts as service  # noqa: E402
from taubudget.app.services.budget import budget_inputs  # noqa: E402
from taubudget.physics.contacts import find_passes  # noqa: E402
from taubudget.physics.environment import environment_for  # noqa: E402


def _timed(fn, repeat=3):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.process_time()
        fn()
        best = min(best, time.process_time() - t0)
    return best


def main():
    body = json.loads((ROOT / "sample_orbits" / "contact_plan_leo.json").read_text())
    body.pop("end", None)
    body["duration_days"] = 20.0
    req = ContactPlanRequest.model_validate(body)
    inputs = budget_inputs(req)
    env = environment_for(inputs.span)
    stations = service._stations(req)
    passes = len(find_passes(inputs.source, inputs.span, stations, env.orientation))
    bare = _timed(lambda: find_passes(inputs.source, inputs.span, stations, env.orientation))
    plan = _timed(lambda: service.contact_plan_from_request(req))
    with mock.patch.object(service, "TabulatedResidual", lambda residual, points: residual):
        naive = _timed(lambda: service.contact_plan_from_request(req))
    print(f"20-day LEO contact plan, {passes} passes, 4 stations (process CPU, best of 3)")
    print(f"  bare pass search      {bare:7.2f} s")
    print(f"  whole plan            {plan:7.2f} s   {plan / bare:5.1f}x the pass search")
    print(f"  residual not tabulated {naive:6.2f} s   {naive / plan:5.1f}x the plan")


if __name__ == "__main__":
    main()
