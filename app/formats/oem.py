"""CCSDS Orbit Ephemeris Message (CCSDS 502.0-B-3 section 5), KVN or XML -> a tabulated source.

Each segment is a metadata block (OBJECT_NAME, OBJECT_ID, CENTER_NAME,
REF_FRAME, TIME_SYSTEM, START_TIME, STOP_TIME mandatory; USEABLE_START_TIME,
USEABLE_STOP_TIME, INTERPOLATION, INTERPOLATION_DEGREE optional; Table 5-3)
followed by ephemeris lines ``epoch X Y Z X_DOT Y_DOT Z_DOT [X_DDOT Y_DDOT
Z_DDOT]`` in km and km/s (section 5.2.4), and optionally a covariance block
(read past, not used). The interpolation the message names is used within its
own segment only (physics.orbits.ephemeris_table); coverage is the usable
window when given, else START_TIME..STOP_TIME. Without INTERPOLATION we use
Lagrange of degree 7 and say so in the description.
"""

from __future__ import annotations

import numpy as np
from taubudget.physics.orbits.ephemeris_table import EphemerisTable, InconsistentStateError, Segment

from .common import (
    MAX_DATA_LINES,
    FormatError,
    check_center,
    check_time_system,
    make_time,
    normalise_frame,
    parse_epoch,
    parse_epoch_fields,
    parse_float,
    to_gcrs,
)
from .ndm import Item, Keywords, kvn_items, root_messages, xml_items

DEFAULT_INTERPOLATION = ("LAGRANGE", 7)
MAX_INTERPOLATION_DEGREE = 15


def _segments(items: list[Item]):
    """Split the item stream into (header items, [(metadata items, data items, meta line)])."""
    header, segs = [], []
    cur = None
    state = "header"
    for it in items:
        if it.kind == "marker" and it.key == "META_START":
            cur = ([], [], it.line)
            segs.append(cur)
            state = "meta"
        elif it.kind == "marker" and it.key == "META_STOP":
            if state != "meta":
                raise FormatError(it.line, "META_STOP", "META_STOP without META_START")
            state = "data"
        elif it.kind == "marker" and it.key == "COVARIANCE_START":
            state = "covariance"
        elif it.kind == "marker" and it.key == "COVARIANCE_STOP":
            state = "data"
        elif it.kind == "marker":
            continue  # DATA_START / DATA_STOP
        elif state == "header":
            if it.kind == "data":
                raise FormatError(it.line, "META_START", "ephemeris data before the first metadata block")
            header.append(it)
        elif state == "meta":
            if it.kind == "data":
                raise FormatError(it.line, "META_STOP", "a data line inside a metadata block")
            cur[0].append(it)
        elif state == "data":
            if it.kind == "kv" and it.key in ("EPOCH", "CREATION_DATE"):
                raise FormatError(it.line, it.key, f"keyword {it.key} inside ephemeris data")
            if it.kind == "data":
                cur[1].append(it)
        # covariance lines are read past
    if state == "meta":
        raise FormatError(segs[-1][2] if segs else None, "META_STOP", "the last metadata block is not closed")
    return header, segs


def parse_oem(text: str, object_id: str | None = None) -> EphemerisTable:
    """An EphemerisTable (GCRS) from an OEM; ``object_id`` picks one object when several appear."""
    is_xml = text.lstrip().startswith("<")
    if is_xml:
        root = root_messages(text, "OEM", "oem")[0]
        items = xml_items(text, "OEM", root)
    else:
        items = kvn_items(text, "OEM")
    header, segs = _segments(items)
    hk = Keywords(header, 1, "OEM header")
    if not is_xml:
        hk.item("CCSDS_OEM_VERS")
    hk.item("CREATION_DATE")
    hk.item("ORIGINATOR")
    if not segs:
        raise FormatError(None, "META_START", "the OEM has no segment (META_START ... META_STOP)")
    n_points = sum(len(s[1]) for s in segs)
    if n_points > MAX_DATA_LINES:
        raise FormatError(None, "size", f"the OEM holds {n_points:,} ephemeris lines, above the limit "
                          f"of {MAX_DATA_LINES:,}")
    ids = []
    parsed = []
    for meta_items, data_items, meta_line in segs:
        mk = Keywords(meta_items, meta_line, "OEM metadata")
        for key in ("OBJECT_NAME", "OBJECT_ID"):
            mk.item(key)
        ids.append((mk.get("OBJECT_ID"), mk.get("OBJECT_NAME")))
        parsed.append((mk, data_items, meta_line))
    chosen = _choose(ids, object_id, segs)
    segments, ref = [], None
    lines: list[list] = []  # per segment, its ephemeris lines' items (line numbers)
    frames: list[str] = []  # per segment, its REF_FRAME
    names = set()
    for idx in chosen:
        mk, data_items, meta_line = parsed[idx]
        names.add(mk.get("OBJECT_NAME"))
        check_center(mk.item("CENTER_NAME").value, mk.line("CENTER_NAME"))
        frame = normalise_frame(mk.item("REF_FRAME").value, mk.line("REF_FRAME"))
        tsys = check_time_system(mk.item("TIME_SYSTEM").value, mk.line("TIME_SYSTEM"))
        start = parse_epoch(mk.item("START_TIME").value, tsys, mk.line("START_TIME"), "START_TIME")
        stop = parse_epoch(mk.item("STOP_TIME").value, tsys, mk.line("STOP_TIME"), "STOP_TIME")
        u_start = (parse_epoch(mk.get("USEABLE_START_TIME"), tsys, mk.line("USEABLE_START_TIME"),
                               "USEABLE_START_TIME") if mk.has("USEABLE_START_TIME") else start)
        u_stop = (parse_epoch(mk.get("USEABLE_STOP_TIME"), tsys, mk.line("USEABLE_STOP_TIME"),
                              "USEABLE_STOP_TIME") if mk.has("USEABLE_STOP_TIME") else stop)
        interp, degree = DEFAULT_INTERPOLATION
        if mk.has("INTERPOLATION"):
            interp = mk.get("INTERPOLATION").strip().upper()
            if interp not in ("LAGRANGE", "HERMITE", "LINEAR"):
                raise FormatError(mk.line("INTERPOLATION"), "INTERPOLATION",
                                  f"INTERPOLATION {interp!r} is not LAGRANGE, HERMITE or LINEAR")
            degree = 1 if interp == "LINEAR" else 7
        if mk.has("INTERPOLATION_DEGREE"):
            it = mk.item("INTERPOLATION_DEGREE")
            try:
                degree = int(it.value)
            except ValueError:
                raise FormatError(it.line, "INTERPOLATION_DEGREE",
                                  f"{it.value!r} is not an integer") from None
            if not 1 <= degree <= MAX_INTERPOLATION_DEGREE:
                raise FormatError(it.line, "INTERPOLATION_DEGREE",
                                  f"degree {degree} is outside 1..{MAX_INTERPOLATION_DEGREE}")
        if not data_items:
            raise FormatError(meta_line, "EPOCH", "the segment has no ephemeris lines")
        fields, rv = [], np.empty((len(data_items), 6))
        for k, it in enumerate(data_items):
            if len(it.tokens) not in (7, 10):
                raise FormatError(it.line, "ephemeris line",
                                  f"{len(it.tokens)} fields; expected epoch, X, Y, Z, X_DOT, Y_DOT, Z_DOT "
                                  "(and optionally three accelerations)")
            fields.append(parse_epoch_fields(it.tokens[0], it.line, "EPOCH"))
            names6 = ("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT")
            rv[k] = [parse_float(tok, it.line, nm) for tok, nm in zip(it.tokens[1:7], names6, strict=True)]
        cols = [np.array(c) for c in zip(*fields, strict=True)]
        times = make_time(cols, tsys, data_items[0].line, "EPOCH")
        r, v = to_gcrs(frame, times, rv[:, :3] * 1e3, rv[:, 3:] * 1e3)
        if ref is None:
            ref = times[0]
        t_s = _seconds(times, ref)
        order_bad = np.nonzero(np.diff(t_s) <= 0)[0]
        if order_bad.size:
            bad = data_items[int(order_bad[0]) + 1]
            raise FormatError(bad.line, "EPOCH", "ephemeris epochs must increase within a segment")
        s0, s1 = float(_seconds(u_start, ref)), float(_seconds(u_stop, ref))
        if t_s[0] > float(_seconds(start, ref)) + 1e-3 or t_s[-1] < float(_seconds(stop, ref)) - 1e-3:
            raise FormatError(data_items[0].line, "START_TIME",
                              "the ephemeris lines do not cover START_TIME..STOP_TIME of their segment")
        if s0 < t_s[0] - 1e-3 or s1 > t_s[-1] + 1e-3 or s1 <= s0:
            raise FormatError(mk.line("USEABLE_START_TIME"), "USEABLE_START_TIME",
                              "the usable window must lie inside the segment's data")
        if interp == "HERMITE":
            # m = (degree + 1)/2 points carry values and derivatives (degree 2m - 1).
            degree = degree if degree % 2 == 1 else degree + 1
        segments.append(Segment(t_s, r, v, s0, s1, interp, degree,
                                label=f"{frame} -> GCRS, {tsys}, {interp} degree {degree}"))
        lines.append(data_items)
        frames.append(frame)
    label = f"OEM ({', '.join(sorted(n for n in names if n))})"
    if not any(mk.has("INTERPOLATION") for mk, _, _ in (parsed[i] for i in chosen)):
        label += (f"; no INTERPOLATION given, {DEFAULT_INTERPOLATION[0]} degree "
                  f"{DEFAULT_INTERPOLATION[1]} used")

    def line_of(segment: int, point: int) -> int:
        return lines[segment][point].line

    def keyword(segment: int, quantity: str, axis: int) -> str:
        return _keyword(quantity, axis if frames[segment] in AXES_KEPT else None)

    def point_name(segment: int, point: int, quantity: str, axis: int) -> str:
        return f"line {line_of(segment, point)}, {keyword(segment, quantity, axis)}"

    try:
        return EphemerisTable(ref, segments, label=label, point_name=point_name)
    except InconsistentStateError as exc:  # a corrupted line: named by its number and field
        raise FormatError(line_of(exc.segment, exc.point), keyword(exc.segment, exc.quantity, exc.axis),
                          exc.detail) from None


AXES_KEPT = ("GCRF", "ICRF", "EME2000")
"""Frames whose axes are the GCRS's to within the frame bias (23 mas), so the GCRS component that
disagrees most is the line's own field; TEME and ITRF are rotated, and a line is named by its
position or velocity fields as a whole."""


def _keyword(quantity: str, axis: int | None) -> str:
    """The ephemeris line's field of a position or velocity component (section 5.2.4)."""
    if axis is None:
        return "X, Y, Z" if quantity == "position" else "X_DOT, Y_DOT, Z_DOT"
    return "XYZ"[axis] + ("_DOT" if quantity == "velocity" else "")


def _seconds(times, ref) -> np.ndarray:
    whole = np.asarray(times.whole) - ref.whole
    return (whole + (np.asarray(times.tt_fraction) - ref.tt_fraction)) * 86400.0


def oem_object_ids(text: str) -> list[str]:
    """The distinct OBJECT_IDs of an OEM's segments, in file order (metadata only is read)."""
    if text.lstrip().startswith("<"):
        items = xml_items(text, "OEM", root_messages(text, "OEM", "oem")[0])
    else:
        items = kvn_items(text, "OEM")
    _, segs = _segments(items)
    out: list[str] = []
    for meta_items, _, meta_line in segs:
        oid = Keywords(meta_items, meta_line, "OEM metadata").item("OBJECT_ID").value
        if oid not in out:
            out.append(oid)
    return out


def _choose(ids, object_id, segs) -> list[int]:
    distinct = sorted({i for i, _ in ids})
    if object_id is None:
        if len(distinct) > 1:
            raise FormatError(segs[0][2], "OBJECT_ID",
                              f"the OEM holds {len(distinct)} objects ({', '.join(distinct)}); "
                              "give object_id")
        return list(range(len(ids)))
    chosen = [k for k, (oid, name) in enumerate(ids) if object_id in (oid, name)]
    if not chosen:
        raise FormatError(segs[0][2], "OBJECT_ID",
                          f"object {object_id!r} is not in the OEM (it holds {', '.join(distinct)})")
    return chosen
