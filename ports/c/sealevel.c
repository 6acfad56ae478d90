/* sealevel.c -- twin of tinygeo/sealevel.py: pressure reduced to mean sea
 * level (WMO-No. 8 Vol. I Ch. 3 half-way rule), QFE, QNH and the indicated
 * altitude of a standard-calibrated altimeter (ICAO Doc 7488, Annex 3).
 * Method and its error are documented in sealevel.py. */
#include <stddef.h>
#include "tg_internal.h"

#define LAPSE_K_GPM TGPY_SEALEVEL_LAPSE_K_GPM
#define P_STATION_MIN_PA TGPY_SEALEVEL_P_STATION_MIN_PA
#define P_STATION_MAX_PA TGPY_SEALEVEL_P_STATION_MAX_PA
#define HEIGHT_MIN_M TGPY_SEALEVEL_HEIGHT_MIN_M
#define HEIGHT_MAX_M TGPY_SEALEVEL_HEIGHT_MAX_M
#define T_MIN_K TGPY_SEALEVEL_T_MIN_K
#define T_MAX_K TGPY_SEALEVEL_T_MAX_K
#define QNH_MIN_PA TGPY_SEALEVEL_QNH_MIN_PA
#define QNH_MAX_PA TGPY_SEALEVEL_QNH_MAX_PA
#define FIELD_STEP_MAX_M TGPY_SEALEVEL_FIELD_STEP_MAX_M
#define G_RD (TG_G0 / TG_RD)      /* G_RD = G0 / RD */

/* the virtual temperature step of sealevel.py (written out at its call
 * sites there): rh_pct NULL = None (dry air) */
static tg_status tv_of(TG_FLOAT t_k, TG_FLOAT p_pa, const TG_FLOAT *rh_pct, int ice, TG_FLOAT *out)
{
    if (rh_pct == NULL) {
        *out = t_k;
        return TG_OK;
    }
    return tg_virtual_temperature(t_k, p_pa, *rh_pct, ice, out);
}

static tg_status check_station_p(TG_FLOAT p_pa)
{
    return tg__check_p_pa(p_pa, P_STATION_MIN_PA, P_STATION_MAX_PA, TG_RANGE);
}

/* sealevel.check_height */
static tg_status check_height(TG_FLOAT x)
{
    return tg__check_range(x, HEIGHT_MIN_M, HEIGHT_MAX_M, TG_RANGE);
}

tg_status tg_sea_level_pressure(TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT height_m,
                                const TG_FLOAT *rh_pct, const TG_FLOAT *lat_deg, int ice,
                                TG_FLOAT *out)
{
    TG_FLOAT p, h, tv, tv_mean;
    TG_TRY(check_station_p(p_pa));
    p = p_pa;
    TG_TRY(tg__check_t_k(t_k, T_MIN_K, T_MAX_K, TG_RANGE));
    TG_TRY(check_height(height_m));
    h = height_m;
    TG_TRY(tv_of(t_k, p, rh_pct, ice, &tv));
    if (lat_deg != NULL)
        TG_TRY(tg_geopotential_height(h, *lat_deg, NULL, &h));
    tv_mean = tv + TG_L(0.5) * LAPSE_K_GPM * h;
    *out = p + p * TG_EXPM1(G_RD * h / tv_mean);
    return TG_OK;
}

tg_status tg_qfe(TG_FLOAT p_pa, TG_FLOAT barometer_above_field_m, TG_FLOAT t_k,
                 const TG_FLOAT *rh_pct, int ice, TG_FLOAT *out)
{
    TG_FLOAT tv;
    TG_TRY(check_station_p(p_pa));
    TG_TRY(tg__check_range(barometer_above_field_m, -FIELD_STEP_MAX_M, FIELD_STEP_MAX_M, TG_RANGE));
    TG_TRY(tg__check_t_k(t_k, T_MIN_K, T_MAX_K, TG_RANGE));
    TG_TRY(tv_of(t_k, p_pa, rh_pct, ice, &tv));
    *out = p_pa + p_pa * TG_EXPM1(G_RD * barometer_above_field_m / tv);
    return TG_OK;
}

tg_status tg_qnh(TG_FLOAT p_pa, TG_FLOAT elevation_m, TG_FLOAT *out)
{
    TG_FLOAT h, q;
    int have_q = 0;
    TG_TRY(check_station_p(p_pa));
    TG_TRY(check_height(elevation_m));
    h = tg__standard_altitude_at(p_pa) - elevation_m;   /* at most 7685 gpm: layer 0 */
    q = TG_L(0.0);
    if (h >= tg__standard_bottom_gph_m()) {
        q = tg__standard_pressure_at(h);
        have_q = 1;
    }
    if (!have_q || q < QNH_MIN_PA || q > QNH_MAX_PA)
        return tg__fail(TG_MODEL_RANGE, out);
    *out = q;
    return TG_OK;
}

tg_status tg_indicated_altitude(TG_FLOAT p_pa, TG_FLOAT qnh_pa, TG_FLOAT *out)
{
    TG_FLOAT hp;
    TG_TRY(tg__check_p_pa(qnh_pa, QNH_MIN_PA, QNH_MAX_PA, TG_RANGE));
    TG_TRY(tg_pressure_altitude(p_pa, &hp));
    *out = hp - tg__standard_altitude_at(qnh_pa);
    return TG_OK;
}

/* ---- the additions for stations (Station): sealevel.py's last section, and
 * highsite.py (the isobaric surface of high stations, outside the Python core;
 * kept in this file, beside the sea-level code it shares) ---- */
#define HIGH_STATION_M TGPY_HIGHSITE_HIGH_STATION_M
#define ISO_MIN_PA TGPY_HIGHSITE_ISO_MIN_PA
#define ISO_MAX_PA TGPY_HIGHSITE_ISO_MAX_PA

/* sealevel.msl_tv: sea_level_pressure without the checks, from the station's
 * virtual temperature and the barometer's geopotential height (the same
 * operations in the same order as tg_sea_level_pressure) */
TG_FLOAT tg__sealevel_msl_tv(TG_FLOAT p_pa, TG_FLOAT tv_k, TG_FLOAT gph_m)
{
    return p_pa + p_pa * TG_EXPM1(G_RD * gph_m / (tv_k + TG_L(0.5) * LAPSE_K_GPM * gph_m));
}

/* highsite.iso_tv: isobaric_height without the checks: gph_m + the
 * constant-lapse thickness from the barometer to iso_p_pa, gpm */
TG_FLOAT tg__highsite_iso_tv(TG_FLOAT p_pa, TG_FLOAT tv_k, TG_FLOAT gph_m, TG_FLOAT iso_p_pa)
{
    const TG_FLOAT rg = TG_L(2.0) * TG_HALF_RG;   /* 2 * HALF_RG = Rd/g0, gpm per K */
    TG_FLOAT x = tg__layers_lnr(p_pa, iso_p_pa);
    TG_FLOAT y = -rg * LAPSE_K_GPM * x;
    if (y == TG_L(0.0))
        return gph_m + rg * tv_k * x;
    return gph_m + rg * tv_k * x * (TG_EXPM1(y) / y);
}

tg_status tg_standard_surface_pa(TG_FLOAT height_m, TG_FLOAT *out)
{
    static const TG_FLOAT SURFACES[TGPY_HIGHSITE_SURFACES_ROWS][TGPY_HIGHSITE_SURFACES_WIDTH] =
        TGPY_HIGHSITE_SURFACES;
    int i;
    TG_TRY(check_height(height_m));
    if (height_m < HIGH_STATION_M) {
        *out = TG_NAN;                /* None */
        return TG_OK;
    }
    for (i = 0; i < TGPY_HIGHSITE_SURFACES_ROWS; i++) {
        if (height_m < SURFACES[i][0]) {
            *out = SURFACES[i][1];
            return TG_OK;
        }
    }
    *out = TGPY_HIGHSITE_SURFACE_TOP_PA;
    return TG_OK;
}

tg_status tg_isobaric_height(TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT height_m, TG_FLOAT iso_p_pa,
                             const TG_FLOAT *rh_pct, const TG_FLOAT *lat_deg, int ice, TG_FLOAT *out)
{
    TG_FLOAT h, tv;
    TG_TRY(check_station_p(p_pa));
    TG_TRY(tg__check_t_k(t_k, T_MIN_K, T_MAX_K, TG_RANGE));
    TG_TRY(check_height(height_m));
    TG_TRY(tg__check_p_pa(iso_p_pa, ISO_MIN_PA, ISO_MAX_PA, TG_RANGE));
    h = height_m;
    TG_TRY(tv_of(t_k, p_pa, rh_pct, ice, &tv));
    if (lat_deg != NULL)
        TG_TRY(tg_geopotential_height(h, *lat_deg, NULL, &h));
    *out = tg__highsite_iso_tv(p_pa, tv, h, iso_p_pa);
    return TG_OK;
}
