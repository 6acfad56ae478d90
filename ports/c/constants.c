/* constants.c -- twin of tinygeo/constants.py (the ellipsoids) and of the
 * geopotential series tables of tinygeo/potential.py, which C attaches to
 * the ellipsoid (Python looks the table up by the ellipsoid's name). Every
 * number comes from tg_tables.h, generated from the Python sources. */
#include <stddef.h>
#include "tg_internal.h"

const char *tg_status_name(tg_status st)
{
    switch (st) {
    case TG_OK: return "ok";
    case TG_RANGE: return "range";
    case TG_MODEL_RANGE: return "model_range";
    case TG_ELLIPSOID: return "ellipsoid";
    case TG_READING: return "reading";
    case TG_STATE: return "state";
    case TG_CHECKPOINT: return "checkpoint";
    case TG_BUILD: return "build";
    }
    return "unknown";
}

/* ReadingError.reason of the column and the station (here, as every build
 * links constants.c) */
const char *tg_reason_name(tg_reason reason)
{
    switch (reason) {
    case TG_REASON_NONE: return "none";
    case TG_REASON_NUMBER: return "number";
    case TG_REASON_PRESSURE: return "pressure";
    case TG_REASON_TEMPERATURE: return "temperature";
    case TG_REASON_HUMIDITY: return "humidity";
    case TG_REASON_TIME: return "time";
    case TG_REASON_RATE: return "rate";
    case TG_REASON_GPS: return "gps";
    }
    return "unknown";
}

/* potential._WGS84, potential._GRS80 */
static const tg_series tg__wgs84_series = { TGPY_POTENTIAL__WGS84_LENS, TGPY_POTENTIAL__WGS84 };
static const tg_series tg__grs80_series = { TGPY_POTENTIAL__GRS80_LENS, TGPY_POTENTIAL__GRS80 };

#define TG_ELLIPSOID_INIT(N, SERIES) { #N, TGPY_CONSTANTS_##N##_A_M, TGPY_CONSTANTS_##N##_F, \
    TGPY_CONSTANTS_##N##_GM, TGPY_CONSTANTS_##N##_OMEGA, TGPY_CONSTANTS_##N##_B_M, \
    TGPY_CONSTANTS_##N##_E2, TGPY_CONSTANTS_##N##_EP2, TGPY_CONSTANTS_##N##_LIN_ECC_M, \
    TGPY_CONSTANTS_##N##_GAMMA_E, TGPY_CONSTANTS_##N##_GAMMA_P, \
    TGPY_CONSTANTS_##N##_K_SOMIGLIANA, TGPY_CONSTANTS_##N##_M, TGPY_CONSTANTS_##N##_U0, SERIES }

const tg_ellipsoid tg_wgs84 = TG_ELLIPSOID_INIT(WGS84, &tg__wgs84_series);
const tg_ellipsoid tg_grs80 = TG_ELLIPSOID_INIT(GRS80, &tg__grs80_series);

/* constants.check_ellipsoid: tg_wgs84 or tg_grs80 for an ellipsoid whose
 * defining constants (a_m, f, gm, omega) equal one of theirs (the two
 * themselves, or a copy), NULL (Python: RangeError) for any other; NULL in
 * is the default, WGS 84 */
const tg_ellipsoid *tg__check_ellipsoid(const tg_ellipsoid *e)
{
    static const tg_ellipsoid *const known[2] = { &tg_wgs84, &tg_grs80 };
    int i;
    if (e == NULL)
        return &tg_wgs84;
    for (i = 0; i < 2; i++) {
        const tg_ellipsoid *k = known[i];
        if (e == k || (e->a_m == k->a_m && e->f == k->f && e->gm == k->gm && e->omega == k->omega))
            return k;
    }
    return NULL;
}
