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

tg_status tg__gravity_check_height(TG_FLOAT height_m);   /* gravity.check_height */

/* potential._table: Python picks the table by ellipsoid.name; C uses the
 * pointer the ellipsoid carries (deliberate: no string compare). */
static const tg_series *table(const tg_ellipsoid *ellipsoid)
{
    return ellipsoid->series;
}

/* potential._poly: Horner in s, highest power first */
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

/* potential._sin2 */
static TG_FLOAT sin2(TG_FLOAT lat_deg)
{
    TG_FLOAT sp = TG_SIN(lat_deg * DEG);
    return sp * sp;
}

/* potential._excess: gph - h = h * sum_n D_n(s) t^(n-1), t = h/a (Horner in t) */
static TG_FLOAT excess(TG_FLOAT h, TG_FLOAT s, const tg_series *tab, TG_FLOAT a)
{
    TG_FLOAT t = h / a;
    TG_FLOAT acc = TG_L(0.0);
    int i = 6 - 1;
    while (i >= 0) {
        acc = acc * t + poly(tab, i, s);
        i -= 1;
    }
    return h * acc;
}

/* potential._slope: d gph / dh = 1 + sum_n n D_n(s) t^(n-1) */
static TG_FLOAT slope(TG_FLOAT h, TG_FLOAT s, const tg_series *tab, TG_FLOAT a)
{
    TG_FLOAT t = h / a;
    TG_FLOAT acc = TG_L(0.0);
    int i = 6 - 1;
    while (i >= 0) {
        acc = acc * t + (TG_FLOAT)(i + 1) * poly(tab, i, s);
        i -= 1;
    }
    return TG_L(1.0) + acc;
}

tg_status tg_geopotential_height(TG_FLOAT height_m, TG_FLOAT lat_deg,
                                 const tg_ellipsoid *ellipsoid, TG_FLOAT *out)
{
    TG_FLOAT h, s;
    const tg_series *tab;
    if (ellipsoid == NULL)
        ellipsoid = &tg_wgs84;
    TG_TRY(tg__gravity_check_height(height_m));
    h = height_m;
    TG_TRY(tg__check_lat(lat_deg));
    s = sin2(lat_deg);
    tab = table(ellipsoid);
    if (tab == NULL)
        return tg__fail(TG_ELLIPSOID, out);
    *out = h + excess(h, s, tab, ellipsoid->a_m);
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
    TG_FLOAT z, s, a, h;
    const tg_series *tab;
    int k;
    if (ellipsoid == NULL)
        ellipsoid = &tg_wgs84;
    TG_TRY(tg__check_range(gph_m, GPH_MIN_M, GPH_MAX_M, TG_RANGE));
    z = gph_m;
    TG_TRY(tg__check_lat(lat_deg));
    s = sin2(lat_deg);
    tab = table(ellipsoid);
    if (tab == NULL)
        return tg__fail(TG_ELLIPSOID, out);
    a = ellipsoid->a_m;
    h = z / (TG_L(1.0) + poly(tab, 0, s) + poly(tab, 1, s) * (z / a));
    for (k = 0; k < 3; k++) {
        /* residual gph(h) - z, with (h - z) exact in floating point */
        h = h - ((h - z) + excess(h, s, tab, a)) / slope(h, s, tab, a);
    }
    *out = h;
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
