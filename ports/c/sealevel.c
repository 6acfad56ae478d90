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

/* sealevel._check_height */
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
