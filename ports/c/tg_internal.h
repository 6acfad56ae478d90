/* tg_internal.h -- shared by the tinygeo C sources only (not installed).
 * The float/double switch, the libm macro layer, and the argument checks of
 * tinygeo/errors.py returning status codes instead of raising. */
#ifndef TG_INTERNAL_H
#define TG_INTERNAL_H

#include <math.h>
#include "tinygeo.h"

/* Floating-point rules the port relies on. -ffast-math (also implied by
 * -Ofast) lets the compiler treat float arithmetic as real arithmetic: it
 * reassociates sums, which deletes the Kahan compensation of the column's
 * height sum (column.c: c = (g - s) - y is zero algebraically) and reorders
 * the ln-ratio series of layers.c, and it assumes no NaN or infinity, while
 * the port stores NaN for None and checks its arguments with isfinite().
 * Measured with gcc 12 -O2 on x86_64 (tests/test_c_port.py): 1e7 float
 * steps of 0.0012345, one feed-like call each, sum to 12345.000 with the
 * Kahan step and to 11952.650 with -ffast-math (the naive float sum). For results bit-identical to Python also keep a*b + c from
 * being fused into one FMA: -ffp-contract=off (gcc's default in ISO mode,
 * -std=c99; its GNU modes and other compilers may fuse where the target has
 * FMA, changing the last bits; see README.md). */
#ifdef __FAST_MATH__
#error "tinygeo: do not build with -ffast-math or -Ofast: it deletes the Kahan compensation of the column's sum (1e7 float steps of 0.0012345: 12345.000 without, 11952.650 with -ffast-math), reorders the ln series and breaks the NaN/isfinite checks; use -O2 (with -ffp-contract=off for bit-identity)"
#elif defined(__FINITE_MATH_ONLY__) && __FINITE_MATH_ONLY__
#error "tinygeo: do not build with -ffinite-math-only: the port stores NaN for None and rejects NaN/inf inputs with isfinite(), which that option folds to true"
#endif

/* TG_SINGLE is 1 when TG_FLOAT is float (token pasting: TG_IS_float is
 * defined, TG_IS_double is not and reads as 0 in #if). */
#define TG_IS_float 1
#define TG_CAT_(a, b) a##b
#define TG_CAT(a, b) TG_CAT_(a, b)
#if TG_CAT(TG_IS_, TG_FLOAT)
#define TG_SINGLE 1
#define TG_SIN sinf
#define TG_COS cosf
#define TG_SQRT sqrtf
#define TG_EXP expf
#define TG_EXPM1 expm1f
#define TG_LOG logf
#define TG_FABS fabsf
#define TG_FLOOR floorf
#else
#define TG_SINGLE 0
#define TG_SIN sin
#define TG_COS cos
#define TG_SQRT sqrt
#define TG_EXP exp
#define TG_EXPM1 expm1
#define TG_LOG log
#define TG_FABS fabs
#define TG_FLOOR floor
#endif

/* Branch hints for the compiler's block layout (GCC and clang; nothing
 * elsewhere): the rare path of a test (a rejected reading, a first reading,
 * an event) is laid out away from the common one, which then runs without
 * taken jumps. They change no result. */
/* TG_INLINE: a small static function of the per-reading path that is
 * worth inlining into its callers (GCC's own choice differs; measured with
 * bench/c_feed_cost.py, see column.c where it is used); forced only when
 * optimising for speed, so that an -Os build stays small. */
#if defined(__GNUC__)
#define TG_LIKELY(x) __builtin_expect(!!(x), 1)
#define TG_UNLIKELY(x) __builtin_expect(!!(x), 0)
#else
#define TG_LIKELY(x) (x)
#define TG_UNLIKELY(x) (x)
#endif
#if defined(__GNUC__) && !defined(__OPTIMIZE_SIZE__)
#define TG_INLINE static inline __attribute__((always_inline))
#else
#define TG_INLINE static inline
#endif

/* A literal: written as in the Python source (a double), rounded once to
 * TG_FLOAT at compile time. */
#define TG_L(x) ((TG_FLOAT)(x))
#define TG_NAN ((TG_FLOAT)NAN)
/* math.pi (M_PI is not in C99), and _DEG = math.pi / 180.0 of gravity.py,
 * potential.py */
#define TG_PI TG_L(3.141592653589793)
#define TG_DEG (TG_PI / TG_L(180.0))

#include "tg_tables.h"

/* constants.py names that are expressions of other names: the same
 * expression, evaluated in TG_FLOAT from the rounded literals (as Python on a
 * float32 board evaluates it at import), folded at compile time. */
#define TG_G0 TGPY_CONSTANTS_G0
#define TG_RD (TGPY_CONSTANTS_R_STAR / TGPY_CONSTANTS_M0_KG_MOL)   /* RD = R_STAR / M0_KG_MOL */
#define TG_EPSILON TGPY_CONSTANTS_EPSILON
#define TG_ZERO_C_K TGPY_CONSTANTS_ZERO_C_K
#define TG_R0_M TGPY_CONSTANTS_R0_M

/* ---- errors.py: the checks, as status codes ------------------------------ */
static inline tg_status tg__fail(tg_status st, TG_FLOAT *out)
{
    *out = TG_NAN;
    return st;
}

/* Return from the calling function with *out = NaN when st is not TG_OK. */
#define TG_TRY(expr) do { tg_status st_ = (expr); if (st_ != TG_OK) return tg__fail(st_, out); } while (0)

/* as_finite(name, value, unit, error) */
static inline tg_status tg__as_finite(TG_FLOAT x, tg_status error)
{
    return isfinite(x) ? TG_OK : error;
}

/* check_range(name, value, lo, hi, unit, hint, error) */
static inline tg_status tg__check_range(TG_FLOAT x, TG_FLOAT lo, TG_FLOAT hi, tg_status error)
{
    if (!isfinite(x))
        return error;
    if (x < lo || x > hi)
        return error;
    return TG_OK;
}

/* check_t_k(name, value, lo=150.0, hi=350.0, error) */
static inline tg_status tg__check_t_k(TG_FLOAT x, TG_FLOAT lo, TG_FLOAT hi, tg_status error)
{
    return tg__check_range(x, lo, hi, error);
}
#define TG_T_LO TG_L(150.0)
#define TG_T_HI TG_L(350.0)

/* check_p_pa(name, value, lo, hi, error) */
static inline tg_status tg__check_p_pa(TG_FLOAT x, TG_FLOAT lo, TG_FLOAT hi, tg_status error)
{
    return tg__check_range(x, lo, hi, error);
}

/* check_lat(value) */
static inline tg_status tg__check_lat(TG_FLOAT x)
{
    return tg__check_range(x, TG_L(-90.0), TG_L(90.0), TG_RANGE);
}

/* check_rh(value, tol=3.0, error) */
static inline tg_status tg__check_rh(TG_FLOAT x, TG_FLOAT tol, tg_status error)
{
    return tg__check_range(x, -tol, TG_L(100.0) + tol, error);
}

/* constants.check_ellipsoid (constants.c): the canonical tg_wgs84/tg_grs80, or NULL */
const tg_ellipsoid *tg__check_ellipsoid(const tg_ellipsoid *e);

/* ---- the unchecked forms shared between modules: each C name is the Python
 * name of the function (tg__<module>_<name>); callers check the arguments ---- */
TG_FLOAT tg__standard_pressure_at(TG_FLOAT h);                       /* standard.pressure_at */
TG_FLOAT tg__standard_altitude_at(TG_FLOAT p);                       /* standard.altitude_at */
TG_FLOAT tg__standard_bottom_gph_m(void);                            /* standard.BOTTOM_GPH_M */
TG_FLOAT tg__moisture_es(TG_FLOAT t_k, int ice);                     /* E0_PA * moisture._ex */
TG_FLOAT tg__moisture_f(TG_FLOAT p_pa);                              /* moisture._f */
TG_FLOAT tg__moisture_tv_w(TG_FLOAT t_k, TG_FLOAT w);                /* moisture.tv_w */
TG_FLOAT tg__moisture_td_rh(TG_FLOAT t_k, TG_FLOAT rh_pct, int ice); /* moisture.td_rh */
TG_FLOAT tg__sealevel_msl_tv(TG_FLOAT p_pa, TG_FLOAT tv_k, TG_FLOAT gph_m);           /* sealevel.msl_tv */
TG_FLOAT tg__highsite_iso_tv(TG_FLOAT p_pa, TG_FLOAT tv_k, TG_FLOAT gph_m, TG_FLOAT iso_p_pa); /* highsite.iso_tv */
/* potential.series: the series at one latitude, D_1(s)..D_6(s) then
 * 1*D_1(s)..6*D_6(s) (Python: a tuple of 12 floats; C fills the caller's array) */
#define TG_PC_N 12
void tg__potential_series(TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid, TG_FLOAT c[TG_PC_N]);
TG_FLOAT tg__potential_gph_series(TG_FLOAT h, const TG_FLOAT *c, TG_FLOAT a);     /* potential.gph_series */
TG_FLOAT tg__potential_newton_step(TG_FLOAT z, TG_FLOAT h, const TG_FLOAT *c,
                                   TG_FLOAT a);                                   /* potential.newton_step */
TG_FLOAT tg__potential_height_series(TG_FLOAT z, const TG_FLOAT *c, TG_FLOAT a);  /* potential.height_series */


/* ---- checkpoint.py's frame (checkpoint.c), shared by column.c and station.c ---- */
#include <stdint.h>
uint32_t tg__crc32(const unsigned char *data, size_t n);        /* checkpoint.crc32_soft */
unsigned char *tg__put_f64(unsigned char *b, double d);         /* struct "<d" */
double tg__get_f64(const unsigned char *b);
unsigned char *tg__put_u32(unsigned char *b, uint32_t u);       /* struct "<I" */
uint32_t tg__get_u32(const unsigned char *b);
unsigned char *tg__put_i32(unsigned char *b, int32_t v);        /* struct "<i" */
int32_t tg__get_i32(const unsigned char *b);
/* checkpoint.check_values(obj, spec, what): names are the C members (Python's
 * names without the leading underscore, gen_tables.c_member), vals the
 * restored values as doubles; 0 if an entry fails */
int tg__check_values(const char *spec, const char *const *names, const double *vals);
/* a restored double into a TG_FLOAT or tg_time field of size size; 0 when a
 * float build cannot hold it */
int tg__set_num(void *field, size_t size, double v);

/* ---- the kernels of every reading (layers.lnr, layers.half_k_ln,
 * moisture._ex, moisture.rh_q): defined here, static inline, so that
 * column.c's feed runs them without a call (bench/c_feed_cost.py); the same
 * code in every file that uses them ---- */
/* moisture._QC = 0.01 * E0_PA * ONE_M_EPS (Pa per %RH: (1 - eps) e/p per %RH
 * is _QC f x / p) and _QC_F0, _QC_F1, _QC_F2 = _QC times the enhancement
 * factor's coefficients _F0, _F1, _F2 (rh_q) */
#define TG_QC (TG_L(0.01) * TGPY_MOISTURE_E0_PA * (TG_L(1.0) - TG_EPSILON))
#define TG_QC_F0 (TG_QC * TGPY_MOISTURE__F0)
#define TG_QC_F1 (TG_QC * TGPY_MOISTURE__F1)
#define TG_QC_F2 (TG_QC * TGPY_MOISTURE__F2)
#define TG_HALF_RG (TG_L(0.5) * TG_RD / TG_G0)   /* layers.HALF_RG = 0.5 * RD / G0 */

/* FLOAT32 / LN_C: Python detects the precision of the interpreter at
 * import; C knows it at compile time (deliberate difference). */
#if TG_SINGLE
#define TG_LN_TERMS TGPY_LAYERS_LN_TERMS_F32
#else
#define TG_LN_TERMS TGPY_LAYERS_LN_TERMS_F64
#endif

typedef char tg__ln_terms_fit[(TG_LN_TERMS >= 2 && TG_LN_TERMS - 1 <= 12) ? 1 : -1];

/* layers.ln_coefs: 2/(2k+1) (the factor 2 of the series folded in), highest
 * k first; Python builds the list for k = N-1 .. 1 at import, C keeps
 * k = 12 .. 1 and uses its last TG_LN_TERMS - 1 entries (LN_C). */
static const TG_FLOAT tg__ln_c_all[12] = {
    TG_L(2.0) / TG_L(25.0), TG_L(2.0) / TG_L(23.0), TG_L(2.0) / TG_L(21.0),
    TG_L(2.0) / TG_L(19.0), TG_L(2.0) / TG_L(17.0), TG_L(2.0) / TG_L(15.0),
    TG_L(2.0) / TG_L(13.0), TG_L(2.0) / TG_L(11.0), TG_L(2.0) / TG_L(9.0),
    TG_L(2.0) / TG_L(7.0), TG_L(2.0) / TG_L(5.0), TG_L(2.0) / TG_L(3.0)
};

/* layers.lnr's Horner loop: acc = LN_C[i], then acc = acc * d2 + LN_C[j]
 * for j = i+1 .. n-1 (n = len(LN_C)), the same operations in the same
 * order. Written as a switch on the number of steps left that falls
 * through, so that a constant i (each tier of lnr) compiles to straight-line
 * code (bench/c_feed_cost.py: 14 instructions fewer per reading than the
 * loop); LN_C[n - s] is tg__ln_c_all[12 - s]. */
static inline TG_FLOAT tg__ln_horner(int i, TG_FLOAT d2)
{
    const TG_FLOAT *c = tg__ln_c_all;
    TG_FLOAT acc = c[12 - (TG_LN_TERMS - 1) + i];
    switch (TG_LN_TERMS - 2 - i) {
    case 11: acc = acc * d2 + c[1];   /* fall through */
    case 10: acc = acc * d2 + c[2];   /* fall through */
    case 9: acc = acc * d2 + c[3];    /* fall through */
    case 8: acc = acc * d2 + c[4];    /* fall through */
    case 7: acc = acc * d2 + c[5];    /* fall through */
    case 6: acc = acc * d2 + c[6];    /* fall through */
    case 5: acc = acc * d2 + c[7];    /* fall through */
    case 4: acc = acc * d2 + c[8];    /* fall through */
    case 3: acc = acc * d2 + c[9];    /* fall through */
    case 2: acc = acc * d2 + c[10];   /* fall through */
    case 1: acc = acc * d2 + c[11];   /* fall through */
    default: break;
    }
    return acc;
}

/* layers.lnr: ln(p1/p2) for p1, p2 > 0, no checks */
static inline TG_FLOAT tg__layers_lnr(TG_FLOAT p1, TG_FLOAT p2)
{
    /* layers.ln_tiers: the series is cut by |d| tier (d^2 thresholds, number of
     * coefficients used below each); the literals of the function in layers.py
     * (tests/test_c_port.py compares them with it) */
    #if TG_SINGLE
    static const TG_FLOAT TIER_D2[3] = { TG_L(1e-4), TG_L(2.5e-3), TG_L(2.5e-3) };   /* ln_tiers(True) */
    static const int TIER_M[3] = { 1, 2, 2 };                                      /* ln_tiers(True) */
    #else
    static const TG_FLOAT TIER_D2[3] = { TG_L(1e-6), TG_L(1e-4), TG_L(2.5e-3) };     /* ln_tiers(False) */
    static const int TIER_M[3] = { 2, 4, 6 };                                      /* ln_tiers(False) */
    #endif
    TG_FLOAT d = (p1 - p2) / (p1 + p2);
    if (TG_LIKELY(-TGPY_LAYERS_LN_SWITCH < d && d < TGPY_LAYERS_LN_SWITCH)) {
        const int n = TG_LN_TERMS - 1;   /* len(LN_C) */
        TG_FLOAT d2 = d * d;
        TG_FLOAT acc;
        if (d2 < TIER_D2[0])
            acc = tg__ln_horner(n - TIER_M[0], d2);
        else if (d2 < TIER_D2[1])
            acc = tg__ln_horner(n - TIER_M[1], d2);
        else if (d2 < TIER_D2[2])
            acc = tg__ln_horner(n - TIER_M[2], d2);
        else
            acc = tg__ln_horner(0, d2);
        return d * (TG_L(2.0) + d2 * acc);
    }
    if (d > TG_L(0.0))
        return TG_LOG(p1 / p2);
    return -TG_LOG(p2 / p1);   /* same rounding either way round: exact antisymmetry */
}

/* layers.half_k_ln: (Rd/g0)/2 ln(p1/p2), gpm per K: the thickness per
 * kelvin of Tv1 + Tv2, and dz/dTv of either end of the layer; no checks */
static inline TG_FLOAT tg__layers_half_k_ln(TG_FLOAT p1, TG_FLOAT p2)
{
    return TG_HALF_RG * tg__layers_lnr(p1, p2);
}

/* moisture._ex: exp(a t/(b + t)) of the Magnus form [WMO8] (e_w = 611.2 Pa
 * times it), no checks (callers check t_k) */
static inline TG_FLOAT tg__moisture_ex(TG_FLOAT t_k, int ice)
{
    TG_FLOAT t = t_k - TG_ZERO_C_K;
    if (ice && t <= TG_L(0.0))
        return TG_EXP(TGPY_MOISTURE__AI * t / (TGPY_MOISTURE__BI + t));
    return TG_EXP(TGPY_MOISTURE__AW * t / (TGPY_MOISTURE__BW + t));
}

/* moisture.rh_q: (1 - eps) e'_w/p per %RH: with r = rh_pct * rh_q, e/p = r/(1 - eps),
 * Tv = T/(1 - r) and dTv/dRH = Tv rh_q at constant T and p. No checks. */
static inline TG_FLOAT tg__moisture_rh_q(TG_FLOAT t_k, TG_FLOAT p_pa, int ice)
{
    /* Python forms qf before it calls _ex; C after (the same values and
     * operations: qf * ex / p_pa), so that qf is not kept across the call */
    TG_FLOAT ex = tg__moisture_ex(t_k, ice), qf;
    if (p_pa <= TGPY_MOISTURE_F_ONE_PA)
        qf = TG_QC;
    else
        qf = TG_QC_F0 + TG_QC_F1 * p_pa - TG_QC_F2 / p_pa;
    return qf * ex / p_pa;
}

#endif /* TG_INTERNAL_H */
