/* gravity.c -- twin of tinygeo/gravity.py: normal gravity of a level
 * ellipsoid, m/s^2. Formulas, sources ([TR8350] sec. 4, [HM67] sec. 2-7/2-8,
 * [Moritz80]) and the float32 numerics are documented in gravity.py. */
#include <stddef.h>
#include "tg_internal.h"

#define HEIGHT_MIN_M TGPY_GRAVITY_HEIGHT_MIN_M
#define HEIGHT_MAX_M TGPY_GRAVITY_HEIGHT_MAX_M
#define DEG TG_DEG                      /* _DEG = math.pi / 180.0 */

/* S_q(y), 8 terms, Horner form (gravity._s_q) */
static TG_FLOAT s_q(TG_FLOAT y)
{
    return (TG_L(2.0 / 15.0) - y * (TG_L(4.0 / 35.0) - y * (TG_L(6.0 / 63.0) - y * (TG_L(8.0 / 99.0) - y * (
        TG_L(10.0 / 143.0) - y * (TG_L(12.0 / 195.0) - y * (TG_L(14.0 / 255.0) - y * (TG_L(16.0 / 323.0)))))))));
}

/* S_p(y), 8 terms, Horner form (gravity._s_p) */
static TG_FLOAT s_p(TG_FLOAT y)
{
    return (TG_L(6.0 / 15.0) - y * (TG_L(6.0 / 35.0) - y * (TG_L(6.0 / 63.0) - y * (TG_L(6.0 / 99.0) - y * (
        TG_L(6.0 / 143.0) - y * (TG_L(6.0 / 195.0) - y * (TG_L(6.0 / 255.0) - y * (TG_L(6.0 / 323.0)))))))));
}

/* gravity.check_height */
static tg_status check_height(TG_FLOAT height_m)
{
    return tg__check_range(height_m, HEIGHT_MIN_M, HEIGHT_MAX_M, TG_RANGE);
}

tg_status tg_somigliana_gravity(TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid, TG_FLOAT *out)
{
    TG_FLOAT phi, sp, s;
    TG_TRY(tg__check_lat(lat_deg));
    phi = lat_deg * DEG;
    ellipsoid = tg__check_ellipsoid(ellipsoid);     /* check_ellipsoid */
    if (ellipsoid == NULL)
        return tg__fail(TG_RANGE, out);
    sp = TG_SIN(phi);
    s = sp * sp;
    *out = ellipsoid->gamma_e * (TG_L(1.0) + ellipsoid->k_somigliana * s) / TG_SQRT(TG_L(1.0) - ellipsoid->e2 * s);
    return TG_OK;
}

tg_status tg_normal_gravity(TG_FLOAT lat_deg, TG_FLOAT height_m, const tg_ellipsoid *ellipsoid,
                            TG_FLOAT *out)
{
    TG_FLOAT phi, h, e2, a, sphi, cphi, t, bb2, nu, p, z, c0, c1, delta, u2, v2, u, v;
    TG_FLOAT ca, sa, r, cb, sb, w, b3, x2, sq0, oa, gma, g_u, g_b;
    TG_TRY(tg__check_lat(lat_deg));
    phi = lat_deg * DEG;
    TG_TRY(check_height(height_m));
    h = height_m;
    ellipsoid = tg__check_ellipsoid(ellipsoid);     /* check_ellipsoid */
    if (ellipsoid == NULL)
        return tg__fail(TG_RANGE, out);
    e2 = ellipsoid->e2;
    a = ellipsoid->a_m;
    sphi = TG_SIN(phi);
    cphi = TG_COS(phi);
    /* lengths below are in units of a (scaled), so all are of order 1 */
    t = h / a;
    bb2 = TG_L(1.0) - e2;                                 /* (b/a)^2 */
    nu = TG_L(1.0) / TG_SQRT(TG_L(1.0) - e2 * sphi * sphi); /* prime-vertical radius N / a */
    p = (nu + t) * cphi;                                  /* distance from the axis / a */
    z = (nu * bb2 + t) * sphi;                            /* distance from the equator plane / a */
    /* u^2 = b^2 + delta a^2 with delta the root of delta^2 + c1 delta + c0 = 0;
     * c0 expanded about the foot point (see gravity.py) */
    c0 = -t * (TG_L(2.0) * nu * bb2 + t * (TG_L(1.0) - e2 * cphi * cphi));
    c1 = TG_L(1.0) + bb2 - (p * p + z * z);
    delta = TG_L(-2.0) * c0 / (c1 + TG_SQRT(c1 * c1 - TG_L(4.0) * c0));
    u2 = bb2 + delta;                                     /* u^2 / a^2 */
    v2 = TG_L(1.0) + delta;                               /* (u^2 + E^2) / a^2 */
    u = TG_SQRT(u2);
    v = TG_SQRT(v2);
    ca = u * p;                                           /* proportional to cos(beta) */
    sa = v * z;                                           /* proportional to sin(beta) */
    r = TG_SQRT(ca * ca + sa * sa);
    cb = ca / r;
    sb = sa / r;
    w = TG_SQRT((u2 + e2 * sb * sb) / v2);
    b3 = bb2 * TG_SQRT(bb2);                              /* (b/a)^3 */
    x2 = e2 / u2;                                         /* (E/u)^2 */
    sq0 = s_q(e2 / bb2);                                  /* q0 = e'^3 S_q(e'^2) */
    oa = ellipsoid->omega * ellipsoid->omega * a;         /* omega^2 a, m/s^2 */
    gma = ellipsoid->gm / (a * a);                        /* GM / a^2, m/s^2 */
    g_u = -(gma / v2 + oa * (b3 / (u2 * v2) * s_p(x2) / sq0 * (TG_L(0.5) * sb * sb - TG_L(1.0) / TG_L(6.0))
                             - u * cb * cb)) / w;
    g_b = oa * (v - b3 / (u2 * u * v) * s_q(x2) / sq0) * sb * cb / w;
    *out = TG_SQRT(g_u * g_u + g_b * g_b);
    return TG_OK;
}
