"""Worked request bodies for the OpenAPI page, the README and the tests (invented scenarios)."""

EXAMPLE_REQUEST = {
    "orbit": {
        "type": "keplerian", "center": "earth", "epoch": "2027-03-01T00:00:00Z",
        "semi_major_axis_km": 26561.4, "eccentricity": 0.0, "inclination_deg": 55.0,
        "ra_of_asc_node_deg": 0.0, "arg_of_pericenter_deg": 0.0, "mean_anomaly_deg": 0.0,
    },
    "reference": "TT",
    "start": "2027-03-01T00:00:00Z", "end": "2027-03-02T00:00:00Z",
    "gravity": {"earth_zonal_degree": 0, "sun": False, "moon": False},
    "series_step_s": 900, "nominal_frequency_hz": 10230000.0,
}

EXAMPLE_LEO_J2_REQUEST = {
    "orbit": {
        "type": "keplerian", "epoch": "2027-05-10T00:00:00Z",
        "semi_major_axis_km": 7078.137, "eccentricity": 0.0011, "inclination_deg": 97.9,
        "ra_of_asc_node_deg": 40.0, "arg_of_pericenter_deg": 90.0, "mean_anomaly_deg": 15.0,
        "element_type": "mean",
    },
    "reference": "TAI",
    "start": "2027-05-10T00:00:00Z", "duration_days": 0.5,
    "gravity": {"earth_zonal_degree": 4, "sun": True, "moon": True},
}
"""An invented sun-synchronous-like low orbit given as Brouwer mean elements, half a day against TAI."""

EXAMPLE_GROUND_REQUEST = {
    "orbit": {"type": "surface", "latitude_deg": 46.61, "longitude_deg": 10.27, "height_m": 1200.0,
              "geoid_undulation_m": 48.0},
    "reference": "TT",
    "start": "2027-01-01T00:00:00Z", "duration_days": 1.0,
}
"""An invented mountain-laboratory clock against TT."""

EXAMPLE_LUNAR_REQUEST = {
    "orbit": {"type": "surface", "center": "moon", "latitude_deg": -12.5, "longitude_deg": 23.4,
              "height_m": 0.0},
    "reference": "TT",
    "start": "2028-01-01T00:00:00Z", "duration_days": 27.55,
    "series_step_s": 86400,
}
"""An invented lunar-surface beacon clock against TT (barycentric budget) over one month."""

EXAMPLE_HELIOCENTRIC_REQUEST = {
    "orbit": {"type": "keplerian", "center": "sun", "reference_plane": "ecliptic_j2000",
              "epoch": "2030-04-01T00:00:00Z", "semi_major_axis_km": 188000000.0, "eccentricity": 0.2,
              "inclination_deg": 1.5, "ra_of_asc_node_deg": 40.0, "arg_of_pericenter_deg": 200.0,
              "mean_anomaly_deg": 10.0},
    "reference": "TDB",
    "start": "2030-04-01T00:00:00Z", "duration_days": 10.0,
    "series_step_s": 86400,
    "link_station": {"type": "surface", "latitude_deg": -30.2, "longitude_deg": 149.1, "height_m": 300.0},
}
"""An invented heliocentric cruise probe against TDB, with the light time to a ground station."""

EXAMPLE_BATCH_REQUEST = {
    "defaults": {
        "reference": "GPS", "start": "2027-03-01T00:00:00Z", "duration_days": 1.0,
        "gravity": {"earth_zonal_degree": 2, "sun": True, "moon": True},
    },
    "items": [
        {"id": "kestrel-01", "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                                       "semi_major_axis_km": 26561.4, "eccentricity": 0.004,
                                       "inclination_deg": 55.0, "mean_anomaly_deg": 10.0}},
        {"id": "kestrel-02", "orbit": {"type": "keplerian", "epoch": "2027-03-01T00:00:00Z",
                                       "semi_major_axis_km": 26561.4, "eccentricity": 0.012,
                                       "inclination_deg": 55.0, "ra_of_asc_node_deg": 60.0},
         "nominal_frequency_hz": 10230000.0},
    ],
}
"""Two invented navigation satellites sharing reference, span and gravity."""

EXAMPLE_STABILITY_REQUEST = {
    "data": [892, 809, 823, 798, 671, 644, 883, 903, 677],
    "data_type": "frequency", "sample_interval_s": 1.0, "confidence": 0.683,
}
"""The NBS 9-point data set (NIST SP 1065, Table 30), as fractional frequency."""
