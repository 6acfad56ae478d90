/* standard.c -- twin of tinygeo/standard.py: the U.S. Standard Atmosphere
 * 1976 (NOAA-S/T 76-1562, Table 4, eqs. 18, 23, 33a, 33b): temperature and
 * pressure at a geopotential height, pressure altitude. The stable q-form /
 * e-form of eq. 33a/33b and their float32 accuracy are documented in
 * standard.py. */
#include "tg_internal.h"

static const TG_FLOAT H_BASE[7] = TGPY_STANDARD__H_BASE;   /* Hb, gpm */
static const TG_FLOAT T_BASE[7] = TGPY_STANDARD__T_BASE;   /* T_Mb, K */
static const TG_FLOAT LAPSE[7] = TGPY_STANDARD__LAPSE;     /* L_Mb, K/gpm */
static const TG_FLOAT P_BASE[7] = TGPY_STANDARD__P_BASE;   /* Pb, Pa */
typedef char tg__layers_are_7[(TGPY_STANDARD__H_BASE_N == 7 && TGPY_STANDARD__P_BASE_N == 7) ? 1 : -1];

#define TOP_GPH_M TGPY_STANDARD_TOP_GPH_M
#define BOTTOM_Z_M TGPY_STANDARD_BOTTOM_Z_M
/* BOTTOM_GPH_M = R0_M * BOTTOM_Z_M / (R0_M + BOTTOM_Z_M) */
#define BOTTOM_GPH_M (TG_R0_M * BOTTOM_Z_M / (TG_R0_M + BOTTOM_Z_M))
#define G_RD (TG_G0 / TG_RD)      /* G_RD = G0 / RD, K/gpm */
#define RD_G (TG_RD / TG_G0)      /* RD / G0 of standard.altitude_at, gpm/K */

/* the ln(1 + x) that standard.py writes out in pressure_at/altitude_at: x > -1,
 * Kahan's form x ln(u)/(u - 1) (Goldberg 1991, Theorem 4); C99 has log1p, but
 * the port keeps Python's form so both round alike (deliberate). */
static TG_FLOAT ln1p(TG_FLOAT x)
{
    TG_FLOAT u = TG_L(1.0) + x;
    if (u == TG_L(1.0))
        return x;
    return x * TG_LOG(u) / (u - TG_L(1.0));
}

/* ln(a / b) as standard.py writes it out: a - b exact when a, b are close (Sterbenz) */
static TG_FLOAT ln_ratio(TG_FLOAT a, TG_FLOAT b)
{
    return ln1p((a - b) / b);
}

static int layer_of_height(TG_FLOAT h)
{
    int i = 6;
    while (i > 0 && h < H_BASE[i])
        i -= 1;
    return i;
}

static int layer_of_pressure(TG_FLOAT p)
{
    int i = 6;
    while (i > 0 && p > P_BASE[i])
        i -= 1;
    return i;
}

/* standard.pressure_at: eq. 33a/33b in the q-form; h already checked */
TG_FLOAT tg__standard_pressure_at(TG_FLOAT h)
{
    int i = layer_of_height(h);
    TG_FLOAT tb = T_BASE[i];
    TG_FLOAT dh = h - H_BASE[i];
    TG_FLOAT x = LAPSE[i] * dh / tb;
    TG_FLOAT q;
    if (x == TG_L(0.0))
        q = TG_L(1.0);
    else
        q = ln1p(x) / x;
    return P_BASE[i] * TG_EXP(-G_RD * dh * q / tb);
}

/* standard.altitude_at: inverse of eq. 33a/33b in the e-form; p already checked */
TG_FLOAT tg__standard_altitude_at(TG_FLOAT p)
{
    int i = layer_of_pressure(p);
    TG_FLOAT tb = T_BASE[i];
    TG_FLOAT y = RD_G * tb * ln_ratio(P_BASE[i], p);
    TG_FLOAT x = LAPSE[i] * y / tb;
    TG_FLOAT e;
    if (x == TG_L(0.0))
        e = TG_L(1.0);
    else
        e = TG_EXPM1(x) / x;
    return H_BASE[i] + y * e;
}

TG_FLOAT tg__standard_bottom_gph_m(void)
{
    return BOTTOM_GPH_M;
}

/* TOP_P_PA = pressure_at(TOP_GPH_M), BOTTOM_P_PA = pressure_at(BOTTOM_GPH_M):
 * Python computes them at import with the same code; C computes them on
 * first use and keeps them (the only static state of the core functions;
 * the value is the same whoever writes it first). */
static TG_FLOAT top_p_pa(void)
{
    static TG_FLOAT v = TG_L(0.0);
    if (v == TG_L(0.0))
        v = tg__standard_pressure_at(TOP_GPH_M);
    return v;
}

static TG_FLOAT bottom_p_pa(void)
{
    static TG_FLOAT v = TG_L(0.0);
    if (v == TG_L(0.0))
        v = tg__standard_pressure_at(BOTTOM_GPH_M);
    return v;
}

/* standard._check_gph */
static tg_status check_gph(TG_FLOAT h)
{
    if (!isfinite(h))
        return TG_RANGE;
    if (h > TOP_GPH_M)
        return TG_MODEL_RANGE;
    if (h < BOTTOM_GPH_M)
        return TG_MODEL_RANGE;
    return TG_OK;
}

tg_status tg_standard_temperature(TG_FLOAT gph_m, TG_FLOAT *out)
{
    int i;
    TG_TRY(check_gph(gph_m));
    i = layer_of_height(gph_m);
    *out = T_BASE[i] + LAPSE[i] * (gph_m - H_BASE[i]);
    return TG_OK;
}

tg_status tg_standard_pressure(TG_FLOAT gph_m, TG_FLOAT *out)
{
    TG_TRY(check_gph(gph_m));
    *out = tg__standard_pressure_at(gph_m);
    return TG_OK;
}

tg_status tg_pressure_altitude(TG_FLOAT p_pa, TG_FLOAT *out)
{
    TG_TRY(tg__as_finite(p_pa, TG_RANGE));
    if (p_pa < top_p_pa())
        return tg__fail(TG_MODEL_RANGE, out);
    if (p_pa > bottom_p_pa())
        return tg__fail(TG_MODEL_RANGE, out);
    *out = tg__standard_altitude_at(p_pa);
    return TG_OK;
}

tg_status tg_ussa76_geopotential_height(TG_FLOAT z_m, TG_FLOAT *out)
{
    TG_TRY(tg__as_finite(z_m, TG_RANGE));
    if (z_m < BOTTOM_Z_M || z_m > TG_L(86000.0))
        return tg__fail(TG_MODEL_RANGE, out);
    *out = TG_R0_M * z_m / (TG_R0_M + z_m);
    return TG_OK;
}

tg_status tg_ussa76_geometric_height(TG_FLOAT gph_m, TG_FLOAT *out)
{
    TG_FLOAT top;
    TG_TRY(tg__as_finite(gph_m, TG_RANGE));
    top = TG_R0_M * TG_L(86000.0) / (TG_R0_M + TG_L(86000.0));
    if (gph_m < BOTTOM_GPH_M || gph_m > top)
        return tg__fail(TG_MODEL_RANGE, out);
    *out = TG_R0_M * gph_m / (TG_R0_M - gph_m);
    return TG_OK;
}
