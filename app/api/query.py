"""The flat query string of ``GET /v1/budgets.csv`` and its mapping to a BudgetRequest.

Spreadsheets build URLs by hand, so the names are flat (``semi_major_axis_km``,
``tle_line1``, ``latitude_deg``) and the orbit type follows from which family of
names is present: TLE lines, surface coordinates, or Keplerian elements.
Errors found in the assembled request are reported with both the body pointer
and the query parameter the user typed.
"""

from __future__ import annotations

from typing import Any, Literal

from pydantic import AwareDatetime, BaseModel, ConfigDict, Field

from ..csv_format import BCRS_SUMMARY_FIELDS, CLOCK_SUMMARY_FIELDS, SUMMARY_FIELDS

SummaryField = Literal[tuple(dict.fromkeys(SUMMARY_FIELDS + BCRS_SUMMARY_FIELDS  # type: ignore[valid-type]
                                           + CLOCK_SUMMARY_FIELDS))]


class BudgetQuery(BaseModel):
    """Query parameters of the CSV endpoint (units in the names, as in the JSON body)."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)

    # Where the orbit or the surface clock is (default the Earth; others give a BCRS budget)
    center: Literal["earth", "sun", "moon", "mars"] | None = Field(None, examples=["earth"])
    reference_plane: Literal["icrf_equator", "ecliptic_j2000"] | None = None
    # Keplerian elements
    semi_major_axis_km: float | None = Field(None, examples=[26561.4])
    eccentricity: float | None = Field(None, examples=[0.01])
    inclination_deg: float | None = Field(None, examples=[55.0])
    ra_of_asc_node_deg: float | None = Field(None, examples=[30.0])
    arg_of_pericenter_deg: float | None = Field(None, examples=[45.0])
    mean_anomaly_deg: float | None = Field(None, examples=[120.0])
    epoch: AwareDatetime | None = Field(None, description="Epoch of the elements; default: start")
    j2_secular: bool | None = None
    element_type: Literal["osculating", "mean"] | None = Field(
        None, description="Earth orbits: osculating (default) or Brouwer mean elements")
    # Two-line elements
    tle_line1: str | None = Field(None, max_length=80)
    tle_line2: str | None = Field(None, max_length=80)
    # A clock on the ground
    latitude_deg: float | None = None
    longitude_deg: float | None = None
    height_m: float | None = None
    geoid_undulation_m: float | None = None
    orthometric_height_m: float | None = None
    # Reference, span, model, output
    reference: Literal["TT", "TAI", "GPS", "TCG", "TCB", "TDB", "lunar_surface"] = Field(
        "TT", examples=["GPS"])
    start: AwareDatetime = Field(examples=["2027-03-01T00:00:00Z"])
    end: AwareDatetime | None = None
    duration_days: float | None = Field(None, examples=[1.0])
    series_step_s: float | None = Field(None, description="With a step: one CSV row per output time")
    earth_zonal_degree: int | None = Field(None, examples=[2])
    sun: bool | None = Field(None, examples=[True])
    moon: bool | None = Field(None, examples=[True])
    nominal_frequency_hz: float | None = Field(None, examples=[10230000.0])
    # The oscillator (a preset only; the JSON body takes any clock description)
    clock_preset: str | None = Field(None, max_length=60, examples=["space_rubidium"],
                                     description="Generic oscillator preset; adds clock_error fields")
    time_error_budget_ns: float | None = Field(None, examples=[10.0], description="Needs clock_preset")
    k_sigma: float | None = Field(None, examples=[3.0])
    field: SummaryField | None = Field(
        None, description="Return only this summary field, as text/plain",
        examples=["mean_rate_us_per_day"],
    )


_KEPLER = {
    "semi_major_axis_km": "semi_major_axis_km", "eccentricity": "eccentricity",
    "inclination_deg": "inclination_deg", "ra_of_asc_node_deg": "ra_of_asc_node_deg",
    "arg_of_pericenter_deg": "arg_of_pericenter_deg", "mean_anomaly_deg": "mean_anomaly_deg",
    "epoch": "epoch", "j2_secular": "j2_secular", "element_type": "element_type",
}
_TLE = {"tle_line1": "line1", "tle_line2": "line2"}
_SURFACE = {
    "latitude_deg": "latitude_deg", "longitude_deg": "longitude_deg", "height_m": "height_m",
    "geoid_undulation_m": "geoid_undulation_m", "orthometric_height_m": "orthometric_height_m",
}
_FAMILIES = {"keplerian": _KEPLER, "tle": _TLE, "surface": _SURFACE}
_GRAVITY = ("earth_zonal_degree", "sun", "moon")
_TOP = ("reference", "start", "end", "duration_days", "series_step_s", "nominal_frequency_hz",
        "time_error_budget_ns", "k_sigma")


class QueryConflict(ValueError):
    def __init__(self, names: list[str], detail: str):
        super().__init__(detail)
        self.names, self.detail = names, detail


def _given(q: BudgetQuery, names) -> list[str]:
    return [n for n in names if getattr(q, n) is not None]


def orbit_type(q: BudgetQuery) -> str:
    """Which orbit family the parameters describe; ``QueryConflict`` if more than one."""
    present = {kind: _given(q, fam) for kind, fam in _FAMILIES.items()}
    # epoch, j2_secular and element_type alone do not make an orbit Keplerian
    kepler_core = [n for n in present["keplerian"] if n not in ("epoch", "j2_secular", "element_type")]
    families = [k for k in ("tle", "surface") if present[k]] + (["keplerian"] if kepler_core else [])
    if len(families) > 1:
        names = [n for k in families for n in present[k]]
        raise QueryConflict(names, "give one orbit: Keplerian elements, tle_line1/tle_line2, or "
                            f"latitude_deg/longitude_deg; got parameters of {' and '.join(families)}")
    return families[0] if families else "keplerian"


def to_request(q: BudgetQuery) -> dict[str, Any]:
    """The JSON body equivalent to the query (not yet validated)."""
    kind = orbit_type(q)
    orbit: dict[str, Any] = {"type": kind}
    for param, key in _FAMILIES[kind].items():
        value = getattr(q, param)
        if value is not None:
            orbit[key] = value
    if kind == "keplerian" and "epoch" not in orbit:
        orbit["epoch"] = q.start
    if q.center is not None:
        orbit["center"] = q.center
    if q.reference_plane is not None:
        orbit["reference_plane"] = q.reference_plane
    body: dict[str, Any] = {"orbit": orbit}
    for name in _TOP:
        value = getattr(q, name)
        if value is not None:
            body[name] = value
    gravity = {n: getattr(q, n) for n in _GRAVITY if getattr(q, n) is not None}
    if gravity:
        body["gravity"] = gravity
    if q.clock_preset is not None:
        body["clock"] = {"preset": q.clock_preset}
    return body


_POINTER_TO_PARAM = {
    **{f"/orbit/{key}": param for fam in _FAMILIES.values() for param, key in fam.items()},
    **{f"/gravity/{n}": n for n in _GRAVITY},
    **{f"/{n}": n for n in _TOP},
    "/clock/preset": "clock_preset",
    "/orbit/center": "center",
    "/orbit/reference_plane": "reference_plane",
}


def parameter_for(pointer: str) -> str | None:
    """Query parameter name for a body pointer, or None (e.g. the whole orbit)."""
    return _POINTER_TO_PARAM.get(pointer)


def with_parameters(errors: list[dict]) -> list[dict]:
    return [{**e, "parameter": parameter_for(e["pointer"])} for e in errors]
