"""CCSDS Orbit Parameter Message (CCSDS 502.0-B-3 section 3), KVN or XML -> a state vector.

Mandatory keywords read (Tables 3-1 to 3-3): CREATION_DATE, ORIGINATOR,
OBJECT_NAME, OBJECT_ID, CENTER_NAME, REF_FRAME, TIME_SYSTEM, EPOCH, X, Y, Z
[km], X_DOT, Y_DOT, Z_DOT [km/s]; CCSDS_OPM_VERS in KVN (an attribute of the
root in XML). The optional Keplerian block (SEMI_MAJOR_AXIS ... GM) is read
and reported, and compared with the state vector as a consistency check;
propagation starts from the state vector, which the standard makes the
primary content. Maneuver blocks (MAN_EPOCH_IGNITION ...) are refused: a
budget that silently ignored a burn would mislead.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .common import (
    FormatError,
    check_center,
    check_time_system,
    check_unit,
    normalise_frame,
    parse_epoch,
    parse_float,
    to_gcrs,
)
from .ndm import Keywords, kvn_items, root_messages, xml_items

STATE_KEYS = ("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT")
KEPLER_KEYS = ("SEMI_MAJOR_AXIS", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE", "ARG_OF_PERICENTER")
UNITS = {"X": ("km",), "Y": ("km",), "Z": ("km",), "X_DOT": ("km/s",), "Y_DOT": ("km/s",),
         "Z_DOT": ("km/s",), "SEMI_MAJOR_AXIS": ("km",), "INCLINATION": ("deg",),
         "RA_OF_ASC_NODE": ("deg",), "ARG_OF_PERICENTER": ("deg",), "TRUE_ANOMALY": ("deg",),
         "MEAN_ANOMALY": ("deg",), "GM": ("km**3/s**2", "km^3/s^2")}


@dataclass
class OpmState:
    object_name: str
    object_id: str
    epoch: object  # skyfield Time
    frame: str
    r_gcrs_m: np.ndarray
    v_gcrs_m_per_s: np.ndarray
    keplerian: dict | None
    originator: str


def parse_opm(text: str) -> OpmState:
    """Read an OPM in KVN or XML (detected from the first non-blank character)."""
    if text.lstrip().startswith("<"):
        root = root_messages(text, "OPM", "opm")[0]
        items = xml_items(text, "OPM", root)
    else:
        items = kvn_items(text, "OPM")
        kw0 = Keywords(items, 1, "OPM")
        kw0.item("CCSDS_OPM_VERS")
    kw = Keywords(items, 1, "OPM")
    for key in ("CREATION_DATE", "ORIGINATOR", "OBJECT_NAME", "OBJECT_ID"):
        kw.item(key)
    if kw.has("MAN_EPOCH_IGNITION"):
        raise FormatError(kw.line("MAN_EPOCH_IGNITION"), "MAN_EPOCH_IGNITION",
                          "the OPM holds a maneuver; maneuvers are not modelled, so a budget across it "
                          "would be wrong: remove the maneuver block or give the post-burn state")
    check_center(kw.item("CENTER_NAME").value, kw.line("CENTER_NAME"))
    frame = normalise_frame(kw.item("REF_FRAME").value, kw.line("REF_FRAME"))
    time_system = check_time_system(kw.item("TIME_SYSTEM").value, kw.line("TIME_SYSTEM"))
    ep = kw.item("EPOCH")
    epoch = parse_epoch(ep.value, time_system, ep.line, "EPOCH")
    vals = []
    for key in STATE_KEYS:
        it = kw.item(key)
        check_unit(it.unit, UNITS[key], it.line, key)
        vals.append(parse_float(it.value, it.line, key))
    r_km, v_km_s = np.array(vals[:3]), np.array(vals[3:])
    r, v = to_gcrs(frame, epoch, r_km[None, :] * 1e3, v_km_s[None, :] * 1e3)
    kep = None
    if kw.has("SEMI_MAJOR_AXIS"):
        kep = {}
        for key in KEPLER_KEYS + ("TRUE_ANOMALY", "MEAN_ANOMALY", "GM"):
            if kw.has(key):
                it = kw.item(key)
                check_unit(it.unit, UNITS.get(key, ()), it.line, key)
                kep[key] = parse_float(it.value, it.line, key)
        for key in KEPLER_KEYS + ("GM",):
            if key not in kep:
                raise FormatError(kw.line("SEMI_MAJOR_AXIS"), key,
                                  f"the Keplerian block lacks mandatory keyword {key}")
        if "TRUE_ANOMALY" not in kep and "MEAN_ANOMALY" not in kep:
            raise FormatError(kw.line("SEMI_MAJOR_AXIS"), "TRUE_ANOMALY",
                              "the Keplerian block needs TRUE_ANOMALY or MEAN_ANOMALY")
        _check_keplerian(kep, r_km, v_km_s, kw.line("SEMI_MAJOR_AXIS"))
    return OpmState(kw.get("OBJECT_NAME"), kw.get("OBJECT_ID"), epoch, frame, r[0], v[0], kep,
                    kw.get("ORIGINATOR"))


def _check_keplerian(kep: dict, r_km, v_km_s, line: int) -> None:
    """The Keplerian block must describe the same orbit as the state (semi-major axis to 1e-6)."""
    gm = kep["GM"]
    rn = float(np.linalg.norm(r_km))
    energy = 0.5 * float(v_km_s @ v_km_s) - gm / rn
    if energy >= 0:
        return
    a = -gm / (2 * energy)
    if abs(a / kep["SEMI_MAJOR_AXIS"] - 1.0) > 1e-6:
        raise FormatError(line, "SEMI_MAJOR_AXIS",
                          f"SEMI_MAJOR_AXIS {kep['SEMI_MAJOR_AXIS']} km contradicts the state vector "
                          f"(vis-viva gives {a:.6f} km with the message's GM)")
