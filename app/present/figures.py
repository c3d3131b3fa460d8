"""Figures of a budget, a contact plan or a stability result, drawn with matplotlib from the
response JSON (the same dict the API returns and the page draws), for ``--plot FILE`` and the
image routes ``GET /v1/budgets.svg`` / ``.png``.

Every figure carries a title naming the reference, the span, axis labels with units and the
caution. Matplotlib's object API is used (no pyplot, no global backend), so drawing is safe in
the service's worker threads. SVG text stays text and each plotted series is a group whose id
names it (``series-...``), so scripts and tests can find the series and labels in the file.
"""

from __future__ import annotations

import io
import textwrap
from collections.abc import Callable
from datetime import datetime
from pathlib import Path

import matplotlib
import numpy as np
from matplotlib.figure import Figure

MEDIA_TYPES = {"svg": "image/svg+xml", "png": "image/png"}
BUDGET_PLOTS = ("all", "offset", "terms", "periodic", "envelope")
PLAN_PLOTS = ("all", "passes", "envelope")
COLORS = ("#1b7f79", "#b4532a", "#6b4e9b", "#123f4a", "#c28a1e", "#4d7f2a", "#8c3b62")
PNG_DPI = 110
_STYLE = {
    "svg.fonttype": "none",  # text as <text>, searchable
    "svg.hashsalt": "taubudget",  # stable ids: the same result gives the same file
    "path.simplify": False,  # one vertex per data point
    "font.family": "DejaVu Sans",  # ships with matplotlib
    "font.size": 9,
    "axes.prop_cycle": matplotlib.cycler(color=COLORS),
}


class FigureUnavailable(ValueError):
    """The result lacks what a figure needs; ``field`` names the request field that would give it."""

    def __init__(self, plot: str, field: str, reason: str):
        super().__init__(f"plot={plot} {reason}")
        self.plot, self.field, self.reason = plot, field, reason


def figure_format(path: str) -> str:
    """'svg' or 'png' from a file name's extension; ValueError for any other."""
    fmt = Path(path).suffix.lower().lstrip(".")
    if fmt not in MEDIA_TYPES:
        raise ValueError(f"{path}: the figure's format comes from its extension, .svg or .png")
    return fmt


def render(fig: Figure, fmt: str) -> bytes:
    """The figure as SVG or PNG bytes."""
    buf = io.BytesIO()
    with matplotlib.rc_context(_STYLE):
        fig.savefig(buf, format=fmt, dpi=PNG_DPI, metadata={"Date": None} if fmt == "svg" else None)
    return buf.getvalue()


# --- Common pieces ---------------------------------------------------------------------------


def _reference(result: dict) -> str:
    ref = result.get("reference") or result.get("model", {}).get("reference")
    return ref if isinstance(ref, str) else "a ground clock"


def _span(result: dict) -> str:
    return f"{result['start_utc']} to {result['end_utc']} ({result['span_s'] / 86400:.3f} d)"


def _days(elapsed_s) -> np.ndarray:
    return np.asarray(elapsed_s, dtype=float) / 86400.0


def _days_since(result: dict, utc: str) -> float:
    """Days from the span start to an ISO UTC time of the result (UTC days: no leap second falls
    in a planning span, and a figure could not show one)."""
    return (datetime.fromisoformat(utc) - datetime.fromisoformat(result["start_utc"])).total_seconds() / 86400


def _time_label(result: dict) -> str:
    return f"time since {result['start_utc']}, days"


def _line(ax, x, y, gid: str, **kw):
    (line,) = ax.plot(x, y, **kw)
    line.set_gid(f"series-{gid}")
    return line


def _new_figure(panels: int, title: str, result: dict, caution: str) -> tuple[Figure, list]:
    with matplotlib.rc_context(_STYLE):
        fig = Figure(figsize=(9.5, 1.2 + 3.0 * panels), layout="constrained")
        axes = [fig.add_subplot(panels, 1, i + 1) for i in range(panels)]
    fig.suptitle(f"{title}\nreference {_reference(result)}, span {_span(result)}", fontsize=10)
    fig.get_layout_engine().set(h_pad=0.12)
    fig.supxlabel("\n".join(textwrap.wrap("Caution: " + caution, 150)), fontsize=6.5, color="#5b6a70")
    return fig, axes


def _needs_series(b: dict, plot: str) -> dict:
    if not b.get("series"):
        raise FigureUnavailable(plot, "series_step_s", "needs a series: give series_step_s")
    return b["series"]


# --- Budget panels -----------------------------------------------------------------------------


def _offset(ax, b: dict) -> None:
    s = _needs_series(b, "offset")
    t = _days(s["elapsed_s"])
    # After the preset: the periodic part referred to zero at the sync at the span start (the
    # preset line passes through it); after correction: less the change of the (absolute)
    # eccentricity term since then, as physics' after_correction_s.
    after_preset = np.asarray(s["periodic_ns"]) - s["periodic_ns"][0]
    ecc = np.asarray(s["eccentricity_term_ns"])
    after_correction = after_preset - (ecc - ecc[0])
    raw = _line(ax, t, s["offset_ns"], "raw-offset", label="raw offset (left axis)")
    ax.set_ylabel("raw offset, ns")
    ax.set_xlabel(_time_label(b))
    ax.set_title("Offset, clock minus reference")
    right = ax.twinx()
    a = _line(right, t, after_preset, "after-preset", color=COLORS[1], label="after the preset (right)")
    c = _line(right, t, after_correction, "after-correction", color=COLORS[2], linestyle="--",
              label="after the preset and the eccentricity correction (right)")
    right.set_ylabel("after preset / correction, ns")
    ax.legend(handles=[raw, a, c], loc="upper left", fontsize=7)


def _terms(ax, b: dict) -> None:
    names = list(b["terms_fractional"])
    values = [b["terms_fractional"][n] for n in names]
    bars = ax.barh(names, values, color=COLORS[0])
    for name, bar in zip(names, bars, strict=True):
        bar.set_gid(f"series-terms-{name}")
    ax.axvline(0.0, color="#1d2a30", linewidth=0.6)
    ax.invert_yaxis()
    ax.set_xlabel("fractional rate against the reference (dimensionless)")
    ax.set_title(f"Terms of the mean rate (sum {b['mean_fractional_rate']:.6e}, "
                 f"{b['mean_rate_us_per_day']:.6f} µs/day)")
    for bar, v in zip(bars, values, strict=True):
        ax.annotate(f"{v:.3e}", (bar.get_width(), bar.get_y() + bar.get_height() / 2), fontsize=7,
                    xytext=(3 if v >= 0 else -3, 0), textcoords="offset points", va="center",
                    ha="left" if v >= 0 else "right")


def _periodic(ax, b: dict) -> None:
    s = _needs_series(b, "periodic")
    t = _days(s["elapsed_s"])
    per, ecc = np.asarray(s["periodic_ns"]), np.asarray(s["eccentricity_term_ns"])
    _line(ax, t, per, "periodic", label="periodic part after the preset")
    _line(ax, t, ecc, "eccentricity-term", label="eccentricity term -(2/c²) r·v")
    _line(ax, t, per - ecc, "left-after-correction", linestyle="--", label="left after the correction")
    ax.set_xlabel(_time_label(b))
    ax.set_ylabel("offset, ns")
    ax.set_title(f"Periodic part (amplitude {b['periodic']['amplitude_ns']:.4g} ns; after correction "
                 f"{b['eccentricity_correction']['residual_after_correction_ns']:.4g} ns)")
    ax.legend(loc="upper right", fontsize=7)


def _envelope(ax, b: dict, plan: dict | None = None) -> None:
    env = (plan or {}).get("envelope")
    if env is None:
        ce = b.get("clock_error") if b else None
        if not ce or not ce.get("series"):
            raise FigureUnavailable("envelope", "clock", "needs a clock model and a series step")
        env, k, budget_ns = ce["series"], ce["k_sigma"], ce.get("time_error_budget_ns")
        what = "running free from a sync at the span start"
    else:
        k, budget_ns, what = plan["k_sigma"], plan["time_error_budget_ns"], "with syncs by the policy"
    result = plan or b
    t = _days(env["elapsed_s"])
    _line(ax, t, env["bound_ns"], "bound", label=f"{k:g}-sigma bound |error| + {k:g} sigma")
    if budget_ns is not None:
        ax.axhline(budget_ns, color="#a8231b", linestyle="--", linewidth=1.2, gid="series-budget",
                   label=f"budget {budget_ns:g} ns")
    if plan:
        sync_t = [_days_since(plan, s["time_utc"]) for s in plan["syncs"]]
        before = [s["bound_before_sync_ns"] for s in plan["syncs"]]
        marks = ax.scatter(sync_t, before, s=14, color=COLORS[2], zorder=3, label="syncs (bound just before)")
        marks.set_gid("series-syncs")
    ax.set_xlabel(_time_label(result))
    ax.set_ylabel("|time error|, ns")
    ax.set_title(f"Time error of the clock {what}")
    ax.legend(loc="upper left", fontsize=7)


def _station_names(plan: dict) -> list[str]:
    return list(dict.fromkeys([p["station"] for p in plan["passes"]] + [s["station"] for s in plan["syncs"]]))


def _passes(ax, plan: dict) -> None:
    names = _station_names(plan)
    for k, name in enumerate(names):
        spans = [(_days_since(plan, p["aos_utc"]), p["duration_s"] / 86400) for p in plan["passes"]
                 if p["station"] == name]
        bars = ax.broken_barh(spans, (k + 0.7, 0.6), color=COLORS[k % len(COLORS)])
        bars.set_gid(f"series-passes-{k}")
    syncs = ax.scatter([_days_since(plan, s["time_utc"]) for s in plan["syncs"]],
                       [names.index(s["station"]) + 1 for s in plan["syncs"]], marker="|", s=120,
                       color="#1d2a30", zorder=3, label="syncs")
    syncs.set_gid("series-syncs")
    ax.set_yticks(range(1, len(names) + 1), names)
    ax.set_ylim(0.4, len(names) + 0.6)
    ax.set_xlim(0, plan["span_s"] / 86400)
    ax.set_xlabel(_time_label(plan))
    ax.set_title(f"Passes per station ({len(plan['passes'])} passes, {len(plan['syncs'])} syncs)")
    ax.legend(loc="upper right", fontsize=7)


# --- Public figure builders ---------------------------------------------------------------------

_BUDGET_PANELS: dict[str, Callable] = {"offset": _offset, "terms": _terms, "periodic": _periodic,
                                       "envelope": _envelope}


def budget_figure(b: dict, plot: str = "all") -> Figure:
    """The budget's figure: one panel (``plot``), or with ``all`` every panel the budget can fill."""
    if plot == "all":
        chosen = [name for name in ("offset", "terms", "periodic", "envelope") if _can_draw(b, name)]
    else:
        _BUDGET_PANELS[plot]  # KeyError for an unknown plot
        chosen = [plot]
    fig, axes = _new_figure(len(chosen), "taubudget drift budget, clock minus reference", b, b["caution"])
    for ax, name in zip(axes, chosen, strict=True):
        _BUDGET_PANELS[name](ax, b)
    return fig


def _can_draw(b: dict, name: str) -> bool:
    if name in ("offset", "periodic"):
        return bool(b.get("series"))
    if name == "envelope":
        return bool((b.get("clock_error") or {}).get("series"))
    return True


def contact_plan_figure(plan: dict, plot: str = "all") -> Figure:
    """The contact plan's figure: the passes per station and the time-error envelope with the syncs."""
    chosen = {"all": ["passes", "envelope"], "passes": ["passes"], "envelope": ["envelope"]}[plot]
    fig, axes = _new_figure(len(chosen), "taubudget contact plan", plan, plan["caution"])
    for ax, name in zip(axes, chosen, strict=True):
        _passes(ax, plan) if name == "passes" else _envelope(ax, {}, plan)
    return fig


_DEVIATIONS = (("adev", "ADEV", ""), ("mdev", "MDEV", ""), ("hdev", "HDEV", ""))


def stability_figure(r: dict) -> Figure:
    """The deviations against tau on log-log axes, each with its confidence bounds as error bars."""
    with matplotlib.rc_context(_STYLE):
        fig = Figure(figsize=(8.0, 5.6), layout="constrained")
        ax = fig.add_subplot()
    for i, (key, label, _) in enumerate(_DEVIATIONS):
        rows = [d for d in r["deviations"] if d.get(key) is not None]
        tau = np.array([d["tau_s"] for d in rows])
        v = np.array([d[key] for d in rows])
        lo = np.array([np.nan if d[f"{key}_lower"] is None else d[f"{key}_lower"] for d in rows])
        hi = np.array([np.nan if d[f"{key}_upper"] is None else d[f"{key}_upper"] for d in rows])
        bars = ax.errorbar(tau, v, yerr=[v - lo, hi - v], marker="o", markersize=3.5, capsize=2.5,
                           color=COLORS[i], label=label)
        bars.lines[0].set_gid(f"series-{key}")
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("averaging time tau, s")
    ax.set_ylabel("deviation of fractional frequency (dimensionless)")
    ax.grid(True, which="both", linewidth=0.3)
    ax.legend(fontsize=8)
    fig.suptitle(f"taubudget frequency stability: {r['n_samples']} {r['data_type']} samples at "
                 f"{r['sample_interval_s']:g} s\nbounds at {r['confidence']:g} confidence", fontsize=10)
    fig.supxlabel("\n".join(textwrap.wrap("Caution: " + r["caution"], 130)), fontsize=6.5, color="#5b6a70")
    return fig


def write_figure(path: str, fig: Figure) -> None:
    """Write ``fig`` to ``path`` as SVG or PNG by its extension."""
    Path(path).write_bytes(render(fig, figure_format(path)))
