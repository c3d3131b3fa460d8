"""Command line: ``taubudget budget REQUEST.json [--json]`` and ``taubudget serve``.

The budget verb reads the same JSON body as ``POST /v1/budgets`` and prints a
readable table, or with ``--json`` exactly the response JSON. Exit codes:
0 success, 2 bad input (the message names the field and the reason).
"""

from __future__ import annotations

import argparse
import json
import sys

from pydantic import ValidationError

from physics.errors import PhysicsInputError


def _load_json(path: str):
    if path == "-":
        return json.load(sys.stdin)
    with open(path, encoding="utf-8") as fh:
        return json.load(fh)


def _fmt_validation(exc: ValidationError) -> str:
    lines = []
    for err in exc.errors():
        loc = ".".join(str(p) for p in err["loc"])
        lines.append(f"  {loc or '(body)'}: {err['msg']}")
    return "invalid request:\n" + "\n".join(lines)


def render_table(b: dict) -> str:
    """A plain-text summary of a budget for a terminal."""
    ref = b.get("reference")
    ref_name = ref if isinstance(ref, str) else "ground clock"
    rows = [
        ("span", f"{b['start_utc']} .. {b['end_utc']} ({b['span_s'] / 86400:.6f} d)"),
        ("reference", ref_name),
        ("mean rate", f"{b['mean_rate_us_per_day']:.6f} us/day  ({b['mean_fractional_rate']:.6e})"),
        ("frequency preset", f"{b['frequency_preset_fractional']:.6e}"),
    ]
    if b.get("preset_frequency_hz") is not None:
        rows.append(("preset frequency", f"{b['preset_frequency_hz']:.6f} Hz "
                     f"(nominal {b['nominal_frequency_hz']:.3f} Hz)"))
    rows += [
        ("offset at end", f"{b['offset_at_end_ns']:.6f} ns"),
        ("offset extreme", f"{b['offset_extreme_ns']:.6f} ns at {b['offset_extreme_time_utc']}"),
        ("periodic amplitude", f"{b['periodic']['amplitude_ns']:.6f} ns "
         f"(peak-to-peak {b['periodic']['peak_to_peak_ns']:.6f} ns)"),
    ]
    if b["periodic"]["dominant_period_s"]:
        rows.append(("dominant period", f"{b['periodic']['dominant_period_s']:.1f} s"))
    ec = b["eccentricity_correction"]
    rows += [
        ("eccentricity term", f"{ec['amplitude_ns']:.6f} ns amplitude"),
        ("after user correction", f"{ec['residual_after_correction_ns']:.6f} ns max residual"),
        ("integration error", f"{b['integration_error_estimate_ps']:.3g} ps (estimate), "
         f"{b['nodes_used']} nodes"),
    ]
    width = max(len(k) for k, _ in rows)
    out = [f"{k:<{width}}  {v}" for k, v in rows]
    out.append("")
    out.append("terms (fractional):")
    for name, val in b["terms_fractional"].items():
        out.append(f"  {name:<{width - 2}}  {val: .6e}")
    out.append("omitted terms (size, fractional):")
    for term in b["omitted_terms"]:
        out.append(f"  {term['term']:<{width + 16}}  {term['size_fractional']:.1e}")
    out.append("")
    out.append(b["caution"])
    return "\n".join(out)


def cmd_budget(args) -> int:
    from .schemas import BudgetRequest
    from .service import budget_from_request

    try:
        req = BudgetRequest.model_validate(_load_json(args.request))
    except (OSError, json.JSONDecodeError) as exc:
        print(f"cannot read {args.request}: {exc}", file=sys.stderr)
        return 2
    except ValidationError as exc:
        print(_fmt_validation(exc), file=sys.stderr)
        return 2
    try:
        result = budget_from_request(req)
    except PhysicsInputError as exc:
        print(f"invalid request: {exc.field} = {exc.value!r}: {exc.reason}", file=sys.stderr)
        return 2
    if args.json:
        json.dump(result, sys.stdout, indent=2)
        sys.stdout.write("\n")
    else:
        print(render_table(result))
    return 0


def cmd_serve(args) -> int:
    import uvicorn

    uvicorn.run("app.main:app", host=args.host, port=args.port, workers=args.workers,
                log_level=args.log_level)
    return 0


def build_parser() -> argparse.ArgumentParser:
    from .settings import get_settings

    s = get_settings()
    p = argparse.ArgumentParser(prog="taubudget", description="Relativistic clock drift budgets.")
    sub = p.add_subparsers(dest="verb", required=True)
    b = sub.add_parser("budget", help="compute a budget from a request JSON file ('-' for stdin)")
    b.add_argument("request")
    b.add_argument("--json", action="store_true", help="print the response JSON")
    b.set_defaults(func=cmd_budget)
    sv = sub.add_parser("serve", help="run the HTTP service")
    sv.add_argument("--host", default=s.DEFAULT_HOST)
    sv.add_argument("--port", type=int, default=s.DEFAULT_PORT)
    sv.add_argument("--workers", type=int, default=1)
    sv.add_argument("--log-level", default="info")
    sv.set_defaults(func=cmd_serve)
    return p


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    return args.func(args)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
