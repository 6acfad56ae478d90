"""Physical and geodetic constants, each with its unit and published source.

Digits are kept as printed in the source. Derived ellipsoid constants are the
published values; ``tests/test_constants.py`` recomputes each of them from the
defining constants with mpmath (closed formulas of Moritz 1980 / NIMA TR8350.2
chapter 3) and checks they agree to the printed digits.

Sources
-------
[TR8350] National Imagery and Mapping Agency (2000). Department of Defense
    World Geodetic System 1984, its Definition and Relationships with Local
    Geodetic Systems. NIMA TR8350.2, 3rd ed., amendment 1 (2000). Table 3.1
    (defining parameters), Table 3.3 (derived geometric constants), Table 3.4
    (derived physical constants).
[Moritz80] Moritz, H. (1980/2000). Geodetic Reference System 1980. Bulletin
    Geodesique 54(3), 395-405; republished J. Geodesy 74 (2000) 128-133.
    Defining constants and the "derived constants" table.
[USSA76] NOAA, NASA, USAF (1976). U.S. Standard Atmosphere, 1976.
    NOAA-S/T 76-1562. Table 2 (adopted constants), Table 4 (layer bases).
[CGPM1901] 3rd General Conference on Weights and Measures (1901): standard
    acceleration of gravity g_n = 9.80665 m/s^2 (exact, by definition).
[WMO8] WMO (2018/2021). Guide to Instruments and Methods of Observation,
    WMO-No. 8, Volume I, Annex 4.B (formulae for the computation of
    measures of humidity).
"""

# --- Standard gravity -------------------------------------------------------
G0 = 9.80665
"""Standard acceleration of gravity g0, m/s^2, exact by definition [CGPM1901];
also the g0 of [USSA76] Table 2 that defines the geopotential metre:
1 gpm = 9.80665 m^2/s^2."""

# --- U.S. Standard Atmosphere 1976, Table 2 ----------------------------------
R_STAR = 8.31432
"""Universal gas constant R*, J/(mol K), as adopted in [USSA76] Table 2
(note: differs from the current CODATA value; the standard keeps this one)."""

M0_KG_MOL = 0.0289644
"""Mean molar mass of sea-level dry air M0, kg/mol [USSA76] Table 2
(printed as 28.9644 kg/kmol)."""

RD = R_STAR / M0_KG_MOL
"""Specific gas constant of dry air Rd = R*/M0 = 287.05307 J/(kg K), derived
from [USSA76] Table 2. Used for every hypsometric computation so a dry
standard-atmosphere profile reproduces the standard's tables. (The ICAO
standard atmosphere prints 287.05287 J/(kg K), from M0 = 28.96442 kg/kmol;
the two differ by 7e-7 relative, i.e. 8 mm over 11 km -- from memory.)"""

M_WATER_KG_MOL = 0.01801528
"""Molar mass of water vapour, kg/mol [WMO8] Annex 4.B (18.015 28 g/mol)."""

EPSILON = 0.621981
"""Ratio of molar masses of water vapour and dry air, Mv/Md = 18.01528/28.9644
= 0.621981 (dimensionless), as in [WMO8] Annex 4.B (printed 0.621 98)."""

RV = RD / EPSILON
"""Specific gas constant of water vapour Rv = Rd/epsilon, J/(kg K)
(461.52 J/(kg K)), consistent with RD and EPSILON above."""

P0_PA = 101325.0
"""Standard sea-level pressure, Pa [USSA76] Table 2 (also the ICAO value)."""

T0_K = 288.15
"""Standard sea-level temperature, K [USSA76] Table 2 (15 degC)."""

R0_M = 6356766.0
"""Effective Earth radius r0 used by [USSA76] (section 1.2.3, eq. 18) to
convert between geometric and geopotential height in its tables, m. tinygeo's
own height conversions use the normal gravity field instead; r0 is kept only
for checks against the standard's tables."""

ZERO_C_K = 273.15
"""0 degC in kelvin (exact, SI)."""


# --- Reference ellipsoids ----------------------------------------------------
class Ellipsoid:
    """A level ellipsoid with its normal gravity field: defining constants and
    the published derived constants needed by tinygeo.

    Attributes (all SI):
      name        'WGS84' or 'GRS80'
      a_m         semi-major axis a, m
      f           flattening f (dimensionless)
      gm          geocentric gravitational constant GM, m^3/s^2
      omega       angular velocity omega, rad/s
      b_m         semi-minor axis b, m
      e2          first eccentricity squared e^2
      ep2         second eccentricity squared e'^2
      lin_ecc_m   linear eccentricity E = sqrt(a^2 - b^2), m
      gamma_e     normal gravity at the equator, m/s^2
      gamma_p     normal gravity at the pole, m/s^2
      k_somigliana  Somigliana's constant k = (b gamma_p)/(a gamma_e) - 1
      m           m = omega^2 a^2 b / GM
      u0          normal potential on the ellipsoid U0, m^2/s^2
    """

    def __init__(self, name, a_m, f, gm, omega, b_m, e2, ep2, lin_ecc_m,
                 gamma_e, gamma_p, k_somigliana, m, u0):
        self.name = name
        self.a_m = a_m
        self.f = f
        self.gm = gm
        self.omega = omega
        self.b_m = b_m
        self.e2 = e2
        self.ep2 = ep2
        self.lin_ecc_m = lin_ecc_m
        self.gamma_e = gamma_e
        self.gamma_p = gamma_p
        self.k_somigliana = k_somigliana
        self.m = m
        self.u0 = u0

    def __repr__(self):
        return "Ellipsoid(%s)" % self.name


WGS84 = Ellipsoid(
    "WGS84",
    a_m=6378137.0,                 # [TR8350] Table 3.1
    f=1.0 / 298.257223563,         # [TR8350] Table 3.1 (1/f = 298.257223563)
    gm=3.986004418e14,             # [TR8350] Table 3.1 (GM incl. atmosphere)
    omega=7.292115e-5,             # [TR8350] Table 3.1
    b_m=6356752.3142,              # [TR8350] Table 3.3
    e2=6.69437999014e-3,           # [TR8350] Table 3.3
    ep2=6.73949674228e-3,          # [TR8350] Table 3.3
    lin_ecc_m=5.2185400842339e5,   # [TR8350] Table 3.3
    gamma_e=9.7803253359,          # [TR8350] Table 3.4
    gamma_p=9.8321849378,          # [TR8350] Table 3.4
    k_somigliana=0.00193185265241,  # [TR8350] Table 3.4
    m=0.00344978650684,            # [TR8350] Table 3.4
    u0=62636851.7146,              # [TR8350] Table 3.4
)
"""WGS 84 ellipsoid [TR8350]; the default everywhere in tinygeo."""

GRS80 = Ellipsoid(
    "GRS80",
    a_m=6378137.0,                 # [Moritz80] defining
    f=0.00335281068118,            # [Moritz80] derived (1/f = 298.257222101)
    gm=3.986005e14,                # [Moritz80] defining
    omega=7.292115e-5,             # [Moritz80] defining
    b_m=6356752.3141,              # [Moritz80] derived
    e2=0.00669438002290,           # [Moritz80] derived
    ep2=0.00673949677548,          # [Moritz80] derived
    lin_ecc_m=521854.0097,         # [Moritz80] derived
    gamma_e=9.7803267715,          # [Moritz80] derived
    gamma_p=9.8321863685,          # [Moritz80] derived
    k_somigliana=0.001931851353,   # [Moritz80] derived
    m=0.00344978600308,            # [Moritz80] derived
    u0=62636860.850,               # [Moritz80] derived
)
"""GRS 80 ellipsoid [Moritz80] (defining J2 = 108263e-8)."""

GRS80_J2 = 108263e-8
"""Dynamical form factor J2 of GRS 80 (defining constant) [Moritz80]."""


def check_ellipsoid(value):
    """Return tinygeo.WGS84 or tinygeo.GRS80 for ``value``; otherwise raise
    tinygeo.errors.RangeError.

    Accepted: those two objects, or an Ellipsoid whose defining constants
    (a_m, f, gm, omega) equal one of theirs (a copy, e.g. unpickled), which
    maps to it. Anything else (a name such as "WGS84", another ellipsoid) is
    refused with the same clear error everywhere an ellipsoid is taken: the
    geopotential series of tinygeo.potential exist for these two only."""
    for e in (WGS84, GRS80):
        if value is e or (isinstance(value, Ellipsoid) and value.a_m == e.a_m and value.f == e.f
                          and value.gm == e.gm and value.omega == e.omega):
            return e
    from .errors import RangeError, quote
    raise RangeError("ellipsoid=%s not supported; pass tinygeo.WGS84 or tinygeo.GRS80" % quote(value))
