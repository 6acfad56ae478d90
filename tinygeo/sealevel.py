"""Pressure reduced to mean sea level (buoys, weather stations) and the
aerodrome pressures QFE and QNH with the altimeter reading they imply.

Sources
-------
[WMO8] WMO (2018). Guide to Instruments and Methods of Observation, WMO-No. 8,
    Volume I, Chapter 3 "Measurement of atmospheric pressure", section on the
    reduction of pressure (to mean sea level and to aerodrome level), from
    memory. It reduces station pressure p to sea level with the hypsometric
    equation through a fictitious air column whose mean temperature is built
    from the station temperature and a lapse rate of 0.0065 K/gpm over half
    the column, and leaves the details of the method to national practice.
    The formula of the WMO recommendation of the 1950s/60s it goes back to
    (from memory, including its constants; not used here verbatim):
        ln(p0/p) = (g0/Rd) H / (T_s + a H/2 + e_s C_h),
        a = 0.0065 K/gpm, C_h = 0.12 K/hPa, e_s station vapour pressure in hPa.
[ICAO3] ICAO Annex 3, Meteorological Service for International Air
    Navigation, and ICAO Doc 8896, Manual of Aeronautical Meteorological
    Practice (definitions of QFE and QNH, from memory): QFE is the pressure at
    the aerodrome elevation (or runway threshold); QNH is the altimeter
    sub-scale setting with which an altimeter reads the aerodrome elevation on
    the ground. Both are reported rounded DOWN to whole hectopascals; tinygeo
    returns them unrounded, in Pa.
[ICAO7488] ICAO Doc 7488, Manual of the ICAO Standard Atmosphere (1993),
    identical to the U.S. Standard Atmosphere 1976 below 32 km (tinygeo.standard).
    A standard-calibrated pressure altimeter shows the standard atmosphere's
    geopotential height of the measured pressure, shifted by the sub-scale
    setting: reading = H_std(p) - H_std(setting) (from memory).

Rule for the fictitious column (sea_level_pressure)
----------------------------------------------------
Mean virtual temperature of the column between the barometer and mean sea level:

    Tv_mean = Tv(station) + (0.0065 K/gpm) * H / 2

H the barometer's geopotential height, Tv(station) the virtual temperature of
the station air (tinygeo.moisture.virtual_temperature; Tv = T when no humidity
is given). This is [WMO8]'s standard-lapse-rate half-way rule with the exact
virtual temperature in place of the 1964 formula's empirical e_s C_h term (both
add about 2 K for 20 hPa of vapour). Then the hypsometric equation

    p0 = p exp(g0 H / (Rd Tv_mean)),  g0 = 9.80665 m/s^2, Rd = R*/M0 = 287.05307 J/(kg K)

evaluated as p + p expm1(...) so that the small correction of a buoy keeps its
digits in binary32. For H below sea level (Dead Sea shores) the same rule
applies with H < 0.

What the rule means: the arithmetic mean Tv_mean exceeds the harmonic mean that
an exactly linear column (Tv falling at 0.0065 K/gpm) would need by about
(0.0065 H / Tv_mean)^2 / 12 of itself, so p0 is about
p0 ln(p0/p) (0.0065 H/Tv_mean)^2/12 lower than for that column: 0.5 Pa at
1000 m, 80 Pa at 5000 m in a cold column (a series estimate, checked with
mpmath in tests/test_sealevel.py). Real columns differ from both far more.
"""
import math

from . import moisture
from . import standard
from .standard import G_RD     # g0 / Rd, K/gpm [USSA76 Table 2]
from .errors import ModelRangeError, check_flag, check_p_pa, check_range, check_t_k

LAPSE_K_GPM = 0.0065
"""Lapse rate of the fictitious column, K/gpm [WMO8] (the standard atmosphere's
layer-0 value, [USSA76] Table 4)."""

P_STATION_MIN_PA = 40000.0
P_STATION_MAX_PA = 115000.0
"""Accepted station (barometer) pressures, Pa: 400..1150 hPa covers every
station from 5000 m up in deep lows to below sea level in strong highs."""

HEIGHT_MIN_M = -500.0
HEIGHT_MAX_M = 5000.0
"""Accepted barometer heights above mean sea level, m. A sea-level reduction
from higher stations is of little meaning ([WMO8], from memory)."""

T_MIN_K = 180.0
T_MAX_K = 340.0
"""Accepted station air temperatures, K (-93..67 degC)."""

QNH_MIN_PA = 85000.0
QNH_MAX_PA = 110000.0
"""Accepted QNH values, Pa (850..1100 hPa: beyond the record sea-level
pressures of 870 and 1084.8 hPa, common practice)."""

FIELD_STEP_MAX_M = 200.0
"""Largest barometer height above (or below) the aerodrome reference elevation
for qfe, m: the step is a small hypsometric correction."""

def check_height(name, height_m):
    return check_range(name, height_m, HEIGHT_MIN_M, HEIGHT_MAX_M, "m",
                       "metres above mean sea level; feet passed? multiply by 0.3048")


def checked(p_pa, t_k, height_m, rh_pct, lat_deg, ice, iso_p_pa=None, iso_lo=0.0, iso_hi=0.0):
    # the checks and conversions of sea_level_pressure and
    # tinygeo.highsite.isobaric_height, in this order: ice, p_pa, t_k,
    # height_m, iso_p_pa in iso_lo..iso_hi Pa if iso_hi is given, rh_pct,
    # lat_deg. Returns (p, Tv, H, iso): Tv the station's virtual temperature
    # (T for rh_pct None), H the barometer's geopotential height (height_m as
    # gpm for lat_deg None)
    ice = check_flag("ice", ice)
    p = check_p_pa("p_pa", p_pa, P_STATION_MIN_PA, P_STATION_MAX_PA)
    t = check_t_k("t_k", t_k, T_MIN_K, T_MAX_K)
    h = check_height("height_m", height_m)
    if iso_hi:
        iso_p_pa = check_p_pa("iso_p_pa", iso_p_pa, iso_lo, iso_hi)
    if rh_pct is not None:
        t = moisture.virtual_temperature(t, p, rh_pct, ice)
    if lat_deg is not None:
        # imported here so a buoy that never passes a latitude does not load
        # the gravity model on a small board
        from . import potential
        h = potential.geopotential_height(h, lat_deg)
    return p, t, h, iso_p_pa


def sea_level_pressure(p_pa, t_k, height_m, rh_pct=None, lat_deg=None, ice=False):
    """Mean-sea-level pressure from the pressure read by a barometer at a
    height above mean sea level, Pa.

    p_pa      barometer (station) pressure, Pa, 40000..115000
    t_k       air temperature at the station, K, 180..340
    height_m  barometer height above mean sea level, m, -500..5000
    rh_pct    relative humidity at the station, %, or None for dry air
    lat_deg   latitude, degrees; if given, height_m is converted to geopotential
              height with tinygeo's normal gravity (geopotential_height);
              if None, height_m is used as geopotential metres, which errs by
              at most 0.3 % of the correction p0 - p (g at the equator or the
              poles differs from g0 by 0.27 %), i.e. 0.35 Pa for a 10 m buoy,
              about 3.5 Pa per 100 m of height
    ice       passed to virtual_temperature (saturation over ice below 0 degC)

    Method ([WMO8] Vol. I Ch. 3, reduction of pressure, from memory; see the
    module docstring): hypsometric equation through a fictitious column of mean
    virtual temperature Tv(station) + 0.0065 K/gpm * H/2, with g0 and Rd of
    [USSA76]. Assumes that rule describes the column, which holds for the
    low stations and buoys this is meant for.

    Example (a buoy, invented scenario): barometer 4 m above the sea, 1008.2 hPa,
    18 degC, dry: sea_level_pressure(100820.0, 291.15, 4.0) -> 100867.3 Pa.
    """
    p, tv, h, _ = checked(p_pa, t_k, height_m, rh_pct, lat_deg, ice)
    return msl_tv(p, tv, h)


def qfe(p_pa, barometer_above_field_m, t_k, rh_pct=None, ice=False):
    """QFE: the pressure at the aerodrome reference elevation, from a barometer
    placed a little above (or below) it, Pa.

    p_pa                     barometer pressure, Pa, 40000..115000
    barometer_above_field_m  height of the barometer above the aerodrome
                             reference elevation (or runway threshold), m,
                             -200..200 (negative if it is below)
    t_k                      outside air temperature, K, 180..340
    rh_pct                   relative humidity, %, or None for dry air

    One hypsometric step through an isothermal layer at the station's virtual
    temperature: QFE = p exp(g0 dh / (Rd Tv)) ([WMO8] Vol. I Ch. 3, reduction
    to aerodrome level; QFE as defined in [ICAO3], from memory). Over 200 m
    the isothermal assumption errs by under 1 Pa (lapse 0.0065 K/gpm).
    The result is unrounded (reports round down to whole hPa).

    Example (invented): barometer 12 m above the field, 965.3 hPa, 5 degC:
    qfe(96530.0, 12.0, 278.15) -> 96672.4 Pa.
    """
    ice = check_flag("ice", ice)
    p = check_p_pa("p_pa", p_pa, P_STATION_MIN_PA, P_STATION_MAX_PA)
    dh = check_range("barometer_above_field_m", barometer_above_field_m,
                     -FIELD_STEP_MAX_M, FIELD_STEP_MAX_M, "m",
                     "metres above the field")
    t = check_t_k("t_k", t_k, T_MIN_K, T_MAX_K)
    tv = t
    if rh_pct is not None:
        tv = moisture.virtual_temperature(t, p, rh_pct, ice)
    return p + p * math.expm1(G_RD * dh / tv)


def qnh(p_pa, elevation_m):
    """QNH: the altimeter setting with which a standard-calibrated altimeter
    at the aerodrome reads its elevation, Pa.

    p_pa         pressure at the aerodrome elevation (QFE), Pa, 40000..115000
    elevation_m  aerodrome elevation above mean sea level, m, -500..5000

    QNH = P_std(H_std(p) - elevation), with H_std = tinygeo.pressure_altitude
    and P_std = tinygeo.standard_pressure (ICAO Standard Atmosphere [ICAO7488],
    definition of QNH [ICAO3], from memory). For the layer below 11 km it is
    the closed form QNH = P0 ((p/P0)^n + L0 elevation / T0)^(1/n),
    n = Rd L0 / g0 = 0.190263. No actual temperature enters: the altimeter
    knows only the standard atmosphere. The elevation is put on the altimeter's
    scale as it is (metres read as the altimeter's standard metres).
    Unrounded (reports round down to whole hPa).

    Raises ModelRangeError if the QNH falls outside 85000..110000 Pa (then
    p_pa is not the pressure at that elevation).

    Example (invented): field at 430 m, QFE 962.0 hPa:
    qnh(96200.0, 430.0) -> 101257.4 Pa.
    """
    p = check_p_pa("p_pa", p_pa, P_STATION_MIN_PA, P_STATION_MAX_PA)
    e = check_height("elevation_m", elevation_m)
    h = standard.altitude_at(p) - e    # at most 7685 gpm: always layer 0
    q = standard.pressure_at(h) if h >= standard.BOTTOM_GPH_M else 0.0
    if q < QNH_MIN_PA or q > QNH_MAX_PA:
        raise ModelRangeError(
            "p_pa=%r at elevation_m=%r gives a QNH outside %g..%g Pa; pass the QFE (Pa) and "
            "the field elevation (m)" % (p, e, QNH_MIN_PA, QNH_MAX_PA))
    return q


def indicated_altitude(p_pa, qnh_pa):
    """Altitude shown by a standard-calibrated pressure altimeter set to
    qnh_pa, at ambient pressure p_pa, m.

    p_pa    ambient (static) pressure, Pa, 0.3733836..177761.5 (the standard
            atmosphere's range)
    qnh_pa  sub-scale setting, Pa, 85000..110000

    reading = H_std(p_pa) - H_std(qnh_pa), H_std the standard atmosphere's
    pressure altitude [ICAO7488] (tinygeo.pressure_altitude), in its
    geopotential metres. With qnh_pa = 101325 it is the pressure altitude;
    with the aerodrome's QNH it reads the aerodrome elevation on the ground.

    Example: indicated_altitude(96200.0, 101257.4) -> 430.0 m.
    """
    q = check_p_pa("qnh_pa", qnh_pa, QNH_MIN_PA, QNH_MAX_PA)
    return standard.pressure_altitude(p_pa) - standard.altitude_at(q)


# ---------------------------------------------------------------------------
# For stations (tinygeo.station): an unchecked kernel of the sea-level
# reduction (the height of a standard isobaric surface that high stations
# report is in tinygeo.highsite, outside the core).
# ---------------------------------------------------------------------------

def msl_tv(p_pa, tv_k, gph_m):
    # sea_level_pressure without the checks, from the station's virtual
    # temperature and the barometer's geopotential height (callers check and
    # convert once; sea_level_pressure itself ends here), so the same result
    # as sea_level_pressure(p, t, h, rh, lat) for tv_k = its Tv and
    # gph_m = geopotential_height(h, lat)
    return p_pa + p_pa * math.expm1(G_RD * gph_m / (tv_k + 0.5 * LAPSE_K_GPM * gph_m))
