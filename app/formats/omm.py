"""CCSDS Orbit Mean-Elements Message (CCSDS 502.0-B-3 section 4) -> an SGP4 source.

Encodings: KVN and XML (the standard's), and the JSON and CSV renderings of the
17 mean-element keys widely used for element-set distribution (OBJECT_NAME,
OBJECT_ID, EPOCH, MEAN_MOTION, ECCENTRICITY, INCLINATION, RA_OF_ASC_NODE,
ARG_OF_PERICENTER, MEAN_ANOMALY, EPHEMERIS_TYPE, CLASSIFICATION_TYPE,
NORAD_CAT_ID, ELEMENT_SET_NO, REV_AT_EPOCH, BSTAR, MEAN_MOTION_DOT,
MEAN_MOTION_DDOT; UTC, TEME and SGP4 implied).

The elements become a TLE-equivalent ``sgp4.api.Satrec`` through ``sgp4init``
(WGS-72, improved mode, as the sgp4 package does for TLEs): mean motion in
rad/min, MEAN_MOTION_DOT (rev/day^2, the TLE's ndot/2) and MEAN_MOTION_DDOT
(rev/day^3, nddot/6) scaled as the TLE reader scales them, epoch in days since
1949 December 31 00:00 UTC (Vallado et al. 2006, AIAA 2006-6753; sgp4 docs).
Optional TLE-parameter keys that are missing default to zero (BSTAR = 0 means
no drag; the source's description says so). SGP4 elements are mean elements
in TEME, so REF_FRAME must be TEME and MEAN_ELEMENT_THEORY SGP4; others are
refused by name.
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass

from .common import (
    FormatError,
    check_center,
    check_size,
    check_time_system,
    check_unit,
    parse_epoch,
    parse_float,
)
from .ndm import Keywords, LineFinder, kvn_items, root_messages, xml_items

ELEMENT_KEYS = ("MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE", "ARG_OF_PERICENTER",
                "MEAN_ANOMALY")

UNITS = {"MEAN_MOTION": ("rev/day",), "INCLINATION": ("deg",), "RA_OF_ASC_NODE": ("deg",),
         "ARG_OF_PERICENTER": ("deg",), "MEAN_ANOMALY": ("deg",), "BSTAR": ("1/er", "1/ER"),
         "MEAN_MOTION_DOT": ("rev/day**2", "rev/day^2"), "MEAN_MOTION_DDOT": ("rev/day**3", "rev/day^3")}

_XPDOTP = 1440.0 / (2.0 * math.pi)  # rev/day per rad/min (sgp4's constant)
_EPOCH0_JD = 2433281.5  # 1949 December 31 00:00 UTC


@dataclass
class MeanElements:
    object_name: str
    object_id: str
    epoch: object  # skyfield Time
    mean_motion_rev_per_day: float
    eccentricity: float
    inclination_deg: float
    ra_of_asc_node_deg: float
    arg_of_pericenter_deg: float
    mean_anomaly_deg: float
    bstar_per_earth_radius: float = 0.0
    mean_motion_dot: float = 0.0
    mean_motion_ddot: float = 0.0
    norad_cat_id: int = 0
    line: int = 1
    defaults_used: tuple = ()

    def satrec(self):
        """An initialised ``sgp4.api.Satrec`` (TLE-equivalent)."""
        from sgp4.api import WGS72, Satrec

        y, mo, d, h, mi, s = self.epoch.utc
        import datetime as _dt

        day = (_dt.date(int(y), int(mo), int(d)) - _dt.date(1949, 12, 31)).days
        epoch_days = day + (h * 3600.0 + mi * 60.0 + s) / 86400.0
        sat = Satrec()
        sat.sgp4init(
            WGS72, "i", self.norad_cat_id, epoch_days, self.bstar_per_earth_radius,
            self.mean_motion_dot / (_XPDOTP * 1440.0), self.mean_motion_ddot / (_XPDOTP * 1440.0 * 1440.0),
            self.eccentricity, math.radians(self.arg_of_pericenter_deg), math.radians(self.inclination_deg),
            math.radians(self.mean_anomaly_deg), self.mean_motion_rev_per_day / _XPDOTP,
            math.radians(self.ra_of_asc_node_deg),
        )
        return sat


def _elements_from_keywords(kw: Keywords, implied: bool) -> MeanElements:
    """Mean elements from keyword lookup; ``implied``: JSON/CSV (UTC, TEME, SGP4 implied)."""
    for key in ("OBJECT_NAME", "OBJECT_ID"):
        kw.item(key)
    if not implied:
        for key in ("CREATION_DATE", "ORIGINATOR"):
            kw.item(key)
        check_center(kw.item("CENTER_NAME").value, kw.line("CENTER_NAME"))
        frame = kw.item("REF_FRAME").value.strip().upper()
        if frame != "TEME":
            raise FormatError(kw.line("REF_FRAME"), "REF_FRAME",
                              f"REF_FRAME {frame!r}: SGP4 mean elements are defined in TEME")
        theory = kw.item("MEAN_ELEMENT_THEORY").value.strip().upper()
        if theory != "SGP4":
            raise FormatError(kw.line("MEAN_ELEMENT_THEORY"), "MEAN_ELEMENT_THEORY",
                              f"mean-element theory {theory!r} is not supported; only SGP4 elements "
                              "can be propagated here")
        time_system = check_time_system(kw.item("TIME_SYSTEM").value, kw.line("TIME_SYSTEM"))
    else:
        time_system = "UTC"
    if not kw.has("MEAN_MOTION") and kw.has("SEMI_MAJOR_AXIS"):
        raise FormatError(kw.line("SEMI_MAJOR_AXIS"), "MEAN_MOTION",
                          "SGP4 elements need MEAN_MOTION [rev/day], not SEMI_MAJOR_AXIS")
    ep = kw.item("EPOCH")
    epoch = parse_epoch(ep.value, time_system, ep.line, "EPOCH")
    vals = {}
    for key in ELEMENT_KEYS:
        it = kw.item(key)
        check_unit(it.unit, UNITS.get(key, ()), it.line, key)
        vals[key] = parse_float(it.value, it.line, key)
    defaults = []
    extra = {}
    for key in ("BSTAR", "MEAN_MOTION_DOT", "MEAN_MOTION_DDOT", "NORAD_CAT_ID"):
        if kw.has(key):
            it = kw.item(key)
            check_unit(it.unit, UNITS.get(key, ()), it.line, key)
            extra[key] = parse_float(it.value, it.line, key)
        else:
            defaults.append(key)
            extra[key] = 0.0
    eph_type = kw.get("EPHEMERIS_TYPE", "0").strip()
    if eph_type not in ("0", "2"):
        raise FormatError(kw.line("EPHEMERIS_TYPE"), "EPHEMERIS_TYPE",
                          f"EPHEMERIS_TYPE {eph_type}: only SGP4 element sets (0, or 2) are supported")
    e = vals["ECCENTRICITY"]
    if not 0.0 <= e < 1.0:
        raise FormatError(kw.line("ECCENTRICITY"), "ECCENTRICITY", f"eccentricity {e} is not in [0, 1)")
    if vals["MEAN_MOTION"] <= 0.0:
        raise FormatError(kw.line("MEAN_MOTION"), "MEAN_MOTION", "mean motion must be positive")
    cat = int(extra["NORAD_CAT_ID"])
    if not 0 <= cat <= 339_999:
        raise FormatError(kw.line("NORAD_CAT_ID"), "NORAD_CAT_ID",
                          f"catalogue number {cat} is outside 0..339999 (SGP4's alpha-5 range)")
    return MeanElements(
        kw.get("OBJECT_NAME"), kw.get("OBJECT_ID"), epoch, vals["MEAN_MOTION"], e, vals["INCLINATION"],
        vals["RA_OF_ASC_NODE"], vals["ARG_OF_PERICENTER"], vals["MEAN_ANOMALY"], extra["BSTAR"],
        extra["MEAN_MOTION_DOT"], extra["MEAN_MOTION_DDOT"], cat, kw.start_line, tuple(defaults),
    )


def parse_omm_kvn(text: str) -> list[MeanElements]:
    items = kvn_items(text, "OMM")
    kw = Keywords(items, 1, "OMM")
    kw.item("CCSDS_OMM_VERS")
    return [_elements_from_keywords(kw, implied=False)]


def parse_omm_xml(text: str) -> list[MeanElements]:
    finder = LineFinder(text)
    out = []
    for root in root_messages(text, "OMM", "omm"):
        items = xml_items(text, "OMM", root, finder)
        start = items[0].line if items else 1
        out.append(_elements_from_keywords(Keywords(items, start, "OMM"), implied=False))
    return out


class _DictKeywords(Keywords):
    def __init__(self, record: dict, line: int, what: str):
        from .ndm import Item

        self.values = {}
        self.start_line = line
        self.what = what
        for k, v in record.items():
            key = str(k).strip().upper()
            text = "" if v is None else str(v).strip()
            self.values[key] = Item("kv", line, key, text, None)


def parse_omm_json(text: str) -> list[MeanElements]:
    check_size(text, "OMM")
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise FormatError(exc.lineno, "JSON", f"the OMM is not valid JSON ({exc.msg})") from None
    records = data if isinstance(data, list) else [data]
    if not records or not all(isinstance(r, dict) for r in records):
        raise FormatError(1, "JSON", "an OMM in JSON is an object or a list of objects with the 17 keys")
    # JSON has no line numbers per record; name the record by position instead.
    out = []
    for i, rec in enumerate(records, start=1):
        kw = _DictKeywords(rec, i, f"OMM record {i}")
        try:
            out.append(_elements_from_keywords(kw, implied=True))
        except FormatError as exc:
            raise FormatError(None, exc.keyword, f"record {i}: {exc.reason}") from None
    return out


def parse_omm_csv(text: str) -> list[MeanElements]:
    check_size(text, "OMM")
    rows = list(csv.reader(io.StringIO(text)))
    rows = [(n, r) for n, r in enumerate(rows, start=1) if any(c.strip() for c in r)]
    if len(rows) < 2:
        raise FormatError(1, "CSV", "an OMM in CSV has a header row of keys and at least one data row")
    header = [h.strip().upper() for h in rows[0][1]]
    for key in ("EPOCH", "MEAN_MOTION"):
        if key not in header:
            raise FormatError(rows[0][0], key, f"mandatory column {key} is missing from the CSV header")
    out = []
    for n, row in rows[1:]:
        if len(row) != len(header):
            raise FormatError(n, "CSV", f"row has {len(row)} fields, the header {len(header)}")
        out.append(_elements_from_keywords(_DictKeywords(dict(zip(header, row, strict=True)), n, "OMM row"),
                                           implied=True))
    return out


PARSERS = {"kvn": parse_omm_kvn, "xml": parse_omm_xml, "json": parse_omm_json, "csv": parse_omm_csv}


def parse_omm(text: str, encoding: str | None = None) -> list[MeanElements]:
    """Mean elements of every object in an OMM text (encoding detected when not given)."""
    from .detect import detect_omm_encoding

    check_size(text, "OMM")
    enc = encoding or detect_omm_encoding(text)
    return PARSERS[enc](text)
