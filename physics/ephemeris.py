"""Timescale and planetary ephemeris, loaded from installed packages only.

Nothing here touches the network: the timescale is skyfield's builtin one
(leap seconds and Delta T shipped inside skyfield) and the ephemeris is JPL
DE421 (Folkner et al. 2009) as shipped inside the ``skyfield-data`` package,
valid 1899-07-29 to 2053-10-08. The path is built by hand because
``skyfield_data.get_skyfield_data_path()`` warns about the package's expired
IERS file, which we do not use.
"""

from __future__ import annotations

import functools
import importlib.metadata
import os

from skyfield.api import load, load_file

DE421_FILENAME = "de421.bsp"

# DE421 coverage, as JD TDB (from the kernel's segment table), trimmed by one
# day at each end so that coarse interpolation grids fit inside.
DE421_FIRST_JD_TDB = 2414864.5 + 1.0
DE421_LAST_JD_TDB = 2471184.5 - 1.0


def de421_path() -> str:
    """Return the filesystem path of DE421 inside the installed skyfield-data package."""
    import skyfield_data

    path = os.path.join(os.path.dirname(skyfield_data.__file__), "data", DE421_FILENAME)
    if not os.path.exists(path):
        raise FileNotFoundError(
            f"DE421 not found at {path}; reinstall the 'skyfield-data' package"
        )
    return path


@functools.lru_cache(maxsize=1)
def timescale():
    """Return skyfield's builtin timescale (no download)."""
    return load.timescale(builtin=True)


@functools.lru_cache(maxsize=1)
def ephemeris():
    """Return the DE421 SPICE kernel opened from the installed package."""
    return load_file(de421_path())


def versions() -> dict[str, str]:
    """Versions of the libraries and data that define the numbers, for provenance."""
    out = {}
    for dist in ("skyfield", "skyfield-data", "sgp4", "jplephem", "numpy", "scipy"):
        try:
            out[dist] = importlib.metadata.version(dist)
        except importlib.metadata.PackageNotFoundError:  # pragma: no cover
            out[dist] = "not installed"
    out["ephemeris"] = "JPL DE421 (skyfield-data)"
    return out
