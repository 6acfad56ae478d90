/* column.c -- twin of tinygeo/column.py: the running hypsometric
 * integration of an atmospheric column, reading by reading (Kahan-summed
 * layer thicknesses, geometric height from a quadratic node pair, vertical
 * rate, events, first-order uncertainty, GPS cross-check). The contract, the
 * formulas and their sources (Wallace & Hobbs 2006 eq. 3.29/3.30; Kahan 1965;
 * WMO-No. 49 tropopause; JCGM 100:2008 eqs. 10/13) are documented in
 * column.py; the code below follows column.py statement by statement.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include "tg_internal.h"

typedef char tg__ev_match[(TGPY_COLUMN_EV_LEVEL == TG_EV_LEVEL && TGPY_COLUMN_EV_TROPOPAUSE == TG_EV_TROPOPAUSE
                           && TGPY_COLUMN_EV_BURST == TG_EV_BURST && TGPY_COLUMN_EV_LANDED == TG_EV_LANDED
                           && TGPY_COLUMN_EV_LAUNCH == TG_EV_LAUNCH && TGPY_COLUMN_FL_DRY == TG_FL_DRY
                           && TGPY_COLUMN_FL_HELD_MIXING == TG_FL_HELD_MIXING
                           && TGPY_COLUMN_FL_NO_TIME == TG_FL_NO_TIME
                           && TGPY_COLUMN_FL_DESCENT == TG_FL_DESCENT && TGPY_COLUMN_FL_SAME_P == TG_FL_SAME_P
                           && TGPY_COLUMN_PH_WAIT == TG_PH_WAIT && TGPY_COLUMN_PH_ASCENT == TG_PH_ASCENT
                           && TGPY_COLUMN_PH_DESCENT == TG_PH_DESCENT
                           && TGPY_COLUMN_PH_LANDED == TG_PH_LANDED) ? 1 : -1];

static const TG_FLOAT MANDATORY_PA[16] = TGPY_COLUMN_MANDATORY_PA;
typedef char tg__mandatory_16[TGPY_COLUMN_MANDATORY_PA_N == 16 ? 1 : -1];

#define P_MIN_PA TGPY_COLUMN_P_MIN_PA
#define P_MAX_PA TGPY_COLUMN_P_MAX_PA
#define T_MIN_K TGPY_COLUMN_T_MIN_K
#define T_MAX_K TGPY_COLUMN_T_MAX_K
#define GPS_MIN_M TGPY_COLUMN_GPS_MIN_M
#define GPS_MAX_M TGPY_COLUMN_GPS_MAX_M
#define WMO_LAPSE_K_PER_GPM TGPY_COLUMN_WMO_LAPSE_K_PER_GPM
#define WMO_DEPTH_GPM TGPY_COLUMN_WMO_DEPTH_GPM
#define GPH_MIN_M TGPY_POTENTIAL_GPH_MIN_M
#define GPH_MAX_M TGPY_POTENTIAL_GPH_MAX_M
#define KH (TG_L(0.5) * TG_RD / TG_G0)   /* _KH = 0.5 * RD / G0, gpm/K */
#define NODE_D TGPY_COLUMN__NODE_D
#define NODE_W TGPY_COLUMN__NODE_W
#define RH_SLOPE_MIN TGPY_COLUMN__RH_SLOPE_MIN
#define NAN_ TG_NAN

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

void tg_column_config_defaults(tg_column_config *cfg, TG_FLOAT lat_deg)
{
    cfg->lat_deg = lat_deg;
    cfg->start_height_m = TG_L(0.0);
    cfg->anchor_p_pa = NAN_;
    cfg->ellipsoid = &tg_wgs84;
    cfg->ice = 0;
    cfg->dry_fallback = 0;
    cfg->sigma_p_pa = TG_L(10.0);
    cfg->sigma_t_k = TG_L(0.2);
    cfg->sigma_rh_pct = TG_L(1.0);
    cfg->bias_p_pa = TG_L(50.0);
    cfg->bias_t_k = TG_L(0.2);
    cfg->bias_rh_pct = TG_L(3.0);
    cfg->max_rate_m_s = TG_L(200.0);
    cfg->landing_s = TG_L(60.0);
    cfg->landing_tol_pa = TG_L(50.0);
    cfg->launch_m = TG_L(20.0);
    cfg->burst_drop_m = TG_L(50.0);
    cfg->burst_readings = 3;
    cfg->tropopause_max_p_pa = TG_L(50000.0);
    cfg->rh_tol_pct = TG_L(3.0);
    cfg->track_sigma = 1;
    cfg->on_event = NULL;
    cfg->on_event_ctx = NULL;
    cfg->geoid_undulation_m = NAN_;
}

/* column._setting = check_range */
#define SETTING(x, lo, hi) TG_TRY(tg__check_range((x), TG_L(lo), TG_L(hi), TG_RANGE))

static tg_status init_checked(tg_column *col, const tg_column_config *cfg, TG_FLOAT *out)
{
    const tg_ellipsoid *e = cfg->ellipsoid ? cfg->ellipsoid : &tg_wgs84;
    tg_column n;
    memset(&n, 0, sizeof n);
    /* --- settings (checked here; the status names the class, not the setting) */
    TG_TRY(tg__check_lat(cfg->lat_deg));
    n.lat_deg = cfg->lat_deg;
    if (e == &tg_wgs84 || (e->name != NULL && strcmp(e->name, "WGS84") == 0)) {
        n.ell = 0;
        n.ellipsoid = &tg_wgs84;
    } else if (e == &tg_grs80 || (e->name != NULL && strcmp(e->name, "GRS80") == 0)) {
        n.ell = 1;
        n.ellipsoid = &tg_grs80;
    } else {
        return tg__fail(TG_RANGE, out);
    }
    SETTING(cfg->start_height_m, -1000.0, 100000.0);
    n.start_height_m = cfg->start_height_m;
    /* anchor_p_pa: NaN stands for None (deliberate: C has no None in a struct) */
    if (cfg->anchor_p_pa != cfg->anchor_p_pa) {
        n.anchor = NAN_;
    } else {
        TG_TRY(tg__check_range(cfg->anchor_p_pa, TG_L(0.1), P_MAX_PA, TG_RANGE));
        n.anchor = cfg->anchor_p_pa;
    }
    n.ice = cfg->ice != 0;
    n.dry_fallback = cfg->dry_fallback != 0;
    SETTING(cfg->sigma_p_pa, 0.0, 10000.0);
    n.sigma_p_pa = cfg->sigma_p_pa;
    SETTING(cfg->sigma_t_k, 0.0, 50.0);
    n.sigma_t_k = cfg->sigma_t_k;
    SETTING(cfg->sigma_rh_pct, 0.0, 100.0);
    n.sigma_rh_pct = cfg->sigma_rh_pct;
    SETTING(cfg->bias_p_pa, 0.0, 10000.0);
    n.bias_p_pa = cfg->bias_p_pa;
    SETTING(cfg->bias_t_k, 0.0, 50.0);
    n.bias_t_k = cfg->bias_t_k;
    SETTING(cfg->bias_rh_pct, 0.0, 100.0);
    n.bias_rh_pct = cfg->bias_rh_pct;
    if (cfg->max_rate_m_s != cfg->max_rate_m_s) {   /* NaN = None: no rate check */
        n.max_rate = NAN_;
    } else {
        SETTING(cfg->max_rate_m_s, 1.0, 10000.0);
        n.max_rate = cfg->max_rate_m_s;
    }
    SETTING(cfg->landing_s, 0.0, 1e6);
    n.landing_s = cfg->landing_s;
    SETTING(cfg->landing_tol_pa, 0.0, 10000.0);
    n.landing_tol_pa = cfg->landing_tol_pa;
    SETTING(cfg->launch_m, 0.0, 10000.0);
    n.launch_m = cfg->launch_m;
    SETTING(cfg->burst_drop_m, 0.0, 100000.0);
    n.burst_drop_m = cfg->burst_drop_m;
    if (cfg->burst_readings < 1 || cfg->burst_readings > 100000)
        return tg__fail(TG_RANGE, out);
    n.burst_readings = cfg->burst_readings;
    TG_TRY(tg__check_range(cfg->tropopause_max_p_pa, TG_L(0.0), P_MAX_PA, TG_RANGE));
    n.tropopause_max_p_pa = cfg->tropopause_max_p_pa;
    SETTING(cfg->rh_tol_pct, 0.0, 3.0);
    n.rh_tol_pct = cfg->rh_tol_pct;
    n.track_sigma = cfg->track_sigma != 0;
    n.on_event = cfg->on_event;
    n.on_event_ctx = cfg->on_event_ctx;
    if (cfg->geoid_undulation_m != cfg->geoid_undulation_m) {   /* NaN = None */
        n.geoid_n = NAN_;
    } else {
        SETTING(cfg->geoid_undulation_m, -150.0, 150.0);
        n.geoid_n = cfg->geoid_undulation_m;
    }
    /* --- derived settings */
    TG_TRY(tg_geopotential_height(n.start_height_m, n.lat_deg, n.ellipsoid, &n.start_gph));
    n.min_rate = -n.max_rate;
    n.sp2 = n.sigma_p_pa * n.sigma_p_pa;
    n.st2 = n.sigma_t_k * n.sigma_t_k;
    /* --- state */
    n.count = 0;
    n.rejected = 0;
    n.reason = TG_REASON_NONE;
    n.flags = 0;
    n.phase = TG_PH_WAIT;
    n.lvl = 0;
    n.burst_n = 0;
    n.tp_state = 0;
    n.gps_n = -1;
    /* for name in _ST_F: setattr(self, name, nan) */
    n.p_pa = n.t_k = n.tv_k = n.rh_pct = n.time_s = n.gph_m = n.height_m = n.rate_m_s = NAN_;
    n.max_gph_m = n.launch_time_s = n.burst_gph_m = n.burst_time_s = n.burst_p_pa = NAN_;
    n.level_p_pa = n.level_gph_m = n.level_height_m = n.level_t_k = NAN_;
    n.tropopause_p_pa = n.tropopause_gph_m = n.tropopause_t_k = n.gps_m = n.gps_diff_m = NAN_;
    n.t_last = n.g_t = n.min_gph = n.launch_gph = n.max_time = n.max_p = n.burst_line = NAN_;
    n.land_lo = n.land_hi = n.land_t = n.h_t = n.h_p = n.h_rh = n.w_held = NAN_;
    n.tp_g = n.tp_top = n.tp_th = n.tp_p = n.tp_t = NAN_;
    n.n_g = n.n_h = n.n_k1 = n.n_k2 = n.n_lo = n.n_hi = n.h_tm = NAN_;
    n.gps_g = NAN_;
    n.c = TG_L(0.0);
    n.var_done = TG_L(0.0);
    n.ct = TG_L(0.0);
    n.cp = TG_L(0.0);
    n.s2 = TG_L(0.0);
    n.sum_a = TG_L(0.0);
    n.sum_rh = TG_L(0.0);
    n.sum_p = TG_L(0.0);
    n.slope = TG_L(0.0);
    n.var_anchor = TG_L(0.0);
    *col = n;
    return TG_OK;
}

tg_status tg_column_init(tg_column *col, const tg_column_config *cfg)
{
    TG_FLOAT dummy;
    return init_checked(col, cfg, &dummy);
}

/* ------------------------------------------------------------ helpers */

/* column._held_mixing_ratio: mixing ratio of the latest reading that had a
 * humidity, kg/kg (both calls succeeded on that reading already) */
static tg_status held_mixing_ratio(const tg_column *col, TG_FLOAT *out)
{
    TG_FLOAT e;
    if (col->h_rh <= TG_L(0.0)) {
        *out = TG_L(0.0);
        return TG_OK;
    }
    TG_TRY(tg_vapour_pressure(col->h_t, col->h_p, col->h_rh, col->ice, &e));
    return tg_mixing_ratio(e, col->h_p, out);
}

/* column._new_nodes */
static void new_nodes(tg_column *col, TG_FLOAT g)
{
    TG_FLOAT lat, h, d, ga, gb, sa, k2;
    const tg_ellipsoid *ell;
    if (!(GPH_MIN_M <= g && g <= GPH_MAX_M)) {
        col->n_g = g;
        col->n_h = NAN_;
        col->n_k1 = NAN_;
        col->n_k2 = NAN_;
        col->n_lo = g;
        col->n_hi = g;
        return;
    }
    lat = col->lat_deg;
    ell = col->ellipsoid;
    /* in range by construction (see column.py); a failure would leave NaN */
    (void)tg_geometric_height(g, lat, ell, &h);
    d = NODE_D;
    if (h + TG_L(2.0) * d > GPH_MAX_M)
        d = -d;
    (void)tg_geopotential_height(h + d, lat, ell, &ga);
    (void)tg_geopotential_height(h + TG_L(2.0) * d, lat, ell, &gb);
    sa = d / (ga - g);               /* divided differences of h over gph (Newton form) */
    k2 = (d / (gb - ga) - sa) / (gb - g);
    col->n_g = g;
    col->n_h = h;
    col->n_k1 = sa - k2 * (ga - g);
    col->n_k2 = k2;
    col->n_lo = g - NODE_W;
    col->n_hi = g + NODE_W;
}

/* column._sigma_step: streaming first-order propagation */
static void sigma_step(tg_column *col, int first, TG_FLOAT p0, TG_FLOAT p, TG_FLOAT tv0, TG_FLOAT tv,
                       TG_FLOAT dz, TG_FLOAT slope)
{
    TG_FLOAT tm2, a, ktm, cp, s_prev, sr;
    if (first && p0 != p0) {
        /* the first reading: no layer yet */
        TG_FLOAT q = slope * col->sigma_rh_pct;
        col->s2 = col->st2 + q * q;     /* Python: (slope * sigma_rh_pct) ** 2 */
        return;
    }
    tm2 = tv0 + tv;
    a = dz / tm2;                       /* K L / 2: dz/dTv of either end */
    ktm = KH * tm2;                     /* K Tm */
    cp = ktm / p;                       /* -dz/dp at the new reading */
    if (first) {
        col->ct = a + a;
        s_prev = slope;
    } else {
        TG_FLOAT pco = ktm / p0 - col->cp;   /* final dz_n/dp of the previous reading */
        TG_FLOAT ct = col->ct + a;           /* final dz_n/dTv of the previous reading */
        col->var_done += ct * ct * col->s2 + pco * pco * col->sp2;
        col->sum_p += pco;
        col->ct = a;
        s_prev = col->slope;
    }
    col->cp = cp;
    sr = slope * col->sigma_rh_pct;
    col->s2 = col->st2 + sr * sr;
    col->sum_a += a;
    col->sum_rh += a * (s_prev + slope);
}

/* column._levels: every mandatory level in [p, p0) not reported yet (ascent only) */
static int levels(tg_column *col, TG_FLOAT p0, TG_FLOAT p, TG_FLOAT g0, TG_FLOAT g, TG_FLOAT t0, TG_FLOAT t)
{
    int bits = 0;
    int lvl = col->lvl;
    while (lvl < 16 && MANDATORY_PA[lvl] >= p) {
        TG_FLOAT lev, f;
        if (bits && col->on_event != NULL)
            col->on_event(col, TG_EV_LEVEL, col->on_event_ctx);   /* the lower level crossed */
        lev = MANDATORY_PA[lvl];
        if (p0 == p)
            f = TG_L(0.0);
        else
            f = tg__layers_lnr(p0, lev) / tg__layers_lnr(p0, p);   /* ln_ratio, unchecked (deliberate:
                                                                    * p0, p passed layer_thickness) */
        col->level_p_pa = lev;
        col->level_gph_m = g0 + f * (g - g0);
        col->level_t_k = t0 + f * (t - t0);
        if (GPH_MIN_M <= col->level_gph_m && col->level_gph_m <= GPH_MAX_M)
            (void)tg_geometric_height(col->level_gph_m, col->lat_deg, col->ellipsoid, &col->level_height_m);
        else
            col->level_height_m = NAN_;
        lvl += 1;
        col->lvl = lvl;
        bits = TG_EV_LEVEL;
    }
    return bits;
}

/* column._tropopause: one new envelope point, O(1) search */
static int tropopause(tg_column *col, TG_FLOAT g, TG_FLOAT t, TG_FLOAT p)
{
    int st = col->tp_state;
    TG_FLOAT th;
    if (st == 3 || (st == 0 && p > col->tropopause_max_p_pa))
        return 0;
    th = t + WMO_LAPSE_K_PER_GPM * g;
    if (st != 0) {
        if (g > col->tp_top) {
            if (st == 2 || th >= col->tp_th) {
                col->tp_state = 3;
                col->tropopause_p_pa = col->tp_p;
                col->tropopause_gph_m = col->tp_g;
                col->tropopause_t_k = col->tp_t;
                return TG_EV_TROPOPAUSE;
            }
        } else if (th >= col->tp_th) {
            col->tp_state = 2;
            return 0;
        }
    }
    /* no candidate, or it was just rejected by this point: this point is the next one */
    if (p <= col->tropopause_max_p_pa) {
        col->tp_state = 1;
        col->tp_g = g;
        col->tp_top = g + WMO_DEPTH_GPM;
        col->tp_th = th;
        col->tp_p = p;
        col->tp_t = t;
    } else {
        col->tp_state = 0;
    }
    return 0;
}

/* column._bad: count the rejection, keep everything else */
static tg_status bad(tg_column *col, tg_reason reason, int *bits)
{
    col->rejected += 1;
    col->reason = reason;
    *bits = 0;
    return TG_READING;
}

/* ------------------------------------------------------------------ feed */
tg_status tg_column_feed(tg_column *col, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                         const TG_FLOAT *time_s, const TG_FLOAT *gps_m, int *bits_out)
{
    TG_FLOAT p, t, rh = TG_L(0.0), ts = TG_L(0.0), gps = TG_L(0.0);
    TG_FLOAT tv, slope, w, t0, p0, tv0, s, c, dz, g, rate, dt = TG_L(0.0), d, h;
    int flags, first, bits, ph;

    /* ---- 1. check the values (nothing is written before step 3) */
    p = p_pa;
    if (!isfinite(p))
        return bad(col, TG_REASON_NUMBER, bits_out);
    if (!(P_MIN_PA <= p && p <= P_MAX_PA))
        return bad(col, TG_REASON_PRESSURE, bits_out);
    t = t_k;
    if (!isfinite(t))
        return bad(col, TG_REASON_NUMBER, bits_out);
    if (!(T_MIN_K <= t && t <= T_MAX_K))
        return bad(col, TG_REASON_TEMPERATURE, bits_out);
    if (rh_pct != NULL) {
        TG_FLOAT tol = col->rh_tol_pct;
        rh = *rh_pct;
        if (!isfinite(rh))
            return bad(col, TG_REASON_NUMBER, bits_out);
        if (!(-tol <= rh && rh <= TG_L(100.0) + tol))
            return bad(col, TG_REASON_HUMIDITY, bits_out);
    }
    if (time_s != NULL) {
        ts = *time_s;
        if (!isfinite(ts))
            return bad(col, TG_REASON_NUMBER, bits_out);
        if (ts < col->t_last)
            return bad(col, TG_REASON_TIME, bits_out);
    }
    if (gps_m != NULL) {
        gps = *gps_m;
        if (!isfinite(gps))
            return bad(col, TG_REASON_NUMBER, bits_out);
        if (col->geoid_n == col->geoid_n) {   /* an ellipsoidal height: msl_height(gps, N) */
            if (tg_msl_height(gps, col->geoid_n, &gps) != TG_OK)
                return bad(col, TG_REASON_GPS, bits_out);
        }
        if (!(GPS_MIN_M <= gps && gps <= GPS_MAX_M))
            return bad(col, TG_REASON_GPS, bits_out);
    }

    /* ---- 2. compute the new state in locals */
    flags = 0;
    first = col->count == 0;
    if (rh_pct != NULL) {
        if (tg_virtual_temperature(t, p, rh, col->ice, &tv) != TG_OK)
            return bad(col, TG_REASON_HUMIDITY, bits_out);
        if (rh >= RH_SLOPE_MIN)
            slope = (tv - t) / rh;
        else
            slope = col->slope;
        w = NAN_;
    } else {
        slope = col->slope;
        w = col->w_held;
        if (col->dry_fallback || col->h_p != col->h_p) {
            tv = t;
            flags = TG_FL_DRY;
        } else {
            tg_status st;
            if (w != w) {
                st = held_mixing_ratio(col, &w);
                if (st != TG_OK) {
                    *bits_out = 0;
                    return st;
                }
            }
            /* Python lets a RangeError of this call escape (not a ReadingError,
             * rejected not counted); C returns its status the same way */
            st = tg_virtual_temperature_from_mixing_ratio(t, w, &tv);
            if (st != TG_OK) {
                *bits_out = 0;
                return st;
            }
            flags = TG_FL_HELD_MIXING;
        }
    }
    t0 = col->t_k;
    if (first) {
        p0 = col->anchor;
        tv0 = tv;
        s = col->start_gph;
        c = TG_L(0.0);
    } else {
        p0 = col->p_pa;
        tv0 = col->tv_k;
        s = col->gph_m;
        c = col->c;
    }
    if (p0 != p0 || p == p0) {   /* first reading without anchor, or a repeated pressure */
        dz = TG_L(0.0);
        if (!first)
            flags |= TG_FL_SAME_P;
        g = s;
    } else {
        TG_FLOAT y;
        if (tg_layer_thickness(p0, p, tv0, tv, &dz) != TG_OK)
            return bad(col, TG_REASON_TEMPERATURE, bits_out);
        if (p > p0)
            flags |= TG_FL_DESCENT;
        /* classic Kahan step: c carries the part of the sum lost so far */
        y = dz - c;
        g = s + y;
        c = (g - s) - y;
    }
    if (time_s == NULL) {
        flags |= TG_FL_NO_TIME;
        rate = NAN_;
    } else if (col->t_last == col->t_last) {
        TG_FLOAT dg;
        dt = ts - col->t_last;
        dg = g - col->g_t;
        if (dt == TG_L(0.0)) {
            if (dg != TG_L(0.0))
                return bad(col, TG_REASON_TIME, bits_out);
            rate = NAN_;     /* a duplicate: the rate stays as it was */
        } else {
            rate = dg / dt;
            if (rate > col->max_rate || rate < col->min_rate)
                return bad(col, TG_REASON_RATE, bits_out);
        }
    } else {
        rate = NAN_;
    }

    /* ---- 3. commit (nothing fails from here on) */
    col->count += 1;
    col->p_pa = p;
    col->t_k = t;
    col->tv_k = tv;
    col->gph_m = g;
    col->c = c;
    col->flags = flags;
    if (rh_pct == NULL) {
        col->rh_pct = NAN_;
        col->w_held = w;
    } else {
        col->rh_pct = rh;
        col->h_t = t;
        col->h_p = p;
        col->h_rh = rh;
        col->w_held = NAN_;
    }
    /* geometric height from the node pair */
    if (!(col->n_lo <= g && g <= col->n_hi))
        new_nodes(col, g);
    d = g - col->n_g;
    h = col->n_h + d * (col->n_k1 + d * col->n_k2);
    col->height_m = h;
    if (time_s == NULL) {
        col->time_s = NAN_;
        col->rate_m_s = NAN_;
    } else {
        col->time_s = ts;
        if (rate == rate)
            col->rate_m_s = (h - col->h_tm) / dt;
        else if (ts != col->t_last)
            col->rate_m_s = NAN_;
        col->t_last = ts;
        col->g_t = g;
        col->h_tm = h;
    }
    if (gps_m != NULL) {
        col->gps_m = gps;
        col->gps_diff_m = h - gps;
        col->gps_g = g;
        col->gps_n = col->count;
    }
    if (col->track_sigma)
        sigma_step(col, first, p0, p, tv0, tv, dz, slope);
    col->slope = slope;

    /* ---- 4. events */
    bits = 0;
    ph = col->phase;
    if (first) {
        int lvl;
        col->max_gph_m = g;
        col->max_time = col->time_s;
        col->max_p = p;
        col->min_gph = g;
        col->launch_gph = g + col->launch_m;
        bits |= tropopause(col, g, t, p);
        lvl = 0;
        while (lvl < 16 && MANDATORY_PA[lvl] > p)
            lvl += 1;
        col->lvl = lvl;
        if (lvl < 16 && MANDATORY_PA[lvl] == p)
            bits |= levels(col, p, p, g, g, t, t);
    } else {
        if (ph < TG_PH_DESCENT) {
            if (col->lvl < 16 && MANDATORY_PA[col->lvl] >= p)
                bits |= levels(col, p0, p, s, g, t0, t);
            if (g > col->max_gph_m)
                bits |= tropopause(col, g, t, p);
        }
        if (g > col->max_gph_m) {
            col->max_gph_m = g;
            col->max_time = col->time_s;
            col->max_p = p;
            col->burst_line = g - col->burst_drop_m;
            col->burst_n = 0;
        }
        if (ph == TG_PH_WAIT) {
            if (g < col->min_gph) {
                col->min_gph = g;
                col->launch_gph = g + col->launch_m;
            } else if (g >= col->launch_gph) {
                col->phase = TG_PH_ASCENT;
                col->launch_time_s = col->time_s;
                col->burst_line = col->max_gph_m - col->burst_drop_m;
                col->burst_n = 0;
                bits |= TG_EV_LAUNCH;
            }
        } else if (ph == TG_PH_ASCENT) {
            if (g <= col->burst_line) {
                col->burst_n += 1;
                if (col->burst_n >= col->burst_readings) {
                    col->phase = TG_PH_DESCENT;
                    col->burst_gph_m = col->max_gph_m;
                    col->burst_time_s = col->max_time;
                    col->burst_p_pa = col->max_p;
                    bits |= TG_EV_BURST;
                }
            } else {
                col->burst_n = 0;
            }
        } else if (ph == TG_PH_DESCENT && time_s != NULL) {
            if (col->land_lo <= p && p <= col->land_hi) {
                if (ts - col->land_t >= col->landing_s) {
                    col->phase = TG_PH_LANDED;
                    bits |= TG_EV_LANDED;
                }
            } else {   /* a new reference reading */
                col->land_lo = p - col->landing_tol_pa;
                col->land_hi = p + col->landing_tol_pa;
                col->land_t = ts;
            }
        }
    }
    if (bits && col->on_event != NULL)
        col->on_event(col, bits, col->on_event_ctx);
    *bits_out = bits;
    return TG_OK;
}

/* ------------------------------------------------------------ uncertainty */
static TG_FLOAT bias_var(const tg_column *col)
{
    TG_FLOAT bt = TG_L(2.0) * col->sum_a * col->bias_t_k;   /* (Rd/g0) ln(p0/p) dT */
    TG_FLOAT bh = col->sum_rh * col->bias_rh_pct;
    TG_FLOAT bp = (col->sum_p - col->cp) * col->bias_p_pa;
    return bt * bt + bh * bh + bp * bp + col->var_anchor;
}

TG_FLOAT tg_column_sigma_random_m(const tg_column *col)
{
    TG_FLOAT v;
    if (col->count == 0 || !col->track_sigma)
        return NAN_;
    v = col->var_done + col->ct * col->ct * col->s2 + col->cp * col->cp * col->sp2;
    return TG_SQRT(v);
}

TG_FLOAT tg_column_sigma_bias_m(const tg_column *col)
{
    if (col->count == 0 || !col->track_sigma)
        return NAN_;
    return TG_SQRT(bias_var(col));
}

TG_FLOAT tg_column_sigma_m(const tg_column *col)
{
    TG_FLOAT r = tg_column_sigma_random_m(col);
    return TG_SQRT(r * r + bias_var(col));
}

/* ------------------------------------------------------------ GPS */
tg_status tg_column_reanchor_gps(tg_column *col, TG_FLOAT sigma_gps_m, TG_FLOAT *out)
{
    TG_FLOAT sg, target, d, old_h;
    if (col->count == 0 || col->gps_n != col->count)
        return tg__fail(TG_STATE, out);
    TG_TRY(tg__check_range(sigma_gps_m, TG_L(0.0), TG_L(10000.0), TG_RANGE));
    sg = sigma_gps_m;
    TG_TRY(tg_geopotential_height(col->gps_m, col->lat_deg, col->ellipsoid, &target));
    d = target - col->gph_m;
    old_h = col->height_m;
    col->gph_m = target;
    col->c = TG_L(0.0);
    col->gps_g = target;
    col->max_gph_m = col->max_gph_m + d;
    col->g_t = col->g_t + d;
    col->min_gph = col->min_gph + d;
    col->launch_gph = col->launch_gph + d;
    col->burst_line = col->burst_line + d;
    col->tp_g = col->tp_g + d;
    col->tp_top = col->tp_top + d;
    col->tp_th = col->tp_th + WMO_LAPSE_K_PER_GPM * d;
    new_nodes(col, target);
    col->height_m = col->n_h;
    col->h_tm = col->h_tm + (col->height_m - old_h);
    col->gps_diff_m = col->height_m - col->gps_m;
    /* uncertainty restarts here: the reading is the new (noisy) start */
    col->var_done = TG_L(0.0);
    col->ct = TG_L(0.0);
    col->cp = TG_L(0.0);
    col->sum_a = TG_L(0.0);
    col->sum_rh = TG_L(0.0);
    col->sum_p = TG_L(0.0);
    col->var_anchor = sg * sg;
    *out = col->height_m - old_h;
    return TG_OK;
}

/* ------------------------------------------------------------ checkpoint */
/* Layout of column.py: struct "<4sBH" (magic, version, payload length), then
 * "<" + "d" * (len(_CFG_F) + len(_ST_F)) + "i" * (len(_CFG_I) + len(_ST_I)),
 * then "<I" CRC-32 of everything before it. The field lists come from
 * column.py through tg_tables.h (X-macros), so the order cannot drift. */
#define HEAD_LEN 7
#define PAYLOAD_LEN (8 * (TGPY_COLUMN__CFG_F_N + TGPY_COLUMN__ST_F_N) + 4 * (TGPY_COLUMN__CFG_I_N + TGPY_COLUMN__ST_I_N))
typedef char tg__head_layout[(sizeof(TGPY_COLUMN__HEAD) == 6 && sizeof(TGPY_COLUMN__MAGIC) == 5) ? 1 : -1];
/* tinygeo.h states the size; a change of column.py's layout stops the build here */
typedef char tg__checkpoint_size[(HEAD_LEN + PAYLOAD_LEN + 4 == TG_CHECKPOINT_BYTES) ? 1 : -1];
typedef char tg__ieee_double[(sizeof(double) == 8 && sizeof(uint64_t) == 8) ? 1 : -1];

/* column._crc_soft: CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320, as
 * zlib/binascii), four bits at a time with a 16-entry table */
static uint32_t crc32_ieee(const unsigned char *data, size_t n)
{
    static const uint32_t T[16] = {
        0x00000000u, 0x1db71064u, 0x3b6e20c8u, 0x26d930acu, 0x76dc4190u, 0x6b6b51f4u,
        0x4db26158u, 0x5005713cu, 0xedb88320u, 0xf00f9344u, 0xd6d6a3e8u, 0xcb61b38cu,
        0x9b64c2b0u, 0x86d3d2d4u, 0xa00ae278u, 0xbdbdf21cu
    };
    uint32_t c = 0xFFFFFFFFu;
    size_t i;
    for (i = 0; i < n; i++) {
        unsigned b = data[i];
        c = T[(c ^ b) & 15u] ^ (c >> 4);
        c = T[(c ^ (b >> 4)) & 15u] ^ (c >> 4);
    }
    return c ^ 0xFFFFFFFFu;
}

static unsigned char *put_f64(unsigned char *b, TG_FLOAT x)
{
    double d = (double)x;
    uint64_t u;
    int i;
    memcpy(&u, &d, 8);
    for (i = 0; i < 8; i++)
        b[i] = (unsigned char)(u >> (8 * i));
    return b + 8;
}

static const unsigned char *get_f64(const unsigned char *b, double *x)
{
    uint64_t u = 0;
    int i;
    for (i = 7; i >= 0; i--)
        u = (u << 8) | b[i];
    memcpy(x, &u, 8);
    return b + 8;
}

static unsigned char *put_i32(unsigned char *b, long v)
{
    uint32_t u = (uint32_t)v;   /* two's complement, as struct "<i" */
    int i;
    for (i = 0; i < 4; i++)
        b[i] = (unsigned char)(u >> (8 * i));
    return b + 4;
}

static const unsigned char *get_i32(const unsigned char *b, long *v)
{
    uint32_t u = (uint32_t)b[0] | ((uint32_t)b[1] << 8) | ((uint32_t)b[2] << 16) | ((uint32_t)b[3] << 24);
    *v = (long)(u & 0x7FFFFFFFu) - (long)(u & 0x80000000u);
    return b + 4;
}

tg_status tg_column_to_bytes(const tg_column *col, unsigned char *buf, size_t size)
{
    unsigned char *b = buf;
    if (size < TG_CHECKPOINT_BYTES)
        return TG_RANGE;
    memcpy(b, TGPY_COLUMN__MAGIC, 4);
    b[4] = (unsigned char)TGPY_COLUMN__VERSION;
    b[5] = (unsigned char)(PAYLOAD_LEN & 0xFF);
    b[6] = (unsigned char)(PAYLOAD_LEN >> 8);
    b += HEAD_LEN;
#define PUT_F(name) b = put_f64(b, col->name);
#define PUT_I(name) b = put_i32(b, (long)col->name);
    TGPY_COLUMN__CFG_F(PUT_F)
    TGPY_COLUMN__ST_F(PUT_F)
    TGPY_COLUMN__CFG_I(PUT_I)
    TGPY_COLUMN__ST_I(PUT_I)
#undef PUT_F
#undef PUT_I
    put_i32(b, (long)crc32_ieee(buf, (size_t)(b - buf)));
    return TG_OK;
}

/* the decoded payload, one member per field of the layout */
#define DECL_D(name) double name;
#define DECL_L(name) long name;
struct ck_vals {
    TGPY_COLUMN__CFG_F(DECL_D)
    TGPY_COLUMN__ST_F(DECL_D)
    TGPY_COLUMN__CFG_I(DECL_L)
    TGPY_COLUMN__ST_I(DECL_L)
};
#undef DECL_D
#undef DECL_L

tg_status tg_column_from_bytes(tg_column *col, const unsigned char *blob, size_t n,
                               tg_column_event_fn on_event, void *on_event_ctx)
{
    struct ck_vals v;
    tg_column_config cfg;
    tg_column c;
    const unsigned char *b;
    uint32_t crc;
    long length;
    if (blob == NULL || n < HEAD_LEN + 4)
        return TG_CHECKPOINT;                                  /* too short */
    if (memcmp(blob, TGPY_COLUMN__MAGIC, 4) != 0)
        return TG_CHECKPOINT;                                  /* not a checkpoint */
    if (blob[4] != TGPY_COLUMN__VERSION)
        return TG_CHECKPOINT;                                  /* another version */
    length = (long)blob[5] | ((long)blob[6] << 8);
    if (length != PAYLOAD_LEN || n != TG_CHECKPOINT_BYTES)
        return TG_CHECKPOINT;                                  /* truncated or corrupted */
    crc = (uint32_t)blob[n - 4] | ((uint32_t)blob[n - 3] << 8) | ((uint32_t)blob[n - 2] << 16)
        | ((uint32_t)blob[n - 1] << 24);
    if (crc != crc32_ieee(blob, n - 4))
        return TG_CHECKPOINT;                                  /* CRC-32 mismatch */
    b = blob + HEAD_LEN;
#define GET_F(name) b = get_f64(b, &v.name);
#define GET_I(name) b = get_i32(b, &v.name);
    TGPY_COLUMN__CFG_F(GET_F)
    TGPY_COLUMN__ST_F(GET_F)
    TGPY_COLUMN__CFG_I(GET_I)
    TGPY_COLUMN__ST_I(GET_I)
#undef GET_F
#undef GET_I
    if (v.ell != 0 && v.ell != 1)
        return TG_CHECKPOINT;                                  /* unknown ellipsoid code */
    /* the constructor, with the stored settings (NaN stands for None here as
     * in the blob) */
    tg_column_config_defaults(&cfg, (TG_FLOAT)v.lat_deg);
    cfg.start_height_m = (TG_FLOAT)v.start_height_m;
    cfg.anchor_p_pa = (TG_FLOAT)v.anchor;
    cfg.ellipsoid = v.ell ? &tg_grs80 : &tg_wgs84;
    cfg.ice = v.ice != 0;
    cfg.dry_fallback = v.dry_fallback != 0;
    cfg.sigma_p_pa = (TG_FLOAT)v.sigma_p_pa;
    cfg.sigma_t_k = (TG_FLOAT)v.sigma_t_k;
    cfg.sigma_rh_pct = (TG_FLOAT)v.sigma_rh_pct;
    cfg.bias_p_pa = (TG_FLOAT)v.bias_p_pa;
    cfg.bias_t_k = (TG_FLOAT)v.bias_t_k;
    cfg.bias_rh_pct = (TG_FLOAT)v.bias_rh_pct;
    cfg.max_rate_m_s = (TG_FLOAT)v.max_rate;
    cfg.landing_s = (TG_FLOAT)v.landing_s;
    cfg.landing_tol_pa = (TG_FLOAT)v.landing_tol_pa;
    cfg.launch_m = (TG_FLOAT)v.launch_m;
    cfg.burst_drop_m = (TG_FLOAT)v.burst_drop_m;
    cfg.burst_readings = v.burst_readings;
    cfg.tropopause_max_p_pa = (TG_FLOAT)v.tropopause_max_p_pa;
    cfg.rh_tol_pct = (TG_FLOAT)v.rh_tol_pct;
    cfg.track_sigma = v.track_sigma != 0;
    cfg.on_event = on_event;
    cfg.on_event_ctx = on_event_ctx;
    cfg.geoid_undulation_m = (TG_FLOAT)v.geoid_n;
    if (tg_column_init(&c, &cfg) != TG_OK)
        return TG_CHECKPOINT;                                  /* settings the column refuses */
#define SET_F(name) c.name = (TG_FLOAT)v.name;
#define SET_I(name) c.name = v.name;
    TGPY_COLUMN__ST_F(SET_F)
    TGPY_COLUMN__ST_I(SET_I)
#undef SET_F
#undef SET_I
    if (!(0 <= c.phase && c.phase <= TG_PH_LANDED && 0 <= c.lvl && c.lvl <= 16 && 0 <= c.tp_state
          && c.tp_state <= 3 && c.count >= 0 && c.rejected >= 0))
        return TG_CHECKPOINT;                                  /* impossible state */
    *col = c;
    return TG_OK;
}
