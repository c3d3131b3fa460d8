"""An invented long OEM: a circular two-body orbit sampled every 60 s (test load only)."""

from __future__ import annotations

import numpy as np

GM_KM3_PER_S2 = 398600.4418  # IERS TN36 Table 1.1 (TT-compatible GM of the Earth), km^3/s^2


def circular_oem(lines: int, radius_km: float = 26561.4, step_s: float = 60.0) -> str:
    """KVN OEM text with ``lines`` state lines from 2027-03-01T00:00:00 UTC, equatorial circle."""
    t = np.arange(lines) * step_s
    n = np.sqrt(GM_KM3_PER_S2 / radius_km**3)
    v = n * radius_km
    x, y = radius_km * np.cos(n * t), radius_km * np.sin(n * t)
    vx, vy = -v * np.sin(n * t), v * np.cos(n * t)
    start = np.datetime64("2027-03-01T00:00:00", "s")
    stamps = (start + t.astype("timedelta64[s]")).astype(str)
    rows = "\n".join(f"{s}.000 {a:.6f} {b:.6f} 0.0 {c:.9f} {d:.9f} 0.0"
                     for s, a, b, c, d in zip(stamps, x, y, vx, vy, strict=True))
    head = ("CCSDS_OEM_VERS = 2.0\nCREATION_DATE = 2027-02-28T00:00:00\nORIGINATOR = TAUBUDGET-TEST\n"
            "META_START\nOBJECT_NAME = PLOVER-LONG-1\nOBJECT_ID = 2027-990L\nCENTER_NAME = EARTH\n"
            "REF_FRAME = GCRF\nTIME_SYSTEM = UTC\n"
            f"START_TIME = {stamps[0]}.000\nSTOP_TIME = {stamps[-1]}.000\nMETA_STOP\n")
    return head + rows + "\n"
