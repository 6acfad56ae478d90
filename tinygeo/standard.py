"""The U.S. Standard Atmosphere 1976 (= ICAO Standard Atmosphere below 32 km):
temperature and pressure at a geopotential height, and pressure altitude.

Model
-----
[USSA76] NOAA, NASA, USAF (1976). U.S. Standard Atmosphere, 1976.
NOAA-S/T 76-1562, Washington D.C.

* Table 2: adopted constants g0' = 9.80665 m^2/(s^2 m'), R* = 8.31432 J/(mol K),
  M0 = 28.9644 kg/kmol, P0 = 101325 Pa, T0 = 288.15 K (tinygeo.constants).
* Table 4: the seven layers of linear molecular-scale temperature in
  geopotential height H (gpm), with base height Hb, base temperature T_Mb and
  lapse rate L_Mb (K per km'):

      b   Hb (gpm)   T_Mb (K)   L_Mb (K/km')   Pb (Pa, as printed in Table 4)
      0        0      288.15      -6.5          101325.0
      1    11000      216.65       0.0           22632.06
      2    20000      216.65      +1.0            5474.889
      3    32000      228.65      +2.8             868.0187
      4    47000      270.65       0.0             110.9063
      5    51000      270.65      -2.8              66.93887
      6    71000      214.65      -2.0               3.956420
      top  84852      186.946                        0.3733836

* eq. 23: T_M = T_Mb + L_Mb (H - Hb)
* eq. 33a (L_Mb != 0): P = Pb [T_Mb / (T_Mb + L_Mb (H - Hb))] ** (g0' M0 / (R* L_Mb))
* eq. 33b (L_Mb == 0): P = Pb exp(-g0' M0 (H - Hb) / (R* T_Mb))
* eq. 18: H = r0 Z / (r0 + Z), r0 = 6 356 766 m (geometric Z <-> geopotential H).

Equation and table numbers are from memory. The ICAO Standard Atmosphere
(ICAO Doc 7488, 3rd ed. 1993, from memory) uses the same constants and the same layers up
to 32 km (and beyond, to 80 km, in its extension).

Range
-----
From -5003.94 gpm (= -5000 m geometric, the first row of the standard's
Table I; layer 0 extended downward as the standard does) to 84 852 gpm
(= 86 km geometric, where the 1976 standard's piecewise-linear molecular-
scale temperature profile ends). Outside, ``ModelRangeError``.

Temperature is the molecular-scale temperature T_M. It equals the kinetic
temperature T printed in Table I up to 80 km geometric (79 005.7 gpm). Above,
T = T_M (M/M0) with M/M0 falling to 0.999579 at 86 km [USSA76 Table 8, from
memory], so Table I's kinetic T is up to 0.08 K lower than T_M (186.87 K vs
186.946 K at the top). Pressure is not affected (eq. 33 uses T_M).

Base pressures
--------------
The standard defines Pb by applying eq. 33a/33b from P0 layer by layer; Table 4
prints them rounded to 7 digits. This module stores Pb as double literals
computed once, off-line, with mpmath (40 digits) from those equations, so the
profile is continuous across every layer boundary to double rounding, and
devices do no import-time chain of exp/pow (which in binary32 would add up
rounding errors layer after layer). tests/test_standard.py recomputes them
with mpmath and checks that they round to the digits printed in Table 4.

Numerics
--------
Both directions are written in one form for all layers, without dividing by
L_Mb and without logs of close numbers:

    ln(P/Pb) = -(g0/(Rd T_Mb)) dH q(L_Mb dH / T_Mb),  q(x) = ln(1+x)/x
    dH = y e(L_Mb y / T_Mb),  y = (Rd T_Mb/g0) ln(Pb/P),  e(x) = (exp(x)-1)/x

which equal eq. 33a (and 33b when L_Mb = 0, q = e = 1). ln(1+x) is
Kahan's form x ln(u)/(u-1), u = 1+x (MicroPython has no math.log1p),
ln(Pb/P) is ln(1+d) with d = (Pb-P)/P (Pb-P exact when P is near Pb), and
(exp(x)-1) is math.expm1. So pressure altitude near sea level keeps a few
ulps of relative accuracy even in binary32: under 0.3 mm from sea level to
1 km with binary32 rounding of every operation (tests/floatemu.py, and numpy
in tests/test_standard.py::test_float32_near_sea_level), against about 6 mm for
the naive ln(p) - ln(P0); about 6 mm (under one ulp of the height) over the whole
range; about 2 mm near sea level and 6 cm at the top with 30-bit floats.

The ln(1 + x) of ``pressure_at``/``altitude_at`` is written out here on purpose
so the standard atmosphere depends on nothing but constants and errors;
tinygeo.layers.ln_ratio is the public stable ln(p1/p2).
"""
import math

from .constants import G0, RD, R0_M
from .errors import ModelRangeError, as_finite, check_range, pressure_hint

# --- [USSA76] Table 4 ---------------------------------------------------------
_H_BASE = (0.0, 11000.0, 20000.0, 32000.0, 47000.0, 51000.0, 71000.0)
"""Layer base geopotential heights Hb, gpm [USSA76 Table 4]."""

_T_BASE = (288.15, 216.65, 216.65, 228.65, 270.65, 270.65, 214.65)
"""Layer base molecular-scale temperatures T_Mb, K [USSA76 Table 4]."""

_LAPSE = (-0.0065, 0.0, 0.001, 0.0028, 0.0, -0.0028, -0.002)
"""Layer lapse rates L_Mb, K/gpm [USSA76 Table 4, printed in K/km']."""

_P_BASE = (101325.0, 22632.06397346293, 5474.88866967778, 868.0186847552274,
           110.90630555496588, 66.93887311868727, 3.9564204280407287)
"""Layer base pressures Pb, Pa: eq. 33a/33b of [USSA76] applied from P0 with
mpmath at 40 digits (Table 4 prints 101325.0, 22632.06, 5474.889, 868.0187,
110.9063, 66.93887, 3.956420)."""

TOP_GPH_M = 84852.0
"""Top of the modelled standard atmosphere, gpm (86 km geometric) [USSA76 Table 4]."""


BOTTOM_Z_M = -5000.0
"""Lowest geometric height of the standard's Table I, m [USSA76 Table I]."""

BOTTOM_GPH_M = R0_M * BOTTOM_Z_M / (R0_M + BOTTOM_Z_M)
"""Bottom of the modelled range, gpm: -5003.936 gpm, eq. 18 of BOTTOM_Z_M."""

# ---------------------------------------------------------------------------
# Kernels: arguments not checked (G_RD, pressure_at, altitude_at).
# The fast forms the checked functions below are built on, public so that
# tinygeo.sealevel, tinygeo.column and the host tools call them after
# checking their inputs once. Outside the model's range they return a number
# of no meaning or raise a Python error, never a tinygeo error.
# ---------------------------------------------------------------------------

G_RD = G0 / RD
"""g0 / Rd = g0' M0 / R*, K/gpm (0.0341632) [USSA76 Table 2]."""


def pressure_at(h):
    # eq. 33a/33b in the q-form of the module docstring; h already checked.
    i = 6           # the layer of h
    while i > 0 and h < _H_BASE[i]:
        i -= 1
    tb = _T_BASE[i]
    dh = h - _H_BASE[i]
    x = _LAPSE[i] * dh / tb
    if x == 0.0:
        q = 1.0
    else:
        # ln(1 + x) for x > -1, accurate near 0 without math.log1p:
        # W. Kahan's form x * ln(u) / (u - 1), u = fl(1 + x) (Goldberg 1991,
        # "What every computer scientist should know about floating-point
        # arithmetic", ACM Computing Surveys 23(1), Theorem 4); then / x
        q = x
        u = 1.0 + x
        if u != 1.0:
            q = x * math.log(u) / (u - 1.0)
        q = q / x
    return _P_BASE[i] * math.exp(-G_RD * dh * q / tb)


def altitude_at(p):
    # inverse of eq. 33a/33b in the e-form of the module docstring; p already checked.
    i = 6           # the layer of p
    while i > 0 and p > _P_BASE[i]:
        i -= 1
    tb = _T_BASE[i]
    # ln(Pb / p) as ln(1 + d), d = (Pb - p) / p: Pb - p is exact when Pb and p
    # are within a factor of two of each other (Sterbenz), so close pressures
    # lose nothing; ln(1 + d) in Kahan's form as in pressure_at
    d = (_P_BASE[i] - p) / p
    u = 1.0 + d
    if u != 1.0:
        d = d * math.log(u) / (u - 1.0)
    y = RD / G0 * tb * d     # Rd / g0 = 29.2713 gpm/K
    x = _LAPSE[i] * y / tb
    if x == 0.0:
        e = 1.0
    else:
        e = math.expm1(x) / x
    return _H_BASE[i] + y * e


TOP_P_PA = pressure_at(TOP_GPH_M)
"""Pressure at TOP_GPH_M, Pa: 0.37338359 (Table 4 prints 0.3733836). Computed
at import with the same code as standard_pressure, so the two ends of the range
agree exactly on every float format."""

BOTTOM_P_PA = pressure_at(BOTTOM_GPH_M)
"""Pressure at BOTTOM_GPH_M, Pa (177 761.5 Pa; Table I prints 1.7776E+05)."""


# ---------------------------------------------------------------------------
# Checked public functions
# ---------------------------------------------------------------------------

def _check_gph(gph_m, top=TOP_GPH_M, hint="beyond the standard atmosphere"):
    # gph_m in BOTTOM_GPH_M..top gpm, else ModelRangeError (RangeError if not
    # a finite number)
    return check_range("gph_m", as_finite("gph_m", gph_m, "gpm"), BOTTOM_GPH_M, top, "gpm", hint,
                       ModelRangeError)


def standard_temperature(gph_m):
    """Temperature of the standard atmosphere at a geopotential height, K.

    gph_m: geopotential height, gpm, -5003.94 .. 84 852 (ModelRangeError outside).

    Returns the molecular-scale temperature T_M of [USSA76] eq. 23 with the
    layers of Table 4 (NOAA-S/T 76-1562, 1976, from memory); it is the kinetic
    temperature of Table I up to 79 006 gpm (80 km geometric) and up to
    0.08 K above it higher up (see the module docstring). ICAO Doc 7488 gives
    the same values below 32 km.

    Example: standard_temperature(11000.0) -> 216.65;
    standard_temperature(1000.0) -> 281.65.
    """
    h = _check_gph(gph_m)
    i = 6           # the layer of h
    while i > 0 and h < _H_BASE[i]:
        i -= 1
    return _T_BASE[i] + _LAPSE[i] * (h - _H_BASE[i])


def standard_pressure(gph_m):
    """Pressure of the standard atmosphere at a geopotential height, Pa.

    gph_m: geopotential height, gpm, -5003.94 .. 84 852 (ModelRangeError outside).

    [USSA76] eq. 33a (layers with a lapse rate) and eq. 33b (isothermal layers)
    with Table 4 (NOAA-S/T 76-1562, 1976, from memory), evaluated in the stable
    form of the module docstring. Dry air, hydrostatic, ideal gas, gravity
    g0 = 9.80665 m/s^2 constant in geopotential height.

    Example: standard_pressure(11000.0) -> 22632.064 (Table 4: 22632.06);
    standard_pressure(0.0) -> 101325.0.
    """
    return pressure_at(_check_gph(gph_m))


def pressure_altitude(p_pa):
    """Pressure altitude: the geopotential height at which the standard
    atmosphere has pressure p_pa, gpm.

    p_pa: pressure, Pa, 0.3733836 .. 177 761.5 (the standard's 84 852 gpm ..
    -5003.94 gpm; ModelRangeError outside). A pressure in hPa is NOT detected
    when it lies in the range (1013.25 "Pa" is the pressure near 31 km):
    callers holding hPa or mbar must multiply by 100.

    Inverse of [USSA76] eq. 33a/33b with Table 4 (NOAA-S/T 76-1562, 1976, from
    memory), solved in closed form per layer (module docstring); the result is
    in geopotential metres, which is what a standard-calibrated altimeter
    indicates (ICAO Doc 7488).

    Example: pressure_altitude(50000.0) -> 5574.4;
    pressure_altitude(101225.0) -> 8.33 (about 8.3 m per hPa near sea level).
    """
    p = as_finite("p_pa", p_pa, "Pa")
    if p < TOP_P_PA or p > BOTTOM_P_PA:
        raise ModelRangeError("p_pa=%r outside %.7g..%.7g Pa, the standard atmosphere (84852 down to "
                              "-5003.94 gpm); %s" % (p, TOP_P_PA, BOTTOM_P_PA,
                                                     pressure_hint(p) or "pascal expected"))
    return altitude_at(p)


def ussa76_geopotential_height(z_m):
    """Geopotential height of a geometric height as the 1976 standard's tables
    compute it, gpm: H = r0 Z / (r0 + Z), r0 = 6 356 766 m.

    z_m: geometric height, m, -5000 .. 86 000 (ModelRangeError outside).

    [USSA76] eq. 18 (from memory). FOR CHECKS AGAINST THE STANDARD'S TABLES
    ONLY: r0 is an effective radius for 45.5425 deg latitude. tinygeo converts
    real heights with the normal gravity field (tinygeo.potential), which
    depends on latitude.

    Example: ussa76_geopotential_height(86000.0) -> 84852.046.
    """
    z = check_range("z_m", as_finite("z_m", z_m, "m"), BOTTOM_Z_M, 86000.0, "m",
                    "beyond the standard's tables", ModelRangeError)
    return R0_M * z / (R0_M + z)


def ussa76_geometric_height(gph_m):
    """Geometric height of a geopotential height as the 1976 standard's tables
    compute it, m: Z = r0 H / (r0 - H), r0 = 6 356 766 m.

    gph_m: geopotential height, gpm, -5003.94 .. 84 852.046 (ModelRangeError outside).

    Inverse of [USSA76] eq. 18 (from memory). FOR CHECKS AGAINST THE
    STANDARD'S TABLES ONLY; tinygeo.potential does real conversions with
    normal gravity.

    Example: ussa76_geometric_height(11000.0) -> 11019.07.
    """
    h = _check_gph(gph_m, R0_M * 86000.0 / (R0_M + 86000.0), "beyond the standard's tables")
    return R0_M * h / (R0_M - h)
