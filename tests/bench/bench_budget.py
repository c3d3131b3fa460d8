"""Speed and accuracy benchmark of the budget engine (not part of the test run).

Run: .venv/bin/python tests/bench/bench_budget.py

For each case it prints the quadrature nodes used, wall time, the offset error against a
reference with 4x smaller initial panels and a much tighter tolerance, the ratio of total
time to the bare propagation of the same nodes, and the ratio to a uniform 10 s trapezoid
(time, and the trapezoid's own error, and the time it would need at our error, since its
error falls as h^2). Aims (issue 2): error below 1 ps/day, total time within 2x of bare
propagation, >= 20x faster than the trapezoid at equal or better error.

BLAS runs single-threaded inside budgets (physics/threads.py); the times are process CPU.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from support.budgets import LEO_TLE  # noqa: E402
from taubudget.physics.budget import BudgetInputs, compute_budget  # noqa: E402
from taubudget.physics.environment import environment_for  # noqa: E402
from taubudget.physics.ephemeris import timescale  # noqa: E402
from taubudget.physics.orbits import KeplerianOrbit, TleOrbit  # noqa: E402
from taubudget.physics.rate import GravityModel, integrand_terms  # noqa: E402
from taubudget.physics.span import Span  # noqa: E402

FULL = GravityModel(4, True, True)


def _timed(fn, repeat=5):
    """Best of ``repeat`` runs, in process CPU seconds (steadier than wall time when the
    machine is shared; the work is single-threaded numpy)."""
    best = np.inf
    out = None
    for _ in range(repeat):
        t0 = time.process_time()
        out = fn()
        best = min(best, time.process_time() - t0)
    return out, best


def _trapezoid(src, span, env, step_s=10.0):
    t = np.arange(0.0, span.duration_s + 0.5 * step_s, step_s)
    t[-1] = min(t[-1], span.duration_s)
    g = integrand_terms(src, "TT", t, FULL, env).total
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (g[1:] + g[:-1]) * np.diff(t))])
    return t, cum


def case(name, src, span, trapezoid=True):
    env = environment_for(span)  # shared, cached: built once per span
    inputs = BudgetInputs(src, "TT", span, FULL)
    bud, wall = _timed(lambda: compute_budget(inputs))
    ref = compute_budget(BudgetInputs(src, "TT", span, FULL, nodes_scale=4.0, tol_fractional=1e-21))
    check_t = np.linspace(0.0, span.duration_s, 2001)
    err_s = np.max(np.abs(bud.offset_s(check_t) - ref.offset_s(check_t)))
    days = span.duration_s / 86400.0
    nodes = bud.integral.nodes_s.reshape(-1)
    _, bare = _timed(lambda: src.states(span, nodes, env.orientation))
    line = (f"{name:<34} nodes {bud.nodes_used:>8}  cpu {wall * 1e3:8.1f} ms  "
            f"err {err_s / days * 1e12:9.2e} ps/day  total/bare {wall / bare:5.2f}")
    if trapezoid:
        (tt, cum), t_trap = _timed(lambda: _trapezoid(src, span, env), repeat=2)
        err_trap = np.max(np.abs(cum - ref.offset_s(tt)))
        # The trapezoid's error falls as h^2: the step that would match our error, and the time.
        equal = t_trap * max(1.0, (err_trap / max(err_s, 1e-30)) ** 0.5)
        line += (f"  trapezoid/ours time {t_trap / wall:6.1f}x"
                 f"  (trapezoid err {err_trap / days * 1e12:8.2e} ps/day; at equal error"
                 f" ~{equal / wall:8.0f}x)")
    print(line, flush=True)
    return wall


def keplerian_in_the_field(name, start, el, days):
    """Issue 10: Keplerian elements now follow the zonal field (first-order J2 theory plus
    energy consistency). Before = the two-body ellipse (zonal_degree 0) in the same budget;
    after = the theory at degree 4. Ratios: budget time over the bare two-body propagator of the
    same nodes, and after over before; a numerical integration from the same state for scale
    (the LEO month only with --numerical: it takes seconds)."""
    from taubudget.physics.kepler import elements_to_state
    from taubudget.physics.orbits import NumericalOrbit

    span = Span(start, days * 86400.0)
    env = environment_for(span)
    before_src = KeplerianOrbit(start, *el)
    after_src = KeplerianOrbit(start, *el, zonal_degree=4)
    before, t_before = _timed(lambda: compute_budget(BudgetInputs(before_src, "TT", span, FULL)))
    after, t_after = _timed(lambda: compute_budget(BudgetInputs(after_src, "TT", span, FULL)))
    nodes = after.integral.nodes_s.reshape(-1)
    _, bare = _timed(lambda: before_src.states(span, nodes, env.orientation))
    _, bare_theory = _timed(lambda: after_src.states(span, nodes, env.orientation))
    print(f"{name + ' before (two-body)':<34} nodes {before.nodes_used:>8}  cpu {t_before * 1e3:8.1f} ms"
          f"  total/bare two-body {t_before / bare:5.2f}", flush=True)
    print(f"{name + ' after (zonal theory)':<34} nodes {after.nodes_used:>8}  cpu {t_after * 1e3:8.1f} ms"
          f"  total/bare two-body {t_after / bare:5.2f}  theory/two-body states {bare_theory / bare:5.2f}"
          f"  after/before {t_after / t_before:5.2f}  rate change "
          f"{(after.secular_rate_per_tt_s - before.secular_rate_per_tt_s) * 86400e6:+.6f} us/day", flush=True)
    if days <= 7 or "--numerical" in sys.argv:
        r0, v0, _ = elements_to_state(after_src.gm, el[0], el[1], *np.radians(el[2:]))
        num = NumericalOrbit(start, r0[0], v0[0], zonal_degree=4, sun=True, moon=True)
        numb, t_num = _timed(lambda: compute_budget(BudgetInputs(num, "TT", span, FULL)), repeat=1)
        print(f"{name + ' numerical (DOP853)':<34} nodes {numb.nodes_used:>8}  cpu {t_num * 1e3:8.1f} ms"
              f"  numerical/after {t_num / t_after:6.1f}  mean rate after - numerical "
              f"{after.secular_rate_per_tt_s - numb.secular_rate_per_tt_s:+.2e}", flush=True)


def main():
    ts = timescale()
    start = ts.utc(2027, 3, 1)
    keplerian_in_the_field("Keplerian LEO 30 d", start, (6878.137e3, 0.001, 28.5, 30.0, 40.0, 10.0), 30)
    keplerian_in_the_field("Keplerian MEO 7 d", start, (26561.75e3, 0.0042, 55.0, 112.5, 37.0, 201.0), 7)
    meo = KeplerianOrbit(start, 26561.75e3, 0.0042, 55.0, 112.5, 37.0, 201.0, zonal_degree=4)
    case("MEO 7 d, J2..J4 + Sun/Moon", meo, Span(start, 7 * 86400.0))
    ecc = KeplerianOrbit(start, 40000e3, 0.7, 63.4, 10.0, 270.0, 0.0, zonal_degree=4)
    case("e = 0.7, 7 d", ecc, Span(start, 7 * 86400.0))
    tle = TleOrbit(*LEO_TLE, ts)
    tle_start = ts.utc(2027, 3, 1, 6)
    case("LEO TLE 30 d", tle, Span(tle_start, 30 * 86400.0))

    year = Span(start, 365 * 86400.0)
    env = environment_for(year)
    sats = [KeplerianOrbit(start, 26561.75e3, 0.003 + 0.0002 * k, 55.0, 60.0 * (k // 4), 0.0, 90.0 * k,
                           zonal_degree=4) for k in range(24)]
    t0 = time.process_time()
    nodes = 0
    bare = 0.0
    for s in sats:
        b = compute_budget(BudgetInputs(s, "TT", year, FULL))
        nodes += b.nodes_used
        tb = time.process_time()
        s.states(year, b.integral.nodes_s.reshape(-1), env.orientation)
        bare += time.process_time() - tb
    wall = time.process_time() - t0 - bare
    print(f"{'24-satellite constellation, 365 d':<34} nodes {nodes:>8}  cpu {wall * 1e3:8.1f} ms  "
          f"(budget only; {wall / 24 * 1e3:.1f} ms per satellite)  total/bare {wall / bare:5.2f}")


if __name__ == "__main__":
    main()
