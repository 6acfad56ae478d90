"""Thickness of an atmospheric layer between two pressures (hypsometric
equation), its inverse, and a numerically stable ln(p1/p2).

Heights are geopotential metres (gpm: 1 gpm = 9.80665 m^2/s^2 of geopotential),
computed with the dry-air gas constant RD = R*/M0 and g0 of the U.S. Standard
Atmosphere 1976 (tinygeo.constants), so a dry standard profile reproduces the
standard's tables. Moisture enters only through the virtual temperature Tv
(tinygeo.moisture.virtual_temperature).

Sources
-------
[WH06] Wallace, J. M. and Hobbs, P. V. (2006). Atmospheric Science: An
    Introductory Survey, 2nd ed. Section 3.2.2, hypsometric equation
    eq. (3.29) Z2 - Z1 = (Rd/g0) integral_{p2}^{p1} Tv dp/p and eq. (3.30)
    Z2 - Z1 = (Rd Tv_mean/g0) ln(p1/p2) (equation numbers from memory).
[USSA76] NOAA, NASA, USAF (1976). U.S. Standard Atmosphere, 1976.
    NOAA-S/T 76-1562. Eq. (33a) P = Pb [Tb/(Tb + Lb (H - Hb))]^(g0 M0/(R* Lb))
    for a constant lapse rate Lb = dT/dH in geopotential height, eq. (33b)
    P = Pb exp(-g0 M0 (H - Hb)/(R* Tb)) for an isothermal layer (from memory).

Conventions
-----------
- p_lower_pa is the pressure at the bottom of the layer (the reference level),
  p_upper_pa at the top. Thickness = gph(p_upper) - gph(p_lower): positive when
  p_upper_pa < p_lower_pa, negative the other way, zero for equal pressures.
- lapse_k_gpm is the METEOROLOGICAL lapse rate L = -dTv/dz (K/gpm):
  POSITIVE when Tv decreases with height (troposphere: +0.0065 K/gpm), negative
  in an inversion. Note [USSA76] tabulates the opposite sign (Lb = dT/dH =
  -0.0065 K/gpm in its first layer).
- Accepted ranges: pressures 0.1..120000 Pa, virtual temperatures 150..350 K,
  lapse rates -1..1 K/gpm (a K/km value gets a hint), thickness +-200000 gpm.
"""
import math

from .constants import RD, G0
from . import errors   # errors.RangeError & co. on the error paths: fewer module globals
from .errors import check_t_k, check_p_pa, as_finite

P_MIN_PA = 0.1
"""Lowest pressure accepted here, Pa (below the 0.3734 Pa top of USSA76)."""
P_MAX_PA = 120000.0
"""Highest pressure accepted here, Pa."""

# ---------------------------------------------------------------------------
# Kernels: arguments not checked (HALF_RG .. thickness).
# The fast forms the checked functions below are built on, public so that
# tinygeo.column and the host tools call them after checking their inputs
# once (every check builds floats: heap blocks on MicroPython). A bad
# argument gives a wrong number or a Python error here, never a tinygeo
# error.
# ---------------------------------------------------------------------------

HALF_RG = 0.5 * RD / G0   # gpm per K: (Rd/g0)/2, Rd/g0 = 29.2712 gpm/K

# --- ln(p1/p2) without log1p ------------------------------------------------
# ln(p1/p2) = 2 atanh(d), d = (p1 - p2)/(p1 + p2)
#           = 2 (d + d^3/3 + d^5/5 + ...)            (|d| < 1)
# math.log(p1/p2) loses accuracy when p1 ~ p2: the quotient r = p1/p2 carries a
# rounding error of up to u (u = 2^-24 in float32, 2^-53 in float64), which is
# an ABSOLUTE error u in ln r, i.e. a relative error u/|ln r| ~ u/(2|d|).
# d itself is accurate to ~2u (p1 - p2 is exact when p1/p2 lies in [1/2, 2],
# Sterbenz lemma), and the series is evaluated in d^2 with a few roundings.
# Switch point |d| = 0.25 (p1/p2 outside 0.6..1.667): there |ln r| >= 0.51, so
# the log branch adds at most 1.96 u to the error of math.log itself; below it
# the series is truncated after the d^(2N-1) term with relative truncation
# error < d^(2N-2)/(2N-1) <= 0.25^(2N-2)/(2N-1):
#   float32 (and 30-bit floats): N = 6 terms, truncation 4.6e-9 = 0.08 u;
#   float64:                     N = 13 terms, truncation 8e-18 = 0.07 u.
# The precision of the running interpreter is detected once at import.
LN_SWITCH = 0.25
LN_TERMS_F32 = 6
LN_TERMS_F64 = 13


def ln_coefs(n):
    # Coefficients 2/(2k+1), highest first, for Horner's scheme in d^2:
    # (2/(2N-1), ..., 2/5, 2/3); the leading 2 is added by lnr, which returns
    # d (2 + d^2 (2/3 + d^2 (2/5 + ...))): the factor 2 sits in the
    # coefficients (one multiplication fewer; 2/(2k+1) is rounded as well as
    # 1/(2k+1), so the error analysis above is unchanged).
    c = []
    k = n - 1
    while k >= 1:
        c.append(2.0 / (2 * k + 1))
        k -= 1
    return tuple(c)


FLOAT32 = (1.0 + 2.0 ** -30) == 1.0   # True on float32 / 30-bit float builds
LN_C = ln_coefs(LN_TERMS_F32 if FLOAT32 else LN_TERMS_F64)


# Fewer terms serve the thin layers between consecutive readings (|d| ~ 1e-4,
# the common case on a logger, and each Horner step allocates two floats on
# MicroPython): the series is cut where the next dropped term is below
# 0.1 u of the precision in use, by |d| tier (relative truncation error
# d^(2m+2)/(2m+3) with m coefficients after the leading 1):
#   float64: |d| < 1e-3: m = 2 (1.4e-19); |d| < 1e-2: m = 4 (1.1e-21);
#            |d| < 0.05: m = 6 (5e-18); otherwise all 12 (|d| < 0.25).
#   float32: |d| < 1e-2: m = 1 (2e-9); |d| < 0.05: m = 2 (2.2e-9); otherwise all 5.
def ln_tiers(f32):
    # (d^2 thresholds, coefficients used below each) for the precision in use
    # (built at run time, not stored as constant tuples: only the one in use is kept)
    a = 1e-4
    b = 2.5e-3
    m = 2
    if f32:
        return (a, b, b), (1, m, m)
    return (1e-6, a, b), (m, 4, 6)


TIER_D2, TIER_M = ln_tiers(FLOAT32)


def lnr(p1_pa, p2_pa):
    # ln(p1/p2) for p1, p2 > 0, no checks (see the error analysis above).
    d = (p1_pa - p2_pa) / (p1_pa + p2_pa)
    if -LN_SWITCH < d < LN_SWITCH:
        d2 = d * d
        n = len(LN_C)
        if d2 < TIER_D2[0]:
            i = n - TIER_M[0]
        elif d2 < TIER_D2[1]:
            i = n - TIER_M[1]
        elif d2 < TIER_D2[2]:
            i = n - TIER_M[2]
        else:
            i = 0
        acc = LN_C[i]
        i += 1
        while i < n:
            acc = acc * d2 + LN_C[i]
            i += 1
        return d * (2.0 + d2 * acc)
    if d > 0.0:
        return math.log(p1_pa / p2_pa)
    return -math.log(p2_pa / p1_pa)   # same rounding either way round: exact antisymmetry


def half_k_ln(p1_pa, p2_pa):
    # (Rd/g0)/2 ln(p1/p2), gpm per K: the thickness per kelvin of Tv1 + Tv2,
    # and dz/dTv of either end of the layer; no checks
    return HALF_RG * lnr(p1_pa, p2_pa)


def thickness(p_lower_pa, p_upper_pa, tv_lower_k, tv_upper_k):
    # layer_thickness without the argument checks, for callers that have
    # checked the pressures and temperatures already; tinygeo.column computes
    # the same two products (it keeps half_k_ln for its uncertainty)
    return half_k_ln(p_lower_pa, p_upper_pa) * (tv_lower_k + tv_upper_k)


# ---------------------------------------------------------------------------
# Checked public functions
# ---------------------------------------------------------------------------

def ln_ratio(p1_pa, p2_pa):
    """Natural logarithm of the pressure ratio, ln(p1/p2), dimensionless.

    p1_pa, p2_pa: pressures, Pa, 0.1..120000 (any positive pair of the same
    unit works mathematically; the range check guards against unit mistakes).

    Accurate to a few units in the last place of the working precision for
    every ratio, including p1/p2 = 1 + 1e-6 in float32, without math.log1p
    (absent from MicroPython): ln(p1/p2) = 2 atanh(d), d = (p1 - p2)/(p1 + p2),
    summed as the odd series 2 (d + d^3/3 + d^5/5 + ...) for |d| < 0.25
    (common practice; the series is the Taylor expansion of atanh) and
    math.log of the ratio (larger over smaller, then negated if needed)
    otherwise. Never log(p1) - log(p2). Exactly antisymmetric:
    ln_ratio(a, b) == -ln_ratio(b, a), so swapping the ends of a layer flips
    the sign of its thickness exactly.

    Example: ln_ratio(100000.0, 99999.0) -> 1.0000050000333e-05.
    """
    return lnr(check_p_pa("p1_pa", p1_pa, P_MIN_PA, P_MAX_PA),
                check_p_pa("p2_pa", p2_pa, P_MIN_PA, P_MAX_PA))


def layer_thickness(p_lower_pa, p_upper_pa, tv_lower_k, tv_upper_k):
    """Thickness of the layer between two pressures, gpm (hypsometric equation).

    p_lower_pa, p_upper_pa: pressures at the bottom and top, Pa, 0.1..120000;
    tv_lower_k, tv_upper_k: virtual temperatures there, K, 150..350.

    Formula: [WH06] eq. (3.30) with the mean of Tv over ln p:
    dZ = (Rd/g0) (Tv1 + Tv2)/2 ln(p1/p2). Exact ([WH06] eq. (3.29)) when Tv
    varies linearly with ln p across the layer, because then the ln p-weighted
    mean of Tv is the arithmetic mean of its end values. Rd, g0 as in [USSA76]
    (Rd/g0 = 29.2712 gpm/K). Positive when p_upper_pa < p_lower_pa, negative
    the other way, exactly zero for equal pressures.

    Example: layer_thickness(100000.0, 95000.0, 288.0, 285.0) -> 430.157 gpm.
    """
    p1 = check_p_pa("p_lower_pa", p_lower_pa, P_MIN_PA, P_MAX_PA)
    p2 = check_p_pa("p_upper_pa", p_upper_pa, P_MIN_PA, P_MAX_PA)
    t1 = check_t_k("tv_lower_k", tv_lower_k)
    t2 = check_t_k("tv_upper_k", tv_upper_k)
    return thickness(p1, p2, t1, t2)


def layer_thickness_lapse(p_lower_pa, p_upper_pa, tv_lower_k, lapse_k_gpm):
    """Thickness of a layer with a constant virtual-temperature lapse rate, gpm.

    p_lower_pa, p_upper_pa: pressures at the bottom and top, Pa, 0.1..120000;
    tv_lower_k: virtual temperature at p_lower_pa, K, 150..350;
    lapse_k_gpm: L = -dTv/dZ, K/gpm, -1..1; POSITIVE for Tv decreasing with
               height (meteorological sign; the opposite of [USSA76]'s Lb).

    Formula: [USSA76] eq. (33a) solved for the height difference, with
    Tv(Z) = Tv0 - L (Z - Z0):
        dZ = (Tv0/L) (1 - (p2/p1)^(Rd L/g0)),
    evaluated as dZ = (Rd/g0) Tv0 x expm1(y)/y with x = ln(p1/p2) (ln_ratio)
    and y = -(Rd L/g0) x, which stays accurate as L -> 0 and equals the
    isothermal form (Rd/g0) Tv0 ln(p1/p2) ([USSA76] eq. (33b)) at L = 0.
    Exact for a constant lapse rate in geopotential height.

    Raises ModelRangeError when the profile would put Tv outside 150..350 K at
    p_upper_pa (e.g. a strong lapse rate over a very deep layer).

    Example: layer_thickness_lapse(101325.0, 22632.06, 288.15, 0.0065)
    -> 11000.00 gpm ([USSA76] Table 4: 22632.06 Pa at the 11 km
    geopotential layer base, from memory).
    """
    p1 = check_p_pa("p_lower_pa", p_lower_pa, P_MIN_PA, P_MAX_PA)
    p2 = check_p_pa("p_upper_pa", p_upper_pa, P_MIN_PA, P_MAX_PA)
    t0 = check_t_k("tv_lower_k", tv_lower_k)
    lapse = errors.check_range("lapse_k_gpm", lapse_k_gpm, -1.0, 1.0, "K/gpm",
                               "K/km passed? divide by 1000 (typical: -0.01..0.01 K/gpm)")
    x = lnr(p1, p2)
    rg = RD / G0           # gpm per K
    y = -rg * lapse * x
    # Tv at the far end is Tv0 exp(y); with both ends in 150..350 K, |y| <= ln(350/150) < 0.85,
    # so the first test also keeps expm1 far from overflow (float32 overflows at y = 88).
    if abs(y) <= 0.85:
        em = math.expm1(y)
        t2 = t0 + t0 * em
        if 150.0 <= t2 <= 350.0:
            if y == 0.0:
                return rg * t0 * x
            return rg * t0 * x * (em / y)
    raise errors.ModelRangeError("lapse_k_gpm=%r puts Tv at p_upper_pa outside 150..350 K; use a "
                                 "smaller lapse or thinner layer" % (lapse,))


def pressure_across_layer(p_lower_pa, thickness_gpm, tv_mean_k):
    """Pressure at the top of a layer of given thickness and mean Tv, Pa.

    p_lower_pa: pressure at the bottom, Pa, 0.1..120000;
    thickness_gpm: layer thickness, gpm, -200000..200000 (negative: the
                   other level lies below, and its pressure is higher);
    tv_mean_k: mean virtual temperature of the layer over ln p, K, 150..350.

    Formula: inverse of [WH06] eq. (3.30): p2 = p1 exp(-g0 dZ/(Rd Tv_mean)).
    layer_thickness(p1, p2, tv, tv) inverts it (round trip to rounding).

    Example: pressure_across_layer(100000.0, 430.157, 286.5) -> 95000.0 Pa.
    """
    p1 = check_p_pa("p_lower_pa", p_lower_pa, P_MIN_PA, P_MAX_PA)
    dz = errors.check_range("thickness_gpm", thickness_gpm, -200000.0, 200000.0, "gpm",
                            "geopotential metres expected")
    tv = check_t_k("tv_mean_k", tv_mean_k)
    return p1 * math.exp(-(G0 / RD) * dz / tv)


def layer_mean_tv(p_lower_pa, p_upper_pa, thickness_gpm):
    """Mean virtual temperature (over ln p) of a layer of known thickness, K.

    p_lower_pa, p_upper_pa: pressures at the bottom and top, Pa, 0.1..120000,
    not equal; thickness_gpm: thickness, gpm (same sign as ln(p1/p2)).

    Formula: [WH06] eq. (3.30) solved for the mean virtual temperature:
    Tv_mean = g0 dZ / (Rd ln(p1/p2)).

    Raises RangeError for equal pressures, ModelRangeError when the result is
    outside 150..350 K (thickness and pressures inconsistent).

    Example: layer_mean_tv(100000.0, 50000.0, 5574.0) -> 274.73 K.
    """
    p1 = check_p_pa("p_lower_pa", p_lower_pa, P_MIN_PA, P_MAX_PA)
    p2 = check_p_pa("p_upper_pa", p_upper_pa, P_MIN_PA, P_MAX_PA)
    dz = as_finite("thickness_gpm", thickness_gpm, "gpm")
    if p1 == p2:
        raise errors.RangeError("p_lower_pa == p_upper_pa == %r Pa: zero depth; pass two different "
                                "pressures" % (p1,))
    tv = G0 / RD * dz / lnr(p1, p2)
    if tv < 150.0 or tv > 350.0:
        raise errors.ModelRangeError("thickness_gpm=%r gives mean Tv %.1f K outside 150..350 K; "
                                     "check the thickness (gpm) and pressures" % (dz, tv))
    return tv
