"""Physical and conventional constants, each with its unit and source.

SI units throughout. Sources are abbreviated as:

- TN36: IERS Conventions (2010), IERS Technical Note No. 36, G. Petit and
  B. Luzum (eds.), Table 1.1 ("IERS numerical standards") unless another
  table or equation is named.
- IAU2009: IAU 2009 System of Astronomical Constants (Luzum et al. 2011,
  Celest. Mech. Dyn. Astr. 110:293), as reproduced in TN36 Table 1.1.
- DE421: Folkner, Williams & Boggs (2008), "The Planetary and Lunar
  Ephemeris DE 421", JPL IOM 343R-08-003 (IPN Progress Report 42-178); its
  mass parameters (GM in km^3/s^2, TDB-compatible) as published in IERS
  Conventions 2010 (TN36) Table 3.1, and its astronomical unit
  149597870.6996262 km (TN36 section 3.1); checked in
  tests/physics/test_against_published_constants.py.
- GRS80: H. Moritz, "Geodetic Reference System 1980", Bulletin Geodesique
  54 (1980) 395, and J. Geodesy 74 (2000) 128 (defining and derived
  constants).
- WGS84: NIMA TR8350.2, "Department of Defense World Geodetic System 1984",
  3rd ed. (2000), Tables 3.1 and 3.3.
- EGM2008: Pavlis, Holmes, Kenyon & Factor (2012), J. Geophys. Res. 117,
  B04406; fully normalised tide-free coefficients of the released
  coefficient file EGM2008.gfc (n, m = 2..4 checked digit for digit in
  tests/physics/test_against_published_constants.py; C50, C60 as carried by
  the IERS Conventions 2010 software for EGM2008).
- IS-GPS-200: Navstar GPS Space Segment / Navigation User Interfaces,
  IS-GPS-200 (revision N), section 20.3.3.3.3.1 and Table 20-IV.
"""

from __future__ import annotations

import math

# --- Defining constants -----------------------------------------------------

C_M_PER_S = 299_792_458.0
"""Speed of light in vacuum, m/s (defining; TN36 Table 1.1)."""

C2_M2_PER_S2 = C_M_PER_S * C_M_PER_S
"""c^2, m^2/s^2 (derived)."""

L_G = 6.969290134e-10
"""1 - d(TT)/d(TCG), dimensionless (defining; IAU 2000 Resolution B1.9, TN36 Table 1.1)."""

L_B = 1.550519768e-8
"""1 - d(TDB)/d(TCB), dimensionless (defining; IAU 2006 Resolution B3, TN36 Table 1.1)."""

TDB0_S = -6.55e-5
"""TDB - TT offset constant at 1977 Jan 1.0 TAI, s (defining; IAU 2006 Resolution B3, TN36)."""

L_C = 1.48082686741e-8
"""Average value of 1 - d(TCG)/d(TCB) along the geocentre, dimensionless (TN36 Table 1.1)."""

W0_M2_PER_S2 = 62_636_856.0
"""Potential of the geoid, m^2/s^2 (TN36 Table 1.1; L_G = W0/c^2)."""

TT_MINUS_TAI_S = 32.184
"""TT - TAI, s (defining; IAU 1991 Resolution A4, TN36 section 10.1)."""

TAI_MINUS_GPS_S = 19.0
"""TAI - GPS time, s (GPS time began at 1980 Jan 6.0 UTC, when TAI - UTC was 19 s; IS-GPS-200
section 3.3.4)."""

T0_JD_TT = 2443144.5003725
"""TT Julian date of 1977 Jan 1.0 TAI, when TT, TCG and TCB agree (TN36 eq. 10.1-10.3)."""

# --- Earth ------------------------------------------------------------------

GM_EARTH_TCG_M3_PER_S2 = 3.986004418e14
"""Geocentric gravitational constant, TCG-compatible, m^3/s^2 (TN36 Table 1.1)."""

GM_EARTH_TT_M3_PER_S2 = 3.986004415e14
"""Geocentric gravitational constant, TT-compatible, m^3/s^2 (TN36 Table 1.1)."""

EARTH_EQUATORIAL_RADIUS_M = 6_378_136.6
"""Earth's equatorial radius (zero-tide), m (TN36 Table 1.1)."""

EARTH_J2 = 1.0826359e-3
"""Earth's dynamical form factor J2, dimensionless (TN36 Table 1.1)."""

EARTH_ROTATION_RATE_RAD_PER_S = 7.292115e-5
"""Nominal mean angular velocity of the Earth, rad/s (TN36 Table 1.1; GRS80; WGS84)."""

# EGM2008 reference radius and fully normalised zonal coefficients C(n,0).
EGM2008_REFERENCE_RADIUS_M = 6_378_136.3
"""Reference radius of the EGM2008 harmonic expansion, m (EGM2008)."""

EGM2008_NORMALIZED_ZONALS = {
    2: -0.484165143790815e-3,
    3: 0.957161207093473e-6,
    4: 0.539965866638991e-6,
    5: 0.686702913736681e-7,
    6: -0.149953927978527e-6,
}
"""Fully normalised C(n,0), tide-free, dimensionless, n = 2..6 (EGM2008 coefficient file)."""

EGM2008_C22 = 0.243938357328313e-05
"""Fully normalised C(2,2), tide-free, dimensionless (EGM2008 coefficient file)."""

EGM2008_S22 = -0.140027370385934e-05
"""Fully normalised S(2,2), tide-free, dimensionless (EGM2008 coefficient file)."""

EGM2008_J = {n: -math.sqrt(2 * n + 1) * c for n, c in EGM2008_NORMALIZED_ZONALS.items()}
"""Unnormalised zonal coefficients J_n = -sqrt(2n+1) C(n,0), dimensionless (EGM2008; standard
de-normalisation, e.g. Heiskanen & Moritz 1967 eq. 1-82 for m = 0)."""

MAX_ZONAL_DEGREE = max(EGM2008_J)
"""Highest zonal degree the satellite field carries (EGM2008 J2..J6)."""

# --- Reference ellipsoids ---------------------------------------------------

WGS84_A_M = 6_378_137.0
"""WGS-84 semi-major axis, m (WGS84 Table 3.1)."""

WGS84_INV_F = 298.257223563
"""WGS-84 inverse flattening, dimensionless (WGS84 Table 3.1)."""

WGS84_GM_M3_PER_S2 = 3.986004418e14
"""WGS-84 GM including the atmosphere, m^3/s^2 (WGS84 Table 3.1)."""

GRS80_A_M = 6_378_137.0
"""GRS80 semi-major axis, m (GRS80, defining)."""

GRS80_GM_M3_PER_S2 = 3.986005e14
"""GRS80 geocentric gravitational constant including the atmosphere, m^3/s^2 (GRS80, defining)."""

GRS80_J2 = 1.08263e-3
"""GRS80 dynamical form factor, dimensionless (GRS80, defining)."""

GRS80_OMEGA_RAD_PER_S = 7.292115e-5
"""GRS80 angular velocity, rad/s (GRS80, defining)."""

GRS80_E2 = 0.00669438002290
"""GRS80 first eccentricity squared, dimensionless (GRS80, derived constants)."""

GRS80_INV_F = 298.257222101
"""GRS80 inverse flattening, dimensionless (GRS80, derived constants)."""

GRS80_U0_M2_PER_S2 = 62_636_860.850
"""Normal potential on the GRS80 ellipsoid, m^2/s^2 (GRS80, derived constants)."""

GRS80_GAMMA_E_M_PER_S2 = 9.7803267715
"""GRS80 normal gravity at the equator, m/s^2 (GRS80, derived constants)."""

GRS80_GAMMA_P_M_PER_S2 = 9.8321863685
"""GRS80 normal gravity at the poles, m/s^2 (GRS80, derived constants)."""

GRS80_PUBLISHED_J = {2: 1.08263e-3, 4: -0.00000237091222, 6: 0.00000000608347, 8: -0.00000000001427}
"""GRS80 zonal harmonics J2..J8 of the normal field, dimensionless (GRS80, derived constants, Moritz
2000); the code computes them from the closed form (Moritz 2000 eq. for J2n) and tests against these,
J8 included (tests/physics/test_against_grs80.py)."""

# --- Solar system bodies (DE421 GM values, TDB-compatible) --------------------

_KM3 = 1e9  # km^3 -> m^3

GM_SUN_M3_PER_S2 = 132_712_440_040.944 * _KM3
"""Heliocentric gravitational constant, m^3/s^2 (DE421: k^2 au^3/day^2 with Gauss's k = 0.01720209895
and DE421's au of 149597870.6996262 km, TN36 section 3.1)."""

GM_MOON_M3_PER_S2 = 4_902.800_076 * _KM3
"""Lunar gravitational constant, m^3/s^2 (DE421, TN36 Table 3.1)."""

GM_EARTH_DE421_M3_PER_S2 = 398_600.436_233 * _KM3
"""Earth GM as used in DE421, m^3/s^2 (DE421, TN36 Table 3.1); for barycentric sums only."""

GM_PLANET_SYSTEMS_M3_PER_S2 = {
    "mercury": 22_032.090 * _KM3,
    "venus": 324_858.592 * _KM3,
    "mars": 42_828.375_214 * _KM3,
    "jupiter": 126_712_764.800 * _KM3,
    "saturn": 37_940_585.200 * _KM3,
    "uranus": 5_794_548.6 * _KM3,
    "neptune": 6_836_535.0 * _KM3,
}
"""GM of planetary systems (planet plus satellites), m^3/s^2 (DE421, TN36 Table 3.1)."""

MOON_MEAN_RADIUS_M = 1_737_400.0
"""Mean radius of the Moon, m (IAU WGCCRE 2015, Archinal et al. 2018, Celest. Mech. 130:22)."""

# --- GPS conventions (IS-GPS-200) ----------------------------------------------

GPS_MU_M3_PER_S2 = 3.986005e14
"""WGS-84 value of the Earth's gravitational parameter for GPS user equations, m^3/s^2
(IS-GPS-200 Table 20-IV)."""

GPS_OMEGA_E_RAD_PER_S = 7.2921151467e-5
"""WGS-84 value of the Earth's rotation rate for GPS user equations, rad/s (IS-GPS-200 Table 20-IV)."""

GPS_NOMINAL_FREQUENCY_HZ = 10.23e6
"""Nominal fundamental frequency of the GPS satellite clock, Hz (IS-GPS-200 section 3.3.1.1)."""

GPS_F_S_PER_SQRT_M = -2.0 * math.sqrt(GPS_MU_M3_PER_S2) / C2_M2_PER_S2
"""Relativistic correction constant F = -2 sqrt(mu)/c^2, s/m^(1/2)
(IS-GPS-200 section 20.3.3.3.3.1; published as -4.442807633e-10)."""

# --- Derived helpers ----------------------------------------------------------

SECONDS_PER_DAY = 86_400.0
"""Seconds in a day of 86,400 SI seconds (definition)."""

AU_M = 149_597_870_700.0
"""Astronomical unit, m (defining; IAU 2012 Resolution B2, TN36 Table 1.1)."""

# --- Other bodies (radii for surface clocks and perigee checks) ---------------

SUN_NOMINAL_RADIUS_M = 695_700_000.0
"""Nominal solar radius, m (IAU 2015 Resolution B3)."""

MARS_MEAN_RADIUS_M = 3_389_500.0
"""Mean radius of Mars, m (IAU WGCCRE 2015, Archinal et al. 2018)."""

MOON_ANOMALISTIC_MONTH_S = 27.554550 * 86_400.0
"""Anomalistic month, s (common practice; mean value for J2000)."""

MARS_SIDEREAL_PERIOD_S = 686.980 * 86_400.0
"""Sidereal orbital period of Mars, s (common practice)."""

OBLIQUITY_J2000_RAD = 84_381.406 / 3600.0 * math.pi / 180.0
"""Mean obliquity of the ecliptic at J2000.0, rad (IAU 2006 precession, TN36 eq. 5.40)."""

# --- Oscillator classes (typical figures from the literature) -------------------

DAYS_PER_MONTH = 365.25 / 12.0
"""Mean days per month (Julian year / 12), to turn a per-month ageing figure into per day."""

# Chip-scale atomic clock, figures from the published literature (typical values):
CSAC_ADEV_AT_1S = 2.4e-10
"""Short-term instability 2.4e-10 / sqrt(tau) of a chip-scale atomic frequency reference (Kitching,
Knappe, Liew et al., "Chip-Scale Atomic Frequency References: Fabrication and Performance",
19th European Frequency and Time Forum, Besancon, 2005; NIST publication)."""
CSAC_ADEV_AT_1000S = 1e-11
"""ADEV about 1e-11 at 1000 s of averaging for chip-scale atomic clocks (Martinez, Li, Staron,
Kitching, Raman, McGehee, "A chip-scale atomic beam clock", Nature Communications 14, 3501
(2023), doi:10.1038/s41467-023-39166-1, introduction)."""
CSAC_DRIFT_PER_MONTH = 1e-9
"""Frequency drift of about 1e-9 per month beyond 1000 s (Martinez et al. 2023, as above)."""

# --- Sizes used only to state what the model omits (orders of magnitude) -------

MEAN_MOON_DISTANCE_M = 384_400e3
"""Mean Earth-Moon distance, m (common practice)."""

VENUS_CLOSEST_DISTANCE_M = 4.1e10
"""Earth-Venus distance near inferior conjunction, m (common practice; ~0.27 au)."""

EGM2008_C22_S22_NORMALIZED = math.hypot(EGM2008_C22, EGM2008_S22)
"""Size of the normalised degree-2 sectoral coefficients sqrt(C22^2 + S22^2) of EGM2008, 2.8127e-6,
dimensionless (EGM2008 coefficient file; sizes an omitted term)."""

MOON_J2 = 2.03e-4
"""Lunar J2, dimensionless (common practice; only sizes an omitted term)."""

MARS_J2 = 1.96e-3
"""Mars J2, dimensionless (common practice; only sizes an omitted term)."""

GEOID_UNDULATION_MAX_M = 107.0
"""Largest |geoid height| above the ellipsoid, m (common practice; EGM2008 spans about -107 to
+86 m)."""

NOMINAL_GRAVITY_M_PER_S2 = 9.81
"""Surface gravity to turn a height into a potential, m/s^2 (common practice)."""

# --- Orbits the atmosphere allows ---------------------------------------------------

MIN_ORBIT_PERIGEE_ALTITUDE_M = 100_000.0
"""Lowest perigee altitude above the equatorial radius accepted for an orbiting clock, m: the
100 km line that the FAI (Federation Aeronautique Internationale) uses as the boundary of space.
Below it the air is dense enough that a satellite re-enters within its first revolutions, so a
drag-free orbit there is meaningless (the threshold itself is a convention; common practice)."""
