"""Measured satellite clock offsets from a file, against an orbit file: physics/clock_residuals.py's analysis.

The clock file is a RINEX clock file (3.02/3.04 AS records, app/formats/rinex_clock.py) or an
SP3 file, whose clock column is read (app/formats/sp3.py). The orbit file is any orbit file
app/formats/files.py detects (an SP3 file can be both). The offsets are clock minus the
file's reference (the IGS timescale of the product), in seconds; the epochs are converted
from the file's time system to TT seconds after the first clock epoch.

Whether the offsets still carry the relativistic periodic term -(2/c^2) r.v decides what
is subtracted. IGS clock products (SP3 clock column, RINEX clock AS records) exclude it by
convention and leave it to the user (Kouba 2004, GPS Solutions 8:170, abstract; the
docstring of physics/clock_residuals.py), so ``PERIODIC_TERM_IN_DATA_DEFAULT`` is False and
nothing is subtracted unless the caller says the data are raw offsets that still carry it.
Every result says which assumption it used.

No HTTP here: the CLI calls ``clock_residuals_from_texts``; errors are ``PhysicsInputError``
with ``clock_file``, ``orbit_file`` or ``sat`` as the field, FormatErrors naming the line
and keyword.
"""

from __future__ import annotations

import re

import numpy as np
from pydantic import ValidationError
from taubudget.physics.clock_residuals import clock_residuals
from taubudget.physics.environment import environment_for
from taubudget.physics.errors import PhysicsInputError
from taubudget.physics.span import Span

from .formats import FormatError, build_format_source
from .formats.files import orbit_from_file
from .formats.models import TEXT_ORBITS
from .present.budget import orbit as present_orbit
from .present.budget import utc1
from .present.residuals import residuals as present_residuals
from .services.request_terms import request_terms

PERIODIC_TERM_IN_DATA_DEFAULT = False
"""IGS convention: clock products exclude the periodic term (Kouba 2004, abstract)."""

ASSUMPTION_IGS = (
    "IGS convention: the clock values are taken to exclude the relativistic periodic term "
    "-(2/c^2) r.v, as IGS clock products do (Kouba 2004, abstract); nothing was subtracted, and "
    "the term's size is shown for comparison. Raw offsets that still carry it need "
    "--periodic-term-in-data."
)
ASSUMPTION_RAW = (
    "Raw offsets: the clock values are taken to still carry the relativistic periodic term "
    "-(2/c^2) r.v (not the IGS convention); the term modelled from the orbit was subtracted."
)
CAUTION = (
    "Planning estimate only. The secular rate and residuals depend on the orbit file (its errors "
    "enter through r.v) and on the assumption about the periodic term; steps, gaps and outliers in "
    "the clock data are not detected. Check the data before using the result in a clock budget."
)

_MODEL_OF_TYPE = {m.model_fields["type"].annotation.__args__[0]: m for m in TEXT_ORBITS}
_SP3_LINE1 = re.compile(r"^#[a-dA-D][PV ]")


def _clock_kind(text: str) -> str:
    first = text.lstrip("\ufeff").lstrip("\r\n").split("\n", 1)[0]
    if "RINEX VERSION / TYPE" in first:
        return "rinex_clock"
    if _SP3_LINE1.match(first):
        return "sp3"
    raise FormatError(1, "type", "the clock file is neither a RINEX clock file (line 1 'RINEX VERSION / "
                      "TYPE') nor an SP3 file (line 1 '#c' or '#d')")


def read_clock_series(text: str, sat_id: str):
    """(kind, label, epochs Time, clock minus reference s) of one satellite in a clock file."""
    from .formats.rinex_clock import parse_rinex_clock
    from .formats.sp3 import clock_series, parse_sp3

    kind = _clock_kind(text)
    sid = sat_id.strip().upper()
    if kind == "rinex_clock":
        rx = parse_rinex_clock(text)
        if sid not in rx.satellites:
            have = ", ".join(sorted(rx.satellites)) or "none"
            raise FormatError(None, "AS", f"satellite {sid!r} has no AS records (satellites: {have})")
        times, bias_s, _ = rx.satellites[sid]
        return kind, f"RINEX clock {rx.version:.2f} ({rx.time_system})", times, bias_s
    sp3 = parse_sp3(text)
    if sid not in sp3.clocks_us:
        have = ", ".join(sorted(sp3.clocks_us)) or "none"
        raise FormatError(None, "clock", f"satellite {sid!r} is not in the SP3 file (satellites: {have})")
    times, offset_s = clock_series(sp3, sid)
    return kind, f"SP3-{sp3.version} clock column ({sp3.time_system})", times, offset_s


def _orbit_source(orbit_text: str, object_id: str, orbit_type: str | None):
    orbit = orbit_from_file(orbit_text, orbit_type, {"object_id": object_id})
    model = _MODEL_OF_TYPE.get(orbit["type"])
    if model is None:
        raise PhysicsInputError("orbit_file", orbit["type"], "not an orbit file type")
    try:
        orbit_in = model.model_validate(orbit, strict=False)  # options given as text
    except ValidationError as exc:
        raise PhysicsInputError("orbit_file", None, exc.errors()[0]["msg"]) from exc
    return build_format_source(orbit_in, "orbit_file"), orbit_in


def clock_residuals_from_texts(clock_text: str, orbit_text: str | None, sat_id: str, *,
                               periodic_term_in_data: bool = PERIODIC_TERM_IN_DATA_DEFAULT,
                               orbit_type: str | None = None, orbit_object_id: str | None = None) -> dict:
    """The clock-residual analysis of one satellite as plain data (see the module docstring).

    ``orbit_text`` None: the clock file is an SP3 file and its own orbit is used.
    ``orbit_object_id``: the object in the orbit file, when it is named otherwise than ``sat_id``
    (a TLE name or catalogue number, an OMM/OEM OBJECT_ID).
    """
    try:
        kind, label, times, offset_s = read_clock_series(clock_text, sat_id)
    except FormatError as exc:
        raise exc.to_physics("clock_file") from None
    if orbit_text is None:
        if kind != "sp3":
            raise PhysicsInputError("orbit_file", None, "a RINEX clock file holds no orbit; give the "
                                    "orbit file (SP3, OEM, OPM, OMM or TLE)")
        orbit_text = clock_text
    try:
        source, orbit_in = _orbit_source(orbit_text, orbit_object_id or sat_id.strip().upper(), orbit_type)
    except FormatError as exc:
        raise exc.to_physics("orbit_file") from None
    if len(times) < 3:
        raise PhysicsInputError("clock_file", len(times), "fewer than 3 clock values for the satellite")
    start = times[0]
    span0 = Span(start, 1.0)
    t_s = span0.seconds_after_start(times)
    span = Span(start, max(float(t_s[-1]), 1.0))
    with request_terms((source, "orbit_file", orbit_in)):
        # An orbit table refuses clock epochs beyond its data, naming the first or last epoch; an
        # epoch inside a gap of the table is refused by ``states``, which names it.
        source.check_span(span, "the first clock epoch", "the last clock epoch", gaps=False)
        states = source.states(span, t_s, environment_for(span).orientation)
    try:
        result = clock_residuals(t_s, offset_s, states.r_gcrs_m, states.v_gcrs_m_per_s,
                                 periodic_term_in_data=periodic_term_in_data,
                                 orbital_period_s=source.period_s())
    except PhysicsInputError as exc:  # about the clock values: the clock file
        raise PhysicsInputError("clock_file", exc.value, exc.reason) from None
    out = {
        "sat": sat_id.strip().upper(),
        "clock_file": {"kind": kind, "label": label, "points": int(len(times))},
        "orbit": present_orbit(source.describe()),
        "epochs_without_orbit": int(np.count_nonzero(states.code != 0)),
        "start_utc": utc1(span, 0.0),
        "periodic_term_in_data": bool(periodic_term_in_data),
        "assumption": ASSUMPTION_RAW if periodic_term_in_data else ASSUMPTION_IGS,
        **present_residuals(result),
        "offsets": "clock minus reference (the clock file's reference timescale)",
        "caution": CAUTION,
    }
    return out
