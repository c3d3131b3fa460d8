"""Open orbit formats -> physics orbit sources (CCSDS ODM, TLE files, IGS SP3, RINEX clock).

Parsers take text (bounded in size), return plain data or a physics source, and
raise ``FormatError(line_number, keyword, reason)``. ``build_format_source``
maps a request model to a source and turns a FormatError into the service's
``PhysicsInputError`` on ``<prefix>.text`` (a 422 whose detail names the line
and the keyword).
"""

from __future__ import annotations

import numpy as np
from taubudget.physics.ephemeris import timescale
from taubudget.physics.errors import PhysicsInputError

from .common import FormatError
from .models import (
    FORMAT_ORBITS,
    TEXT_ORBITS,
    ForceModelIn,
    OemOrbitIn,
    OmmOrbitIn,
    OpmOrbitIn,
    Sp3OrbitIn,
    StateVectorOrbitIn,
    TleFileOrbitIn,
)

__all__ = ["FormatError", "FORMAT_ORBITS", "TEXT_ORBITS", "build_format_source", "format_sources",
           "OmmOrbitIn", "OpmOrbitIn", "OemOrbitIn", "Sp3OrbitIn", "TleFileOrbitIn", "StateVectorOrbitIn"]


def request_error(exc: PhysicsInputError, prefix: str, orbit) -> PhysicsInputError:
    """app/services/request_terms.request_error, imported when needed (the schemas import this
    package's models, and request_terms imports the schemas)."""
    from ..services.request_terms import request_error as in_request_terms

    return in_request_terms(exc, prefix, orbit)


def _numerical(epoch, r_m, v_m_per_s, force: ForceModelIn | None, gravity, label: str):
    """A numerically propagated source. Forces: the orbit's own ``force_model``; else ``gravity``
    (the request's gravity block: one field for the trajectory and the rate); else ForceModelIn's
    defaults."""
    from taubudget.physics.orbits.numerical import NumericalOrbit

    forces = force if force is not None else gravity if gravity is not None else ForceModelIn()
    return NumericalOrbit(epoch, r_m, v_m_per_s, forces.earth_zonal_degree, forces.sun, forces.moon,
                          label=label)


def _omm_sources(orbit: OmmOrbitIn, prefix: str):
    from taubudget.physics.orbits import TleOrbit

    from .omm import parse_omm

    elements = parse_omm(orbit.text, orbit.encoding)
    out = []
    for el in elements:
        src = TleOrbit.from_satrec(el.satrec(), timescale(), name=el.object_name or "clock")
        src.omm_defaults = el.defaults_used
        out.append((el.object_id or el.object_name, el.object_name, src))
    return out


def _pick(found: list, object_id: str | None, what: str):
    if object_id is None:
        if len(found) > 1:
            names = ", ".join(str(f[0]) for f in found[:10])
            raise FormatError(None, "object_id", f"the {what} holds {len(found)} objects ({names}); give "
                              "object_id or send it to the batch endpoint")
        return found[0]
    for f in found:
        if object_id in (f[0], f[1]):
            return f
    raise FormatError(None, "object_id", f"object {object_id!r} is not in the {what}")


def format_sources(orbit, prefix: str = "orbit", gravity=None) -> list[tuple[str, object]]:
    """Every object of a text orbit as (id, source): a multi-object file becomes a batch.
    ``gravity``: see ``build_format_source``."""
    try:
        if isinstance(orbit, OmmOrbitIn):
            found = _omm_sources(orbit, prefix)
            if orbit.object_id is not None:
                found = [_pick(found, orbit.object_id, "OMM")]
            return [(str(i), s) for i, _, s in found]
        if isinstance(orbit, TleFileOrbitIn):
            from taubudget.physics.orbits import TleOrbit

            from .tle_file import parse_tle_file, select

            entries = parse_tle_file(orbit.text)
            if orbit.object_id is not None:
                entries = [select(entries, orbit.object_id)]
            return [(e.name or e.catalogue_number, TleOrbit(e.line1, e.line2, timescale(), e.name))
                    for e in entries]
        if isinstance(orbit, Sp3OrbitIn):
            from .sp3 import parse_sp3, select_satellite, sp3_source

            sp3 = parse_sp3(orbit.text)
            if orbit.object_id:
                ids = [select_satellite(sp3, orbit.object_id)]
            else:  # the header's order, then any satellite with records but no header entry
                ids = [s for s in sp3.satellites if s in sp3.positions_km]
                ids += sorted(set(sp3.positions_km) - set(ids))
            return [(sid, sp3_source(sp3, sid, orbit.interpolation_degree)) for sid in ids]
        if isinstance(orbit, OpmOrbitIn):
            from .opm import parse_opm

            st = parse_opm(orbit.text)
            return [(st.object_id or st.object_name, build_format_source(orbit, prefix, gravity))]
        if isinstance(orbit, OemOrbitIn) and orbit.object_id is None:
            from .oem import oem_object_ids, parse_oem

            return [(oid, parse_oem(orbit.text, oid)) for oid in oem_object_ids(orbit.text)]
    except FormatError as exc:
        raise exc.to_physics(f"{prefix}.text") from None
    except PhysicsInputError as exc:
        raise request_error(exc, prefix, orbit) from None
    return [("1", build_format_source(orbit, prefix, gravity))]


def build_format_source(orbit, prefix: str = "orbit", gravity=None):
    """The physics orbit source of one format orbit model (PhysicsInputError if unusable).

    ``gravity``: the request's gravity block (earth_zonal_degree, sun, moon), the forces of a
    numerical propagation whose orbit gives no ``force_model``."""
    try:
        if isinstance(orbit, StateVectorOrbitIn):
            t = timescale().from_datetime(orbit.epoch)
            return _numerical(t, np.array(orbit.position_gcrs_km) * 1e3,
                              np.array(orbit.velocity_gcrs_km_per_s) * 1e3, orbit.force_model,
                              gravity, "state vector (GCRS)")
        if isinstance(orbit, OpmOrbitIn):
            from .opm import parse_opm

            st = parse_opm(orbit.text)
            if orbit.object_id is not None and orbit.object_id not in (st.object_id, st.object_name):
                raise FormatError(None, "OBJECT_ID",
                                  f"the OPM describes {st.object_id!r}, not {orbit.object_id!r}")
            return _numerical(st.epoch, st.r_gcrs_m, st.v_gcrs_m_per_s, orbit.force_model, gravity,
                              f"OPM {st.object_name} ({st.object_id}), {st.frame} -> GCRS")
        if isinstance(orbit, OemOrbitIn):
            from .oem import parse_oem

            return parse_oem(orbit.text, orbit.object_id)
        if isinstance(orbit, OmmOrbitIn):
            return _pick(_omm_sources(orbit, prefix), orbit.object_id, "OMM")[2]
    except FormatError as exc:
        raise exc.to_physics(f"{prefix}.text") from None
    except PhysicsInputError as exc:
        raise request_error(exc, prefix, orbit) from None
    if isinstance(orbit, TleFileOrbitIn | Sp3OrbitIn):
        found = format_sources(orbit, prefix)
        if len(found) > 1:
            raise PhysicsInputError(
                f"{prefix}.object_id", None,
                f"the file holds {len(found)} objects ({', '.join(i for i, _ in found[:10])}); give "
                "object_id or send it to the batch endpoint")
        return found[0][1]
    raise TypeError(f"not a format orbit: {type(orbit).__name__}")  # pragma: no cover
