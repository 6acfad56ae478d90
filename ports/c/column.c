/* column.c -- twin of tinygeo/column.py: the running hypsometric
 * integration of an atmospheric column, reading by reading (Kahan-summed
 * layer thicknesses, geometric height from a quadratic node pair, vertical
 * rate, events, first-order uncertainty, GPS cross-check). The contract, the
 * formulas and their sources (Wallace & Hobbs 2006 eq. 3.29/3.30; Kahan 1965;
 * WMO-No. 49 tropopause; JCGM 100:2008 eqs. 10/13) are documented in
 * column.py.
 *
 * tg_column_feed mirrors Column.feed: the same steps in the same order
 * (1. check the values, writing nothing; 2. compute the new state in locals;
 * 3. commit; 4. events), the same local names (p, t, tv, slope, w, p0, tv0,
 * s, c, dz, a, tm2, g, h, rate, ...) and the same branch order, so the two
 * read side by side and give the same bits in double (tests/test_c_port.py).
 * Column's helpers have twins named after them: Column._nodes -> nodes(),
 * Column._levels -> levels(), Column._tropopause -> tropopause(),
 * Column._bad -> bad(); reanchor_gps, to_bytes and from_bytes follow
 * _column_rare.py. Deliberate differences:
 * - a rejected reading returns TG_READING and leaves its reason word in
 *   col->reason (Python raises ReadingError with a message; C keeps none);
 *   None is a NULL pointer for a reading and NaN for a setting;
 * - parts that Column.feed writes out in place are small functions here,
 *   called at the same point: held_mixing_ratio (the held mixing ratio),
 *   t_jump (the temperature-step allowance), set_nodes (the node commit),
 *   sigma_step (the uncertainty step);
 * - nodes() fills a nodes_t where Column._nodes returns a tuple;
 * - levels() calls layers.lnr where Column._levels calls layers.ln_ratio
 *   (the pressures passed feed's checks; same value);
 * - count and rejected stop at INT32_MAX (Python's ints grow on), and the
 *   burst counter is not incremented past burst_readings (the same events):
 *   no signed overflow, whatever a checkpoint holds;
 * - on_event receives a context pointer; the ellipsoid code _ell is a
 *   member written at init (Python: a property);
 * - the settings' defaults and ranges come from tg_tables.h, generated from
 *   Column.__init__.
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
#define KH (TG_L(0.5) * TG_RD / TG_G0)   /* layers.HALF_RG = 0.5 * RD / G0, gpm/K */
#define NODE_D TGPY_COLUMN__NODE_D
#define NODE_W TGPY_COLUMN__NODE_W
#define NODE_W2 TGPY_COLUMN__NODE_W2
#define RH_SLOPE_MIN TGPY_COLUMN__RH_SLOPE_MIN
#define ONE_M_EPS (TG_L(1.0) - TG_EPSILON)   /* moisture.ONE_M_EPS */
#define NAN_ TG_NAN
typedef char tg__pc_size[(sizeof(((tg_column *)0)->pc) == TG_PC_N * sizeof(TG_FLOAT)) ? 1 : -1];

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

/* The defaults and ranges of the settings are Column.__init__'s, generated
 * into tg_tables.h (TGPY_COLUMN_SET_<NAME>_DEF/_LO/_HI; None -> NaN). A
 * setting added to Column stops the build here until tg_column_config has it. */
typedef char tg__settings_26[TGPY_COLUMN_SET_N == 26 ? 1 : -1];
#define DEF(name) TGPY_COLUMN_SET_##name##_DEF

void tg_column_config_defaults(tg_column_config *cfg, TG_FLOAT lat_deg)
{
    cfg->lat_deg = lat_deg;
    cfg->start_height_m = DEF(START_HEIGHT_M);
    cfg->anchor_p_pa = DEF(ANCHOR_P_PA);
    cfg->ellipsoid = &tg_wgs84;   /* ellipsoid=WGS84 */
    cfg->ice = DEF(ICE);
    cfg->dry_fallback = DEF(DRY_FALLBACK);
    cfg->sigma_p_pa = DEF(SIGMA_P_PA);
    cfg->sigma_t_k = DEF(SIGMA_T_K);
    cfg->sigma_rh_pct = DEF(SIGMA_RH_PCT);
    cfg->bias_p_pa = DEF(BIAS_P_PA);
    cfg->bias_t_k = DEF(BIAS_T_K);
    cfg->bias_rh_pct = DEF(BIAS_RH_PCT);
    cfg->max_rate_m_s = DEF(MAX_RATE_M_S);
    cfg->landing_s = DEF(LANDING_S);
    cfg->landing_tol_pa = DEF(LANDING_TOL_PA);
    cfg->launch_m = DEF(LAUNCH_M);
    cfg->burst_drop_m = DEF(BURST_DROP_M);
    cfg->burst_readings = DEF(BURST_READINGS);
    cfg->tropopause_max_p_pa = DEF(TROPOPAUSE_MAX_P_PA);
    cfg->rh_tol_pct = DEF(RH_TOL_PCT);
    cfg->track_sigma = DEF(TRACK_SIGMA);
    cfg->on_event = NULL;         /* on_event=None */
    cfg->on_event_ctx = NULL;
    cfg->geoid_undulation_m = DEF(GEOID_UNDULATION_M);
    cfg->max_t_step_k = DEF(MAX_T_STEP_K);
    cfg->max_t_rate_k_s = DEF(MAX_T_RATE_K_S);
    cfg->max_t_gradient_k_m = DEF(MAX_T_GRADIENT_K_M);
}
#undef DEF

/* errors.check_range(name, value, lo, hi, ...) as Column.__init__ calls it,
 * with the generated range of that setting */
#define SETTING(x, name) \
    TG_TRY(tg__check_range((x), TGPY_COLUMN_SET_##name##_LO, TGPY_COLUMN_SET_##name##_HI, TG_RANGE))

static tg_status init_checked(tg_column *col, const tg_column_config *cfg, TG_FLOAT *out)
{
    const tg_ellipsoid *e = cfg->ellipsoid ? cfg->ellipsoid : &tg_wgs84;
    tg_column n;
    memset(&n, 0, sizeof n);
    /* --- settings (checked here; the status names the class, not the setting) */
    TG_TRY(tg__check_lat(cfg->lat_deg));
    n.lat_deg = cfg->lat_deg;
    /* Python's _ell is a property (0 if the ellipsoid is WGS84 else 1); C
     * keeps it as a member, written here only */
    if (e == &tg_wgs84 || (e->name != NULL && strcmp(e->name, "WGS84") == 0)) {
        n.ell = 0;
        n.ellipsoid = &tg_wgs84;
    } else if (e == &tg_grs80 || (e->name != NULL && strcmp(e->name, "GRS80") == 0)) {
        n.ell = 1;
        n.ellipsoid = &tg_grs80;
    } else {
        return tg__fail(TG_RANGE, out);
    }
    SETTING(cfg->start_height_m, START_HEIGHT_M);
    n.start_height_m = cfg->start_height_m;
    /* anchor_p_pa: NaN stands for None (deliberate: C has no None in a struct) */
    if (cfg->anchor_p_pa != cfg->anchor_p_pa) {
        n.anchor = NAN_;
    } else {
        SETTING(cfg->anchor_p_pa, ANCHOR_P_PA);
        n.anchor = cfg->anchor_p_pa;
    }
    n.ice = cfg->ice != 0;
    n.dry_fallback = cfg->dry_fallback != 0;
    SETTING(cfg->sigma_p_pa, SIGMA_P_PA);
    n.sigma_p_pa = cfg->sigma_p_pa;
    SETTING(cfg->sigma_t_k, SIGMA_T_K);
    n.sigma_t_k = cfg->sigma_t_k;
    SETTING(cfg->sigma_rh_pct, SIGMA_RH_PCT);
    n.sigma_rh_pct = cfg->sigma_rh_pct;
    SETTING(cfg->bias_p_pa, BIAS_P_PA);
    n.bias_p_pa = cfg->bias_p_pa;
    SETTING(cfg->bias_t_k, BIAS_T_K);
    n.bias_t_k = cfg->bias_t_k;
    SETTING(cfg->bias_rh_pct, BIAS_RH_PCT);
    n.bias_rh_pct = cfg->bias_rh_pct;
    if (cfg->max_rate_m_s != cfg->max_rate_m_s) {   /* NaN = None: no rate check */
        n.max_rate = NAN_;
    } else {
        SETTING(cfg->max_rate_m_s, MAX_RATE_M_S);
        n.max_rate = cfg->max_rate_m_s;
    }
    SETTING(cfg->landing_s, LANDING_S);
    n.landing_s = cfg->landing_s;
    SETTING(cfg->landing_tol_pa, LANDING_TOL_PA);
    n.landing_tol_pa = cfg->landing_tol_pa;
    SETTING(cfg->launch_m, LAUNCH_M);
    n.launch_m = cfg->launch_m;
    SETTING(cfg->burst_drop_m, BURST_DROP_M);
    n.burst_drop_m = cfg->burst_drop_m;
    if (cfg->burst_readings < TGPY_COLUMN_SET_BURST_READINGS_LO
        || cfg->burst_readings > TGPY_COLUMN_SET_BURST_READINGS_HI)
        return tg__fail(TG_RANGE, out);
    n.burst_readings = cfg->burst_readings;
    SETTING(cfg->tropopause_max_p_pa, TROPOPAUSE_MAX_P_PA);
    n.tropopause_max_p_pa = cfg->tropopause_max_p_pa;
    SETTING(cfg->rh_tol_pct, RH_TOL_PCT);
    n.rh_tol_pct = cfg->rh_tol_pct;
    n.track_sigma = cfg->track_sigma != 0;
    if (cfg->max_t_step_k != cfg->max_t_step_k) {   /* NaN = None: no temperature-step check */
        n.t_step = NAN_;
    } else {
        SETTING(cfg->max_t_step_k, MAX_T_STEP_K);
        n.t_step = cfg->max_t_step_k;
    }
    n.t_step_neg = -n.t_step;         /* derived (Python: so feed builds no float for its check) */
    SETTING(cfg->max_t_rate_k_s, MAX_T_RATE_K_S);
    n.max_t_rate_k_s = cfg->max_t_rate_k_s;
    SETTING(cfg->max_t_gradient_k_m, MAX_T_GRADIENT_K_M);
    n.max_t_gradient_k_m = cfg->max_t_gradient_k_m;
    n.on_event = cfg->on_event;
    n.on_event_ctx = cfg->on_event_ctx;
    if (cfg->geoid_undulation_m != cfg->geoid_undulation_m) {   /* NaN = None */
        n.geoid_n = NAN_;
    } else {
        SETTING(cfg->geoid_undulation_m, GEOID_UNDULATION_M);
        n.geoid_n = cfg->geoid_undulation_m;
    }
    /* --- derived settings */
    /* the geopotential series at this latitude, evaluated once (tinygeo.potential) */
    tg__potential_series(n.lat_deg, n.ellipsoid, n.pc);
    n.min_rate = -n.max_rate;
    n.spk2 = KH * KH * n.sigma_p_pa * n.sigma_p_pa;   /* (K/2 sigma_p)^2 */
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
    n.env_g = NAN_;   /* highest gph of any reading (the tropopause search's envelope) */
    n.land_lo = n.land_hi = n.land_t = n.h_t = n.h_p = n.h_rh = n.w_held = NAN_;
    n.tp_g = n.tp_top = n.tp_th = n.tp_p = n.tp_t = NAN_;
    n.n_g = n.n_h = n.n_k1 = n.n_k2 = n.n_lo = n.n_hi = n.h_tm = NAN_;
    n.c = TG_L(0.0);
    n.var_done = TG_L(0.0);
    n.ct = TG_L(0.0);
    n.tm2 = TG_L(0.0);
    n.s2 = TG_L(0.0);
    n.p_start = NAN_;
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

/* the held mixing ratio of Column.feed (written out there): mixing ratio of the latest reading that had a
 * humidity, kg/kg. That reading passed feed's r < 1 - eps, the same bound as
 * e < p up to rounding, so these checked calls fail only at that knife edge
 * (then feed rejects the reading with reason 'humidity', as Python does). */
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

/* the height node pair of column.py (_n_g, _n_h, _n_k1, _n_k2, _n_lo, _n_hi);
 * Python: the tuple returned by Column._nodes */
typedef struct nodes_t {
    TG_FLOAT g, h, k1, k2, lo, hi;
} nodes_t;

/* Column._nodes: exact geometric height h at g (potential.height_series with the
 * column's series; from a guess within a few mm, one potential.newton_step
 * step) and the quadratic in gph through it and the gph of h + D and h + 2D
 * (potential.gph_series). Writes only *nd. */
static void nodes(const tg_column *col, TG_FLOAT g, TG_FLOAT guess, nodes_t *nd)
{
    const TG_FLOAT *c = col->pc;
    TG_FLOAT a, h, d, ga, gb, sa, k2;
    if (!(GPH_MIN_M <= g && g <= GPH_MAX_M)) {
        nd->g = g;
        nd->h = NAN_;
        nd->k1 = NAN_;
        nd->k2 = NAN_;
        nd->lo = g;
        nd->hi = g;
        return;
    }
    a = col->ellipsoid->a_m;
    if (guess == guess)
        h = tg__potential_newton_step(g, guess, c, a);
    else
        h = tg__potential_height_series(g, c, a);
    d = NODE_D;
    if (h + TG_L(2.0) * d > GPH_MAX_M)
        d = -d;
    ga = tg__potential_gph_series(h + d, c, a);
    gb = tg__potential_gph_series(h + TG_L(2.0) * d, c, a);
    sa = d / (ga - g);               /* divided differences of h over gph (Newton form) */
    k2 = (d / (gb - ga) - sa) / (gb - g);
    nd->g = g;
    nd->h = h;
    nd->k1 = sa - k2 * (ga - g);
    nd->k2 = k2;
    nd->lo = g - NODE_W;
    nd->hi = g + NODE_W;
}

/* the node commit of Column.feed (written out there) */
static void set_nodes(tg_column *col, const nodes_t *nd)
{
    col->n_g = nd->g;
    col->n_h = nd->h;
    col->n_k1 = nd->k1;
    col->n_k2 = nd->k2;
    col->n_lo = nd->lo;
    col->n_hi = nd->hi;
}

/* the uncertainty step of Column.feed (written out there): streaming
 * first-order propagation; tm2 = Tv0 + Tv,
 * a = (Rd/g0)/2 ln(p0/p) = dz/dTv of either end */
static void sigma_step(tg_column *col, int first, TG_FLOAT p0, TG_FLOAT p, TG_FLOAT tm2, TG_FLOAT a,
                       TG_FLOAT slope)
{
    if (first && p0 != p0) {
        /* the first reading: no layer yet; its sensitivities are all 0 so far */
        TG_FLOAT q = slope * col->sigma_rh_pct;
        col->s2 = col->st2 + q * q;     /* Python: (slope * sigma_rh_pct) ** 2 */
        col->p_start = p;
        return;
    }
    if (first) {
        /* anchored start: the anchor is exact, the first reading is both ends */
        col->ct = a + a;
        col->p_start = p0;
    } else {
        /* final sensitivities of the previous reading: dz_n/dp = KH pco,
         * dz_n/dTv = ct (its slope's share of the humidity bias: ct slope) */
        TG_FLOAT pco = (tm2 - col->tm2) / p0;
        TG_FLOAT ct = col->ct + a;
        col->var_done += ct * ct * col->s2 + pco * pco * col->spk2;
        col->sum_p += pco;
        col->sum_rh += ct * col->slope;
        col->ct = a;
    }
    col->tm2 = tm2;
    if (first || slope != col->slope) {
        TG_FLOAT sr = slope * col->sigma_rh_pct;
        col->s2 = col->st2 + sr * sr;
    }
}

/* Column._levels: every mandatory level in [p, p0) not reported yet (ascent only) */
static int levels(tg_column *col, TG_FLOAT p0, TG_FLOAT p, TG_FLOAT g0, TG_FLOAT g, TG_FLOAT t0, TG_FLOAT t)
{
    int bits = 0;
    int lvl = col->lvl;
    while (lvl < 16 && MANDATORY_PA[lvl] >= p) {
        TG_FLOAT lev, f, gl;
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
        gl = col->level_gph_m;
        if (col->n_lo <= gl && gl <= col->n_hi && col->n_h == col->n_h) {
            /* one Newton step from the node quadratic (a few mm off) */
            TG_FLOAT d = gl - col->n_g;
            col->level_height_m = tg__potential_newton_step(gl, col->n_h + d * (col->n_k1 + d * col->n_k2),
                                                       col->pc, col->ellipsoid->a_m);
        } else if (GPH_MIN_M <= gl && gl <= GPH_MAX_M) {
            col->level_height_m = tg__potential_height_series(gl, col->pc, col->ellipsoid->a_m);
        } else {
            col->level_height_m = NAN_;
        }
        lvl += 1;
        col->lvl = lvl;
        bits = TG_EV_LEVEL;
    }
    return bits;
}

/* Column._tropopause: one new envelope point, O(1) search */
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

/* Column._bad: count the rejection, keep everything else */
static tg_status bad(tg_column *col, tg_reason reason, int *bits)
{
    if (col->rejected < INT32_MAX)   /* saturates (Python's int grows on) */
        col->rejected += 1;
    col->reason = reason;
    *bits = 0;
    return TG_READING;
}

/* the temperature-step check of Column.feed (written out there): the full allowance, only for a change
 * beyond max_t_step_k; 1 if the step exceeds it (Python: _bad('temperature')) */
static int t_jump(const tg_column *col, TG_FLOAT dtk, TG_FLOAT dz, TG_FLOAT ts)
{
    TG_FLOAT allow = col->t_step + col->max_t_gradient_k_m * TG_FABS(dz);
    if (ts == ts && col->t_last == col->t_last)
        allow += col->max_t_rate_k_s * (ts - col->t_last);
    return TG_FABS(dtk) > allow;
}

/* ------------------------------------------------------------------ feed */
tg_status tg_column_feed(tg_column *col, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                         const TG_FLOAT *time_s, const TG_FLOAT *gps_m, int *bits_out)
{
    TG_FLOAT p, t, rh = TG_L(0.0), ts = TG_L(0.0), gps = TG_L(0.0);
    TG_FLOAT tv, slope, w, t0, p0, tv0, s, c, dz, a, tm2, g, rate, d, h, dtk, time0;
    nodes_t nd;
    int flags, first, bits, ph, new_nodes;

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
        rh = *rh_pct;
        if (!isfinite(rh))
            return bad(col, TG_REASON_NUMBER, bits_out);
        if (rh < TG_L(0.0) || rh > TG_L(100.0)) {
            TG_FLOAT tol = col->rh_tol_pct;
            if (rh < -tol || rh > TG_L(100.0) + tol)
                return bad(col, TG_REASON_HUMIDITY, bits_out);
        }
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
        /* tinygeo.virtual_temperature (its moisture.tv_rh, inlined to share q):
         * Tv = T/(1 - r), r = (1 - eps) e/p = rh q, and dTv/dRH = Tv q */
        TG_FLOAT q = tg__moisture_rh_q(t, p, col->ice);
        TG_FLOAT r = rh * q;
        if (r >= ONE_M_EPS)
            return bad(col, TG_REASON_HUMIDITY, bits_out);
        tv = t / (TG_L(1.0) - r);
        if (rh >= RH_SLOPE_MIN)
            slope = tv * q;
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
            if (w != w) {
                /* a RangeError of vapour_pressure/mixing_ratio (the knife
                 * edge e >= p) is a 'humidity' rejection, as in Python */
                if (held_mixing_ratio(col, &w) != TG_OK)
                    return bad(col, TG_REASON_HUMIDITY, bits_out);
            }
            if (w > TG_L(1.0))
                return bad(col, TG_REASON_HUMIDITY, bits_out);
            tv = tg__moisture_tv_w(t, w);   /* tinygeo.virtual_temperature_from_mixing_ratio */
            flags = TG_FL_HELD_MIXING;
        }
    }
    t0 = col->t_k;
    if (first) {
        p0 = col->anchor;
        tv0 = tv;
        s = tg__potential_gph_series(col->start_height_m, col->pc, col->ellipsoid->a_m);
        c = TG_L(0.0);
    } else {
        p0 = col->p_pa;
        tv0 = col->tv_k;
        s = col->gph_m;
        c = col->c;
    }
    if (p0 != p0 || p == p0) {   /* first reading without anchor, or a repeated pressure */
        dz = TG_L(0.0);
        a = TG_L(0.0);
        tm2 = tv0 + tv;
        if (!first)
            flags |= TG_FL_SAME_P;
        g = s;
    } else {
        TG_FLOAT y;
        if (!(T_MIN_K <= tv && tv <= T_MAX_K && T_MIN_K <= tv0 && tv0 <= T_MAX_K))
            return bad(col, TG_REASON_TEMPERATURE, bits_out);   /* layer_thickness's RangeError */
        /* tinygeo.layer_thickness (arguments checked above), as its two products */
        a = tg__layers_half_k_ln(p0, p);   /* (Rd/g0)/2 ln(p0/p): also dz/dTv of either end */
        tm2 = tv0 + tv;
        dz = a * tm2;
        if (p > p0)
            flags |= TG_FL_DESCENT;
        /* classic Kahan step: c carries the part of the sum lost so far */
        y = dz - c;
        g = s + y;
        c = (g - s) - y;
    }
    /* temperature step (see max_t_step_k); a NaN t0 (first reading) passes */
    dtk = t - t0;
    if (dtk > col->t_step || dtk < col->t_step_neg) {
        if (t_jump(col, dtk, dz, time_s != NULL ? ts : NAN_))
            return bad(col, TG_REASON_TEMPERATURE, bits_out);
    }
    /* geometric height from the node pair (new nodes are kept in locals until the commit) */
    if (col->n_lo <= g && g <= col->n_hi) {
        new_nodes = 0;
        d = g - col->n_g;
        h = col->n_h + d * (col->n_k1 + d * col->n_k2);
    } else {
        TG_FLOAT guess = NAN_;
        d = g - col->n_g;
        if (-NODE_W2 <= d && d <= NODE_W2) {
            /* just out of the window: the old quadratic is within a few mm */
            guess = col->n_h + d * (col->n_k1 + d * col->n_k2);
        }
        nodes(col, g, guess, &nd);
        new_nodes = 1;
        d = g - nd.g;
        h = nd.h + d * (nd.k1 + d * nd.k2);
    }
    if (time_s == NULL) {
        flags |= TG_FL_NO_TIME;
        rate = NAN_;
    } else if (col->t_last == col->t_last) {
        TG_FLOAT dt = ts - col->t_last;
        if (dt == TG_L(0.0)) {
            if (g != col->g_t)
                return bad(col, TG_REASON_TIME, bits_out);
            rate = NAN_;     /* a duplicate: the rate stays as it was */
        } else {
            rate = (h - col->h_tm) / dt;
            if (rate > col->max_rate || rate < col->min_rate)
                return bad(col, TG_REASON_RATE, bits_out);
        }
    } else {
        rate = NAN_;
    }

    /* ---- 3. commit (nothing fails from here on) */
    time0 = col->time_s;   /* the previous reading's time (for the peak, below) */
    if (col->count < INT32_MAX)   /* saturates after 2^31 - 1 readings (Python's int grows on) */
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
    if (new_nodes)
        set_nodes(col, &nd);
    col->height_m = h;
    if (time_s == NULL) {
        col->time_s = NAN_;
        col->rate_m_s = NAN_;
    } else {
        col->time_s = ts;
        if (rate == rate)
            col->rate_m_s = rate;
        else if (ts != col->t_last)
            col->rate_m_s = NAN_;
        col->t_last = ts;
        col->g_t = g;
        col->h_tm = h;
    }
    if (gps_m != NULL) {
        col->gps_m = gps;
        col->gps_diff_m = h - gps;
        col->gps_n = col->count;
    }
    if (col->track_sigma)
        sigma_step(col, first, p0, p, tm2, a, slope);
    col->slope = slope;

    /* ---- 4. events */
    bits = 0;
    ph = col->phase;
    if (first) {
        int lvl;
        col->max_gph_m = g;
        col->env_g = g;
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
        TG_FLOAT pk;
        if (ph < TG_PH_DESCENT) {
            if (col->lvl < 16 && MANDATORY_PA[col->lvl] >= p)
                bits |= levels(col, p0, p, s, g, t0, t);
            if (g > col->env_g)
                bits |= tropopause(col, g, t, p);
        }
        if (g > col->env_g)
            col->env_g = g;
        /* the peak is the higher of the lower ends of consecutive pairs: one
         * glitched reading is never the peak (column.py explains) */
        pk = s < g ? s : g;
        if (pk > col->max_gph_m) {
            col->max_gph_m = pk;
            if (s < g) {
                col->max_time = time0;
                col->max_p = p0;
            } else {
                col->max_time = col->time_s;
                col->max_p = p;
            }
            col->burst_line = pk - col->burst_drop_m;
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
                if (col->burst_n < col->burst_readings)   /* the same test below; no overflow
                                                            * from a crafted checkpoint */
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
    /* (Rd/g0) ln(p0/p) dT: the sum of dz/dTv over all readings telescopes */
    TG_FLOAT bt = TG_L(2.0) * tg__layers_half_k_ln(col->p_start, col->p_pa) * col->bias_t_k;
    TG_FLOAT bh = (col->sum_rh + col->ct * col->slope) * col->bias_rh_pct;
    TG_FLOAT bp = KH * (col->sum_p - col->tm2 / col->p_pa) * col->bias_p_pa;
    return bt * bt + bh * bh + bp * bp + col->var_anchor;
}

TG_FLOAT tg_column_sigma_random_m(const tg_column *col)
{
    TG_FLOAT x, v;
    if (col->count == 0 || !col->track_sigma)
        return NAN_;
    x = col->tm2 / col->p_pa;          /* -dz/dp at the latest reading, over K/2 */
    v = col->var_done + col->ct * col->ct * col->s2 + x * x * col->spk2;
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
/* _column_rare.reanchor_gps */
tg_status tg_column_reanchor_gps(tg_column *col, TG_FLOAT sigma_gps_m, TG_FLOAT *out)
{
    TG_FLOAT sg, target, d, old_h;
    nodes_t nd;
    if (col->count == 0 || col->gps_n != col->count)
        return tg__fail(TG_STATE, out);
    TG_TRY(tg__check_range(sigma_gps_m, TG_L(0.0), TG_L(10000.0), TG_RANGE));
    sg = sigma_gps_m;
    target = tg__potential_gph_series(col->gps_m, col->pc, col->ellipsoid->a_m);
    d = target - col->gph_m;
    old_h = col->height_m;
    col->gph_m = target;
    col->c = TG_L(0.0);
    col->max_gph_m = col->max_gph_m + d;
    col->g_t = col->g_t + d;
    col->min_gph = col->min_gph + d;
    col->launch_gph = col->launch_gph + d;
    col->burst_line = col->burst_line + d;
    col->tp_g = col->tp_g + d;
    col->tp_top = col->tp_top + d;
    col->env_g = col->env_g + d;
    col->tp_th = col->tp_th + WMO_LAPSE_K_PER_GPM * d;
    nodes(col, target, NAN_, &nd);
    set_nodes(col, &nd);
    col->height_m = col->n_h;
    col->h_tm = col->h_tm + (col->height_m - old_h);
    col->gps_diff_m = col->height_m - col->gps_m;
    /* uncertainty restarts here: the reading is the new (noisy) start */
    col->var_done = TG_L(0.0);
    col->ct = TG_L(0.0);
    col->tm2 = TG_L(0.0);
    col->p_start = col->p_pa;
    col->sum_rh = TG_L(0.0);
    col->sum_p = TG_L(0.0);
    col->var_anchor = sg * sg;
    *out = col->height_m - old_h;
    return TG_OK;
}

/* ------------------------------------------------------------ checkpoint */
/* Layout of column.py: struct column._HEAD = "<4sBH" (magic, version,
 * payload length), then _column_rare._PAYLOAD = "<" + "d" * (len(_CFG_F) +
 * len(_ST_F)) + "i" * (len(_CFG_I) + len(_ST_I)), then "<I" CRC-32 of
 * everything before it. The field lists come from
 * column.py through tg_tables.h (X-macros), so the order cannot drift. */
#define HEAD_LEN 7
#define PAYLOAD_LEN (8 * (TGPY_COLUMN__CFG_F_N + TGPY_COLUMN__ST_F_N) + 4 * (TGPY_COLUMN__CFG_I_N + TGPY_COLUMN__ST_I_N))
typedef char tg__head_layout[(sizeof(TGPY_COLUMN__HEAD) == 6 && sizeof(TGPY_COLUMN__MAGIC) == 5) ? 1 : -1];
/* tinygeo.h states the size; a change of column.py's layout stops the build here */
typedef char tg__checkpoint_size[(HEAD_LEN + PAYLOAD_LEN + 4 == TG_CHECKPOINT_BYTES) ? 1 : -1];
typedef char tg__ieee_double[(sizeof(double) == 8 && sizeof(uint64_t) == 8) ? 1 : -1];

/* _column_rare._crc_soft: CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320, as
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

/* struct "<I": little-endian uint32 */
static unsigned char *put_u32(unsigned char *b, uint32_t u)
{
    int i;
    for (i = 0; i < 4; i++)
        b[i] = (unsigned char)(u >> (8 * i));
    return b + 4;
}

static uint32_t get_u32(const unsigned char *b)
{
    return (uint32_t)b[0] | ((uint32_t)b[1] << 8) | ((uint32_t)b[2] << 16) | ((uint32_t)b[3] << 24);
}

/* struct "<i": two's complement int32. Both directions are defined for every
 * value and bit pattern whatever the width of int and long: int32_t ->
 * uint32_t is modular; back, a pattern of 2^31 or more is -(int32_t)~u - 1
 * (~u is below 2^31), never an out-of-range conversion or an overflow. */
static unsigned char *put_i32(unsigned char *b, int32_t v)
{
    return put_u32(b, (uint32_t)v);
}

static const unsigned char *get_i32(const unsigned char *b, int32_t *v)
{
    uint32_t u = get_u32(b);
    *v = u <= 0x7FFFFFFFu ? (int32_t)u : -(int32_t)~u - 1;
    return b + 4;
}

/* _column_rare.to_bytes */
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
#define PUT_I(name) b = put_i32(b, col->name);
    TGPY_COLUMN__CFG_F(PUT_F)
    TGPY_COLUMN__ST_F(PUT_F)
    TGPY_COLUMN__CFG_I(PUT_I)
    TGPY_COLUMN__ST_I(PUT_I)
#undef PUT_F
#undef PUT_I
    put_u32(b, crc32_ieee(buf, (size_t)(b - buf)));
    return TG_OK;
}

/* the decoded payload, one member per field of the layout */
#define DECL_D(name) double name;
#define DECL_L(name) int32_t name;
struct ck_vals {
    TGPY_COLUMN__CFG_F(DECL_D)
    TGPY_COLUMN__ST_F(DECL_D)
    TGPY_COLUMN__CFG_I(DECL_L)
    TGPY_COLUMN__ST_I(DECL_L)
};
#undef DECL_D
#undef DECL_L

/* _column_rare.from_bytes: the same checks in the same order */
tg_status tg_column_from_bytes(tg_column *col, const unsigned char *blob, size_t n,
                               tg_column_event_fn on_event, void *on_event_ctx)
{
    struct ck_vals v;
    tg_column_config cfg;
    tg_column c;
    const unsigned char *b;
    uint32_t crc, length;
    if (blob == NULL || n < HEAD_LEN + 4)
        return TG_CHECKPOINT;                                  /* too short */
    if (memcmp(blob, TGPY_COLUMN__MAGIC, 4) != 0)
        return TG_CHECKPOINT;                                  /* not a checkpoint */
    if (blob[4] != TGPY_COLUMN__VERSION)
        return TG_CHECKPOINT;                                  /* another version */
    length = (uint32_t)blob[5] | ((uint32_t)blob[6] << 8);
    if (length != PAYLOAD_LEN || n != TG_CHECKPOINT_BYTES)
        return TG_CHECKPOINT;                                  /* truncated or corrupted */
    crc = get_u32(blob + n - 4);
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
    cfg.max_t_step_k = (TG_FLOAT)v.t_step;
    cfg.max_t_rate_k_s = (TG_FLOAT)v.max_t_rate_k_s;
    cfg.max_t_gradient_k_m = (TG_FLOAT)v.max_t_gradient_k_m;
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
