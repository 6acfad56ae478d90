/* moisture.c -- twin of tinygeo/moisture.py: saturation vapour pressure
 * (Magnus forms of WMO-No. 8 Annex 4.B), enhancement factor, vapour
 * pressure, dew point (also from temperature and relative humidity), mixing ratio, specific humidity, virtual temperature
 * (Wallace & Hobbs 2006 eq. 3.16; AMS Glossary). Sources, ranges and the
 * measured accuracy against IAPWS are documented in moisture.py. */
#include "tg_internal.h"

#define E0_PA TGPY_MOISTURE_E0_PA
#define AW TGPY_MOISTURE__AW
#define BW TGPY_MOISTURE__BW
#define AI TGPY_MOISTURE__AI
#define BI TGPY_MOISTURE__BI
#define F0 TGPY_MOISTURE__F0
#define F1 TGPY_MOISTURE__F1
#define F2 TGPY_MOISTURE__F2
#define F_ONE_PA TGPY_MOISTURE_F_ONE_PA
#define P_MIN_PA TGPY_MOISTURE_P_MIN_PA
#define P_MAX_PA TGPY_MOISTURE_P_MAX_PA
#define ONE_M_EPS (TG_L(1.0) - TG_EPSILON)  /* ONE_M_EPS = 1.0 - EPSILON */

/* _QC = 0.01 * E0_PA * ONE_M_EPS: Pa per %RH, (1 - eps) e/p per %RH is _QC f x / p */
#define QC (TG_L(0.01) * E0_PA * ONE_M_EPS)
/* _QC_F0 = _QC * _F0, _QC_F1 = _QC * _F1, _QC_F2 = _QC * _F2: _QC times the
 * enhancement factor's coefficients (rh_q) */
#define QC_F0 (QC * F0)
#define QC_F1 (QC * F1)
#define QC_F2 (QC * F2)

/* E0_PA * moisture._ex(t_k, ice) (written out at each use there; C-only
 * name): Magnus form [WMO8], no checks (callers check t_k). Pa. */
TG_FLOAT tg__moisture_es(TG_FLOAT t_k, int ice)
{
    return E0_PA * tg__moisture_ex(t_k, ice);
}

/* moisture._f: enhancement factor [WMO8], no checks (callers check p_pa). */
TG_FLOAT tg__moisture_f(TG_FLOAT p_pa)
{
    if (p_pa <= F_ONE_PA)
        return TG_L(1.0);
    return F0 + F1 * p_pa - F2 / p_pa;
}

/* moisture._check_e: e >= 0, finite, below p_pa (Python: boiling_error) */
static tg_status check_e(TG_FLOAT e_pa, TG_FLOAT p_pa)
{
    if (!isfinite(e_pa))
        return TG_RANGE;
    if (e_pa < TG_L(0.0))
        return TG_RANGE;
    if (e_pa >= p_pa)
        return TG_RANGE;
    return TG_OK;
}

tg_status tg_saturation_vapour_pressure(TG_FLOAT t_k, int ice, TG_FLOAT *out)
{
    TG_TRY(tg__check_t_k(t_k, TG_T_LO, TG_T_HI, TG_RANGE));
    *out = tg__moisture_es(t_k, ice);
    return TG_OK;
}

tg_status tg_enhancement_factor(TG_FLOAT p_pa, TG_FLOAT *out)
{
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    *out = tg__moisture_f(p_pa);
    return TG_OK;
}

tg_status tg_vapour_pressure(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice,
                             TG_FLOAT *out)
{
    TG_FLOAT e;
    TG_TRY(tg__check_t_k(t_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    TG_TRY(tg__check_rh(rh_pct, TG_L(3.0), TG_RANGE));
    e = rh_pct * TG_L(0.01) * tg__moisture_f(p_pa) * tg__moisture_es(t_k, ice);
    if (e >= p_pa)
        return tg__fail(TG_RANGE, out);      /* boiling_error */
    *out = e;
    return TG_OK;
}

tg_status tg_vapour_pressure_from_dew_point(TG_FLOAT td_k, TG_FLOAT p_pa, int ice,
                                            TG_FLOAT *out)
{
    TG_FLOAT e;
    TG_TRY(tg__check_t_k(td_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    e = tg__moisture_f(p_pa) * tg__moisture_es(td_k, ice);
    if (e >= p_pa)
        return tg__fail(TG_RANGE, out);      /* boiling_error */
    *out = e;
    return TG_OK;
}

tg_status tg_dew_point(TG_FLOAT e_pa, TG_FLOAT p_pa, int ice, TG_FLOAT *out)
{
    TG_FLOAT e, x, y, t, td;
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    TG_TRY(check_e(e_pa, p_pa));
    e = e_pa;
    if (e == TG_L(0.0))
        return tg__fail(TG_RANGE, out);      /* dry air has no dew point */
    x = e / (tg__moisture_f(p_pa) * E0_PA);
    /* x = 0: e/611.2 Pa underflows; ln of the smallest float, as dew_point */
    y = x > TG_L(0.0) ? TG_LOG(x) : TG_L(-745.0);
    if (ice && y <= TG_L(0.0))
        t = BI * y / (AI - y);
    else
        t = BW * y / (AW - y);
    td = t + TG_ZERO_C_K;
    if (td < TG_L(150.0) || td > TG_L(350.0))
        return tg__fail(TG_MODEL_RANGE, out);
    *out = td;
    return TG_OK;
}

/* moisture.td_rh: dew_point_from_rh without the checks (callers check t_k
 * in 150..350 K and rh_pct > 0); the result may lie outside 150..350 K */
TG_FLOAT tg__moisture_td_rh(TG_FLOAT t_k, TG_FLOAT rh_pct, int ice)
{
    TG_FLOAT t = t_k - TG_ZERO_C_K, x = rh_pct * TG_L(0.01), y;
    /* x = 0: the humidity underflows; ln of the smallest float, as td_rh */
    y = x > TG_L(0.0) ? TG_LOG(x) : TG_L(-745.0);
    if (ice && t <= TG_L(0.0))
        y = y + AI * t / (BI + t);
    else
        y = y + AW * t / (BW + t);
    if (ice && y <= TG_L(0.0))
        return BI * y / (AI - y) + TG_ZERO_C_K;
    return BW * y / (AW - y) + TG_ZERO_C_K;
}

tg_status tg_dew_point_from_rh(TG_FLOAT t_k, TG_FLOAT rh_pct, int ice, TG_FLOAT *out)
{
    TG_FLOAT td;
    if (ice != 0 && ice != 1)
        return tg__fail(TG_RANGE, out);      /* errors.check_flag */
    TG_TRY(tg__check_t_k(t_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__check_rh(rh_pct, TG_L(3.0), TG_RANGE));
    if (rh_pct <= TG_L(0.0))
        return tg__fail(TG_RANGE, out);      /* dry air has no dew point */
    td = tg__moisture_td_rh(t_k, rh_pct, ice);
    if (td < TG_L(150.0) || td > TG_L(350.0))
        return tg__fail(TG_MODEL_RANGE, out);
    *out = td;
    return TG_OK;
}

tg_status tg_mixing_ratio(TG_FLOAT e_pa, TG_FLOAT p_pa, TG_FLOAT *out)
{
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    TG_TRY(check_e(e_pa, p_pa));
    *out = TG_EPSILON * e_pa / (p_pa - e_pa);
    return TG_OK;
}

tg_status tg_specific_humidity(TG_FLOAT e_pa, TG_FLOAT p_pa, TG_FLOAT *out)
{
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    TG_TRY(check_e(e_pa, p_pa));
    *out = TG_EPSILON * e_pa / (p_pa - ONE_M_EPS * e_pa);
    return TG_OK;
}

/* moisture.tv_rh: virtual_temperature without the argument checks; TG_RANGE
 * (Python: boiling_error) if e >= p */
static tg_status tv_rh(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice, TG_FLOAT *out)
{
    TG_FLOAT r = rh_pct * tg__moisture_rh_q(t_k, p_pa, ice);
    if (r >= ONE_M_EPS)
        return tg__fail(TG_RANGE, out);      /* boiling_error */
    *out = t_k / (TG_L(1.0) - r);
    return TG_OK;
}

tg_status tg_virtual_temperature(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice,
                                 TG_FLOAT *out)
{
    TG_TRY(tg__check_t_k(t_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__check_p_pa(p_pa, P_MIN_PA, P_MAX_PA, TG_RANGE));
    TG_TRY(tg__check_rh(rh_pct, TG_L(3.0), TG_RANGE));
    return tv_rh(t_k, p_pa, rh_pct, ice, out);
}

tg_status tg_virtual_temperature_from_mixing_ratio(TG_FLOAT t_k, TG_FLOAT w_kg_kg,
                                                   TG_FLOAT *out)
{
    TG_TRY(tg__check_t_k(t_k, TG_T_LO, TG_T_HI, TG_RANGE));
    TG_TRY(tg__as_finite(w_kg_kg, TG_RANGE));
    if (w_kg_kg < TG_L(0.0) || w_kg_kg > TG_L(1.0))
        return tg__fail(TG_RANGE, out);
    *out = tg__moisture_tv_w(t_k, w_kg_kg);
    return TG_OK;
}

/* moisture.tv_w: virtual_temperature_from_mixing_ratio without the checks */
TG_FLOAT tg__moisture_tv_w(TG_FLOAT t_k, TG_FLOAT w)
{
    return t_k * (TG_L(1.0) + w / TG_EPSILON) / (TG_L(1.0) + w);
}
