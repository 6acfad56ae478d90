/* layers.c -- twin of tinygeo/layers.py: hypsometric thickness of a layer
 * (Wallace & Hobbs 2006 eq. 3.29/3.30), the constant-lapse form (USSA76
 * eq. 33a/33b), the inverse, the mean Tv, and the stable ln(p1/p2). The error
 * analysis of ln(p1/p2) (atanh series below |d| = 0.25) is in layers.py. */
#include "tg_internal.h"

#define P_MIN_PA TGPY_LAYERS_P_MIN_PA
#define P_MAX_PA TGPY_LAYERS_P_MAX_PA
#define LN_SWITCH TGPY_LAYERS_LN_SWITCH

#define RG (TG_RD / TG_G0)                  /* _RG = RD / G0, gpm per K */
#define HALF_RG (TG_L(0.5) * TG_RD / TG_G0) /* HALF_RG = 0.5 * RD / G0 */
#define GR (TG_G0 / TG_RD)                  /* _GR = G0 / RD, K per gpm */

/* layers.thickness: layer_thickness without the argument checks */
static TG_FLOAT thickness(TG_FLOAT p1, TG_FLOAT p2, TG_FLOAT t1, TG_FLOAT t2)
{
    return tg__layers_half_k_ln(p1, p2) * (t1 + t2);
}

/* the pressure check of layers.py: check_p_pa(..., P_MIN_PA, P_MAX_PA) */
static tg_status check_p(TG_FLOAT p)
{
    return tg__check_p_pa(p, P_MIN_PA, P_MAX_PA, TG_RANGE);
}

tg_status tg_ln_ratio(TG_FLOAT p1_pa, TG_FLOAT p2_pa, TG_FLOAT *out)
{
    TG_TRY(check_p(p1_pa));
    TG_TRY(check_p(p2_pa));
    *out = tg__layers_lnr(p1_pa, p2_pa);
    return TG_OK;
}

tg_status tg_layer_thickness(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa, TG_FLOAT tv_lower_k,
                             TG_FLOAT tv_upper_k, TG_FLOAT *out)
{
    TG_TRY(check_p(p_lower_pa));
    TG_TRY(check_p(p_upper_pa));
    TG_TRY(tg__check_t_k(tv_lower_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__check_t_k(tv_upper_k, TG_T_LO, TG_T_HI, TG_RANGE));
    *out = thickness(p_lower_pa, p_upper_pa, tv_lower_k, tv_upper_k);
    return TG_OK;
}

tg_status tg_layer_thickness_lapse(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa,
                                   TG_FLOAT tv_lower_k, TG_FLOAT lapse_k_gpm, TG_FLOAT *out)
{
    TG_FLOAT t0, x, y, em, t2;
    TG_TRY(check_p(p_lower_pa));
    TG_TRY(check_p(p_upper_pa));
    TG_TRY(tg__check_t_k(tv_lower_k, TG_T_LO, TG_T_HI, TG_RANGE));
    t0 = tv_lower_k;
    TG_TRY(tg__as_finite(lapse_k_gpm, TG_RANGE));
    if (lapse_k_gpm < TG_L(-1.0) || lapse_k_gpm > TG_L(1.0))
        return tg__fail(TG_RANGE, out);
    x = tg__layers_lnr(p_lower_pa, p_upper_pa);
    y = -RG * lapse_k_gpm * x;
    /* Tv at the far end is Tv0 exp(y); |y| <= ln(350/150) < 0.85 (see layers.py) */
    if (TG_L(-0.85) <= y && y <= TG_L(0.85)) {
        em = TG_EXPM1(y);
        t2 = t0 + t0 * em;
        if (TG_L(150.0) <= t2 && t2 <= TG_L(350.0)) {
            if (y == TG_L(0.0)) {
                *out = RG * t0 * x;
                return TG_OK;
            }
            *out = RG * t0 * x * (em / y);
            return TG_OK;
        }
    }
    return tg__fail(TG_MODEL_RANGE, out);
}

tg_status tg_pressure_across_layer(TG_FLOAT p_lower_pa, TG_FLOAT thickness_gpm,
                                   TG_FLOAT tv_mean_k, TG_FLOAT *out)
{
    TG_TRY(check_p(p_lower_pa));
    TG_TRY(tg__as_finite(thickness_gpm, TG_RANGE));
    if (thickness_gpm < TG_L(-200000.0) || thickness_gpm > TG_L(200000.0))
        return tg__fail(TG_RANGE, out);
    TG_TRY(tg__check_t_k(tv_mean_k, TG_T_LO, TG_T_HI, TG_RANGE));
    *out = p_lower_pa * TG_EXP(-GR * thickness_gpm / tv_mean_k);
    return TG_OK;
}

tg_status tg_layer_mean_tv(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa, TG_FLOAT thickness_gpm,
                           TG_FLOAT *out)
{
    TG_FLOAT tv;
    TG_TRY(check_p(p_lower_pa));
    TG_TRY(check_p(p_upper_pa));
    TG_TRY(tg__as_finite(thickness_gpm, TG_RANGE));
    if (p_lower_pa == p_upper_pa)
        return tg__fail(TG_RANGE, out);
    tv = GR * thickness_gpm / tg__layers_lnr(p_lower_pa, p_upper_pa);
    if (tv < TG_L(150.0) || tv > TG_L(350.0))
        return tg__fail(TG_MODEL_RANGE, out);
    *out = tv;
    return TG_OK;
}
