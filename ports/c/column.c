/* column.c -- twin of tinygeo/column.py: the running hypsometric
 * integration of an atmospheric column, reading by reading (Kahan-summed
 * layer thicknesses, geometric height from a quadratic node pair, vertical
 * rate, checks with one reading of look-back and recovery, events on the
 * confirmed readings, first-order uncertainty, GPS cross-check). The
 * contract, the formulas and their sources (Wallace & Hobbs 2006 eq.
 * 3.16/3.29/3.30; Kahan 1965; Morrison 1969; WMO-No. 49 tropopause; JCGM
 * 100:2008 eqs. 10/13) are documented in column.py.
 *
 * tg_column_feed mirrors Column.feed step by step, each step a function
 * named after the Python method, with the same local names, the same branch
 * order and the same arithmetic order, so that the double build gives the
 * same bits as CPython (tests/test_c_port.py):
 *   1. check (Column._check): the values on their own, into a scratch record;
 *   2. compute (Column._compute): the state after the reading on top of a
 *      record (humidity, layer, node height, time, the checks against it,
 *      GPS, uncertainty sums);
 *   3. advance / accept (Column._advance, Column._accept): the records
 *      rotate (indices into col->rec, where Python moves references;
 *      nothing is copied where Python copies nothing);
 *   4. recover (Column._recover): look-back retraction, runs, takeover and
 *      restart; refuse (Column._refuse), bad (Column._bad);
 *   5. confirm (Column._confirm) on a reading made final: track, phase,
 *      sinking, float_ref, land_ref, levels, layer_point, tropopause,
 *      clock_s, rel, sx (Column._track, Column._phase, ...).
 * Python writes out the common case of some small steps at their call site
 * (no call: a method call is a large part of a feed's time there): in
 * Column._check the range test of a float rh_pct, time_s, gps_m (Column._num
 * for the rest); in Column._advance accept's common case and tell; in
 * Column._confirm one step of track with its gains kept, layer_point within
 * a layer, phase on a new highest point of the ascent and nothing once
 * landed. C keeps each step a function (static or TG_INLINE: the compiler
 * inlines them); the results are the same.
 * Deliberate differences (each also where it happens):
 * - time stamps are tg_time (double) in every build, NaN for None; Python
 *   keeps an int stamp an int (see tinygeo.h and the notes at compute);
 * - a rejected reading returns TG_READING and leaves its reason in
 *   col->reason (Python raises ReadingError with a message); the message
 *   number and arguments of Column._why are not kept, only the reason;
 * - None is a NULL pointer (rh_pct, gps_m) or NaN (time_s, settings);
 * - the records are addressed by their byte offset in col->rec (col->h,
 *   col->b, ...; REC()), not by pointer, so that a column may be copied;
 * - on_event receives a context pointer;
 * - organised for fewer instructions per reading, with the same results
 *   (README.md, "Cost per reading"): compute writes each field of the new
 *   record once; max_rate_m_s dt is multiplied, not cached; x > lim or
 *   x < -lim is |x| > lim; the time unit 1 is multiplied; a 17th mandatory
 *   level of 0 Pa; branch hints (TG_LIKELY) and TG_INLINE steps.
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include "tg_internal.h"

typedef char tg__ev_match[(TGPY_COLUMN_EV_LEVEL == TG_EV_LEVEL && TGPY_COLUMN_EV_TROPOPAUSE == TG_EV_TROPOPAUSE
                           && TGPY_COLUMN_EV_BURST == TG_EV_BURST && TGPY_COLUMN_EV_LANDED == TG_EV_LANDED
                           && TGPY_COLUMN_EV_LAUNCH == TG_EV_LAUNCH && TGPY_COLUMN_EV_FLOAT == TG_EV_FLOAT
                           && TGPY_COLUMN_FL_DRY == TG_FL_DRY && TGPY_COLUMN_FL_HELD_MIXING == TG_FL_HELD_MIXING
                           && TGPY_COLUMN_FL_NO_TIME == TG_FL_NO_TIME && TGPY_COLUMN_FL_DESCENT == TG_FL_DESCENT
                           && TGPY_COLUMN_FL_SAME_P == TG_FL_SAME_P && TGPY_COLUMN_FL_NO_GPS == TG_FL_NO_GPS
                           && TGPY_COLUMN_FL_CAPPED == TG_FL_CAPPED && TGPY_COLUMN_FL_REPLACED == TG_FL_REPLACED
                           && TGPY_COLUMN_FL_TAKEOVER == TG_FL_TAKEOVER
                           && TGPY_COLUMN_FL_SAME_TIME == TG_FL_SAME_TIME
                           && TGPY_COLUMN_PH_WAIT == TG_PH_WAIT && TGPY_COLUMN_PH_ASCENT == TG_PH_ASCENT
                           && TGPY_COLUMN_PH_FLOAT == TG_PH_FLOAT && TGPY_COLUMN_PH_DESCENT == TG_PH_DESCENT
                           && TGPY_COLUMN_PH_LANDED == TG_PH_LANDED
                           && TGPY_COLUMN_COUNT_MAX == TG_COUNT_MAX) ? 1 : -1];

/* column.MANDATORY_PA and, C only, a 17th entry 0 Pa below every pressure a
 * reading can have (P_MIN_PA, and _RESTORE_REC for a restored one): with it
 * confirm's per-reading test "_lvl < 16 and MANDATORY_PA[_lvl] >= p" is one
 * comparison (_lvl is 0..16: only levels() moves it, and _RESTORE_COL) */
static const TG_FLOAT MANDATORY_PA[17] = TGPY_COLUMN_MANDATORY_PA;   /* 16 given: the 17th is 0 */
typedef char tg__mandatory_16[TGPY_COLUMN_MANDATORY_PA_N == 16 ? 1 : -1];

#define P_MIN_PA TGPY_COLUMN_P_MIN_PA
#define P_MAX_PA TGPY_COLUMN_P_MAX_PA
#define T_MIN_K TGPY_COLUMN_T_MIN_K
#define T_MAX_K TGPY_COLUMN_T_MAX_K
#define GPS_MIN_M TGPY_COLUMN_GPS_MIN_M
#define GPS_MAX_M TGPY_COLUMN_GPS_MAX_M
#define WMO_LAPSE_K_GPM TGPY_COLUMN_WMO_LAPSE_K_GPM
#define WMO_DEPTH_GPM TGPY_COLUMN_WMO_DEPTH_GPM
#define NOISE_K TG_L(TGPY_COLUMN_NOISE_K)
#define COUNT_MAX TGPY_COLUMN_COUNT_MAX
#define GPH_MIN_M TGPY_POTENTIAL_GPH_MIN_M
#define GPH_MAX_M TGPY_POTENTIAL_GPH_MAX_M
#define HALF_RG TG_HALF_RG   /* layers.HALF_RG = 0.5 * RD / G0, gpm/K (tg_internal.h) */
#define NODE_D TG_L(TGPY_COLUMN__NODE_D)
#define NODE_W TG_L(TGPY_COLUMN__NODE_W)
#define NODE_W2 TG_L(TGPY_COLUMN__NODE_W2)
#define RH_SLOPE_MIN TG_L(TGPY_COLUMN__RH_SLOPE_MIN)
#define SQRT2 TGPY_COLUMN__SQRT2
#define SPIKE_GPM TG_L(TGPY_COLUMN_SPIKE_GPM)
#define SPIKE_KN (TG_L(TGPY_COLUMN_SPIKE_K) * SQRT2)   /* column._SPIKE_KN */
#define UNIT_FACTOR TG_L(TGPY_COLUMN_UNIT_FACTOR)
#define ONE_M_EPS (TG_L(1.0) - TG_EPSILON)   /* moisture.ONE_M_EPS = 1.0 - EPSILON */
/* column._HUM_K = (1.0 / EPSILON - 1.0) * 0.5773502691896258 */
#define HUM_K ((TG_L(1.0) / TG_EPSILON - TG_L(1.0)) * TG_L(0.5773502691896258))
#define NAN_ TG_NAN
#define TWO62 4611686018427387904.0   /* 2^62: time stamps beyond +-TWO62 are refused */
typedef char tg__pc_size[(sizeof(((tg_column *)0)->pc) == TG_PC_N * sizeof(TG_FLOAT)) ? 1 : -1];

/* the record at byte offset off of col->rec (col->h, col->b, ...: C keeps
 * offsets, not indices, which the compiler would multiply by
 * sizeof(tg_rec) at every use; bench/c_feed_cost.py: 13 instructions per
 * reading) */
#define REC(col, off) ((tg_rec *)(void *)((unsigned char *)(col)->rec + (off)))
#define REC_OFF(i) ((tg_recoff)((i) * sizeof(tg_rec)))
#define H(col) REC(col, (col)->h)
#define B(col) REC(col, (col)->b)
typedef char tg__recoff_fits[(6 * sizeof(tg_rec) <= 65535u) ? 1 : -1];

/* ------------------------------------------------------------ settings */
/* The defaults and ranges of the settings are Column.__init__'s, generated
 * into tg_tables.h (TGPY_COLUMN_SET_<NAME>_DEF/_LO/_HI; None -> NaN). A
 * setting added to Column stops the build here until tg_column_config has it. */
typedef char tg__settings_35[TGPY_COLUMN_SET_N == 35 ? 1 : -1];
#define DEF(name) TGPY_COLUMN_SET_##name##_DEF

/* tg_column_config_defaults (a macro of tinygeo.h passing the caller's
 * sizeof(tg_column_config)): nothing written for another size */
void tg_column_config_defaults_checked(tg_column_config *cfg, TG_FLOAT lat_deg, size_t cfg_size)
{
    if (cfg_size != sizeof(tg_column_config))
        return;                           /* built with another TG_FLOAT: init says TG_BUILD */
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
    cfg->start_guard_m = DEF(START_GUARD_M);
    cfg->time_unit_s = DEF(TIME_UNIT_S);
    cfg->smooth_s = DEF(SMOOTH_S);
    cfg->launch_gpm = DEF(LAUNCH_GPM);
    cfg->burst_drop_gpm = DEF(BURST_DROP_GPM);
    cfg->burst_rate_gpm_s = DEF(BURST_RATE_GPM_S);
    cfg->burst_readings = DEF(BURST_READINGS);
    cfg->float_s = DEF(FLOAT_S);
    cfg->float_band_gpm = DEF(FLOAT_BAND_GPM);
    cfg->landing_s = DEF(LANDING_S);
    cfg->landing_band_gpm = DEF(LANDING_BAND_GPM);
    cfg->tropopause_max_p_pa = DEF(TROPOPAUSE_MAX_P_PA);
    cfg->tropopause_layer_gpm = DEF(TROPOPAUSE_LAYER_GPM);
    cfg->rh_tol_pct = DEF(RH_TOL_PCT);
    cfg->takeover_readings = DEF(TAKEOVER_READINGS);
    cfg->track_sigma = DEF(TRACK_SIGMA);
    cfg->on_event = NULL;         /* on_event=None */
    cfg->on_event_ctx = NULL;
    cfg->geoid_undulation_m = DEF(GEOID_UNDULATION_M);
    cfg->max_t_step_k = DEF(MAX_T_STEP_K);
    cfg->max_t_rate_k_s = DEF(MAX_T_RATE_K_S);
    cfg->max_t_gradient_k_gpm = DEF(MAX_T_GRADIENT_K_GPM);
    cfg->launch_rate_gpm_s = DEF(LAUNCH_RATE_GPM_S);
}
#undef DEF

/* errors.check_range(name, value, lo, hi, ...) as Column.__init__ calls it,
 * with the generated range of that setting */
#define SETTING(x, name) \
    TG_TRY(tg__check_range((x), TGPY_COLUMN_SET_##name##_LO, TGPY_COLUMN_SET_##name##_HI, TG_RANGE))
/* "None if x is None else check_range(...)": NaN stands for None */
#define OPT_SETTING(x, name) do { if ((x) == (x)) SETTING(x, name); } while (0)
/* column._count_setting(name, value, lo, hi) */
#define COUNT_SETTING(x, name) \
    do { if ((x) < TGPY_COLUMN_SET_##name##_LO || (x) > TGPY_COLUMN_SET_##name##_HI) \
             return tg__fail(TG_RANGE, out); } while (0)
/* errors.check_flag(name, value): 0 or 1 */
#define FLAG_SETTING(x) do { if ((x) != 0 && (x) != 1) return tg__fail(TG_RANGE, out); } while (0)

static void reset_events(tg_column *col);
static TG_FLOAT nan_rec_init(tg_rec *r);

/* Column._guard: 1 if the standard pressure altitude of p lies within
 * start_guard_m of start_height_m (or there is no guard), else 0 */
static int guard(const tg_column *col, TG_FLOAT p)
{
    TG_FLOAT pa;
    if (col->start_guard_m != col->start_guard_m)
        return 1;
    pa = tg__standard_altitude_at(p);
    return TG_FABS(pa - col->g_start) <= col->start_guard_m;
}

static tg_status init_checked(tg_column *col, const tg_column_config *cfg, TG_FLOAT *out)
{
    tg_column n;
    int i;
    memset(&n, 0, sizeof n);
    /* --- settings (checked here; the status names the class, not the setting) */
    TG_TRY(tg__check_lat(cfg->lat_deg));
    n.lat_deg = cfg->lat_deg;
    n.ellipsoid = tg__check_ellipsoid(cfg->ellipsoid);
    if (n.ellipsoid == NULL)
        return tg__fail(TG_RANGE, out);
    SETTING(cfg->start_height_m, START_HEIGHT_M);
    n.start_height_m = cfg->start_height_m;
    FLAG_SETTING(cfg->ice);
    n.ice = cfg->ice;
    FLAG_SETTING(cfg->dry_fallback);
    n.dry_fallback = cfg->dry_fallback;
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
    OPT_SETTING(cfg->max_rate_m_s, MAX_RATE_M_S);
    n.max_rate_m_s = cfg->max_rate_m_s;
    OPT_SETTING(cfg->start_guard_m, START_GUARD_M);
    n.start_guard_m = cfg->start_guard_m;
    SETTING(cfg->time_unit_s, TIME_UNIT_S);
    n.time_unit_s = cfg->time_unit_s;
    SETTING(cfg->smooth_s, SMOOTH_S);
    n.smooth_s = cfg->smooth_s;
    SETTING(cfg->launch_gpm, LAUNCH_GPM);
    n.launch_gpm = cfg->launch_gpm;
    SETTING(cfg->burst_drop_gpm, BURST_DROP_GPM);
    n.burst_drop_gpm = cfg->burst_drop_gpm;
    SETTING(cfg->burst_rate_gpm_s, BURST_RATE_GPM_S);
    n.burst_rate_gpm_s = cfg->burst_rate_gpm_s;
    COUNT_SETTING(cfg->burst_readings, BURST_READINGS);
    n.burst_readings = cfg->burst_readings;
    SETTING(cfg->float_s, FLOAT_S);
    n.float_s = cfg->float_s;
    SETTING(cfg->float_band_gpm, FLOAT_BAND_GPM);
    n.float_band_gpm = cfg->float_band_gpm;
    SETTING(cfg->landing_s, LANDING_S);
    n.landing_s = cfg->landing_s;
    SETTING(cfg->landing_band_gpm, LANDING_BAND_GPM);
    n.landing_band_gpm = cfg->landing_band_gpm;
    SETTING(cfg->tropopause_max_p_pa, TROPOPAUSE_MAX_P_PA);
    n.tropopause_max_p_pa = cfg->tropopause_max_p_pa;
    SETTING(cfg->tropopause_layer_gpm, TROPOPAUSE_LAYER_GPM);
    n.tropopause_layer_gpm = cfg->tropopause_layer_gpm;
    SETTING(cfg->rh_tol_pct, RH_TOL_PCT);
    n.rh_tol_pct = cfg->rh_tol_pct;
    COUNT_SETTING(cfg->takeover_readings, TAKEOVER_READINGS);
    n.takeover_readings = cfg->takeover_readings;
    FLAG_SETTING(cfg->track_sigma);
    n.track_sigma = cfg->track_sigma;
    n.on_event = cfg->on_event;
    n.on_event_ctx = cfg->on_event_ctx;
    OPT_SETTING(cfg->geoid_undulation_m, GEOID_UNDULATION_M);
    n.geoid_undulation_m = cfg->geoid_undulation_m;
    OPT_SETTING(cfg->max_t_step_k, MAX_T_STEP_K);
    n.max_t_step_k = cfg->max_t_step_k;
    SETTING(cfg->max_t_rate_k_s, MAX_T_RATE_K_S);
    n.max_t_rate_k_s = cfg->max_t_rate_k_s;
    SETTING(cfg->max_t_gradient_k_gpm, MAX_T_GRADIENT_K_GPM);
    n.max_t_gradient_k_gpm = cfg->max_t_gradient_k_gpm;
    SETTING(cfg->launch_rate_gpm_s, LAUNCH_RATE_GPM_S);
    n.launch_rate_gpm_s = cfg->launch_rate_gpm_s;
    /* --- derived settings (so that feed builds no float for them) */
    /* the geopotential series at this latitude, evaluated once (tinygeo.potential) */
    tg__potential_series(n.lat_deg, n.ellipsoid, n.pc);
    n.a_m = n.ellipsoid->a_m;
    n.ellipsoid_code = n.ellipsoid == &tg_wgs84 ? 0 : 1;   /* Column.ellipsoid_code */
    n.g_start = tg__potential_gph_series(n.start_height_m, n.pc, n.a_m);
    n.anchor_p_pa = NAN_;
    n.anchor = NAN_;
    if (cfg->anchor_p_pa == cfg->anchor_p_pa) {   /* NaN = None */
        SETTING(cfg->anchor_p_pa, ANCHOR_P_PA);
        n.anchor = cfg->anchor_p_pa;
        if (!guard(&n, n.anchor))
            return tg__fail(TG_RANGE, out);
        n.anchor_p_pa = n.anchor;
    }
    n.max_rate = n.max_rate_m_s;       /* NaN for None, as Python's _max_rate */
    /* time stamps -> s: Python skips the factor 1 (_unit None); C always
     * multiplies by unit, exact for 1 (deliberate: cheaper than the test) */
    n.unit = n.time_unit_s;
    n.float_u = n.float_s / n.time_unit_s;
    n.land_u = n.landing_s / n.time_unit_s;
    n.kz = TG_L(2.0) * HALF_RG * n.sigma_p_pa;
    n.kn = NOISE_K * SQRT2 * n.kz;
    if (n.max_t_step_k != n.max_t_step_k) {
        n.t_lim = NAN_;
    } else {
        n.t_lim = n.max_t_step_k + NOISE_K * SQRT2 * n.sigma_t_k;
    }
    n.spk2 = HALF_RG * HALF_RG * n.sigma_p_pa * n.sigma_p_pa;   /* (K/2 sigma_p)^2 */
    n.st2 = n.sigma_t_k * n.sigma_t_k;
    /* --- state: the records (Python: _Rec()), counters, recovery memory, events */
    for (i = 0; i < 6; i++)
        nan_rec_init(&n.rec[i]);
    n.h = REC_OFF(0);
    n.b = REC_OFF(1);
    n.n = REC_OFF(2);
    n.m = REC_OFF(3);
    n.k = REC_OFF(4);
    n.cr = REC_OFF(5);
    n.run = n.run_b = 0;
    n.why = n.run_why = TG_REASON_NONE;
    n.run_f = TG_L(0.0);
    n.count = n.rejected = n.retracted = 0;
    n.reason = TG_REASON_NONE;
    n.has_b = 0;
    n.n_g = n.n_h = n.n_k1 = n.n_k2 = NAN_;
    n.n_lo = n.n_hi = NAN_;
    n.var_anchor = TG_L(0.0);
    reset_events(&n);
    *col = n;
    return TG_OK;
}

/* tg_column_init (a macro of tinygeo.h passing the caller's sizes; see
 * "Build settings" there): on a difference nothing is read or written */
tg_status tg_column_init_checked(tg_column *col, const tg_column_config *cfg, size_t col_size,
                                 size_t cfg_size, size_t float_size)
{
    TG_FLOAT dummy;
    if (col_size != sizeof(tg_column) || cfg_size != sizeof(tg_column_config)
        || float_size != sizeof(TG_FLOAT))
        return TG_BUILD;                  /* built with another TG_FLOAT */
    return init_checked(col, cfg, &dummy);
}

/* column._Rec.__init__ (returns NaN for the caller's convenience) */
static TG_FLOAT nan_rec_init(tg_rec *r)
{
    memset(r, 0, sizeof *r);
    r->p_pa = r->t_k = r->rh_pct = r->tv_k = r->q = NAN_;
    r->tsr = r->tr = r->t0 = (tg_time)NAN;
    r->gps_given = 0;
    r->gpsr = NAN_;
    r->has_nodes = 0;
    r->flags = 0;
    r->gph_m = r->height_m = r->rdh = r->rdt = r->dt = NAN_;
    r->c = TG_L(0.0);
    r->g_t = r->h_tm = NAN_;
    r->h_t = r->h_p = r->h_rh = r->w = NAN_;
    r->gps_m = r->gps_diff_m = NAN_;
    r->gps_here = 0;
    r->var_done = r->var_p = r->ct = r->tm2 = r->s2 = r->sum_rh = r->sum_p = TG_L(0.0);
    r->slope = r->sum_hum = r->tvh = r->half = r->lay = TG_L(0.0);
    r->p_start = NAN_;
    return NAN_;
}

/* Column._reset_events: the event state of a column that has confirmed nothing
 * yet (every _ST_F but _n_* and _var_anchor nan) */
static void reset_events(tg_column *col)
{
    col->smooth_gph_m = col->f_v = col->max_gph_m = col->launch_time_s = NAN_;
    col->burst_gph_m = col->burst_time_s = col->burst_p_pa = col->float_gph_m = NAN_;
    col->float_time_s = col->landing_time_s = col->level_p_pa = col->level_gph_m = NAN_;
    col->level_height_m = col->level_t_k = col->tropopause_p_pa = col->tropopause_gph_m = NAN_;
    col->tropopause_t_k = col->tropopause_time_s = NAN_;
    col->e_p = col->e_g = col->e_t = col->f_dt = col->f_lo = col->f_hi = NAN_;
    col->f_a = col->f_b = NAN_;
    col->f_cx = col->f_cv = col->f_bv = col->max_p = col->min_g = col->launch_line = NAN_;
    col->fl_g = col->fl_lo = col->fl_hi = col->land_lo = col->land_hi = NAN_;
    col->tb_top = col->tb_g0 = col->tb_g1 = col->tb_th = NAN_;
    col->tp_g = col->tp_top = col->tp_th = col->tp_p = col->tp_t = NAN_;
    col->max_clk = col->fl_clk = col->fl_end = col->land_end = (tg_time)NAN;
    col->tb_c0 = col->tb_c1 = col->tp_clk = (tg_time)NAN;
    col->phase = TG_PH_WAIT;
    col->e_n = col->lvl = col->burst_n = col->tb_n = col->tp_state = 0;
    col->tb_st = TG_L(0.0);
    col->levels_n = 0;
}

/* ------------------------------------------------------------ 1. check */
/* Column._inc_rejected */
static void inc_rejected(tg_column *col)
{
    if (col->rejected < COUNT_MAX)
        col->rejected += 1;
}

/* Column._bad: count the rejection; the caller returns TG_READING (Python
 * raises ReadingError(message, reason)). Returns -1, compute's "raised". */
static int bad(tg_column *col, tg_reason reason)
{
    col->reason = reason;
    inc_rejected(col);
    return -1;
}

/* Column._check: every value on its own (a finite number, in range), written
 * into record n. 0, or -1 after bad(). Column._num's rule for C: a NaN or
 * infinite p_pa, t_k, rh_pct is 'number'; time_s NaN is None (C has no
 * other None for a double), an infinite time_s is 'number'; gps_m NaN is
 * "no fix", infinite 'number'. */
static int check(tg_column *col, tg_rec *n, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                 tg_time time_s, const TG_FLOAT *gps_m)
{
    TG_FLOAT p, t, rh, gps;
    /* as Python does for a float: the range first (a value in the range is
     * finite), and a NaN or inf ('number') told from a value out of range
     * only for a value outside it: the same reason for every value, fewer
     * tests per reading */
    p = p_pa;
    if (TG_UNLIKELY(!(P_MIN_PA <= p && p <= P_MAX_PA)))
        return bad(col, isfinite(p) ? TG_REASON_PRESSURE : TG_REASON_NUMBER);
    t = t_k;
    if (TG_UNLIKELY(!(T_MIN_K <= t && t <= T_MAX_K)))
        return bad(col, isfinite(t) ? TG_REASON_TEMPERATURE : TG_REASON_NUMBER);
    rh = NAN_;
    if (rh_pct != NULL) {
        rh = *rh_pct;
        if (TG_UNLIKELY(!(TG_L(0.0) <= rh && rh <= TG_L(100.0)))) {
            TG_FLOAT tol = col->rh_tol_pct;
            if (!isfinite(rh))
                return bad(col, TG_REASON_NUMBER);
            if (rh < -tol || rh > TG_L(100.0) + tol)
                return bad(col, TG_REASON_HUMIDITY);
        }
    }
    if (TG_UNLIKELY(fabs(time_s) > TWO62))   /* NaN (None) passes */
        return bad(col, isinf(time_s) ? TG_REASON_NUMBER : TG_REASON_TIME);
    gps = NAN_;
    if (gps_m != NULL) {
        gps = *gps_m;
        if (isinf(gps))
            return bad(col, TG_REASON_NUMBER);
        if (gps == gps) {
            if (col->geoid_undulation_m == col->geoid_undulation_m) {
                if (tg_msl_height(gps, col->geoid_undulation_m, &gps) != TG_OK)
                    return bad(col, TG_REASON_GPS);
            }
            if (!(GPS_MIN_M <= gps && gps <= GPS_MAX_M))
                return bad(col, TG_REASON_GPS);
        }
    }
    n->p_pa = p;
    n->t_k = t;
    n->rh_pct = rh;
    n->tsr = time_s;
    n->gps_given = gps_m != NULL;
    n->gpsr = gps;
    /* (1 - eps) e_s/p per %RH at this reading (moisture.rh_q): with a
     * humidity, or for the held humidity's cap and sigma; computed once per
     * reading, whatever the look-back computes on top of it */
    if (rh == rh || !col->dry_fallback || col->track_sigma)
        n->q = tg__moisture_rh_q(t, p, col->ice);
    return 0;
}

/* ------------------------------------------------------------ 2. compute */
/* Column._nodes: exact geometric height h at g (potential.height_series with
 * the column's series; from a guess within a few mm, one potential.newton_step)
 * and the quadratic in gph through it and the gph of h + D and h + 2D
 * (potential.gph_series). Writes only *nd (Python returns the tuple). */
static void nodes(const tg_column *col, TG_FLOAT g, TG_FLOAT guess, tg_nodes *nd)
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
    a = col->a_m;
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

/* Column._compute: fill record n (which holds the reading) with the state
 * after it on top of record a (NULL: n is the first reading). Returns 0 if n
 * agrees with a, else the number of Python's message (col->why holds its
 * reason), or -1 after bad() for what no look-back can mend (vapour pressure
 * above the air pressure, a virtual temperature out of range, the start
 * guard). Writes nothing but n, col->why and the max_rate_m_s dt cache. */
static int compute(tg_column *col, const tg_rec *a, tg_rec *n)
{
    TG_FLOAT p = n->p_pa, t = n->t_k, rh = n->rh_pct;
    TG_FLOAT q, r, tv, slope, tvh, w, ws, x, e, p0, tv0, s, c, tm2, dz, half, g, y, d, h;
    TG_FLOAT dt, dtk, allow, dh, noise, lim, rdh, rdt;
    tg_time tsr, tr;
    int why = 0;
    int32_t flags = 0;
    int held;
    /* -- humidity -> virtual temperature (see "Humidity") */
    if (rh == rh) {
        /* tinygeo.virtual_temperature (its moisture.tv_rh, written out to
         * share q): Tv = T/(1 - r), r = (1 - eps) e/p = rh q, dTv/dRH = Tv q */
        q = n->q;
        r = rh * q;
        if (TG_UNLIKELY(r >= ONE_M_EPS))
            return bad(col, TG_REASON_HUMIDITY);
        tv = t / (TG_L(1.0) - r);
        if (rh >= RH_SLOPE_MIN)
            slope = tv * q;
        else
            slope = a == NULL ? TG_L(0.0) : a->slope;
        n->h_t = t;
        n->h_p = p;
        n->h_rh = rh;
        n->w = NAN_;
        tvh = TG_L(0.0);
    } else {
        if (a == NULL) {
            slope = TG_L(0.0);
            n->h_t = n->h_p = n->h_rh = n->w = NAN_;
        } else {
            slope = a->slope;
            n->h_t = a->h_t;
            n->h_p = a->h_p;
            n->h_rh = a->h_rh;
            n->w = a->w;
        }
        held = !col->dry_fallback && n->h_p == n->h_p;
        ws = TG_L(0.0);
        if (held || col->track_sigma) {
            /* the saturation mixing ratio here: e_s/p = x = 100 q/(1 - eps) */
            x = n->q * TG_L(100.0) / ONE_M_EPS;
            ws = x >= TG_L(0.5) ? TG_L(1.0) : TG_EPSILON * x / (TG_L(1.0) - x);
        }
        if (!held) {
            w = TG_L(0.0);
            flags = TG_FL_DRY;
        } else {
            w = n->w;
            if (w != w) {
                /* the mixing ratio of the latest reading that had a humidity,
                 * kg/kg (its r < 1 - eps was checked: e < p): held from now on */
                if (n->h_rh <= TG_L(0.0)) {
                    w = TG_L(0.0);
                } else {
                    e = n->h_rh * tg__moisture_rh_q(n->h_t, n->h_p, col->ice) * n->h_p / ONE_M_EPS;
                    w = TG_EPSILON * e / (n->h_p - e);
                }
                n->w = w;
            }
            flags = TG_FL_HELD_MIXING;
            if (w > ws) {
                w = ws;
                flags = TG_FL_HELD_MIXING | TG_FL_CAPPED;
            }
        }
        tv = tg__moisture_tv_w(t, w);   /* tinygeo.virtual_temperature_from_mixing_ratio */
        tvh = col->track_sigma ? HUM_K * t * ws : TG_L(0.0);   /* Tv sigma of the unknown humidity, K */
    }
    if (TG_UNLIKELY(!(T_MIN_K <= tv && tv <= T_MAX_K)))
        return bad(col, TG_REASON_TEMPERATURE);
    /* -- the layer from a (Kahan-summed hypsometric thickness) */
    if (TG_UNLIKELY(a == NULL)) {
        if (!guard(col, p))
            return bad(col, TG_REASON_PRESSURE);
        p0 = col->anchor;
        tv0 = tv;
        s = col->g_start;
        c = TG_L(0.0);
    } else {
        p0 = a->p_pa;
        tv0 = a->tv_k;
        s = a->gph_m;
        c = a->c;
    }
    tm2 = tv0 + tv;
    /* Python: if p0 != p0 or p == p0 (the same step, then the layer):
     * C tests p0 < p or p0 > p for the layer first (false for both when p0
     * is nan or equal), and the second of them is also "p > p0" (descent) */
    if (TG_LIKELY(p0 > p || p0 < p)) {
        /* tinygeo.layer_thickness (arguments checked), as its two products */
        half = tg__layers_half_k_ln(p0, p);   /* (Rd/g0)/2 ln(p0/p): also dz/dTv of either end */
        dz = half * tm2;
        if (p > p0)
            flags |= TG_FL_DESCENT;
        /* classic Kahan step: c carries the part of the sum lost so far */
        y = dz - c;
        g = s + y;
        c = (g - s) - y;
    } else {   /* first reading without anchor, or a repeated pressure */
        dz = half = TG_L(0.0);
        g = s;
        if (a != NULL)
            flags |= TG_FL_SAME_P;
    }
    n->tv_k = tv;
    n->gph_m = g;
    n->c = c;
    /* -- geometric height from the node pair (a new node waits in n->nodes) */
    d = g - col->n_g;
    if (TG_LIKELY(col->n_lo <= g && g <= col->n_hi)) {
        n->has_nodes = 0;
        h = col->n_h + d * (col->n_k1 + d * col->n_k2);
    } else {
        TG_FLOAT guess = NAN_;
        if (-NODE_W2 <= d && d <= NODE_W2) {
            /* just out of the window: the old quadratic is within a few mm */
            guess = col->n_h + d * (col->n_k1 + d * col->n_k2);
        }
        nodes(col, g, guess, &n->nodes);
        n->has_nodes = 1;
        d = g - n->nodes.g;
        h = n->nodes.h + d * (n->nodes.k1 + d * n->nodes.k2);
    }
    n->height_m = h;
    /* -- time, and the checks against a (see "Checks and recovery").
     * Python first copies a's tr, g_t, h_tm, rdh, rdt into n and then
     * overwrites those the reading renews; C writes each field of n once,
     * with the value Python leaves in it (deliberate: fewer stores) */
    tsr = n->tsr;
    if (TG_UNLIKELY(a == NULL)) {
        tr = (tg_time)NAN;
        n->t0 = tsr;
    } else {
        tr = a->tr;
        n->t0 = a->t0;
        if (TG_UNLIKELY(a->t0 != a->t0))
            n->t0 = tsr;
    }
    dt = NAN_;
    if (TG_UNLIKELY(tsr != tsr)) {
        flags |= TG_FL_NO_TIME;
        n->tr = tr;
        n->g_t = a == NULL ? NAN_ : a->g_t;
        n->h_tm = a == NULL ? NAN_ : a->h_tm;
    } else {
        if (tr == tr) {
            /* the difference of two stamps: Python subtracts ints as ints, C
             * in double (exact for whole stamps below 2^53), and only then
             * makes it a TG_FLOAT (deliberate: the float build keeps 1 ms
             * of a 1.7e12 ms tick counter; README.md, "Time") */
            dt = (TG_FLOAT)(tsr - tr);
            dt = dt * col->unit;   /* Python: if _unit is not None (see init) */
            if (TG_UNLIKELY(dt < TG_L(0.0))) {
                why = 3;
                col->why = TG_REASON_TIME;
            }
        }
        n->tr = tsr;
        n->g_t = g;
        n->h_tm = h;
    }
    n->dt = dt;
    /* rate_m_s = rdh/rdt: nan without a time stamp, renewed by a step with
     * one (below), else a's */
    rdh = rdt = NAN_;
    if (TG_LIKELY(a != NULL)) {
        /* temperature step (see max_t_step_k); the noise is in t_lim. C
         * tests |dtk| > t_lim, Python dtk > t_lim or dtk < -t_lim: the same
         * for t_lim >= 0 (or nan, where both are false) */
        dtk = t - a->t_k;
        if (TG_UNLIKELY(why == 0 && TG_FABS(dtk) > col->t_lim)) {
            allow = col->t_lim + col->max_t_gradient_k_gpm * TG_FABS(dz);
            if (dt == dt)
                allow += col->max_t_rate_k_s * dt;
            if (TG_FABS(dtk) > allow) {
                why = 10;
                col->why = TG_REASON_TEMPERATURE;
            }
        }
        if (TG_LIKELY(dt == dt && a->h_tm == a->h_tm)) {
            dh = h - a->h_tm;
            if (TG_LIKELY(dt > TG_L(0.0))) {
                /* rate_m_s = dh/dt, built where it is read */
                rdh = dh;
                rdt = dt;
                /* max_rate_m_s dt: Python keeps it while dt repeats (_c_dt,
                 * _c_lim, _c_neg); C multiplies, cheaper than the test (the
                 * same value), and tests |dh| > lim for dh > lim or dh < -lim
                 * (lim >= 0 or nan) */
                lim = col->max_rate * dt;
                if (TG_UNLIKELY(why == 0 && TG_FABS(dh) > lim)) {
                    /* beyond max_rate_m_s: still passes within the noise */
                    noise = col->kn * tv / p;
                    if (TG_FABS(dh) > lim + noise) {
                        why = 12;
                        col->why = TG_REASON_RATE;
                    }
                }
            } else {
                /* a repeated time stamp: no rate check is possible for this step */
                flags |= TG_FL_SAME_TIME;
                rdh = a->rdh;
                rdt = a->rdt;
            }
        } else if (tsr == tsr) {
            rdh = a->rdh;
            rdt = a->rdt;
        }
    }
    n->rdh = rdh;
    n->rdt = rdt;
    /* -- GPS */
    if (!n->gps_given || n->gpsr != n->gpsr) {
        if (TG_UNLIKELY(n->gps_given))
            flags |= TG_FL_NO_GPS;
        n->gps_here = 0;
        if (a == NULL) {
            n->gps_m = n->gps_diff_m = NAN_;
        } else {
            n->gps_m = a->gps_m;
            n->gps_diff_m = a->gps_diff_m;
        }
    } else {
        n->gps_here = 1;
        n->gps_m = n->gpsr;
        n->gps_diff_m = h - n->gpsr;
    }
    n->flags = flags;
    /* the layer's terms for the uncertainty step (sigma: only for a state
     * that is kept, so the look-back's trial computations build none of it) */
    n->slope = slope;
    n->tvh = tvh;
    n->half = half;
    n->lay = tm2;
    return why;
}

/* Column._sigma: streaming first-order propagation ("Uncertainty") for
 * record n on top of record a (NULL: n is the first reading): lay = Tv0 + Tv
 * of n's layer, half = (Rd/g0)/2 ln(p0/p) = dz/dTv of either end of it. Run
 * when n is kept (accepted, retracting the latest reading, or joining a run). */
TG_INLINE void sigma(const tg_column *col, const tg_rec *restrict a, tg_rec *restrict n)
{
    TG_FLOAT half, slope, sr, tm2, pco, ct;
    if (!col->track_sigma)
        return;
    half = n->half;
    slope = n->slope;
    if (a == NULL) {
        n->var_done = n->var_p = n->sum_p = n->sum_rh = n->sum_hum = TG_L(0.0);
        if (col->anchor != col->anchor) {
            /* the first reading: no layer yet; its sensitivities are all 0 so far */
            n->ct = n->tm2 = TG_L(0.0);
            n->p_start = n->p_pa;
        } else {
            /* anchored start: the anchor is exact, the first reading is both ends */
            n->ct = half + half;
            n->tm2 = n->lay;
            n->p_start = col->anchor;
        }
        sr = slope * col->sigma_rh_pct;
        n->s2 = col->st2 + sr * sr;
        return;
    }
    /* the final sensitivities of reading a: dz_n/dp = HALF_RG pco, dz_n/dTv = ct */
    tm2 = n->lay;
    pco = (tm2 - a->tm2) / a->p_pa;
    ct = a->ct + half;
    n->var_done = a->var_done + ct * ct * a->s2;
    n->var_p = a->var_p + pco * pco;   /* times (K/2 sigma_p)^2 where it is read */
    n->sum_p = a->sum_p + pco;
    n->sum_rh = a->sum_rh + ct * a->slope;
    n->sum_hum = a->tvh != TG_L(0.0) ? a->sum_hum + ct * a->tvh : a->sum_hum;
    n->ct = half;
    n->tm2 = tm2;
    n->p_start = a->p_start;
    if (slope != a->slope) {
        sr = slope * col->sigma_rh_pct;
        n->s2 = col->st2 + sr * sr;
    } else {
        n->s2 = a->s2;
    }
}

/* Column._rel: a time stamp as seconds since the first one (record r's t0);
 * the difference in double, then TG_FLOAT (see compute) */
static TG_FLOAT rel(const tg_column *col, tg_time stamp, const tg_rec *r)
{
    TG_FLOAT d;
    if (stamp != stamp || r->t0 != r->t0)
        return NAN_;
    d = (TG_FLOAT)(stamp - r->t0);
    return d * col->time_unit_s;
}

/* ------------------------------------------------------------ 5. events */
/* Column._track: one step of the critically damped g-h filter (see
 * "Events"); the rate is kept per step (f_v, gpm per f_dt seconds); a step
 * within [f_lo, f_hi] = [0.95, 1.05] f_dt keeps the gains */
static void track(tg_column *col, TG_FLOAT z, TG_FLOAT dt)
{
    TG_FLOAT pred, res;
    if (TG_UNLIKELY(!(col->f_lo <= dt && dt <= col->f_hi))) {
        /* the gains and noise ratios for this step length (kept while the
         * step lies within 5 % of the one they were made for: a clock's
         * jitter costs no exp and square roots); the rate rescaled to it */
        TG_FLOAT th, u, v, v3;
        if (col->f_dt == col->f_dt)
            col->f_v = col->f_v * dt / col->f_dt;
        th = TG_EXP(-dt / col->smooth_s);
        u = TG_L(1.0) - th;
        v = TG_L(1.0) + th;
        v3 = v * v * v;
        col->f_a = TG_L(1.0) - th * th;
        col->f_b = u * u;
        col->f_cx = NOISE_K * TG_SQRT(u * (TG_L(1.0) + TG_L(4.0) * th + TG_L(5.0) * th * th) / v3);
        col->f_cv = NOISE_K * TG_SQRT(TG_L(2.0) * u * u * u / v3);   /* per step */
        col->f_bv = -col->burst_rate_gpm_s * dt;                      /* per step */
        col->f_dt = dt;
        col->f_lo = dt * TG_L(0.95);
        col->f_hi = dt * TG_L(1.05);
    }
    pred = col->smooth_gph_m + col->f_v;
    res = z - pred;
    col->smooth_gph_m = pred + col->f_a * res;
    col->f_v = col->f_v + col->f_b * res;
}

/* Column._sx: 4 sigma of the track's height, gpm, from record r's height noise */
static TG_FLOAT sx(const tg_column *col, const tg_rec *r)
{
    TG_FLOAT k = col->f_cx;
    if (k != k)
        k = NOISE_K;
    return k * (col->kz * r->tv_k / r->p_pa);
}

/* Column._clock_s: an event clock as seconds since the first time stamp
 * (without time: the count of confirmed readings) */
static TG_FLOAT clock_s(const tg_column *col, tg_time clk, const tg_rec *r)
{
    if (r->tsr != r->tsr)
        return (TG_FLOAT)clk;
    return rel(col, clk, r);
}

/* Column._sinking: the burst test beyond the noise */
static int sinking(const tg_column *col, const tg_rec *r, TG_FLOAT hs)
{
    TG_FLOAT s = sx(col, r);
    if (!(col->f_cx > TG_L(0.0)))   /* no step yet, or one too short to move the track */
        return 0;
    return hs < col->max_gph_m - col->burst_drop_gpm - s
           && col->f_v < col->f_bv - col->f_cv * (s / col->f_cx);
}

/* Column._climbing: the track rises faster than launch_rate_gpm_s + 4
 * sigma_v (with time; 0 before the track has a step) */
static int climbing(const tg_column *col, const tg_rec *r)
{
    if (!(col->f_cx > TG_L(0.0)))   /* no step yet, or one too short to move the track */
        return 0;
    return col->f_v > col->launch_rate_gpm_s * col->f_dt + col->f_cv * (sx(col, r) / col->f_cx);
}

/* Column._float_ref: a new reference height of the float test and its band */
static void float_ref(tg_column *col, const tg_rec *r, TG_FLOAT hs, tg_time clk)
{
    TG_FLOAT band = col->float_band_gpm + sx(col, r);
    col->fl_g = hs;
    col->fl_lo = hs - band;
    col->fl_hi = hs + band;
    col->fl_clk = clk;
    col->fl_end = clk + (tg_time)(r->tsr != r->tsr ? col->float_s : col->float_u);
}

/* Column._land_ref: a new reference height of the landing test and its band */
static void land_ref(tg_column *col, const tg_rec *r, TG_FLOAT g, tg_time clk)
{
    TG_FLOAT band = col->landing_band_gpm + NOISE_K * (col->kz * r->tv_k / r->p_pa);
    col->land_lo = g - band;
    col->land_hi = g + band;
    col->land_end = clk + (tg_time)(r->tsr != r->tsr ? col->landing_s : col->land_u);
}

/* Column._phase: launch, float, burst and landing on the track (see "Events") */
static int phase(tg_column *col, const tg_rec *r, int32_t ph, TG_FLOAT g, TG_FLOAT p, tg_time clk)
{
    TG_FLOAT hs = col->smooth_gph_m;
    if (ph == TG_PH_WAIT) {
        if (hs < col->min_g || col->launch_line != col->launch_line) {
            if (hs < col->min_g)
                col->min_g = hs;
            col->launch_line = col->min_g + col->launch_gpm + sx(col, r);
        } else if (hs >= col->launch_line && (r->tsr != r->tsr || climbing(col, r))) {
            col->phase = TG_PH_ASCENT;
            col->launch_time_s = clock_s(col, clk, r);
            col->max_gph_m = hs;
            col->max_clk = clk;
            col->max_p = p;
            float_ref(col, r, hs, clk);
            return TG_EV_LAUNCH;
        }
        return 0;
    }
    if (ph <= TG_PH_FLOAT) {
        if (hs > col->max_gph_m) {
            /* a new highest point: no descent below it yet */
            col->max_gph_m = hs;
            col->max_clk = clk;
            col->max_p = p;
            col->burst_n = 0;
        } else if (col->f_v < col->f_bv && sinking(col, r, hs)) {
            /* sinking beyond the noise, below the highest point */
            col->burst_n += 1;   /* <= 100001: a restored one is <= 100000 (_RESTORE_COL) */
            if (col->burst_n >= col->burst_readings) {
                col->phase = TG_PH_DESCENT;
                col->burst_gph_m = col->max_gph_m;
                col->burst_time_s = clock_s(col, col->max_clk, r);
                col->burst_p_pa = col->max_p;
                land_ref(col, r, g, clk);
                return TG_EV_BURST;
            }
            return 0;
        } else {
            col->burst_n = 0;
        }
        if (hs > col->fl_hi || hs < col->fl_lo) {
            if (ph == TG_PH_ASCENT) {
                float_ref(col, r, hs, clk);
            } else if (hs > col->fl_hi) {
                if (r->tsr != r->tsr || climbing(col, r)) {
                    col->phase = TG_PH_ASCENT;      /* a new ascent after the float */
                    float_ref(col, r, hs, clk);
                } else {
                    /* a slow rise (a wave's crest): the float's top, fl_g,
                     * rises to it, its band with it */
                    col->fl_hi = hs + (col->fl_hi - col->fl_g);
                    col->fl_g = hs;
                }
            }
            /* (below the band while floating: nothing; a descent is the burst test's) */
        } else if (ph == TG_PH_ASCENT && clk >= col->fl_end) {
            col->phase = TG_PH_FLOAT;
            col->float_gph_m = col->fl_g;
            col->float_time_s = clock_s(col, col->fl_clk, r);
            return TG_EV_FLOAT;
        }
        return 0;
    }
    if (ph == TG_PH_DESCENT) {
        if (g > col->land_hi || g < col->land_lo) {
            land_ref(col, r, g, clk);
        } else if (clk >= col->land_end) {
            col->phase = TG_PH_LANDED;
            col->landing_time_s = clock_s(col, clk, r);
            return TG_EV_LANDED;
        }
    }
    return 0;
}

/* Column._levels: report every mandatory level in [p, p0) not reported yet
 * (ascent only): level_* the highest, each appended to levels */
static int levels(tg_column *col, TG_FLOAT p0, TG_FLOAT p, TG_FLOAT g0, TG_FLOAT g, TG_FLOAT t0,
                  TG_FLOAT t)
{
    int bits = 0;
    int32_t lvl = col->lvl;
    while (lvl < 16 && MANDATORY_PA[lvl] >= p) {
        TG_FLOAT lev, f, gl, *lv;
        if (!bits)
            col->levels_n = 0;
        lev = MANDATORY_PA[lvl];
        if (p0 == p)
            f = TG_L(0.0);
        else
            f = tg__layers_lnr(p0, lev) / tg__layers_lnr(p0, p);
        col->level_p_pa = lev;
        gl = g0 + f * (g - g0);
        col->level_gph_m = gl;
        col->level_t_k = t0 + f * (t - t0);
        if (col->n_lo <= gl && gl <= col->n_hi && col->n_h == col->n_h) {
            /* one Newton step from the node quadratic (a few mm off) */
            TG_FLOAT d = gl - col->n_g;
            col->level_height_m = tg__potential_newton_step(
                gl, col->n_h + d * (col->n_k1 + d * col->n_k2), col->pc, col->a_m);
        } else if (GPH_MIN_M <= gl && gl <= GPH_MAX_M) {
            col->level_height_m = tg__potential_height_series(gl, col->pc, col->a_m);
        } else {
            col->level_height_m = NAN_;
        }
        lv = col->levels[col->levels_n];   /* levels_n <= lvl < 16 */
        lv[0] = lev;
        lv[1] = gl;
        lv[2] = col->level_height_m;
        lv[3] = col->level_t_k;
        col->levels_n += 1;
        lvl += 1;
        col->lvl = lvl;
        bits = TG_EV_LEVEL;
    }
    return bits;
}

/* Column._tropopause: one new point of the averaged profile; O(1) search */
static int tropopause(tg_column *col, TG_FLOAT g, TG_FLOAT t, TG_FLOAT p, const tg_rec *r)
{
    TG_FLOAT th = t + WMO_LAPSE_K_GPM * g;
    TG_FLOAT below = col->tb_th;      /* theta of the point before (nan: none) */
    int32_t st;
    col->tb_th = th;
    st = col->tp_state;
    if (st != 0) {
        if (g > col->tp_top) {
            if (st == 2 || th >= col->tp_th) {
                col->tp_state = 3;
                col->tropopause_p_pa = col->tp_p;
                col->tropopause_gph_m = col->tp_g;
                col->tropopause_t_k = col->tp_t;
                col->tropopause_time_s = clock_s(col, col->tp_clk, r);
                return TG_EV_TROPOPAUSE;
            }
        } else if (th >= col->tp_th) {
            col->tp_state = 2;
            return 0;
        }
    }
    /* no candidate, or it was just rejected by this point: this point is the
     * next one if the lapse rate decreases to 2 K/km here (theta falls to it) */
    if (p <= col->tropopause_max_p_pa && below > th) {
        tg_time c0;
        col->tp_state = 1;
        col->tp_g = g;
        col->tp_top = g + WMO_DEPTH_GPM;
        col->tp_th = th;
        col->tp_p = p;
        col->tp_t = t;
        /* the middle of the layer's clock span */
        c0 = col->tb_c0;
        col->tp_clk = c0 + (col->tb_c1 - c0) / 2;
    } else {
        col->tp_state = 0;
    }
    return 0;
}

/* Column._layer_point: the tropopause search's profile, the confirmed ascent
 * readings averaged over layers of tropopause_layer_gpm */
TG_INLINE int layer_point(tg_column *col, const tg_rec *r, TG_FLOAT g, TG_FLOAT t, tg_time clk)
{
    int bits = 0;
    if (g >= col->tb_top && col->tb_n) {
        TG_FLOAT gm = (col->tb_g0 + col->tb_g1) / TG_L(2.0);
        TG_FLOAT tm = col->tb_st / (TG_FLOAT)col->tb_n;
        /* the pressure at gm, from this reading's (hypsometric, with its Tv) */
        TG_FLOAT pm = r->p_pa * TG_EXP((g - gm) / (TG_L(2.0) * HALF_RG * r->tv_k));
        TG_FLOAT top;
        bits = tropopause(col, gm, tm, pm, r);
        top = col->tb_top + col->tropopause_layer_gpm;
        if (g >= top)
            top = g + col->tropopause_layer_gpm;
        col->tb_top = top;
        col->tb_n = 0;
        col->tb_st = TG_L(0.0);
    }
    if (col->tb_n == 0) {
        col->tb_g0 = g;
        col->tb_c0 = clk;
    }
    if (col->tb_n < COUNT_MAX)
        col->tb_n += 1;
    col->tb_st += t;
    col->tb_g1 = g;
    col->tb_c1 = clk;
    return bits;
}

/* Column._confirm: record r is final: the height track, then the events it
 * causes, on the sequence of confirmed readings. The clock of events is r's
 * time stamp as given, or without time the count of confirmed readings. */
static int confirm(tg_column *col, const tg_rec *r)
{
    TG_FLOAT g = r->gph_m, t = r->t_k, p = r->p_pa;
    tg_time clk = r->tsr;
    int bits = 0;
    if (TG_UNLIKELY(clk != clk))
        clk = (tg_time)col->e_n;
    if (TG_UNLIKELY(col->e_n == 0)) {
        int32_t lvl;
        col->smooth_gph_m = g;
        col->f_v = TG_L(0.0);
        col->max_gph_m = col->min_g = g;
        col->launch_line = NAN_;
        col->max_clk = clk;
        col->max_p = p;
        col->tb_top = g + col->tropopause_layer_gpm;
        lvl = 0;
        while (lvl < 16 && MANDATORY_PA[lvl] > p)
            lvl += 1;
        col->lvl = lvl;
        if (lvl < 16 && MANDATORY_PA[lvl] == p)
            bits = levels(col, p, p, g, g, t, t);
        layer_point(col, r, g, t, clk);
    } else {
        int32_t ph;
        TG_FLOAT dt = r->dt;
        if (TG_UNLIKELY(dt != dt))
            dt = r->tsr != r->tsr ? TG_L(1.0) : TG_L(0.0);
        if (TG_LIKELY(dt > TG_L(0.0)))
            track(col, g, dt);
        ph = col->phase;
        if (ph <= TG_PH_FLOAT) {
            if (TG_UNLIKELY(MANDATORY_PA[col->lvl] >= p))   /* lvl 16: 0 Pa (see MANDATORY_PA) */
                bits = levels(col, col->e_p, p, col->e_g, g, col->e_t, t);
            if (col->tp_state != 3)
                bits |= layer_point(col, r, g, t, clk);
        }
        bits |= phase(col, r, ph, g, p, clk);
    }
    col->e_p = p;
    col->e_g = g;
    col->e_t = t;
    if (col->e_n < COUNT_MAX)
        col->e_n += 1;
    return bits;
}

/* ------------------------------------------------------------ 3. commit */
/* Column._tell */
static int tell(tg_column *col, int bits)
{
    if (TG_UNLIKELY(bits && col->on_event != NULL))
        col->on_event(col, bits, col->on_event_ctx);
    return bits;
}

/* Column._accept: bookkeeping of a new latest reading: its height node, the
 * counter, the recovery memory cleared */
static void accept(tg_column *col, tg_rec *n, int counted)
{
    if (TG_UNLIKELY(n->has_nodes)) {
        col->n_g = n->nodes.g;
        col->n_h = n->nodes.h;
        col->n_k1 = n->nodes.k1;
        col->n_k2 = n->nodes.k2;
        col->n_lo = n->nodes.lo;
        col->n_hi = n->nodes.hi;
        n->has_nodes = 0;
    }
    if (counted && col->count < COUNT_MAX)
        col->count += 1;
    col->run = col->run_b = 0;
}

/* Column._advance: n is accepted on top of the latest reading, which is now
 * final: its events, then the records move on, nothing copied. C passes
 * the two records, REC(col, h) and REC(col, n), which every caller holds already
 * (Python: self._h, self._n) */
TG_INLINE int advance(tg_column *col, tg_rec *h, tg_rec *n)
{
    tg_recoff ni = col->n;
    int bits = 0;
    if (col->count) {
        bits = confirm(col, h);
        col->has_b = 1;
    }
    col->n = col->b;
    col->b = col->h;
    col->h = ni;
    accept(col, n, 1);
    return tell(col, bits);
}

/* advance for feed's common path, where count >= 3: the latest reading is
 * confirmed and has_b is 1 already (Python calls _advance, whose tests
 * give the same; deliberate: two tests and a store fewer per reading) */
TG_INLINE int advance_on(tg_column *col, tg_rec *h, tg_rec *n)
{
    tg_recoff ni = col->n;
    int bits = confirm(col, h);
    col->n = col->b;
    col->b = col->h;
    col->h = ni;
    accept(col, n, 1);
    return tell(col, bits);
}

/* ------------------------------------------------------------ 4. recover */
/* Column._refuse: the rejection of the contradiction in col->why */
static int refuse(tg_column *col)
{
    tg_reason w = col->why;
    col->why = TG_REASON_NONE;
    if (w == TG_REASON_NONE)    /* not reached: every contradiction sets its reason */
        w = TG_REASON_RATE;
    return bad(col, w);
}

/* Column._fit: how well reading r (computed on top of record a) fits a: the
 * largest share of its allowance that the temperature step and the height
 * change use (<= 1 when r agrees with a); only on the recovery path. An
 * allowance of 0 (max_t_step_k = sigma_t_k = 0 and the other temperature
 * settings 0) divides nothing: a step taken is an infinite share, none 0. */
static TG_FLOAT fit(const tg_column *col, const tg_rec *a, const tg_rec *r)
{
    TG_FLOAT f = TG_L(0.0), dt = r->dt, allow, dtk, q;
    if (col->t_lim == col->t_lim) {
        allow = col->t_lim + col->max_t_gradient_k_gpm * TG_FABS(r->gph_m - a->gph_m);
        if (dt == dt)
            allow += col->max_t_rate_k_s * dt;
        dtk = TG_FABS(r->t_k - a->t_k);
        if (allow > TG_L(0.0))
            f = dtk / allow;
        else if (dtk > TG_L(0.0))
            f = (TG_FLOAT)INFINITY;   /* no step allowed (every allowance set to 0) and one taken */
    }
    if (dt == dt && dt > TG_L(0.0) && a->h_tm == a->h_tm && col->max_rate == col->max_rate) {
        q = TG_FABS(r->height_m - a->h_tm) / (col->max_rate * dt + col->kn * r->tv_k / r->p_pa);
        if (q > f)
            f = q;
    }
    return f;
}

/* Column._replace: retraction: record m (computed on top of the reading
 * before the latest one, at offset col->m) replaces the latest reading */
static int replace(tg_column *col, tg_rec *m)
{
    tg_recoff mi = col->m;
    sigma(col, B(col), m);
    col->m = col->h;
    col->h = mi;
    m->flags |= TG_FL_REPLACED;
    inc_rejected(col);
    if (col->retracted < COUNT_MAX)
        col->retracted += 1;
    accept(col, m, 0);
    return 0;
}

/* Column._jump: a run that contradicts the column by its rate, starting
 * with reading r at a pressure a factor beyond UNIT_FACTOR from the latest
 * accepted reading's (a unit changed): the factor (latest over r), else 0
 * (kept for the run: run_f) */
static TG_FLOAT jump(const tg_column *col, const tg_rec *r)
{
    TG_FLOAT f;
    if (!col->has_b || col->run_why != TG_REASON_RATE)
        return TG_L(0.0);
    f = H(col)->p_pa / r->p_pa;
    if (f > UNIT_FACTOR || f * UNIT_FACTOR < TG_L(1.0))
        return f;
    return TG_L(0.0);
}

/* the reading of record n into scratch record x (Column._recover's copies) */
static void copy_reading(tg_rec *x, const tg_rec *n)
{
    x->p_pa = n->p_pa;
    x->t_k = n->t_k;
    x->rh_pct = n->rh_pct;
    x->tsr = n->tsr;
    x->gps_given = n->gps_given;
    x->gpsr = n->gpsr;
    x->q = n->q;
}

/* Column._recover: n contradicts the latest reading (ok 0; col->why says
 * how), or a run of readings that contradicted it is under way. Returns the
 * event bits, or -1 after bad() (the reading is rejected). */
static int recover(tg_column *col, tg_rec *n, int ok)
{
    tg_reason why_h = col->why;   /* how n contradicts the latest reading (when not ok) */
    tg_rec *m = REC(col, col->m);
    tg_rec *k = REC(col, col->k);
    tg_rec *cr, *nw;
    tg_recoff cr_i, new_i, old_h, old_b;
    int agree_b, in_run, w, bits;
    /* the reading, into the second scratch record */
    copy_reading(m, n);
    agree_b = 0;
    if (col->has_b) {
        w = compute(col, B(col), m);
        if (w < 0)
            return -1;
        agree_b = w == 0;
    }
    /* does n agree with the run's latest reading? (computed on top of it) */
    copy_reading(k, n);
    cr_i = col->cr;
    cr = REC(col, cr_i);
    in_run = 0;
    if (col->run) {
        w = compute(col, cr, k);
        if (w < 0)
            return -1;
        in_run = w == 0;
    }
    if (agree_b && col->run_b && in_run && col->run_f == TG_L(0.0)
        && (!ok || fit(col, B(col), m) < fit(col, H(col), n))) {
        /* two readings in a row agree with each other and with the reading
         * before the latest one, the first contradicted the latest and the
         * second contradicts it too or fits the one before better: the
         * latest was the bad one; go on from the one before */
        return replace(col, m);
    }
    if (in_run && (!ok || !col->has_b || col->run >= 2)) {
        /* the run goes on: n agrees with it, and contradicts the latest
         * reading, or the latest is the first one (not confirmed yet), or
         * the run already has two readings that agree with each other */
        sigma(col, cr, k);
        new_i = col->k;
        col->run += 1;
    } else if (ok) {
        sigma(col, H(col), n);
        return advance(col, H(col), n);
    } else {
        /* a new run: on top of the latest reading, or, when nothing is
         * confirmed yet (the first reading may be the bad one), afresh
         * from the start height */
        col->run_why = why_h;
        col->run_f = jump(col, n);
        if (col->has_b) {
            sigma(col, H(col), n);
            new_i = col->n;
        } else {
            if (compute(col, NULL, k) < 0)
                return -1;
            sigma(col, NULL, k);
            new_i = col->k;
        }
        col->run = 1;
        col->run_b = 0;
    }
    if (agree_b)
        col->run_b += 1;
    else
        col->run_b = 0;
    /* new becomes the run's latest reading; its slot takes the old one */
    col->cr = new_i;
    if (new_i == col->k)
        col->k = cr_i;
    else
        col->n = cr_i;
    if (col->run < col->takeover_readings) {
        col->why = col->run_why;
        return refuse(col);
    }
    if (col->run_f != TG_L(0.0)) {
        /* refused for as long as it lasts (the run kept one short of a
         * takeover); Python's message names the factor and the likely unit */
        col->run = col->takeover_readings - 1;
        col->why = TG_REASON_PRESSURE;
        return refuse(col);
    }
    /* takeover: the run's latest reading becomes the latest, the one before
     * it (cr) the one before; the old pair becomes scratch */
    nw = REC(col, new_i);
    old_h = col->h;
    old_b = col->b;
    col->h = new_i;
    col->b = cr_i;
    col->cr = old_h;
    if (col->n == cr_i)
        col->n = old_b;
    else
        col->k = old_b;
    nw->flags |= TG_FL_TAKEOVER;
    if (col->has_b) {
        /* the run's readings join the column's (they were rejected when
         * they came and count in both) */
        int32_t c = col->count + col->run;     /* both <= COUNT_MAX: no overflow */
        col->count = c < COUNT_MAX ? c : COUNT_MAX;
    } else {
        /* restart: the column forgets its first reading (never confirmed)
         * and starts from the run's first reading */
        reset_events(col);
        col->count = col->run;
        inc_rejected(col);
    }
    bits = confirm(col, cr);
    col->has_b = 1;
    accept(col, nw, 0);
    return tell(col, bits);
}

/* Column._restart: the first reading b was the bad one: the column restarts
 * from h (placed as a first reading) with n on top of it. Returns the bits,
 * -1 after bad(), -2 when it does not apply. */
static int restart(tg_column *col, tg_rec *h, tg_rec *n)
{
    tg_recoff ki = col->k, mi = col->m;
    tg_rec *k = REC(col, ki), *m = REC(col, mi);
    int w, bits;
    if (!guard(col, h->p_pa))   /* 1: within the guard */
        return -2;
    copy_reading(k, h);
    if (compute(col, NULL, k) < 0)
        return -1;
    k->has_nodes = 0;          /* n's own nodes (if any) are taken by accept */
    copy_reading(m, n);
    w = compute(col, k, m);
    if (w < 0)
        return -1;
    if (w)
        return -2;
    sigma(col, NULL, k);
    sigma(col, k, m);
    col->k = col->b;
    col->m = col->h;
    col->b = ki;
    col->h = mi;
    m->flags |= TG_FL_REPLACED;
    reset_events(col);
    col->count = 2;
    inc_rejected(col);
    if (col->retracted < COUNT_MAX)
        col->retracted += 1;
    bits = confirm(col, k);
    accept(col, m, 0);
    return tell(col, bits);
}

/* Column._spike: the "there and back" test (module docstring, "Checks and
 * recovery"), on heights only: T = SPIKE_GPM + 8 sqrt(2) noise (the larger
 * of b's and n's). Returns the bits, -1 after bad(), -2: not a spike (n
 * goes on as usual). */
static int spike(tg_column *col, tg_rec *h, tg_rec *n)
{
    tg_rec *b = B(col);
    TG_FLOAT zb = b->tv_k / b->p_pa, zn = n->tv_k / n->p_pa;
    TG_FLOAT tt = SPIKE_GPM + SPIKE_KN * col->kz * (zb > zn ? zb : zn);
    TG_FLOAT gb = b->gph_m, gh = h->gph_m, gn = n->gph_m, d;
    d = gn - gh;
    if (col->count == 2 && -tt <= d && d <= tt
        && ((gb - gh > tt && gb - gn > tt) || (gb - gh < -tt && gb - gn < -tt)))
        return restart(col, h, n);
    d = gn - gb;
    if (-tt <= d && d <= tt
        && ((gh - gb > tt && gh - gn > tt) || (gh - gb < -tt && gh - gn < -tt))) {
        tg_rec *m = REC(col, col->m);
        int w;
        copy_reading(m, n);
        w = compute(col, b, m);
        if (w < 0)
            return -1;
        if (w)
            return -2;
        return replace(col, m);
    }
    return -2;
}

/* Column._early: the first three readings: the start, then as feed, with
 * the "there and back" test on every step (and, with two readings held, its
 * first-reading test). The bits, or -1 after bad(). */
static int early(tg_column *col, tg_rec *h, tg_rec *n)
{
    int k;
    if (col->count == 0) {
        if (compute(col, NULL, n) < 0)
            return -1;
        sigma(col, NULL, n);
        return advance(col, h, n);
    }
    k = compute(col, h, n);
    if (k < 0)
        return -1;
    if (k == 0 && !col->run) {
        if (col->count == 2) {
            k = spike(col, h, n);
            if (k != -2)
                return k;
        }
        sigma(col, h, n);
        return advance(col, h, n);
    }
    return recover(col, n, k == 0);
}

/* ------------------------------------------------------------------ feed */
/* Column.feed */
tg_status tg_column_feed(tg_column *col, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                         tg_time time_s, const TG_FLOAT *gps_m, int *bits)
{
    tg_rec *n = REC(col, col->n), *h;
    int k;
    if (TG_UNLIKELY(check(col, n, p_pa, t_k, rh_pct, time_s, gps_m) < 0))   /* 1. the values on their own */
        goto rejected;
    h = H(col);
    if (TG_UNLIKELY(col->count < 3)) {                          /* 2. the first readings */
        k = early(col, h, n);
        if (k < 0)
            goto rejected;
        *bits = k;
        return TG_OK;
    }
    k = compute(col, h, n);                                     /* 3. on top of the latest reading */
    if (TG_UNLIKELY(k < 0))
        goto rejected;
    if (TG_LIKELY(k == 0 && !col->run)) {
        /* the "there and back" test, only on a step above its floor (Python
         * tests compute's layer against SPIKE_GPM - 1 (n.big: no float built
         * in feed), C the gph difference against SPIKE_GPM: either passes
         * every step spike() can retract, |gph(h) - gph(n)| > T >= SPIKE_GPM) */
        if (TG_UNLIKELY(TG_FABS(n->gph_m - h->gph_m) > SPIKE_GPM)) {
            k = spike(col, h, n);
            if (k != -2) {
                if (k < 0)
                    goto rejected;
                *bits = k;
                return TG_OK;
            }
        }
        sigma(col, h, n);
        *bits = advance_on(col, h, n);
        return TG_OK;
    }
    k = recover(col, n, k == 0);                                /* 4. or: look-back, recovery */
    if (k < 0)
        goto rejected;
    *bits = k;
    return TG_OK;
rejected:                  /* Python raises ReadingError: no bits */
    *bits = 0;
    return TG_READING;
}

/* ------------------------------------------------------------ the latest reading */
TG_FLOAT tg_column_p_pa(const tg_column *col) { return H(col)->p_pa; }
TG_FLOAT tg_column_t_k(const tg_column *col) { return H(col)->t_k; }
TG_FLOAT tg_column_tv_k(const tg_column *col) { return H(col)->tv_k; }
TG_FLOAT tg_column_rh_pct(const tg_column *col) { return H(col)->rh_pct; }
TG_FLOAT tg_column_time_s(const tg_column *col) { return rel(col, H(col)->tsr, H(col)); }
tg_time tg_column_time_origin(const tg_column *col) { return H(col)->t0; }
TG_FLOAT tg_column_gph_m(const tg_column *col) { return H(col)->gph_m; }
TG_FLOAT tg_column_height_m(const tg_column *col) { return H(col)->height_m; }
TG_FLOAT tg_column_rate_m_s(const tg_column *col) { return H(col)->rdh / H(col)->rdt; }
int32_t tg_column_flags(const tg_column *col) { return H(col)->flags; }
TG_FLOAT tg_column_gps_m(const tg_column *col) { return H(col)->gps_m; }
TG_FLOAT tg_column_gps_diff_m(const tg_column *col) { return H(col)->gps_diff_m; }

/* Column.noise_gph_m: (Rd/g0) Tv sigma_p_pa / p */
TG_FLOAT tg_column_noise_gph_m(const tg_column *col)
{
    const tg_rec *r = H(col);
    return col->kz * r->tv_k / r->p_pa;
}

/* Column.smooth_rate_gpm_s */
TG_FLOAT tg_column_smooth_rate_gpm_s(const tg_column *col)
{
    if (col->f_dt != col->f_dt)
        return col->f_v;
    return col->f_v / col->f_dt;
}

/* ------------------------------------------------------------ uncertainty */
/* Column._bias2: the systematic variance (see "Uncertainty") */
static TG_FLOAT bias2(const tg_column *col)
{
    const tg_rec *r = H(col);
    /* (Rd/g0) ln(p0/p) dT: the sum of dz/dTv over all readings telescopes */
    TG_FLOAT bt = TG_L(2.0) * tg__layers_half_k_ln(r->p_start, r->p_pa) * col->bias_t_k;
    TG_FLOAT bh = (r->sum_rh + r->ct * r->slope) * col->bias_rh_pct;
    TG_FLOAT bp = HALF_RG * (r->sum_p - r->tm2 / r->p_pa) * col->bias_p_pa;
    TG_FLOAT bw = r->sum_hum + r->ct * r->tvh;
    return bt * bt + bh * bh + bp * bp + bw * bw + col->var_anchor;
}

/* Column.sigma_random_m */
TG_FLOAT tg_column_sigma_random_m(const tg_column *col)
{
    const tg_rec *r;
    TG_FLOAT x;
    if (col->count == 0 || !col->track_sigma)
        return NAN_;
    r = H(col);
    x = r->tm2 / r->p_pa;            /* -dz/dp at the latest reading, over K/2 */
    return TG_SQRT(r->var_done + r->ct * r->ct * r->s2 + (r->var_p + x * x) * col->spk2);
}

/* Column.sigma_bias_m */
TG_FLOAT tg_column_sigma_bias_m(const tg_column *col)
{
    if (col->count == 0 || !col->track_sigma)
        return NAN_;
    return TG_SQRT(bias2(col));
}

/* Column.sigma_m (the Python writes sigma_random_m's and _bias2's steps out
   in the property, and layers.lnr's math.log branch for p_start/p beyond
   _LN_Q_HI/_LN_Q_LO: the same operations, so the same bits; here the calls
   cost little and stay) */
TG_FLOAT tg_column_sigma_m(const tg_column *col)
{
    TG_FLOAT r = tg_column_sigma_random_m(col);
    if (r != r)
        return r;
    return TG_SQRT(r * r + bias2(col));
}

/* ------------------------------------------------------------ GPS */
/* Column.reanchor_gps */
tg_status tg_column_reanchor_gps(tg_column *col, TG_FLOAT sigma_gps_m, TG_FLOAT *out)
{
    tg_rec *h = H(col), *b = B(col);
    tg_rec *rs[2];
    TG_FLOAT sg, target, d, old_h, shift;
    tg_nodes nd;
    int i;
    if (col->count == 0 || !h->gps_here)
        return tg__fail(TG_STATE, out);
    TG_TRY(tg__check_range(sigma_gps_m, TG_L(0.0), TG_L(10000.0), TG_RANGE));
    sg = sigma_gps_m;
    target = tg__potential_gph_series(h->gps_m, col->pc, col->a_m);
    d = target - h->gph_m;
    old_h = h->height_m;
    nodes(col, target, NAN_, &nd);
    col->n_g = nd.g;
    col->n_h = nd.h;
    col->n_k1 = nd.k1;
    col->n_k2 = nd.k2;
    col->n_lo = nd.lo;
    col->n_hi = nd.hi;
    h->height_m = nd.h;
    shift = h->height_m - old_h;
    rs[0] = h;
    rs[1] = b;
    for (i = 0; i < 2; i++) {
        tg_rec *r = rs[i];
        r->gph_m = r->gph_m + d;
        r->g_t = r->g_t + d;
        r->h_tm = r->h_tm + shift;
        r->c = TG_L(0.0);
    }
    b->height_m = b->height_m + shift;
    h->gps_diff_m = h->height_m - h->gps_m;
    col->smooth_gph_m = col->smooth_gph_m + d;
    col->max_gph_m = col->max_gph_m + d;
    col->min_g = col->min_g + d;
    col->launch_line = col->launch_line + d;
    col->fl_g = col->fl_g + d;
    col->fl_lo = col->fl_lo + d;
    col->fl_hi = col->fl_hi + d;
    col->land_lo = col->land_lo + d;
    col->land_hi = col->land_hi + d;
    col->e_g = col->e_g + d;
    col->tb_top = col->tb_top + d;
    col->tb_g0 = col->tb_g0 + d;
    col->tb_g1 = col->tb_g1 + d;
    col->tp_g = col->tp_g + d;
    col->tp_top = col->tp_top + d;
    col->tb_th = col->tb_th + WMO_LAPSE_K_GPM * d;
    col->tp_th = col->tp_th + WMO_LAPSE_K_GPM * d;
    /* uncertainty restarts here: the reading is the new (noisy) start */
    h->var_done = h->var_p = h->ct = h->tm2 = h->sum_rh = h->sum_p = h->sum_hum = TG_L(0.0);
    h->p_start = h->p_pa;
    col->var_anchor = sg * sg;
    *out = shift;
    return TG_OK;
}

/* ------------------------------------------------------------ checkpoint */
/* The frame of checkpoint.py (checkpoint.HEAD = "<4sBH": magic, version,
 * payload length; the payload, doubles then int32s; "<I" CRC-32 of everything
 * before it) with the layout of Column.to_bytes: _CFG_F, _ST_F, t0, _REC_F of
 * the latest and of the one before; _CFG_I, _ST_I, _REC_I of both. The field
 * lists come from column.py through tg_tables.h (X-macros), so the order
 * cannot drift. */
#define HEAD_LEN 7
#define N_F (TGPY_COLUMN__CFG_F_N + TGPY_COLUMN__ST_F_N + 1 + 2 * TGPY_COLUMN__REC_F_N)
#define N_I (TGPY_COLUMN__CFG_I_N + TGPY_COLUMN__ST_I_N + 2 * TGPY_COLUMN__REC_I_N)
#define PAYLOAD_LEN (8 * N_F + 4 * N_I)
typedef char tg__magic_len[(sizeof(TGPY_COLUMN__MAGIC) == 5) ? 1 : -1];
/* tinygeo.h states the size; a change of column.py's layout stops the build here */
typedef char tg__checkpoint_size[(HEAD_LEN + PAYLOAD_LEN + 4 == TG_CHECKPOINT_BYTES) ? 1 : -1];

#define TWO32 4294967296.0

/* the names of the layout's lists, as the C members (Python's without the
 * leading underscore), for the clock test and check_values */
#define STR(name) #name,
static const char *const CLK_F_NAMES[] = { TGPY_COLUMN__CLK_F(STR) NULL };
static const char *const ST_NAMES[] = { TGPY_COLUMN__ST_F(STR) TGPY_COLUMN__ST_I(STR) NULL };
static const char *const REC_NAMES[] = { TGPY_COLUMN__REC_F(STR) TGPY_COLUMN__REC_I(STR) NULL };
#undef STR

static int is_clk(const char *name)
{
    int i;
    for (i = 0; CLK_F_NAMES[i] != NULL; i++)
        if (strcmp(CLK_F_NAMES[i], name) == 0)
            return 1;
    return 0;
}

/* Column.to_bytes (it writes col->t0_int, t0_hi, t0_lo, as Python writes
 * its _t0_int, _t0_hi, _t0_lo) */
tg_status tg_column_to_bytes(tg_column *col, unsigned char *buf, size_t size)
{
    unsigned char *b = buf;
    const tg_rec *recs[2];
    double t0 = H(col)->t0, v;
    int i;
    if (size < TG_CHECKPOINT_BYTES)
        return TG_RANGE;
    /* the first stamp as two int32 halves when it is an int (C: a whole
     * number of magnitude below 2^62; deliberate, README.md "Time") */
    col->t0_int = col->t0_hi = col->t0_lo = 0;
    if (t0 == t0 && t0 == floor(t0) && -TWO62 < t0 && t0 < TWO62) {
        double hi = floor(t0 / TWO32);         /* t0 >> 32, exact */
        double lo = t0 - hi * TWO32;           /* t0 & 0xFFFFFFFF, exact */
        col->t0_int = 1;
        col->t0_hi = (int32_t)hi;
        col->t0_lo = tg__get_i32(tg__put_u32(buf, (uint32_t)lo) - 4);   /* as '<i'; buf is rewritten below */
    }
    memcpy(b, TGPY_COLUMN__MAGIC, 4);
    b[4] = (unsigned char)TGPY_COLUMN__VERSION;
    b[5] = (unsigned char)(PAYLOAD_LEN & 0xFF);
    b[6] = (unsigned char)(PAYLOAD_LEN >> 8);
    b += HEAD_LEN;
#define PUT_F(name) b = tg__put_f64(b, (double)col->name);
#define PUT_ST(name) \
    v = (double)col->name; \
    if (t0 == t0 && v == v && is_clk(#name)) \
        v = v - t0; \
    b = tg__put_f64(b, v);
    TGPY_COLUMN__CFG_F(PUT_F)
    TGPY_COLUMN__ST_F(PUT_ST)
    b = tg__put_f64(b, t0);
    recs[0] = H(col);
    recs[1] = B(col);
    for (i = 0; i < 2; i++) {
        const tg_rec *r = recs[i];
#define PUT_R(name) \
        v = (double)r->name; \
        if (t0 == t0 && (strcmp(#name, "tsr") == 0 || strcmp(#name, "tr") == 0)) \
            v = v - t0; \
        b = tg__put_f64(b, v);
        TGPY_COLUMN__REC_F(PUT_R)
#undef PUT_R
    }
#define PUT_I(name) b = tg__put_i32(b, col->name);
    TGPY_COLUMN__CFG_I(PUT_I)
    TGPY_COLUMN__ST_I(PUT_I)
    for (i = 0; i < 2; i++) {
        const tg_rec *r = recs[i];
#define PUT_RI(name) b = tg__put_i32(b, r->name);
        TGPY_COLUMN__REC_I(PUT_RI)
#undef PUT_RI
    }
#undef PUT_F
#undef PUT_ST
#undef PUT_I
    tg__put_u32(b, tg__crc32(buf, (size_t)(b - buf)));
    return TG_OK;
}

/* Column.from_bytes: the same refusals (checkpoint.unpack, check_finite, the
 * constructor's checks, check_values with _RESTORE_COL and _RESTORE_REC) */
tg_status tg_column_from_bytes_checked(tg_column *col, const unsigned char *blob, size_t n,
                                       tg_column_event_fn on_event, void *on_event_ctx,
                                       size_t col_size, size_t float_size)
{
    double f[N_F];
    int32_t iv[N_I];
    double st_vals[TGPY_COLUMN__ST_F_N + TGPY_COLUMN__ST_I_N];
    double rec_vals[2][TGPY_COLUMN__REC_F_N + TGPY_COLUMN__REC_I_N];
    tg_column_config cfg;
    tg_column c;
    const unsigned char *b;
    uint32_t length;
    double t0, v;
    int i, j, k, r;
    if (col_size != sizeof(tg_column) || float_size != sizeof(TG_FLOAT))
        return TG_BUILD;                  /* built with another TG_FLOAT (tinygeo.h, "Build settings") */
    if (blob == NULL || n < HEAD_LEN + 4)
        return TG_CHECKPOINT;                                  /* too short */
    if (memcmp(blob, TGPY_COLUMN__MAGIC, 4) != 0)
        return TG_CHECKPOINT;                                  /* not a column checkpoint */
    if (blob[4] != TGPY_COLUMN__VERSION)
        return TG_CHECKPOINT;                                  /* another version */
    length = (uint32_t)blob[5] | ((uint32_t)blob[6] << 8);
    if (n != TG_CHECKPOINT_BYTES || length != PAYLOAD_LEN)
        return TG_CHECKPOINT;                                  /* truncated or corrupted */
    if (tg__get_u32(blob + n - 4) != tg__crc32(blob, n - 4))
        return TG_CHECKPOINT;                                  /* CRC-32 mismatch */
    b = blob + HEAD_LEN;
    for (i = 0; i < N_F; i++, b += 8) {
        f[i] = tg__get_f64(b);
        if (isinf(f[i]))
            return TG_CHECKPOINT;                              /* checkpoint.check_finite */
    }
    for (i = 0; i < N_I; i++, b += 4)
        iv[i] = tg__get_i32(b);
    if (iv[0] != 0 && iv[0] != 1)
        return TG_CHECKPOINT;                                  /* unknown ellipsoid code */
    /* the constructor, with the stored settings (NaN stands for None, as
     * Column.from_bytes's opt() makes it) */
    tg_column_config_defaults(&cfg, TG_L(0.0));
    k = 0;
#define GET_CFG(name) if (!tg__set_num(&cfg.name, sizeof cfg.name, f[k++])) return TG_CHECKPOINT;
    TGPY_COLUMN__CFG_F(GET_CFG)
#undef GET_CFG
    j = 0;
    cfg.ellipsoid = iv[j++] ? &tg_grs80 : &tg_wgs84;   /* _CFG_I: ellipsoid_code, ice, ... */
    cfg.ice = (int)iv[j++];
    cfg.dry_fallback = (int)iv[j++];
    cfg.burst_readings = iv[j++];
    cfg.takeover_readings = iv[j++];
    cfg.track_sigma = (int)iv[j++];
    cfg.on_event = on_event;
    cfg.on_event_ctx = on_event_ctx;
    if (tg_column_init(&c, &cfg) != TG_OK)
        return TG_CHECKPOINT;                                  /* settings the column refuses */
    /* _ST_I: the column's counters, then t0_int, t0_hi, t0_lo */
    for (i = 0; i < TGPY_COLUMN__ST_I_N; i++)
        st_vals[TGPY_COLUMN__ST_F_N + i] = (double)iv[j + i];
    c.count = iv[j++];
    c.rejected = iv[j++];
    c.retracted = iv[j++];
    c.phase = iv[j++];
    c.has_b = iv[j++];
    c.e_n = iv[j++];
    c.lvl = iv[j++];
    c.burst_n = iv[j++];
    c.tb_n = iv[j++];
    c.tp_state = iv[j++];
    c.t0_int = iv[j++];
    c.t0_hi = iv[j++];
    c.t0_lo = iv[j++];
    /* the first time stamp: exact from its int32 halves when it was an int */
    t0 = f[TGPY_COLUMN__CFG_F_N + TGPY_COLUMN__ST_F_N];
    if (t0 == t0 && c.t0_int)
        t0 = (double)c.t0_hi * TWO32 + (double)(uint32_t)c.t0_lo;   /* (hi << 32) + (lo & 0xFFFFFFFF) */
    /* _ST_F; a clock relative to t0 back to the stamp it was (Python's back():
     * t0 + int(v) for an int t0 and a whole v, else t0 + v: the same double) */
    i = 0;
#define GET_ST(name) \
    v = f[k]; \
    if (v == v && t0 == t0 && is_clk(#name)) \
        v = t0 + v; \
    st_vals[i++] = v;   /* the value restored, as Python checks it */ \
    if (!tg__set_num(&c.name, sizeof c.name, v)) \
        return TG_CHECKPOINT; \
    k++;
    TGPY_COLUMN__ST_F(GET_ST)
#undef GET_ST
    k++;   /* t0 */
    for (r = 0; r < 2; r++) {
        tg_rec *rc = r == 0 ? REC(&c, c.h) : REC(&c, c.b);
        i = 0;
#define GET_R(name) \
        v = f[k]; \
        if (v == v && t0 == t0 && (strcmp(#name, "tsr") == 0 || strcmp(#name, "tr") == 0)) \
            v = t0 + v; \
        rec_vals[r][i++] = v; \
        if (!tg__set_num(&rc->name, sizeof rc->name, v)) \
            return TG_CHECKPOINT; \
        k++;
        TGPY_COLUMN__REC_F(GET_R)
#undef GET_R
        /* _REC_I: flags, gps_here */
        rc->flags = iv[j++];
        rc->gps_here = iv[j++] != 0;   /* Python: bool(r.gps_here), before the check */
        rec_vals[r][i++] = (double)rc->flags;
        rec_vals[r][i++] = (double)rc->gps_here;
        rc->t0 = t0;
    }
    if (!tg__check_values(TGPY_COLUMN__RESTORE_COL, ST_NAMES, st_vals))
        return TG_CHECKPOINT;
    /* the track's gain window: unknown with f_dt, else the one track makes
     * for it, within WINDOW_TOL of f_dt (Column.from_bytes) */
    if (c.f_dt != c.f_dt) {
        if (c.f_lo == c.f_lo || c.f_hi == c.f_hi)
            return TG_CHECKPOINT;
    } else {
        TG_FLOAT tol = TGPY_COLUMN_WINDOW_TOL * c.f_dt;
        if (!(TG_FABS(c.f_lo - c.f_dt * TG_L(0.95)) <= tol && TG_FABS(c.f_hi - c.f_dt * TG_L(1.05)) <= tol))
            return TG_CHECKPOINT;
    }
    if (c.has_b != (c.count >= 2))   /* a column holds the reading before the latest from its 2nd on */
        return TG_CHECKPOINT;
    /* ties: a step is positive, and the track's rate within 1e9 gpm/s */
    {
        double fdt = (double)c.f_dt, fv = (double)c.f_v;
        double rh = (double)REC(&c, c.h)->rdt, rb = (double)REC(&c, c.b)->rdt;
        if ((fdt == fdt && !(fdt > 0.0 && -1e9 * fdt <= fv && fv <= 1e9 * fdt))
            || (!(rh > 0.0) && rh == rh) || (!(rb > 0.0) && rb == rb))
            return TG_CHECKPOINT;
    }
    if (c.count && !tg__check_values(TGPY_COLUMN__RESTORE_REC, REC_NAMES, rec_vals[0]))
        return TG_CHECKPOINT;
    if (c.has_b && !tg__check_values(TGPY_COLUMN__RESTORE_REC, REC_NAMES, rec_vals[1]))
        return TG_CHECKPOINT;
    *col = c;
    return TG_OK;
}
