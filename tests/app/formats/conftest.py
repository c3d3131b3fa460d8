"""Writers of our own CCSDS ODM texts (KVN and XML) for round trips, and shared fixtures.

The writers follow CCSDS 502.0-B-3: KVN keyword tables 3-1..3-3 (OPM), 4-1..4-3
(OMM), 5-1..5-3 (OEM); XML element names as the KVN keywords with a ``units``
attribute. All object names, designators and originators are invented.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

SAMPLES = Path(__file__).resolve().parents[3] / "sample_orbits" / "formats"

HEADER = {"CREATION_DATE": "2027-02-27T12:00:00Z", "ORIGINATOR": "TAUBUDGET-DEMO"}


def _kv(key, value, unit=None):
    return f"{key:<20} = {value}" + (f" [{unit}]" if unit else "")


def opm_kvn(epoch, r_km, v_km_s, frame="GCRF", time_system="UTC", name="KESTREL-NAV-3",
            object_id="2027-901C", kepler: dict | None = None, drop: str | None = None, extra=()):
    lines = ["CCSDS_OPM_VERS = 3.0", _kv("CREATION_DATE", HEADER["CREATION_DATE"]),
             _kv("ORIGINATOR", HEADER["ORIGINATOR"]), "", "COMMENT invented test object",
             _kv("OBJECT_NAME", name), _kv("OBJECT_ID", object_id), _kv("CENTER_NAME", "EARTH"),
             _kv("REF_FRAME", frame), _kv("TIME_SYSTEM", time_system), "", _kv("EPOCH", epoch)]
    for k, x in zip(("X", "Y", "Z"), r_km, strict=True):
        lines.append(_kv(k, f"{x:.9f}", "km"))
    for k, x in zip(("X_DOT", "Y_DOT", "Z_DOT"), v_km_s, strict=True):
        lines.append(_kv(k, f"{x:.12f}", "km/s"))
    if kepler:
        units = {"SEMI_MAJOR_AXIS": "km", "GM": "km**3/s**2"}
        for k, x in kepler.items():
            unit = units.get(k, "deg" if k != "ECCENTRICITY" else None)
            lines.append(_kv(k, f"{x:.12f}" if k != "GM" else f"{x:.6f}", unit))
    lines += list(extra)
    return "\n".join(ln for ln in lines if not (drop and ln.startswith(drop + " "))) + "\n"


def _xml_el(key, value, unit=None):
    attr = f' units="{unit}"' if unit else ""
    return f"<{key}{attr}>{value}</{key}>"


def opm_xml(epoch, r_km, v_km_s, frame="GCRF", time_system="UTC", name="KESTREL-NAV-3",
            object_id="2027-901C", drop: str | None = None):
    sv = [_xml_el("EPOCH", epoch)]
    sv += [_xml_el(k, f"{x:.9f}", "km") for k, x in zip(("X", "Y", "Z"), r_km, strict=True)]
    sv += [_xml_el(k, f"{x:.12f}", "km/s") for k, x in zip(("X_DOT", "Y_DOT", "Z_DOT"), v_km_s, strict=True)]
    meta = [_xml_el("OBJECT_NAME", name), _xml_el("OBJECT_ID", object_id), _xml_el("CENTER_NAME", "EARTH"),
            _xml_el("REF_FRAME", frame), _xml_el("TIME_SYSTEM", time_system)]
    if drop:
        sv = [s for s in sv if not s.startswith(f"<{drop}")]
        meta = [s for s in meta if not s.startswith(f"<{drop}")]
    nl = "\n      "
    return f"""<?xml version="1.0" encoding="UTF-8"?>
<opm id="CCSDS_OPM_VERS" version="3.0">
  <header>
    <COMMENT>invented test object</COMMENT>
    <CREATION_DATE>{HEADER["CREATION_DATE"]}</CREATION_DATE>
    <ORIGINATOR>{HEADER["ORIGINATOR"]}</ORIGINATOR>
  </header>
  <body>
    <segment>
      <metadata>
      {nl.join(meta)}
      </metadata>
      <data>
        <stateVector>
      {nl.join(sv)}
        </stateVector>
      </data>
    </segment>
  </body>
</opm>
"""


def oem_kvn(segments, drop: str | None = None):
    """``segments``: dicts with meta keys and ``rows`` = [(epoch, r_km, v_km_s), ...]."""
    out = ["CCSDS_OEM_VERS = 3.0", _kv("CREATION_DATE", HEADER["CREATION_DATE"]),
           _kv("ORIGINATOR", HEADER["ORIGINATOR"]), ""]
    for seg in segments:
        out.append("META_START")
        for k, v in seg.items():
            if k != "rows" and k != drop:
                out.append(_kv(k, v))
        out.append("META_STOP")
        out.append("")
        for ep, r, v in seg["rows"]:
            out.append(f"{ep} " + " ".join(f"{x:.9f}" for x in r) + " " + " ".join(f"{x:.12f}" for x in v))
        out.append("")
    return "\n".join(out)


def oem_xml(segments):
    parts = []
    for seg in segments:
        meta = "".join(_xml_el(k, v) for k, v in seg.items() if k != "rows")
        rows = []
        for ep, r, v in seg["rows"]:
            els = [_xml_el("EPOCH", ep)]
            els += [_xml_el(k, f"{x:.9f}", "km") for k, x in zip(("X", "Y", "Z"), r, strict=True)]
            els += [_xml_el(k, f"{x:.12f}", "km/s")
                    for k, x in zip(("X_DOT", "Y_DOT", "Z_DOT"), v, strict=True)]
            rows.append("<stateVector>" + "".join(els) + "</stateVector>")
        parts.append(f"<segment><metadata>{meta}</metadata><data>\n" + "\n".join(rows)
                     + "\n</data></segment>")
    return (f'<?xml version="1.0"?>\n<oem id="CCSDS_OEM_VERS" version="3.0">\n<header>'
            f'<CREATION_DATE>{HEADER["CREATION_DATE"]}</CREATION_DATE><ORIGINATOR>{HEADER["ORIGINATOR"]}'
            f'</ORIGINATOR></header>\n<body>\n' + "\n".join(parts) + "\n</body></oem>\n")


def omm_fields_from_tle(line1: str, line2: str, name="KESTREL-TIMING-1", object_id="2027-901A"):
    """The 17 keys from a TLE's own columns (element-set format; values copied as text)."""
    yy, doy = int(line1[18:20]), float(line1[20:32])
    year = 2000 + yy if yy < 57 else 1900 + yy
    import datetime as dt

    epoch = dt.datetime(year, 1, 1) + dt.timedelta(days=doy - 1)
    def expo(s):  # TLE implied-decimal exponent field ' 21000-4' -> 0.21000e-4
        s = s.strip()
        sign = -1.0 if s.startswith("-") else 1.0
        s = s.lstrip("+-")
        mant, ex = s[:-2], s[-2:]
        return sign * float("0." + mant) * 10.0 ** int(ex)
    return {
        "OBJECT_NAME": name, "OBJECT_ID": object_id,
        "EPOCH": epoch.strftime("%Y-%m-%dT%H:%M:%S.%f"),
        "MEAN_MOTION": float(line2[52:63]), "ECCENTRICITY": float("0." + line2[26:33].strip()),
        "INCLINATION": float(line2[8:16]), "RA_OF_ASC_NODE": float(line2[17:25]),
        "ARG_OF_PERICENTER": float(line2[34:42]), "MEAN_ANOMALY": float(line2[43:51]),
        "EPHEMERIS_TYPE": int(line1[62]), "CLASSIFICATION_TYPE": line1[7],
        "NORAD_CAT_ID": int(line1[2:7]), "ELEMENT_SET_NO": int(line1[64:68]),
        "REV_AT_EPOCH": int(line2[63:68]), "BSTAR": expo(line1[53:61]),
        "MEAN_MOTION_DOT": float(line1[33:43]), "MEAN_MOTION_DDOT": expo(line1[44:52]),
    }


_OMM_UNITS = {"MEAN_MOTION": "rev/day", "INCLINATION": "deg", "RA_OF_ASC_NODE": "deg",
              "ARG_OF_PERICENTER": "deg", "MEAN_ANOMALY": "deg", "BSTAR": "1/ER",
              "MEAN_MOTION_DOT": "rev/day**2", "MEAN_MOTION_DDOT": "rev/day**3"}
_MEAN = ("EPOCH", "MEAN_MOTION", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE", "ARG_OF_PERICENTER",
         "MEAN_ANOMALY")
_TLEP = ("EPHEMERIS_TYPE", "CLASSIFICATION_TYPE", "NORAD_CAT_ID", "ELEMENT_SET_NO", "REV_AT_EPOCH", "BSTAR",
         "MEAN_MOTION_DOT", "MEAN_MOTION_DDOT")


def omm_kvn(f: dict, frame="TEME", drop: str | None = None, epoch=None):
    lines = ["CCSDS_OMM_VERS = 3.0", _kv("CREATION_DATE", HEADER["CREATION_DATE"]),
             _kv("ORIGINATOR", HEADER["ORIGINATOR"]), _kv("OBJECT_NAME", f["OBJECT_NAME"]),
             _kv("OBJECT_ID", f["OBJECT_ID"]), _kv("CENTER_NAME", "EARTH"), _kv("REF_FRAME", frame),
             _kv("TIME_SYSTEM", "UTC"), _kv("MEAN_ELEMENT_THEORY", "SGP4")]
    for k in _MEAN + _TLEP:
        v = epoch if (k == "EPOCH" and epoch) else f[k]
        lines.append(_kv(k, v, _OMM_UNITS.get(k)))
    return "\n".join(ln for ln in lines if not (drop and ln.startswith(drop + " "))) + "\n"


def omm_xml(f: dict):
    meta = "".join(_xml_el(k, v) for k, v in (("OBJECT_NAME", f["OBJECT_NAME"]),
                                              ("OBJECT_ID", f["OBJECT_ID"]),
                                              ("CENTER_NAME", "EARTH"), ("REF_FRAME", "TEME"),
                                              ("TIME_SYSTEM", "UTC"), ("MEAN_ELEMENT_THEORY", "SGP4")))
    mean = "".join(_xml_el(k, f[k], _OMM_UNITS.get(k)) for k in _MEAN)
    tle = "".join(_xml_el(k, f[k], _OMM_UNITS.get(k)) for k in _TLEP)
    return (f'<?xml version="1.0" encoding="UTF-8"?>\n<ndm><omm id="CCSDS_OMM_VERS" version="3.0">\n'
            f'<header><CREATION_DATE>{HEADER["CREATION_DATE"]}</CREATION_DATE>\n'
            f'<ORIGINATOR>{HEADER["ORIGINATOR"]}</ORIGINATOR></header>\n'
            f'<body><segment><metadata>{meta}</metadata>\n<data><meanElements>{mean}</meanElements>\n'
            f'<tleParameters>{tle}</tleParameters></data></segment></body></omm></ndm>\n')


def omm_json(records: list[dict]):
    return json.dumps(records, indent=1)


def omm_csv(records: list[dict]):
    keys = list(records[0])
    rows = [",".join(keys)] + [",".join(str(r[k]) for k in keys) for r in records]
    return "\n".join(rows) + "\n"


@pytest.fixture(scope="session")
def ts():
    from taubudget.physics.ephemeris import timescale

    return timescale()


def kepler_rows(kep, times, span):
    st = kep.states(span, np.atleast_1d(span.seconds_after_start(times)), None)
    return np.asarray(st.r_gcrs_m) / 1e3, np.asarray(st.v_gcrs_m_per_s) / 1e3


@pytest.fixture(scope="session")
def odm():
    """These writers, as a namespace (conftest modules are not importable by name)."""
    import sys

    return sys.modules[__name__]
