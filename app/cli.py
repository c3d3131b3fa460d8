"""Command line: ``taubudget budget REQUEST.json``, ``taubudget stability FILE``,
``taubudget clock-residuals CLOCKFILE``, ``taubudget serve``.

The budget verb reads the same JSON body as ``POST /v1/budgets`` and prints a
readable table, or with ``--json`` exactly the response JSON; ``--orbit-file``
takes the orbit from an orbit file (type detected) as a multipart upload does.
Exit codes: 0 success, 2 bad input (the message names the field and the reason).
"""

from __future__ import annotations

import argparse
import json
import os
import sys

from pydantic import ValidationError
from taubudget.physics.errors import PhysicsInputError

from .input_hints import hint, json_decimal_comma_hint
from .plain_text import TEXT_WIDTH, fill, key_value_lines, wrap
from .present.errors import shown


def _load_json(path: str):
    if path == "-":
        text = sys.stdin.read()
    else:
        with open(path, encoding="utf-8") as fh:
            text = fh.read()
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        comma = json_decimal_comma_hint(exc.doc, exc.pos)
        if comma is None:
            raise
        raise json.JSONDecodeError(f"{exc.msg}; {comma}", exc.doc, exc.pos) from None


def _fmt_validation(exc: ValidationError) -> str:
    lines = []
    for err in exc.errors():
        loc = ".".join(str(p) for p in err["loc"])
        lines.append(f"  {loc or '(body)'}: {hint(err) or err['msg']}")
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
    if ec.get("applicable", True):
        rows.append(("eccentricity term", f"{ec['amplitude_ns']:.6f} ns amplitude"))
        residual_label = "after user correction"
    else:
        rows.append(("eccentricity term", "not offered for this clock (no orbit around its centre "
                     "to correct)"))
        residual_label = "after preset only"
    rows += [
        (residual_label, f"{ec['residual_after_correction_ns']:.6f} ns max residual"),
        ("integration error", f"{b['integration_error_estimate_ps']:.3g} ps (estimate), "
         f"{b['nodes_used']} nodes"),
    ]
    width = max(len(k) for k, _ in rows)
    out = key_value_lines(rows, width)
    out.append("")
    out += wrap("rate terms (fractional; --json also keeps the round-1 names in terms_fractional):", 2)
    terms = b.get("rate_terms_fractional") or b["terms_fractional"]
    name_width = max(width - 2, *(len(name) for name in terms))
    for name, val in terms.items():
        out.append(f"  {name:<{name_width}}  {val: .6e}")
    if b.get("frame") == "BCRS":
        out += wrap(f"frame: BCRS. {b.get('tt_convention', '')}", 2)
        if b.get("position_term"):
            out += wrap(f"position term v_B.(x - x_B)/c^2: {b['position_term']['amplitude_ns']:.3f} ns "
                        "amplitude (in the offset and the max residual; not in the periodic amplitude, "
                        "which is the clock's own)", 2)
    out.append("omitted terms (size, fractional):")
    term_width = max(width + 16, *(len(term["term"]) for term in b["omitted_terms"]))
    for term in b["omitted_terms"]:
        out.append(f"  {term['term']:<{term_width}}  {term['size_fractional']:.1e}")
    ce = b.get("clock_error")
    if ce:
        out.append("")
        out += _clock_rows(ce, width)
    for warning in b.get("warnings") or []:
        out += wrap(f"warning: {warning}", 2)
    out.append("")
    out.append(fill(b["caution"]))
    return "\n".join(out)


def _clock_rows(ce: dict, width: int) -> list[str]:
    m = ce["clock_model"]
    rows = [
        ("clock model", f"{m['name']} ({m['source']})"),
        ("", m["label"] if m["source"] != "preset" else "typical values, replace with your unit's data"),
        (f"at {ce['elapsed_s'] / 86400:.6f} d after sync", ""),
        ("  relativistic residual",
         f"{ce['relativistic_residual_ns']:.6f} ns ({ce['relativistic_residual']})"),
        ("  ageing", f"{ce['ageing_ns']:.6f} ns"),
        ("  initial frequency", f"{ce['initial_frequency_ns']:.6f} ns"),
        ("  initial offset", f"{ce['initial_time_offset_ns']:.6f} ns"),
        ("  deterministic", f"{ce['deterministic_ns']:.6f} ns"),
        ("  stochastic 1-sigma", f"{ce['stochastic_1sigma_ns']:.6f} ns"),
        (f"  {ce['k_sigma']:g}-sigma bound", f"{ce['k_sigma_bound_ns']:.6f} ns"),
    ]
    if ce.get("time_error_budget_ns") is not None:
        t_free = ce["max_free_running_s"]
        if t_free is None:
            horizon_d = (ce.get("free_running_search_horizon_s") or ce["elapsed_s"]) / 86400
            free = f"budget not reached within {horizon_d:g} d"
        else:
            free = f"{t_free:.1f} s ({t_free / 3600:.3f} h)"
        rows.append((f"max free-running ({ce['time_error_budget_ns']:g} ns)", free))
        if ce.get("max_free_running_beyond_span"):
            rows.append(("", "beyond the span: relativistic residual continued from its fit"))
    w = max(width, *(len(k) for k, _ in rows))
    return ["clock error (clock minus reference, sync at the span start):"] + key_value_lines(rows, w)


_STAT_COLUMNS = (("mdev", "mdev"), ("tdev_s", "tdev (s)"), ("hdev", "hdev"))

def render_stability(r: dict) -> str:
    """A plain-text deviations table for a terminal (under 100 columns)."""
    out = [f"{r['n_samples']} {r['data_type']} samples at {r['sample_interval_s']:g} s"]
    out += _deviation_lines(r["deviations"])
    out.append("")
    notes = [f"noise: power-law type identified at each tau (lag-1 autocorrelation); bounds: OADEV at "
             f"{r['confidence']:g} confidence. ADEV, OHDEV and every bound, term count and EDF: --json."]
    if r.get("clock_block") is not None:
        notes.append("clock block: --json gives 'clock_block' for a budget's clock "
                     "(taubudget budget REQUEST --clock-from STABILITY_JSON).")
    out += [fill(n) for n in notes]
    out += ["", fill(r["caution"])]
    return "\n".join(out)


def _noise_name(row: dict) -> str:
    from taubudget.physics.clock import NOISE_NAMES

    if row.get("noise_type"):
        return row["noise_type"]
    alpha = row.get("noise_alpha")
    return "-" if alpha is None else NOISE_NAMES.get(int(round(alpha)), "-")


def _deviation_lines(rows: list[dict]) -> list[str]:
    """tau, noise type, OADEV with its bounds, MDEV, TDEV, HDEV: 97 columns."""
    head = (f"{'tau_s':>10}  {'noise':<14}  {'oadev':>10}  {'oadev bounds':<21}"
            + "".join(f"  {label:>10}" for _, label in _STAT_COLUMNS))
    out = [head]
    for row in rows:
        value, lo, hi = row["oadev"], row["oadev_lower"], row["oadev_upper"]
        lo_t, hi_t = ("-" if b is None else f"{b:.3g}" for b in (lo, hi))
        bounds = "" if value is None else f"[{lo_t}, {hi_t}]"
        cells = [f"{row['tau_s']:>10.6g}  {_noise_name(row):<14}  "
                 f"{'-' if value is None else f'{value:.4g}':>10}  {bounds:<21}"]
        for key, _ in _STAT_COLUMNS:
            v = row[key]
            cells.append(f"  {'-' if v is None else f'{v:.4g}':>10}")
        out.append("".join(cells).rstrip())
    return out


def cmd_stability(args) -> int:
    from .column_text import ColumnError, parse_column
    from .services.stability import stability_from_data

    try:
        if args.file == "-":
            text = sys.stdin.read()
        else:
            with open(args.file, encoding="utf-8-sig") as fh:
                text = fh.read()
        column = parse_column(text)
    except (OSError, UnicodeDecodeError) as exc:
        print(f"cannot read {args.file}: {exc}", file=sys.stderr)
        return 2
    except ColumnError as exc:
        print(f"invalid data in {args.file}: {exc}", file=sys.stderr)
        return 2
    meta = column.metadata
    data_type = args.data_type or meta.get("data_type", "phase")
    if data_type not in ("phase", "frequency"):
        print(f"invalid data_type {data_type!r}: use phase or frequency", file=sys.stderr)
        return 2
    tau0 = args.sample_interval_s
    if tau0 is None:
        try:
            tau0 = float(meta["sample_interval_s"])
        except (KeyError, ValueError):
            print("give --sample-interval-s (or a '# sample_interval_s: S' line in the file)",
                  file=sys.stderr)
            return 2
    try:
        result = stability_from_data(column.values, data_type, tau0, args.confidence)
    except PhysicsInputError as exc:
        return _physics_failure(exc, "invalid input")
    _plot(args.plot, "stability", result)
    if args.json:
        _print_json(result)
    else:
        print(render_stability(result))
    return 0


def _figure_path(path: str) -> str:
    """argparse type of --plot: the format comes from the extension, checked before any work."""
    from .present.figures import figure_format

    try:
        figure_format(path)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from exc
    return path


def _plot(path: str | None, kind: str, result: dict) -> None:
    """Write the result's figure (matplotlib; SVG or PNG by extension) when --plot was given."""
    if path is None:
        return
    from .present import figures

    draw = {"budget": figures.budget_figure, "contacts": figures.contact_plan_figure,
            "stability": figures.stability_figure}[kind]
    figures.write_figure(path, draw(result))
    print(f"figure written to {path}", file=sys.stderr)


def _print_json(obj) -> None:
    json.dump(obj, sys.stdout, indent=2)
    sys.stdout.write("\n")


def _physics_failure(exc: PhysicsInputError, what: str) -> int:
    """Print a physics input error naming the field, value and reason; the exit code for bad input."""
    field, value, reason = shown(exc)
    given = "" if value is None else f" = {value!r}"
    print(f"{what}: {field or 'the request'}{given}: {reason}", file=sys.stderr)
    return 2


def _read_text(path: str) -> str:
    with open(path, encoding="utf-8-sig") as fh:
        return fh.read()


def _with_orbit_file(body, args):
    """The request with its orbit taken from ``args.orbit_file`` (options kept from the request)."""
    from .formats.files import orbit_from_file

    if not isinstance(body, dict):
        raise ValueError("the request must be a JSON object")
    options = body.get("orbit", {})
    if not isinstance(options, dict):
        raise ValueError("with --orbit-file, 'orbit' may only hold the orbit's options")
    options = {k: v for k, v in options.items() if k not in ("type", "text")}
    if args.object_id is not None:
        options["object_id"] = args.object_id
    return {**body, "orbit": orbit_from_file(_read_text(args.orbit_file), args.orbit_type, options)}


def cmd_budget(args) -> int:
    from .formats import FormatError
    from .schemas import BudgetRequest
    from .services.budget import budget_from_request

    try:
        body = _load_json(args.request)
        if args.orbit_file is not None:
            body = _with_orbit_file(body, args)
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        print(f"cannot read {args.request}: {exc}", file=sys.stderr)
        return 2
    except FormatError as exc:
        print(f"invalid orbit file {args.orbit_file}: {exc}", file=sys.stderr)
        return 2
    except ValueError as exc:  # a request that is not an object, or an orbit that is not options
        print(f"invalid request: {exc}", file=sys.stderr)
        return 2
    if args.clock_from is not None:
        try:
            body = _with_clock_from(body, args.clock_from)
        except ValueError as exc:
            print(exc, file=sys.stderr)
            return 2
    try:
        req = BudgetRequest.model_validate(body)
    except ValidationError as exc:
        print(_fmt_validation(exc), file=sys.stderr)
        return 2
    try:
        result = budget_from_request(req)
    except PhysicsInputError as exc:
        return _physics_failure(exc, "invalid request")
    _plot(args.plot, "budget", result)
    if args.json:
        _print_json(result)
    elif args.csv:
        from .csv_format import budget_csv_text

        sys.stdout.write(budget_csv_text(result))
    else:
        print(render_table(result))
    return 0


def _with_clock_from(body, path: str) -> dict:
    """The request with its clock noise taken from the stability result in ``path`` (its
    ``clock_block``); ValueError with the message to print if the file cannot serve.

    The request's own clock keys other than the noise (drift_per_day, initial offsets, f_h_hz)
    are kept; preset, h_alpha and adev_points are replaced.
    """
    try:
        stability = _load_json(path)
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ValueError(f"cannot read {path}: {exc}") from None
    if not isinstance(body, dict):
        raise ValueError("invalid request: it is not a JSON object")
    block = stability.get("clock_block") if isinstance(stability, dict) else None
    if not isinstance(block, dict):
        raise ValueError(f"invalid stability result {path}: it has no 'clock_block' (write it with "
                         "'taubudget stability --json' or POST /v1/clock-stability)")
    own = body.get("clock") or {}
    if not isinstance(own, dict):
        raise ValueError("invalid request: its 'clock' is not an object")
    kept = {k: v for k, v in own.items() if k not in ("preset", "h_alpha", "adev_points")}
    return {**body, "clock": {**block, **kept}}


def _utc_seconds(iso: str) -> str:
    """'2027-03-01T09:02:30.792643Z' -> '2027-03-01T09:02:30Z' (the table's resolution)."""
    return iso.split(".")[0].rstrip("Z") + "Z"


def _day_and_time(iso: str) -> tuple[str, str]:
    """'2027-03-01T09:02:30.792643Z' -> ('2027-03-01', '09:02:30'): the UTC date and the time of
    day truncated to the second (a leap second's :60 is kept)."""
    day, _, clock = _utc_seconds(iso).rstrip("Z").partition("T")
    return day, clock


def _los_text(aos_day: str, los_iso: str) -> str:
    """The LOS time of day, with '+Nd' when it falls N days after the AOS date."""
    from datetime import date

    day, clock = _day_and_time(los_iso)
    later = (date.fromisoformat(day) - date.fromisoformat(aos_day)).days
    return clock if later == 0 else f"{clock}+{later}d"


_PASS_COLUMNS_FIXED = 8 + 2 + 2 + (1 + 6) * 2 + (1 + 12) + 1 + (1 + 4) + (1 + 11)
"""Columns of the pass table besides the station, the LOS and the synced-bound fields."""


def _pass_table(plan: dict, synced: str) -> tuple[list[str], bool]:
    """The pass table: a header, then per pass station, AOS and LOS as UTC times of day under a
    line naming the AOS date whenever it changes, duration, maximum elevation, free-running
    offset, bound with syncs, sync flag and bound just before the sync. Station names longer
    than the room left in TEXT_WIDTH are cut and end in '~' (the second value is whether any
    was)."""
    rows = []
    for p in plan["passes"]:
        day, aos = _day_and_time(p["aos_utc"])
        rows.append((p, day, aos, _los_text(day, p["los_utc"])))
    los_w = max(len("LOS UTC"), *(len(r[3]) for r in rows)) if rows else len("LOS UTC")
    synced_w = max(14, len(synced) + 1)
    room = TEXT_WIDTH - _PASS_COLUMNS_FIXED - los_w - synced_w
    longest = max((len(p["station"]) for p in plan["passes"]), default=0)
    station_w = max(len("station"), min(longest, room))
    cut = longest > station_w

    def station(name: str) -> str:
        return name if len(name) <= station_w else name[:station_w - 1] + "~"

    head = (f"{'station':<{station_w}}  {'AOS UTC':<8}  {'LOS UTC':<{los_w}} {'dur s':>6} {'max el':>6} "
            f"{'free-run ns':>12} {synced:>{synced_w}} {'sync':>4} {'pre-sync ns':>11}")
    out, current = [head], None
    for p, day, aos, los in rows:
        if day != current:
            out.append(f"-- {day} UTC ".ljust(len(head), "-"))
            current = day
        bound, before = p.get("bound_at_aos_with_syncs_ns"), p.get("bound_before_sync_ns")
        bound_text = "" if bound is None else f"{bound:.3f}"
        before_text = "" if before is None else f"{before:.3f}"
        out.append(f"{station(p['station']):<{station_w}}  {aos:<8}  {los:<{los_w}} {p['duration_s']:6.0f} "
                   f"{p['max_elevation_deg']:6.2f} {p['offset_at_aos_ns']:12.3f} "
                   f"{bound_text:>{synced_w}} {_sync_mark(p):>4} {before_text:>11}".rstrip())
    return out, cut


def _sync_mark(p: dict) -> str:
    """The pass table's sync column: '' (no sync), 'yes' (one) or the number of syncs in the pass."""
    count = p.get("sync_count", 1 if p.get("used_for_sync") else 0)
    if not p.get("used_for_sync"):
        return ""
    return "yes" if count <= 1 else str(count)


SYNC_LIST_LINES = 50
"""Most syncs the text lists one per line (--json and --csv give them all)."""


def _sync_table(plan: dict) -> list[str]:
    """The policy's syncs one per line (time, station, hours since the previous sync, bound just
    before it), printed when a pass holds several of them (a long pass under fixed_interval)."""
    k = plan["k_sigma"]
    syncs = plan["syncs"]
    head = f"{'sync UTC':<20}  {'h since prev':>12}  {f'{k:g}sig pre-sync ns':>18}  station"
    out = [f"syncs by the policy ({len(syncs)}; some passes hold several):", head]
    room = TEXT_WIDTH - len(head) + len("station")
    for s in syncs[:SYNC_LIST_LINES]:
        name = s["station"] if len(s["station"]) <= room else s["station"][:room - 1] + "~"
        out.append(f"{_utc_seconds(s['time_utc']):<20}  {s['time_since_previous_sync_s'] / 3600:12.3f}  "
                   f"{s['bound_before_sync_ns']:18.3f}  {name}")
    if len(syncs) > SYNC_LIST_LINES:
        out.append(f"... {len(syncs) - SYNC_LIST_LINES} more (--json and --csv give them all)")
    return out


def _recommended_syncs(rec: dict) -> list[str]:
    """The recommended syncs in words, when the recommendation syncs more than once in a pass."""
    syncs = rec.get("syncs") or []
    if (rec.get("max_syncs_in_one_pass") or 0) <= 1 or not syncs:
        return []
    shown = ", ".join(f"{_utc_seconds(s['time_utc'])} {s['station']}" for s in syncs[:SYNC_LIST_LINES])
    more = f", ... {len(syncs) - SYNC_LIST_LINES} more (--json)" if len(syncs) > SYNC_LIST_LINES else ""
    return wrap(f"recommended syncs (inside passes): {shown}{more}", 2)


def _legend(label: str, text: str) -> list[str]:
    return wrap(f"{label}: {text}", 2)


def render_contacts(plan: dict) -> str:
    """A plain-text summary of a contact plan (every line within TEXT_WIDTH columns)."""
    k = plan["k_sigma"]
    synced = f"{k:g}sig w/ syncs"
    out = wrap(f"span {_utc_seconds(plan['start_utc'])} .. {_utc_seconds(plan['end_utc'])} "
               f"({plan['span_s'] / 86400:g} d); times in UTC, truncated to the second", 2)
    table, cut = _pass_table(plan, synced)
    out += [""] + table + [""]
    station = "ground station" + ("; a name ending in '~' is cut to fit (--json and --csv give it in "
                                  "full)" if cut else "")
    legend = [
        ("station", station),
        ("-- YYYY-MM-DD UTC --", "the UTC date of the AOS times below it"),
        ("AOS UTC, LOS UTC", "acquisition and loss of signal (the elevation crossing the station's "
         "mask, or the span's start or end where it cuts the pass), time of day HH:MM:SS; '+Nd': LOS N "
         "days after the AOS date"),
        ("dur s", "duration of the pass, s"),
        ("max el", "maximum elevation in the pass, deg"),
        ("free-run ns", "offset at AOS running free since the span start, ignoring every sync"),
        (synced, f"|time error| + {k:g} sigma at AOS with the plan's syncs applied"),
        ("sync", "'yes' where the plan syncs in that pass, or how many times it syncs in it"),
        ("pre-sync ns", f"|time error| + {k:g} sigma just before the sync at that pass (the largest, "
         "if it holds several)"),
    ]
    for label, text in legend:
        out += _legend(label, text)
    rec = plan.get("recommendation") or {}
    out += [""] + wrap(
        f"syncs: {len(plan['syncs'])}   worst error: {plan['worst_error_ns']:.3f} ns   "
        f"worst gap: {plan['worst_gap_s']:.0f} s   budget {plan['time_error_budget_ns']:g} ns at "
        f"{k:g} sigma: {'met' if plan['meets_budget'] else 'NOT met'}", 2)
    if rec.get("summary"):
        out += wrap(f"recommendation: {rec['summary']}", 2)
    out += _recommended_syncs(rec)
    if plan["syncs"]:
        worst = max(plan["syncs"], key=lambda s: s["bound_before_sync_ns"])
        out += wrap(f"largest error just before a sync: {worst['bound_before_sync_ns']:.3f} ns "
                    f"({k:g} sigma) at {_utc_seconds(worst['time_utc'])}, {worst['station']}", 2)
    if any((p.get("sync_count") or 0) > 1 for p in plan["passes"]):
        out += [""] + _sync_table(plan)
    out += ["", fill(plan["caution"])]
    return "\n".join(out)


def cmd_contacts(args) -> int:
    from .csv_format import passes_csv
    from .schemas import ContactPlanRequest
    from .services.contacts import contact_plan_from_request

    try:
        req = ContactPlanRequest.model_validate(_load_json(args.request))
    except (OSError, json.JSONDecodeError) as exc:
        print(f"cannot read {args.request}: {exc}", file=sys.stderr)
        return 2
    except ValidationError as exc:
        print(_fmt_validation(exc), file=sys.stderr)
        return 2
    try:
        plan = contact_plan_from_request(req)
    except PhysicsInputError as exc:
        return _physics_failure(exc, "invalid request")
    _plot(args.plot, "contacts", plan)
    if args.json:
        _print_json(plan)
    elif args.csv:
        sys.stdout.write(passes_csv(plan))
    else:
        print(render_contacts(plan))
    return 0


def render_clock_residuals(r: dict) -> str:
    """A plain-text summary of a clock-residual analysis for a terminal."""
    amp = r["residual_periodic_amplitude_ns"]
    rows = [
        ("satellite", f"{r['sat']} ({r['clock_file']['label']}, {r['points']} points from {r['start_utc']}, "
                      f"{r['span_s'] / 86400:.6f} d)"),
        ("orbit", r["orbit"].get("source") or r["orbit"].get("propagation") or r["orbit"]["type"]),
        ("periodic term", "in the data: subtracted" if r["periodic_term_in_data"]
         else "not in the data (IGS convention): nothing subtracted"),
        ("secular rate", f"{r['secular_fractional_rate']:.6e} ({r['secular_rate_us_per_day']:.6f} us/day)"),
        ("offset at start", f"{r['offset_at_start_ns']:.6f} ns (clock minus reference)"),
        ("-(2/c^2) r.v amplitude", f"{r['periodic_term_amplitude_ns']:.6f} ns"),
        ("residual RMS", f"{r['residual_rms_ns']:.6g} ns "
                         f"(peak-to-peak {r['residual_peak_to_peak_ns']:.6g} ns)"),
    ]
    if r["orbital_period_s"] is not None and amp:
        rows.append(("residual periodic", f"{amp['orbital_period']:.6g} ns at the orbital period "
                     f"({r['orbital_period_s']:.1f} s), {amp['half_orbital_period']:.6g} ns at half of it"))
    else:
        rows.append(("residual periodic", "not fitted (the data span less than one orbital period)"))
    if r["epochs_without_orbit"]:
        rows.append(("epochs without orbit", f"{r['epochs_without_orbit']} (left out)"))
    out = key_value_lines(rows)
    out += [""] + wrap("assumption: " + r["assumption"], 2)
    if r.get("deviations"):
        out += ["", "deviations of the residual (phase, s):"] + _deviation_lines(r["deviations"])
    out += ["", fill(r["note"]), "", fill(r["caution"])]
    return "\n".join(out)


def cmd_clock_residuals(args) -> int:
    from .measured_clock import clock_residuals_from_texts

    try:
        clock_text = _read_text(args.clock_file)
        orbit_text = None if args.orbit is None else _read_text(args.orbit)
    except (OSError, UnicodeDecodeError) as exc:
        print(f"cannot read: {exc}", file=sys.stderr)
        return 2
    try:
        result = clock_residuals_from_texts(
            clock_text, orbit_text, args.sat, periodic_term_in_data=args.periodic_term_in_data,
            orbit_type=args.orbit_type, orbit_object_id=args.orbit_object_id)
    except PhysicsInputError as exc:
        field, value, reason = shown(exc)
        # the file a field belongs to (orbit_file.text is the orbit file's text), by its path
        name = {"clock_file": args.clock_file, "orbit_file": args.orbit}.get((field or "").split(".")[0])
        where = f"{field} {name}" if name else field
        given = "" if value is None else f" = {value!r}"
        print(f"invalid input: {where}{given}: {reason}", file=sys.stderr)
        return 2
    if args.json:
        _print_json(result)
    else:
        print(render_clock_residuals(result))
    return 0


def cmd_serve(args) -> int:
    import uvicorn

    from .server import uvicorn_options
    from .settings import get_settings

    uvicorn.run("taubudget.app.main:app", host=args.host, port=args.port, workers=args.workers,
                log_level=args.log_level, **uvicorn_options(get_settings()))
    return 0


_PLOT_HELP = "also write the figures to FILE (.svg or .png)"


def build_parser() -> argparse.ArgumentParser:
    from .formats.files import FILE_TYPES
    from .measured_clock import PERIODIC_TERM_IN_DATA_DEFAULT
    from .settings import get_settings

    s = get_settings()
    p = argparse.ArgumentParser(prog="taubudget", description="Relativistic clock drift budgets.")
    sub = p.add_subparsers(dest="verb", required=True)
    b = sub.add_parser("budget", help="compute a budget from a request JSON file ('-' for stdin)")
    b.add_argument("request", metavar="REQUEST",
                   help="budget request as JSON (the body of POST /v1/budgets; see sample_orbits/), "
                   "a file path or '-' for stdin")
    b_fmt = b.add_mutually_exclusive_group()
    b_fmt.add_argument("--json", action="store_true", help="print the response JSON")
    b_fmt.add_argument("--csv", action="store_true",
                       help="print CSV: the summary (field,value rows), then the series when the "
                       "request has series_step_s (as GET /v1/budgets.csv)")
    b.add_argument("--clock-from", metavar="STABILITY_JSON", default=None,
                   help="take the clock's noise from a stability result ('taubudget stability --json' "
                   "or POST /v1/clock-stability); the request's clock block, if any, keeps its drift "
                   "and offsets")
    b.add_argument("--plot", metavar="FILE", type=_figure_path, help=_PLOT_HELP)
    b.add_argument("--orbit-file", default=None,
                   help="take the orbit from this file (OMM, OPM, OEM, SP3, TLE; type detected); the "
                   "request's 'orbit', if any, holds only options such as object_id")
    b.add_argument("--orbit-type", choices=FILE_TYPES, default=None, help="the orbit file's type")
    b.add_argument("--object-id", default=None, help="which object, when the orbit file holds several")
    b.set_defaults(func=cmd_budget)
    cr = sub.add_parser("clock-residuals",
                        help="secular rate and residual periodic part of measured clock offsets")
    cr.add_argument("clock_file", metavar="CLOCKFILE",
                    help="RINEX clock file (3.02/3.04 AS records) or SP3 file (its clock column)")
    cr.add_argument("--orbit", metavar="ORBITFILE", default=None,
                    help="orbit file (SP3, OEM, OPM, OMM, TLE); default: CLOCKFILE when it is SP3")
    cr.add_argument("--orbit-type", choices=FILE_TYPES, default=None, help="the orbit file's type")
    cr.add_argument("--orbit-object-id", default=None,
                    help="the object in the orbit file when it is named otherwise than --sat")
    cr.add_argument("--sat", required=True, help="satellite ID as in the clock file (e.g. L51)")
    cr.add_argument("--periodic-term-in-data", action=argparse.BooleanOptionalAction,
                    default=PERIODIC_TERM_IN_DATA_DEFAULT,
                    help="whether the clock values still carry the relativistic periodic term "
                    "-(2/c^2) r.v; default: no, the IGS convention for clock products (Kouba 2004)")
    cr.add_argument("--json", action="store_true", help="print the result JSON")
    cr.set_defaults(func=cmd_clock_residuals)
    st = sub.add_parser("stability", help="ADEV, OADEV, MDEV, TDEV, HDEV of one column of measured data")
    st.add_argument("file", help="one number per line ('#' comments; '-' for stdin)")
    st.add_argument("--data-type", choices=("phase", "frequency"), default=None,
                    help="phase (s) or fractional frequency; default: the file's header, else phase")
    st.add_argument("--sample-interval-s", type=float, default=None,
                    help="sample interval, s; default: the file's '# sample_interval_s:' line")
    st.add_argument("--confidence", type=float, default=0.683, help="two-sided confidence of the bounds")
    st.add_argument("--json", action="store_true", help="print the response JSON")
    st.add_argument("--plot", metavar="FILE", type=_figure_path, help=_PLOT_HELP)
    st.set_defaults(func=cmd_stability)
    c = sub.add_parser("contacts", help="plan ground contacts and resynchronisation from a request JSON file")
    c.add_argument("request", metavar="REQUEST",
                   help="contact-plan request as JSON (the body of POST /v1/contact-plans; see "
                   "sample_orbits/contact_plan_*.json), a file path or '-' for stdin")
    fmt = c.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true", help="print the response JSON")
    fmt.add_argument("--csv", action="store_true", help="print the pass table as CSV")
    c.add_argument("--plot", metavar="FILE", type=_figure_path, help=_PLOT_HELP)
    c.set_defaults(func=cmd_contacts)
    sv = sub.add_parser("serve", help="run the HTTP service")
    sv.add_argument("--host", default=s.DEFAULT_HOST)
    sv.add_argument("--port", type=int, default=s.DEFAULT_PORT)
    sv.add_argument("--workers", type=int, default=1)
    sv.add_argument("--log-level", default="info")
    sv.set_defaults(func=cmd_serve)
    from .study_cli import add_parsers as add_study_parsers

    add_study_parsers(sub)  # study submit|watch|results|list|cancel, batch
    return p


SIGPIPE_EXIT_STATUS = 128 + 13
"""Exit status of a Unix tool stopped by SIGPIPE (128 + signal 13), e.g. under '| head'."""


def main(argv: list[str] | None = None) -> int:
    args = build_parser().parse_args(argv)
    try:
        status = args.func(args)
        sys.stdout.flush()
        return status
    except BrokenPipeError:
        # The reader closed the pipe (e.g. '| head'): stop quietly, as Unix tools do. Point stdout at
        # devnull so the interpreter's final flush does not raise again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return SIGPIPE_EXIT_STATUS


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
