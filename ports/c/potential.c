/* potential.c -- twin of tinygeo/potential.py: geopotential of the normal
 * field, geopotential height and its inverse. The series in t = h/a with
 * coefficients in s = sin^2(lat), its derivation and its accuracy are
 * documented in potential.py; the tables are generated from it
 * (tg_tables.h, attached to the ellipsoid in constants.c). */
#include <stddef.h>
#include "tg_internal.h"

#define GPH_MIN_M TGPY_POTENTIAL_GPH_MIN_M
#define GPH_MAX_M TGPY_POTENTIAL_GPH_MAX_M
#define DEG TG_DEG                      /* _DEG = math.pi / 180.0 */

/* potential.series picks the table by ellipsoid.name; C uses the
 * pointer the ellipsoid carries (deliberate: no string compare). */
static const tg_series *table(const tg_ellipsoid *ellipsoid)
{
    return ellipsoid->series;
}

/* the Horner loop of potential.series: in s, highest power first */
static TG_FLOAT poly(const tg_series *tab, int row, TG_FLOAT s)
{
    TG_FLOAT acc = TG_L(0.0);
    int i = tab->lens[row] - 1;
    while (i >= 0) {
        acc = acc * s + tab->d[row][i];
        i -= 1;
    }
    return acc;
}

/* s = sin^2(lat) of potential.series (written out there) */
static TG_FLOAT sin2(TG_FLOAT lat_deg)
{
    TG_FLOAT sp = TG_SIN(lat_deg * DEG);
    return sp * sp;
}

/* potential.series: the series evaluated at one latitude, once: D_1(s) ..
 * D_6(s) then 1*D_1(s) .. 6*D_6(s) (the slope's coefficients), s =
 * sin^2(lat). No checks (callers check). Python returns a tuple of 12 floats
 * and keeps the last one (potential._LAST) for the next call at the same
 * latitude; C fills the caller's array and keeps nothing (deliberate: no
 * hidden state; a tg_column keeps its latitude's series itself). */
void tg__potential_series(TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid, TG_FLOAT c[TG_PC_N])
{
    const tg_series *tab = table(ellipsoid);
    TG_FLOAT s = sin2(lat_deg);
    int i;
    for (i = 0; i < 6; i++)
        c[i] = poly(tab, i, s);
    for (i = 0; i < 6; i++)
        c[i + 6] = (TG_FLOAT)(i + 1) * c[i];
}

/* potential.gph_series: geopotential height of h, gpm: h + h * sum_n D_n t^(n-1),
 * t = h/a (Horner in t); c from series, a the semi-major axis, m */
TG_FLOAT tg__potential_gph_series(TG_FLOAT h, const TG_FLOAT *c, TG_FLOAT a)
{
    TG_FLOAT t = h / a;
    TG_FLOAT acc = c[5];
    int i = 4;
    while (i >= 0) {
        acc = acc * t + c[i];
        i -= 1;
    }
    return h + h * acc;
}

/* potential.newton_step: one Newton step towards the geometric height of the
 * geopotential height z, from h, on the residual (h - z) + excess(h) */
TG_FLOAT tg__potential_newton_step(TG_FLOAT z, TG_FLOAT h, const TG_FLOAT *c, TG_FLOAT a)
{
    TG_FLOAT t = h / a;
    TG_FLOAT ex = c[5];
    TG_FLOAT sl = c[11];
    int i = 4;
    while (i >= 0) {
        ex = ex * t + c[i];
        sl = sl * t + c[i + 6];
        i -= 1;
    }
    return h - ((h - z) + h * ex) / (TG_L(1.0) + sl);
}

/* potential.height_series: geometric height of the geopotential height z, m: three
 * Newton steps from h0 = z / (1 + D1 + D2 z/a). No checks. */
TG_FLOAT tg__potential_height_series(TG_FLOAT z, const TG_FLOAT *c, TG_FLOAT a)
{
    TG_FLOAT h = z / (TG_L(1.0) + c[0] + c[1] * (z / a));
    int k;
    for (k = 0; k < 3; k++)
        h = tg__potential_newton_step(z, h, c, a);
    return h;
}

tg_status tg_geopotential_height(TG_FLOAT height_m, TG_FLOAT lat_deg,
                                 const tg_ellipsoid *ellipsoid, TG_FLOAT *out)
{
    TG_FLOAT h, c[TG_PC_N];
    /* the range of tinygeo.gravity.check_height (Python does not import
     * gravity here: a logger that needs only the column does not load it) */
    TG_TRY(tg__check_range(height_m, TG_L(-1000.0), TG_L(100000.0), TG_RANGE));
    h = height_m;
    ellipsoid = tg__check_ellipsoid(ellipsoid);     /* check_ellipsoid */
    if (ellipsoid == NULL)
        return tg__fail(TG_RANGE, out);
    TG_TRY(tg__check_lat(lat_deg));
    tg__potential_series(lat_deg, ellipsoid, c);
    *out = tg__potential_gph_series(h, c, ellipsoid->a_m);
    return TG_OK;
}

tg_status tg_geopotential(TG_FLOAT height_m, TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid,
                          TG_FLOAT *out)
{
    TG_FLOAT gph;
    TG_TRY(tg_geopotential_height(height_m, lat_deg, ellipsoid, &gph));
    *out = TG_G0 * gph;
    return TG_OK;
}

tg_status tg_geometric_height(TG_FLOAT gph_m, TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid,
                              TG_FLOAT *out)
{
    TG_FLOAT z, c[TG_PC_N];
    TG_TRY(tg__check_range(gph_m, GPH_MIN_M, GPH_MAX_M, TG_RANGE));
    z = gph_m;
    ellipsoid = tg__check_ellipsoid(ellipsoid);     /* check_ellipsoid */
    if (ellipsoid == NULL)
        return tg__fail(TG_RANGE, out);
    TG_TRY(tg__check_lat(lat_deg));
    tg__potential_series(lat_deg, ellipsoid, c);
    *out = tg__potential_height_series(z, c, ellipsoid->a_m);
    return TG_OK;
}

tg_status tg_msl_height(TG_FLOAT ellipsoidal_height_m, TG_FLOAT geoid_undulation_m,
                        TG_FLOAT *out)
{
    TG_TRY(tg__check_range(ellipsoidal_height_m, TG_L(-2000.0), TG_L(200000.0), TG_RANGE));
    TG_TRY(tg__check_range(geoid_undulation_m, TG_L(-150.0), TG_L(150.0), TG_RANGE));
    *out = ellipsoidal_height_m - geoid_undulation_m;
    return TG_OK;
}
