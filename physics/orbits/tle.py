"""Two-line elements propagated with SGP4, at the bare propagator's cost per node.

skyfield's ``EarthSatellite`` parses the lines and holds the ``Satrec``; its
GCRS conversion, however, evaluates the nutation series at every instant. We
call ``Satrec.sgp4_array`` directly with skyfield's own time convention (the
TLE epoch and SGP4 time argument are UTC Julian dates, AIAA 2006-6753;
``EarthSatellite._position_and_velocity_TEME_km``), and rotate TEME -> GCRS
with the coarse-grid rotation of ``physics.frames`` (skyfield's ``TEME``
frame). Speeds and radii are frame-independent, so only the tidal and zonal
terms see the interpolated rotation.

SGP4 error codes (Vallado et al. 2006, AIAA 2006-6753, sgp4 package) come back
per node as values, never as an exception part-way through an array.
"""

from __future__ import annotations

import numpy as np
from sgp4.api import SGP4_ERRORS
from skyfield.api import EarthSatellite

from ..constants import EARTH_EQUATORIAL_RADIUS_M
from ..errors import PhysicsInputError
from .base import OrbitSource, States, check_perigee_altitude


def tle_checksum_ok(line: str) -> bool:
    """True if column 69 holds the modulo-10 checksum (digits, '-' counts 1)."""
    if len(line) < 69 or not line[68].isdigit():
        return False
    total = sum(int(ch) if ch.isdigit() else (1 if ch == "-" else 0) for ch in line[:68])
    return total % 10 == int(line[68])


def _check_perigee(rec, field: str, value) -> None:
    """Refuse mean elements whose perigee lies inside the Earth or below 100 km, before SGP4 runs
    into a decay error mid-span. ``rec.altp``: SGP4's perigee height, Earth radii (WGS-72)."""
    perigee_radius_m = (float(rec.altp) + 1.0) * float(rec.radiusearthkm) * 1e3
    if perigee_radius_m <= EARTH_EQUATORIAL_RADIUS_M:
        raise PhysicsInputError(
            field, value,
            f"the mean elements' perigee radius {perigee_radius_m / 1e3:.0f} km (mean motion "
            f"{float(rec.no_kozai) * 1440.0 / (2.0 * np.pi):.6g} rev/day, "
            f"eccentricity {float(rec.ecco):.6g}) "
            f"is below the Earth's equatorial radius {EARTH_EQUATORIAL_RADIUS_M / 1e3:.0f} km")
    check_perigee_altitude(perigee_radius_m, field, value)


class TleOrbit(OrbitSource):
    """A TLE propagated with SGP4 (WGS-72 constants, as SGP4 requires)."""

    kind = "tle"

    def __init__(self, line1: str, line2: str, ts, name: str | None = None):
        line1, line2 = line1.rstrip(), line2.rstrip()
        for field, line, number in (("line1", line1, "1"), ("line2", line2, "2")):
            if len(line) != 69 or not line.startswith(number + " "):
                raise PhysicsInputError(
                    field, line,
                    f"a TLE line {number} has 69 characters and starts with '{number} ' "
                    f"(got {len(line)} characters)",
                )
            if not tle_checksum_ok(line):
                raise PhysicsInputError(
                    field, line, f"TLE line {number} fails its modulo-10 checksum in column 69"
                )
        if line1[2:7] != line2[2:7]:
            raise PhysicsInputError(
                "line2", line2,
                f"catalogue numbers differ between line 1 ({line1[2:7]}) and line 2 ({line2[2:7]})",
            )
        try:
            self.sat = EarthSatellite(line1, line2, name or "clock", ts)
        except Exception as exc:  # sgp4 raises ValueError on malformed fields
            raise PhysicsInputError("line1", line1, f"SGP4 cannot parse the TLE: {exc}") from exc
        rec = self.sat.model
        if rec.error:
            raise PhysicsInputError(
                "line2", line2, f"SGP4 rejects the elements: {SGP4_ERRORS[rec.error]}"
            )
        if rec.no_kozai <= 0.0:
            raise PhysicsInputError("line2", line2, "mean motion must be positive")
        _check_perigee(rec, "line2", line2)
        self.line1, self.line2 = line1, line2

    @classmethod
    def from_satrec(cls, satrec, ts, name: str = "clock") -> TleOrbit:
        """Wrap an already initialised ``sgp4.api.Satrec`` (e.g. from ``sgp4init``)."""
        if satrec.error:
            raise PhysicsInputError("orbit", None, f"SGP4 rejects the elements: {SGP4_ERRORS[satrec.error]}")
        _check_perigee(satrec, "orbit", None)
        self = cls.__new__(cls)
        self.sat = EarthSatellite.from_satrec(satrec, ts)
        self.sat.name = name
        self.line1 = self.line2 = None
        return self

    def epoch(self):
        return self.sat.epoch

    def period_s(self) -> float:
        # no_kozai is in rad/min (sgp4's unit).
        return 2.0 * np.pi / self.sat.model.no_kozai * 60.0

    def states(self, span, t_s, orientation) -> States:
        t_s = np.asarray(t_s, dtype=float)
        # UTC Julian date as skyfield's EarthSatellite builds it (tested against skyfield).
        whole, fraction = span.utc_jd_parts(t_s)
        err, r_km, v_km_s = self.sat.model.sgp4_array(whole, np.ascontiguousarray(fraction))
        code = err.astype(np.int8)
        rot = orientation.teme_to_gcrs_matrices(t_s)
        r = np.einsum("nji,nj->ni", rot, r_km) * 1e3
        v = np.einsum("nji,nj->ni", rot, v_km_s) * 1e3
        # TEME's z axis is the true pole of date, so the Earth-fixed latitude needs no rotation
        # (polar motion, < 1e-6 rad, is omitted throughout).
        sin_lat = r_km[:, 2] / np.linalg.norm(r_km, axis=1)
        bad = code != 0
        if bad.any():
            r[bad] = np.nan
            v[bad] = np.nan
        messages = {int(c): SGP4_ERRORS[int(c)] for c in np.unique(code[bad])}
        return States(r, v, code, messages, sin_lat=sin_lat)

    def describe(self) -> dict:
        return {
            "type": self.kind,
            "propagation": "SGP4 (sgp4 package, WGS-72 constants), TEME -> GCRS by skyfield",
            "satellite_number": self.sat.model.satnum_str
            if hasattr(self.sat.model, "satnum_str") else str(self.sat.model.satnum),
            "tle_epoch": self.sat.epoch,
            "period_s": self.period_s(),
        }
