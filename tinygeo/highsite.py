"""The geopotential height of a standard isobaric surface that a high station
reports instead of (or beside) its sea-level pressure, and the rule that picks
the surface. Used by tinygeo.station; outside the core (bench/size.py), so a
board that only reduces to sea level does not carry it.

Sources
-------
[WMO306] WMO-No. 306, Manual on Codes, FM 12 SYNOP, group 4a3hhh (the
    geopotential of an agreed standard isobaric surface reported by stations
    that cannot reduce their pressure to sea level with reasonable accuracy;
    the choice of surface is regional practice; from memory).
[WMO8] WMO (2018). Guide to Instruments and Methods of Observation, WMO-No. 8,
    Volume I, Chapter 3, reduction of pressure (the fictitious column of
    tinygeo.sealevel, from memory).
[USSA76] NOAA, NASA, USAF (1976). U.S. Standard Atmosphere, 1976.
    NOAA-S/T 76-1562, eq. (33a): the thickness of a constant-lapse layer
    (from memory).
"""
import math

from .sealevel import LAPSE_K_GPM, check_height, checked

HIGH_STATION_M = 800.0
"""Barometer height above which tinygeo.station also gives the geopotential
height of a standard isobaric surface (standard_surface_pa), m. WMO practice
lets a station that cannot reduce its pressure to sea level with reasonable
accuracy report the geopotential of an agreed standard isobaric surface
instead (WMO-No. 306 Manual on Codes, FM 12 SYNOP, group 4a3hhh; the choice of
surface is regional practice; from memory)."""


def standard_surface_pa(height_m):
    """The standard isobaric surface whose geopotential height a station at
    this height reports, Pa; None below HIGH_STATION_M.

    height_m: barometer height above mean sea level, m, -500..5000.

    Rule (regional practice under WMO-No. 306 FM 12 SYNOP group 4a3hhh, from
    memory; a national service may choose otherwise): 850 hPa for stations
    from 800 m to below 2300 m, 700 hPa from 2300 m to below 3700 m, 500 hPa
    from 3700 m up. Each surface then lies, in the standard atmosphere, a few
    hundred metres to about 2 km from the station, so the fictitious column
    of isobaric_height is short.

    Example: standard_surface_pa(1600.0) -> 85000.0.
    """
    h = check_height("height_m", height_m)
    if h < HIGH_STATION_M:
        return None
    for below_m, surface_pa in SURFACES:
        if h < below_m:
            return surface_pa
    return SURFACE_TOP_PA


SURFACES = ((2300.0, 85000.0), (3700.0, 70000.0))
"""standard_surface_pa's rule: (the barometer height below which, m; the
surface, Pa), from HIGH_STATION_M up; SURFACE_TOP_PA above the last."""
SURFACE_TOP_PA = 50000.0


ISO_MIN_PA = 50000.0
ISO_MAX_PA = 100000.0
"""Accepted standard isobaric surfaces for isobaric_height, Pa (500..1000 hPa:
the surfaces of FM 12 group 4a3hhh, from memory)."""


def iso_tv(p_pa, tv_k, gph_m, iso_p_pa):
    # isobaric_height without the checks: gph_m + the constant-lapse
    # thickness from the barometer to iso_p_pa (as layer_thickness_lapse,
    # with the lapse LAPSE_K_GPM), gpm. Within the checked ranges Tv stays
    # above 150 K at the far end (|y| <= 0.17), so expm1(y)/y is safe
    from .layers import lnr, HALF_RG
    rg = 2 * HALF_RG                   # Rd/g0, gpm per K
    x = lnr(p_pa, iso_p_pa)
    y = -rg * LAPSE_K_GPM * x
    if y == 0.0:
        return gph_m + rg * tv_k * x
    return gph_m + rg * tv_k * x * (math.expm1(y) / y)


def isobaric_height(p_pa, t_k, height_m, iso_p_pa, rh_pct=None, lat_deg=None, ice=False):
    """Geopotential height of a standard isobaric surface estimated from a
    station's pressure and temperature, gpm.

    p_pa      barometer (station) pressure, Pa, 40000..115000
    t_k       air temperature at the station, K, 180..340
    height_m  barometer height above mean sea level, m, -500..5000
    iso_p_pa  the isobaric surface, Pa, 50000..100000 (85000 or 70000 as
              standard_surface_pa chooses, or another)
    rh_pct    relative humidity at the station, %, or None for dry air
    lat_deg   latitude, degrees: height_m is converted to geopotential height
              (as in sea_level_pressure); None: height_m taken as gpm
    ice       passed to virtual_temperature

    Method: the fictitious column of sea_level_pressure ([WMO8] Vol. I Ch. 3,
    from memory): virtual temperature Tv(station), falling with height at
    0.0065 K/gpm, extended from the barometer up or down to iso_p_pa, with
    the exact thickness of a constant-lapse layer ([USSA76] eq. 33a solved
    for the height, as tinygeo.layer_thickness_lapse):
        Z = H + (Tv/L) (1 - (p_iso/p)^(Rd L/g0)),  L = 0.0065 K/gpm,
    H the barometer's geopotential height. A surface below the station
    (p_iso > p) gives the height of the extrapolated column, as reported by
    high stations (WMO-No. 306 FM 12 group 4a3hhh, from memory). In the
    standard atmosphere (a station at H with the standard's p and T, dry) it
    returns the standard's own height of iso_p_pa exactly up to rounding.

    Example (an invented mountain station): 1600 m, 838.0 hPa, 8 degC, dry:
    isobaric_height(83800.0, 281.15, 1600.0, 85000.0) -> 1482.8 gpm.
    """
    p, tv, h, iso = checked(p_pa, t_k, height_m, rh_pct, lat_deg, ice, iso_p_pa, ISO_MIN_PA,
                            ISO_MAX_PA)
    return iso_tv(p, tv, h, iso)
