"""Humidity: saturation vapour pressure, vapour pressure, dew/frost point
(from the vapour pressure, or in one call from temperature and relative humidity),
mixing ratio, specific humidity and virtual temperature.

All quantities are SI: pressures in Pa, temperatures in K, mixing ratio and
specific humidity in kg/kg, relative humidity in percent.

Sources
-------
[WMO8] WMO (2018). Guide to Instruments and Methods of Observation, WMO-No. 8,
    Volume I, Annex 4.B "Formulae for the computation of measures of humidity"
    (Magnus-type saturation vapour pressures over water and ice, enhancement
    factor, mixing ratio; from memory; these forms go back to Sonntag, D.
    (1990), Z. Meteorol. 40(5), 340-344).
[WH06] Wallace, J. M. and Hobbs, P. V. (2006). Atmospheric Science: An
    Introductory Survey, 2nd ed., Academic Press. Section 3.1.1, eq. (3.16)
    virtual temperature Tv = T / (1 - (e/p)(1 - eps)) (equation number from
    memory).
[AMS] American Meteorological Society (2000). Glossary of Meteorology, 2nd ed.,
    entries "virtual temperature" (Tv = T (1 + r/eps)/(1 + r)), "mixing ratio"
    and "specific humidity" (from memory).

Saturation formulas and their measured accuracy
-----------------------------------------------
Magnus forms of [WMO8] (t in degC, result in hPa):

    over water  e_w = 6.112 exp(17.62 t / (243.12 + t))   recommended -45..60 degC
    over ice    e_i = 6.112 exp(22.46 t / (272.62 + t))   recommended -65..0 degC

tinygeo accepts 150..350 K everywhere and evaluates the same Magnus form
OUTSIDE the recommended ranges (extrapolation) instead of raising: upper-air
soundings reach -90 degC, and the WMO upper-air convention reports relative
humidity with respect to water at all temperatures, so a humidity reading at
190 K must give an answer. Relative error of the Magnus form, measured by
``tests/test_moisture.py`` against IAPWS references (IAPWS 1992 saturation-
pressure equation of Wagner and Pruss, consistent with IAPWS-95, above
273.16 K; IAPWS-95 liquid extrapolated into the
supercooled region against IAPWS R10-06 ice and the IAPWS 2011 sublimation
curve for 235..273.16 K; below 235 K, which IAPWS formulations for
supercooled water do not reach at low pressure, Murphy and Koop (2005),
Q. J. R. Meteorol. Soc. 131, 1539, eq. 10, which agrees with the IAPWS-derived
values within 0.17 % over 235..273 K):

    water, -45..60 degC (recommended)    |rel. error| <= 0.75 % (0.31 % over 0..60)
    water, 60..76.85 degC (extrapolated) <= 1.0 %
    water, -90..-45 degC (extrapolated)  <= 2.8 %
    water, 150 K..-90 degC               10 % at -100 degC, 45 % at 150 K (where
                                         e_w is about 1e-5 Pa, far too small to
                                         matter for virtual temperature)
    ice,   -65..0 degC (recommended)     <= 0.2 %
    ice,   -90..-65 degC (extrapolated)  <= 1.6 %
    ice,   150 K..-90 degC               grows to 8 % at 150 K

``ice=True`` selects the ice form at and below 0 degC (273.15 K) and the water
form above (ice does not exist there). Both forms give exactly 611.2 Pa at
0 degC, so the switch is continuous. ``ice=False`` (the default, and the WMO
upper-air convention) uses the water form at all temperatures.

Accepted ranges: temperatures 150..350 K, pressures 0.1..120000 Pa, relative
humidity -3..103 % (check_rh's sensor-noise margin; values are not clamped).
"""
import math

from .constants import EPSILON, ZERO_C_K
from . import errors   # errors.RangeError & co. where used once or twice: fewer module globals
from .errors import check_t_k, check_p_pa

# --- Coefficients [WMO8] Annex 4.B (Magnus forms, SI) ------------------------
E0_PA = 611.2
"""Magnus saturation vapour pressure at 0 degC, Pa [WMO8] (6.112 hPa)."""
_AW = 17.62      # over water, dimensionless [WMO8]
_BW = 243.12     # over water, degC [WMO8]
_AI = 22.46      # over ice, dimensionless [WMO8]
_BI = 272.62     # over ice, degC [WMO8]

# Enhancement factor f(p) = 1.0016 + 3.15e-6 p - 0.074/p, p in hPa [WMO8];
# in pascal: f = 1.0016 + 3.15e-8 p_pa - 7.4/p_pa.
_F0 = 1.0016
_F1 = 3.15e-8    # per Pa (3.15e-6 per hPa)
_F2 = 7.4        # Pa (0.074 hPa)
F_ONE_PA = 4266.6096
"""Pressure (Pa) where the [WMO8] enhancement-factor fit equals 1 (root of
3.15e-6 p^2 + 0.0016 p - 0.074 = 0, p = 42.666 hPa). Below it the fit drops
under 1 (and turns negative under 0.05 hPa), while the true factor of an ideal
mixture tends to 1 as p -> 0; tinygeo therefore uses f = 1 below F_ONE_PA.
The function is continuous there; the true factor grows about linearly with p
(0.0047 per 1013 hPa by this fit), so the error of f = 1 under 42.7 hPa is
about 0.02 % (estimate, common practice)."""

P_MIN_PA = 0.1
"""Lowest pressure accepted by this module, Pa (below the 0.3734 Pa top of
the U.S. Standard Atmosphere 1976)."""
P_MAX_PA = 120000.0
"""Highest pressure accepted by this module, Pa."""

# ---------------------------------------------------------------------------
# Kernels: arguments not checked (ONE_M_EPS .. td_rh).
# The fast forms the checked functions below are built on, public so that
# tinygeo.column, tinygeo.sealevel and the host tools call them after
# checking their inputs once (every check builds floats: heap blocks on
# MicroPython). A bad argument gives a wrong number or a Python error here,
# never a tinygeo error.
# ---------------------------------------------------------------------------

ONE_M_EPS = 1.0 - EPSILON
_QC = 0.01 * E0_PA * ONE_M_EPS   # Pa per %RH: (1 - eps) e/p per %RH is _QC f x / p
_QC_F0 = _QC * _F0               # _QC times the enhancement factor's coefficients (rh_q)
_QC_F1 = _QC * _F1
_QC_F2 = _QC * _F2


def _ex(t_k, ice):
    # exp(a t/(b + t)) of the Magnus form [WMO8] (e_w = 611.2 Pa times it,
    # E0_PA * _ex(t_k, ice)), no checks (callers check t_k)
    t = t_k - ZERO_C_K
    if ice and t <= 0.0:
        return math.exp(_AI * t / (_BI + t))
    return math.exp(_AW * t / (_BW + t))


def _f(p_pa):
    # Enhancement factor [WMO8], no checks (callers check p_pa).
    if p_pa <= F_ONE_PA:
        return 1.0
    return _F0 + _F1 * p_pa - _F2 / p_pa


def boiling_error(e_pa, p_pa):
    return errors.RangeError("vapour pressure %g Pa >= p_pa=%g Pa; %s" % (
        e_pa, p_pa, errors.pressure_hint(p_pa) or "water would boil: check t_k/td_k and p_pa"))


def rh_q(t_k, p_pa, ice):
    # (1 - eps) e'_w/p per %RH (dimensionless per %): with r = rh_pct * rh_q,
    # e/p = r/(1 - eps) and Tv = T/(1 - r) ([WH06] eq. 3.16), and
    # dTv/dRH = Tv rh_q at constant T and p; e'_w = f(p) e_w(T) as in
    # vapour_pressure. No checks (callers check). _QC f(p) is evaluated as
    # _QC_F0 + _QC_F1 p - _QC_F2/p (the coefficients times _QC): one float
    # result fewer per call than _QC * _f(p) (a heap block on MicroPython;
    # the column calls this for every reading).
    if p_pa <= F_ONE_PA:
        qf = _QC
    else:
        qf = _QC_F0 + _QC_F1 * p_pa - _QC_F2 / p_pa
    return qf * _ex(t_k, ice) / p_pa


def tv_rh(t_k, p_pa, rh_pct, ice):
    # virtual_temperature without the argument checks, for callers that have
    # checked t_k, p_pa and rh_pct already; RangeError if e >= p
    r = rh_pct * rh_q(t_k, p_pa, ice)
    if r >= ONE_M_EPS:
        raise boiling_error(r * p_pa / ONE_M_EPS, p_pa)
    return t_k / (1.0 - r)


def tv_w(t_k, w_kg_kg):
    # virtual_temperature_from_mixing_ratio without the checks (callers check)
    return t_k * (1.0 + w_kg_kg / EPSILON) / (1.0 + w_kg_kg)


def td_rh(t_k, rh_pct, ice):
    # dew_point_from_rh without the checks (callers check t_k in 150..350 K
    # and rh_pct > 0); the result may lie outside 150..350 K (callers check)
    t = t_k - ZERO_C_K
    x = rh_pct * 0.01
    y = math.log(x) if x > 0.0 else -745.0     # underflow: as dew_point
    if ice and t <= 0.0:
        return _td(y + _AI * t / (_BI + t), ice)
    return _td(y + _AW * t / (_BW + t), ice)


def _td(y, ice):
    # the dew point (frost point: ice and y <= 0), K, of
    # y = ln(e'/(f(p) 611.2 Pa)): the inverse Magnus forms [WMO8], no checks
    if ice and y <= 0.0:
        return _BI * y / (_AI - y) + ZERO_C_K
    return _BW * y / (_AW - y) + ZERO_C_K


# ---------------------------------------------------------------------------
# Checked public functions
# ---------------------------------------------------------------------------

def _check_e(e_pa, p_pa):
    # (e, p) checked: p_pa in P_MIN_PA..P_MAX_PA, then 0 <= e_pa < p_pa
    p = check_p_pa("p_pa", p_pa, P_MIN_PA, P_MAX_PA)
    e = errors.as_finite("e_pa", e_pa, "Pa")
    if e < 0.0:
        raise errors.RangeError("e_pa=%r is negative; vapour pressure is >= 0 Pa" % (e,))
    if e >= p:
        raise boiling_error(e, p)
    return e, p


def _dry(name, value, unit):
    return errors.RangeError("%s=%s: dry air has no dew point; pass %s > 0 %s"
                             % (name, errors.quote(value), name, unit))


def _td_range(td, name, value, unit):
    # td if it lies in 150..350 K, else ModelRangeError naming the argument
    if td < 150.0 or td > 350.0:
        raise errors.ModelRangeError("dew point %.2f K for %s=%r %s outside 150..350 K; check %s "
                                     "(%s expected)" % (td, name, value, unit, name, unit))
    return td


def saturation_vapour_pressure(t_k, ice=False):
    """Saturation vapour pressure of pure water vapour over a plane surface, Pa.

    t_k: temperature, K, 150..350 (RangeError otherwise; a Celsius value gets
         a hint).
    ice: False (default): over liquid water at all temperatures (WMO upper-air
         convention, supercooled water below 0 degC); True: over ice at and
         below 0 degC, over water above.

    Formula: [WMO8] Annex 4.B, Magnus forms
    e_w = 6.112 exp(17.62 t/(243.12 + t)) hPa (recommended -45..60 degC),
    e_i = 6.112 exp(22.46 t/(272.62 + t)) hPa (recommended -65..0 degC),
    t in degC. Outside the recommended ranges the same form is extrapolated;
    the measured errors against IAPWS are in the module docstring
    (<= 0.75 % water / 0.2 % ice in range, <= 2.8 % / 1.6 % down to -90 degC).
    Pure vapour: multiply by enhancement_factor(p_pa) for moist air.

    Example: saturation_vapour_pressure(273.15) -> 611.2 (by construction);
    saturation_vapour_pressure(293.15) -> 2332.6 (IAPWS-95: 2339.2).
    """
    ice = errors.check_flag("ice", ice)
    t_k = check_t_k("t_k", t_k)
    return E0_PA * _ex(t_k, ice)   # Magnus form [WMO8], Pa


def enhancement_factor(p_pa):
    """Enhancement factor f of water vapour in moist air, dimensionless.

    p_pa: air pressure, Pa, 0.1..120000.

    Formula: [WMO8] Annex 4.B, f(p) = 1.0016 + 3.15e-6 p - 0.074/p with p in
    hPa; saturation vapour pressure of moist air e'_w = f(p) e_w(t). The fit
    reaches 1 at 42.666 hPa and is replaced by f = 1 below (see F_ONE_PA).
    Independent of temperature (as in [WMO8]).

    Example: enhancement_factor(101325.0) -> 1.004719.
    """
    p_pa = check_p_pa("p_pa", p_pa, P_MIN_PA, P_MAX_PA)
    return _f(p_pa)


def vapour_pressure(t_k, p_pa, rh_pct, ice=False):
    """Water vapour partial pressure e' of moist air, Pa.

    t_k: air temperature, K, 150..350; p_pa: air pressure, Pa, 0.1..120000;
    rh_pct: relative humidity, %, -3..103 (not clamped: -1 % gives a slightly
            negative e); with respect to water by default (WMO upper-air
            convention), with respect to ice at and below 0 degC if ice=True.

    Formula: [WMO8] Annex 4.B: e' = (U/100) e'_w(p, t), e'_w = f(p) e_w(t),
    i.e. relative humidity is referred to the saturation vapour pressure of
    MOIST air, which includes the enhancement factor f(p) (about 1.0047 at
    1013 hPa).

    Raises RangeError if e' >= p_pa (water would boil: hot or very low
    pressure; the message hints at hPa passed as Pa).

    Example: vapour_pressure(293.15, 101325.0, 50.0) -> 1171.80 Pa.
    """
    ice = errors.check_flag("ice", ice)
    t_k = check_t_k("t_k", t_k)
    p_pa = check_p_pa("p_pa", p_pa, P_MIN_PA, P_MAX_PA)
    rh_pct = errors.check_rh(rh_pct)
    e = rh_pct * 0.01 * _f(p_pa) * (E0_PA * _ex(t_k, ice))
    if e >= p_pa:
        raise boiling_error(e, p_pa)
    return e


def vapour_pressure_from_dew_point(td_k, p_pa, ice=False):
    """Water vapour partial pressure e' of moist air from its dew point, Pa.

    td_k: dew point, K, 150..350 (frost point if ice=True and td_k <= 273.15);
    p_pa: air pressure, Pa, 0.1..120000.

    Formula: [WMO8] Annex 4.B: e' = e'_w(p, Td) = f(p) e_w(Td)
    (e'_i(p, Tf) = f(p) e_i(Tf) for the frost point).
    Raises RangeError if e' >= p_pa.

    Example: vapour_pressure_from_dew_point(283.15, 101325.0) -> 1231.82 Pa.
    """
    ice = errors.check_flag("ice", ice)
    td_k = check_t_k("td_k", td_k)
    p_pa = check_p_pa("p_pa", p_pa, P_MIN_PA, P_MAX_PA)
    e = _f(p_pa) * (E0_PA * _ex(td_k, ice))
    if e >= p_pa:
        raise boiling_error(e, p_pa)
    return e


def dew_point(e_pa, p_pa, ice=False):
    """Dew point (frost point if ice=True and below 0 degC) of moist air, K.

    e_pa: water vapour partial pressure, Pa, > 0 and < p_pa;
    p_pa: air pressure, Pa, 0.1..120000.

    Formula: inverse of the [WMO8] Magnus forms applied to e'/f(p):
    y = ln(e'/(f(p) 611.2 Pa)), t = b y/(a - y) degC with (a, b) =
    (17.62, 243.12) over water or (22.46, 272.62) over ice (ice when
    e'/f <= 611.2 Pa, i.e. frost point <= 0 degC). Exact inverse of
    vapour_pressure_from_dew_point.

    Raises RangeError for e_pa <= 0 (no dew point for dry air) or e_pa >= p_pa,
    ModelRangeError if the result falls outside 150..350 K.

    Example: dew_point(1231.82, 101325.0) -> 283.150 K.
    """
    ice = errors.check_flag("ice", ice)
    e, p_pa = _check_e(e_pa, p_pa)
    if e == 0.0:
        raise _dry("e_pa", e_pa, "Pa")
    x = e / (_f(p_pa) * E0_PA)
    # x = 0: a vapour pressure so small that e/611.2 Pa underflows (5e-324
    # Pa); y = -745 (ln of the smallest float) gives its dew point, about
    # 36 K, far below the model's 150 K: refused by _td_range
    return _td_range(_td(math.log(x) if x > 0.0 else -745.0, ice), "e_pa", e, "Pa")


def dew_point_from_rh(t_k, rh_pct, ice=False):
    """Dew point (frost point if ice=True and below 0 degC) of air of a given
    temperature and relative humidity, K.

    t_k:    air temperature, K, 150..350;
    rh_pct: relative humidity, %, above 0 and up to 103 (check_rh's sensor
            margin); with respect to water by default, with respect to ice
            at and below 0 degC if ice=True (as vapour_pressure).

    Formula: the inverse of the [WMO8] Annex 4.B Magnus forms (from memory)
    applied to e' = (U/100) e'_w(p, t): the dew point Td solves
    f(p) e_w(Td) = (U/100) f(p) e_w(t), and the enhancement factor f(p)
    cancels at one pressure, so no pressure is needed:
        y = ln(U/100) + a t/(b + t),   Td = b y/(a - y)   (degC),
    (a, b) = (17.62, 243.12 degC) over water, (22.46, 272.62 degC) over ice.
    With ice=True, y is formed with the ice constants when t <= 0 degC and
    the result is a frost point (ice constants) when y <= 0, as in dew_point:
    dew_point(vapour_pressure(t, p, U, ice), p, ice) gives the same value to
    rounding. Magnus-form accuracy: see the module docstring (the dew point
    inherits about 0.13 K over water, 0.06 K over ice in the recommended
    ranges, tests/vectors/moisture.txt).

    Raises RangeError for rh_pct <= 0 (dry air has no dew point),
    ModelRangeError if the result falls outside 150..350 K.

    Example: dew_point_from_rh(293.15, 50.0) -> 282.405 K (9.26 degC).
    """
    ice = errors.check_flag("ice", ice)
    t_k = check_t_k("t_k", t_k)
    rh = errors.check_rh(rh_pct)
    if rh <= 0.0:
        raise _dry("rh_pct", rh_pct, "%")
    return _td_range(td_rh(t_k, rh, ice), "rh_pct", rh, "%")


def mixing_ratio(e_pa, p_pa):
    """Mixing ratio of water vapour to dry air, kg/kg.

    e_pa: water vapour partial pressure, Pa, 0 <= e_pa < p_pa;
    p_pa: air pressure, Pa, 0.1..120000.

    Formula: [WMO8] Annex 4.B, r = 0.62198 e'/(p - e') (eps = Mv/Md from
    tinygeo.constants).

    Example: mixing_ratio(1171.80, 101325.0) -> 0.0072772 kg/kg.
    """
    e, p_pa = _check_e(e_pa, p_pa)
    return EPSILON * e / (p_pa - e)


def specific_humidity(e_pa, p_pa):
    """Specific humidity (mass of vapour per mass of moist air), kg/kg.

    e_pa: water vapour partial pressure, Pa, 0 <= e_pa < p_pa;
    p_pa: air pressure, Pa, 0.1..120000.

    Formula: q = r/(1 + r) with r the mixing ratio ([WMO8] Annex 4.B, [AMS]),
    i.e. q = eps e'/(p - (1 - eps) e').

    Example: specific_humidity(1171.80, 101325.0) -> 0.0072247 kg/kg.
    """
    e, p_pa = _check_e(e_pa, p_pa)
    return EPSILON * e / (p_pa - ONE_M_EPS * e)


def virtual_temperature(t_k, p_pa, rh_pct, ice=False):
    """Virtual temperature of moist air, K (exact form, not linearised).

    t_k: air temperature, K, 150..350; p_pa: air pressure, Pa, 0.1..120000;
    rh_pct: relative humidity, %, -3..103, with respect to water (or ice at
            and below 0 degC if ice=True); the vapour pressure is
            vapour_pressure(t_k, p_pa, rh_pct, ice), enhancement factor included.

    Formula: [WH06] eq. (3.16): Tv = T / (1 - (e/p)(1 - eps)), eps = Mv/Md =
    0.621981. Exact for an ideal mixture of dry air and vapour. The common
    linearised forms are NOT used: Tv ~ T (1 + 0.378 e/p) is low by about
    T (1 - eps)^2 (e/p)^2 (0.04 K for e/p = 0.03 at 300 K) and
    Tv ~ T (1 + 0.61 w) (mixing ratio w) is high by about
    T eps (1 - eps) (e/p)^2 plus 0.0022 w T from the rounded coefficient
    (0.08 K there). Note that T (1 + q (1 - eps)/eps)
    with the specific humidity q is algebraically identical to the exact form
    (only its coefficient is often rounded to 0.61).

    Raises RangeError if e >= p_pa.

    Example: virtual_temperature(293.15, 101325.0, 50.0) -> 294.4372 K.
    """
    ice = errors.check_flag("ice", ice)
    return tv_rh(check_t_k("t_k", t_k), check_p_pa("p_pa", p_pa, P_MIN_PA, P_MAX_PA),
               errors.check_rh(rh_pct), ice)


def virtual_temperature_from_mixing_ratio(t_k, w_kg_kg):
    """Virtual temperature of moist air from its mixing ratio, K (exact form).

    t_k: air temperature, K, 150..350; w_kg_kg: mixing ratio, kg/kg, 0..1
    (1 kg/kg: as much vapour as dry air; a g/kg value above 1 is rejected
    with a hint).

    Formula: [AMS] "virtual temperature": Tv = T (1 + w/eps)/(1 + w); the same
    as [WH06] eq. (3.16) with e/p = w/(eps + w).

    Example: virtual_temperature_from_mixing_ratio(293.15, 0.0072772) -> 294.4372 K.
    """
    t_k = check_t_k("t_k", t_k)
    return tv_w(t_k, errors.check_range("w_kg_kg", w_kg_kg, 0.0, 1.0, "kg/kg",
                                        "kg/kg expected; g/kg passed? divide by 1000"))
