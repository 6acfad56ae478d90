/* station.c -- twin of tinygeo/station.py: a fixed station or a moored buoy
 * (averages of the readings in clock-aligned slots, summed as deviations
 * from their first reading with Kahan compensation; the sea-level pressure,
 * QNH of tinygeo.sealevel, the isobaric surface of tinygeo.highsite; the 3-hour tendency and
 * its characteristic, WMO code table 0200; the 24-hour change; dew point;
 * the checks, stuck sensors, gaps and the recovery runs). The contract, the
 * rules and their sources are documented in station.py.
 *
 * tg_station_feed mirrors Station.feed step by step, each step a function
 * named after the Python method (against, contradicts, start, open_avg for
 * _open, add, close_avg for _close, scan, classify), with the same local
 * names, branch order and arithmetic order, so that the double build gives
 * the same bits as CPython (tests/test_c_port.py).
 * Deliberate differences (each also where it happens):
 * - time stamps are tg_time (double) in every build, NaN for None; Python
 *   keeps an int stamp an int and computes with it exactly (the slot, the
 *   phase, time_s, the clock step): the same values for whole stamps below
 *   2^53 (README.md); a whole stamp of magnitude below 2^62 counts as an int
 *   for the checkpoint's t0_int (Python: isinstance(ts, int));
 * - a NaN time_s is None ('time'); Python rejects a nan stamp as 'number';
 *   stamps of magnitude 2^62 or more are 'number' in both (an int stamp
 *   within 256 s below 2^62 rounds to 2^62 as a double: refused in C);
 * - a rejected reading returns TG_READING with st->reason (Python raises
 *   ReadingError with a message);
 * - the ring is an array of TG_STATION_RING slots in the struct (Python
 *   allocates the ring of its average_s once, in the constructor);
 * - slot arithmetic in int64_t and counters that a hostile but accepted
 *   checkpoint could push past int32 saturate, a slot beyond int32 is
 *   clamped (Python's ints grow; valid streams never get there: see sat()
 *   and the restart at COUNT_MAX averages in tg_station_feed).
 */
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include "tg_internal.h"

typedef char tg__station_bits_match[
    (TGPY_STATION_EV_AVERAGE == TG_STATION_EV_AVERAGE && TGPY_STATION_EV_FLAGS == TG_STATION_EV_FLAGS
     && TGPY_STATION_EV_GAP == TG_STATION_EV_GAP && TGPY_STATION_EV_RESTART == TG_STATION_EV_RESTART
     && TGPY_STATION_FL_STUCK_P == TG_STATION_FL_STUCK_P && TGPY_STATION_FL_STUCK_T == TG_STATION_FL_STUCK_T
     && TGPY_STATION_FL_STUCK_RH == TG_STATION_FL_STUCK_RH && TGPY_STATION_FL_GAP == TG_STATION_FL_GAP
     && TGPY_STATION_FL_TREND_GAP == TG_STATION_FL_TREND_GAP && TGPY_STATION_FL_NO_T12 == TG_STATION_FL_NO_T12
     && TGPY_STATION_FL_FEW == TG_STATION_FL_FEW && TGPY_STATION_FL_TAKEOVER == TG_STATION_FL_TAKEOVER
     && TGPY_STATION_FL_CLOCK_HELD == TG_STATION_FL_CLOCK_HELD
     && TGPY_STATION_FL_CLOCK_STUCK == TG_STATION_FL_CLOCK_STUCK
     && TGPY_STATION_FL_MSLP_ODD == TG_STATION_FL_MSLP_ODD
     && TGPY_STATION_COUNT_MAX == TG_COUNT_MAX) ? 1 : -1];
/* the smallest ring Station needs (average_s = 3600 s: 25 slots) */
typedef char tg__station_ring_min[(TG_STATION_RING >= TGPY_STATION_DAY_S / 3600 + 1) ? 1 : -1];

#define P_MIN_PA TGPY_STATION_P_MIN_PA
#define P_MAX_PA TGPY_STATION_P_MAX_PA
#define T_MIN_K TGPY_STATION_T_MIN_K
#define T_MAX_K TGPY_STATION_T_MAX_K
#define RH_TOL_PCT ((TG_FLOAT)TGPY_STATION_RH_TOL_PCT)
#define SAME_PA ((TG_FLOAT)TGPY_STATION_SAME_PA)
#define COUNT_MAX TGPY_STATION_COUNT_MAX
/* _TS_MAX: time stamps of magnitude 2**62 s or more are refused ('number') */
#define TS_MAX 4611686018427387904.0
#define QNH_MIN_PA TGPY_SEALEVEL_QNH_MIN_PA
#define QNH_MAX_PA TGPY_SEALEVEL_QNH_MAX_PA
#define FL_STUCK_P TG_STATION_FL_STUCK_P
#define FL_STUCK_T TG_STATION_FL_STUCK_T
#define FL_STUCK_RH TG_STATION_FL_STUCK_RH
#define FL_GAP TG_STATION_FL_GAP
#define FL_TREND_GAP TG_STATION_FL_TREND_GAP
#define FL_NO_T12 TG_STATION_FL_NO_T12
#define FL_FEW TG_STATION_FL_FEW
#define FL_TAKEOVER TG_STATION_FL_TAKEOVER
#define FL_CLOCK_HELD TG_STATION_FL_CLOCK_HELD
#define FL_CLOCK_STUCK TG_STATION_FL_CLOCK_STUCK
#define FL_MSLP_ODD TG_STATION_FL_MSLP_ODD
#define MSLP_LO_PA TGPY_STATION_MSLP_LO_PA
#define MSLP_HI_PA TGPY_STATION_MSLP_HI_PA
#define NAN_ TG_NAN
#define INF_ ((TG_FLOAT)INFINITY)
#define TNAN ((tg_time)NAN)
#define SET(name) TGPY_STATION_SET_##name

/* an int64 result into int32, saturated: Python's ints grow without bound,
 * C's may not overflow. Reached only from hostile checkpoints whose stamps
 * put a slot far from the restored ones, never by valid streams. */
static int32_t sat(int64_t x)
{
    if (x > INT32_MAX)
        return INT32_MAX;
    if (x < INT32_MIN)
        return INT32_MIN;
    return (int32_t)x;
}

/* Python's j % n for n > 0 (never negative) */
static int64_t pymod(int64_t j, int64_t n)
{
    int64_t r = j % n;
    return r < 0 ? r + n : r;
}

/* Python's float x % w (w > 0): fmod, moved to the sign of w */
static double py_fmod(double x, double w)
{
    double mod = fmod(x, w);
    if (mod != 0.0) {
        if ((w < 0) != (mod < 0))
            mod += w;
    } else {
        mod = copysign(0.0, w);
    }
    return mod;
}

/* Python's float x // w (CPython's float_floor_div); exact for whole x and w
 * below 2^53, where Python's int // gives the same */
static double py_floordiv(double x, double w)
{
    double mod = fmod(x, w);
    double div = (x - mod) / w, fl;
    if (mod != 0.0) {
        if ((w < 0) != (mod < 0))
            div -= 1.0;
    }
    if (div != 0.0) {
        fl = floor(div);
        if (div - fl > 0.5)
            fl += 1.0;
    } else {
        fl = copysign(0.0, x / w);
    }
    return fl;
}

/* ------------------------------------------------------------ settings */
typedef char tg__station_settings_19[TGPY_STATION_SET_N == 19 ? 1 : -1];

/* tg_station_config_defaults (a macro of tinygeo.h passing the caller's
 * sizeof(tg_station_config)): nothing written for another size */
void tg_station_config_defaults_checked(tg_station_config *cfg, TG_FLOAT height_m, TG_FLOAT lat_deg,
                                        size_t cfg_size)
{
    if (cfg_size != sizeof(tg_station_config))
        return;                           /* built with another TG_FLOAT: init says TG_BUILD */
    cfg->height_m = height_m;
    cfg->lat_deg = lat_deg;
    cfg->average_s = SET(AVERAGE_S_DEF);
    cfg->ice = SET(ICE_DEF);
    cfg->min_readings = SET(MIN_READINGS_DEF);
    cfg->stuck_readings = SET(STUCK_READINGS_DEF);
    cfg->max_p_step_pa = SET(MAX_P_STEP_PA_DEF);
    cfg->max_p_rate_pa_s = SET(MAX_P_RATE_PA_S_DEF);
    cfg->max_t_step_k = SET(MAX_T_STEP_K_DEF);
    cfg->max_t_rate_k_s = SET(MAX_T_RATE_K_S_DEF);
    cfg->max_rh_step_pct = SET(MAX_RH_STEP_PCT_DEF);
    cfg->max_rh_rate_pct_s = SET(MAX_RH_RATE_PCT_S_DEF);
    cfg->guard_m = SET(GUARD_M_DEF);
    cfg->steady_pa = SET(STEADY_PA_DEF);
    cfg->max_gap_s = SET(MAX_GAP_S_DEF);
    cfg->mean12 = SET(MEAN12_DEF);
    cfg->iso_p_pa = SET(ISO_P_PA_DEF);
    cfg->takeover_readings = SET(TAKEOVER_READINGS_DEF);
    cfg->on_event = NULL;
    cfg->on_event_ctx = NULL;
}

/* errors.check_range as Station.__init__ calls it, with the generated range */
#define RANGE(x, name) \
    do { if (tg__check_range((x), SET(name##_LO), SET(name##_HI), TG_RANGE) != TG_OK) return TG_RANGE; } while (0)
#define OPT_RANGE(x, name) do { if ((x) == (x)) RANGE(x, name); } while (0)
/* station._count(name, value, lo, hi) */
#define COUNT(x, name) \
    do { if ((x) < SET(name##_LO) || (x) > SET(name##_HI)) return TG_RANGE; } while (0)
#define FLAG(x) do { if ((x) != 0 && (x) != 1) return TG_RANGE; } while (0)

/* the settings Station.__init__ derives (built once, so that feed builds no
 * float for them) */
typedef struct derived {
    int32_t avg, m3, n, n12;
    TG_FLOAT iso_set, iso_p_pa, gph, p_lo, p_hi;
} derived;

/* Station.__init__'s checks (TG_RANGE for a bad setting) and its derived
 * settings into d; writes nothing else, so that a refused setting leaves the
 * station untouched without a scratch tg_station (its rings are large) */
static tg_status check_config(const tg_station_config *cfg, derived *d)
{
    TG_FLOAT avg, g, lo;
    RANGE(cfg->height_m, HEIGHT_M);
    if (tg__check_lat(cfg->lat_deg) != TG_OK)
        return TG_RANGE;
    avg = cfg->average_s;
    RANGE(avg, AVERAGE_S);
    if (avg != TG_FLOOR(avg) || TGPY_STATION_THREE_H_S % (int32_t)avg)
        return TG_RANGE;              /* whole seconds dividing 10800 s */
    d->avg = (int32_t)avg;
    FLAG(cfg->ice);
    COUNT(cfg->min_readings, MIN_READINGS);
    if (cfg->stuck_readings != 0)     /* 0: None */
        COUNT(cfg->stuck_readings, STUCK_READINGS);
    OPT_RANGE(cfg->max_p_step_pa, MAX_P_STEP_PA);
    RANGE(cfg->max_p_rate_pa_s, MAX_P_RATE_PA_S);
    OPT_RANGE(cfg->max_t_step_k, MAX_T_STEP_K);
    RANGE(cfg->max_t_rate_k_s, MAX_T_RATE_K_S);
    OPT_RANGE(cfg->max_rh_step_pct, MAX_RH_STEP_PCT);
    RANGE(cfg->max_rh_rate_pct_s, MAX_RH_RATE_PCT_S);
    OPT_RANGE(cfg->guard_m, GUARD_M);
    RANGE(cfg->steady_pa, STEADY_PA);
    RANGE(cfg->max_gap_s, MAX_GAP_S);
    FLAG(cfg->mean12);
    COUNT(cfg->takeover_readings, TAKEOVER_READINGS);
    d->iso_set = NAN_;
    if (cfg->iso_p_pa == cfg->iso_p_pa) {     /* NaN: None */
        RANGE(cfg->iso_p_pa, ISO_P_PA);
        d->iso_set = cfg->iso_p_pa;
        d->iso_p_pa = d->iso_set;
    } else if (tg_standard_surface_pa(cfg->height_m, &d->iso_p_pa) != TG_OK) {   /* NaN: None */
        return TG_RANGE;
    }
    if (tg_geopotential_height(cfg->height_m, cfg->lat_deg, NULL, &d->gph) != TG_OK)
        return TG_RANGE;
    if (cfg->guard_m != cfg->guard_m) {
        d->p_lo = P_MIN_PA;
        d->p_hi = P_MAX_PA;
    } else {
        /* pressures whose standard pressure altitude lies within guard_m of
         * the barometer (pressure_at falls with height) */
        g = cfg->guard_m;
        d->p_lo = tg__standard_pressure_at(d->gph + g);
        lo = d->gph - g;
        d->p_hi = lo >= tg__standard_bottom_gph_m() ? tg__standard_pressure_at(lo) : INF_;
    }
    d->m3 = TGPY_STATION_THREE_H_S / d->avg;           /* averages in 3 hours */
    d->n = TGPY_STATION_DAY_S / d->avg + 1;            /* ring: 24 hours and the latest */
    d->n12 = TGPY_STATION_HALF_DAY_S / d->avg + 1;
    if (d->n > TG_STATION_RING)
        return TG_RANGE;              /* C: this build's ring is shorter (TG_STATION_RING) */
    return TG_OK;
}

/* the checked settings into s (the rest of Station.__init__) */
static void apply_config(tg_station *s, const tg_station_config *cfg, const derived *d)
{
    s->height_m = cfg->height_m;
    s->lat_deg = cfg->lat_deg;
    s->average_s = cfg->average_s;
    s->avg = d->avg;
    s->ice = cfg->ice;
    s->min_readings = cfg->min_readings;
    s->stuck_readings = cfg->stuck_readings;
    s->stuck_set = cfg->stuck_readings;
    s->max_p_step_pa = cfg->max_p_step_pa;
    s->max_p_rate_pa_s = cfg->max_p_rate_pa_s;
    s->max_t_step_k = cfg->max_t_step_k;
    s->max_t_rate_k_s = cfg->max_t_rate_k_s;
    s->max_rh_step_pct = cfg->max_rh_step_pct;
    s->max_rh_rate_pct_s = cfg->max_rh_rate_pct_s;
    s->guard_m = cfg->guard_m;
    s->steady_pa = cfg->steady_pa;
    s->max_gap_s = cfg->max_gap_s;
    s->mean12 = cfg->mean12;
    s->takeover_readings = cfg->takeover_readings;
    s->iso_set = d->iso_set;
    s->iso_p_pa = d->iso_p_pa;
    s->on_event = cfg->on_event;
    s->on_event_ctx = cfg->on_event_ctx;
    s->gph = d->gph;
    s->p_lo = d->p_lo;
    s->p_hi = d->p_hi;
    s->ps = s->max_p_step_pa != s->max_p_step_pa ? INF_ : s->max_p_step_pa;
    s->ts_step = s->max_t_step_k != s->max_t_step_k ? INF_ : s->max_t_step_k;
    s->rs = s->max_rh_step_pct != s->max_rh_step_pct ? INF_ : s->max_rh_step_pct;
    s->stuck = s->stuck_readings;
    s->clock_s = (tg_time)s->max_gap_s + (tg_time)s->avg;   /* the clock step (station.py, "Recovery") */
    s->m3 = d->m3;
    s->n = d->n;
    s->n12 = d->n12;
    s->reason = TG_REASON_NONE;
}

/* Station._reset: the state of a station that has seen no reading */
static void reset(tg_station *s)
{
    s->p_pa = s->t_k = s->rh_pct = s->dew_point_k = NAN_;
    s->mslp_pa = s->qnh_pa = s->iso_gph_m = NAN_;
    s->tendency_3h_pa = s->change_24h_pa = NAN_;
    s->code = -1;
    s->flags = 0;
    s->gap_s = 0;
    s->average_readings = 0;
    s->count = s->rejected = s->averages = s->missing = 0;
    s->t0 = TNAN;
    s->phase = 0.0;
    s->ts = TNAN;
    s->tsrh = TNAN;
    s->k = -1;
    s->kring = -1;
    s->klast = -1;
    s->rp = s->sp = s->cp = NAN_;
    s->rt = s->st = s->rr = s->sr = NAN_;
    s->np = s->nt = s->nr = 0;
    s->nslot = 0;
    s->sflags = 0;
    s->lp = s->lt = s->lrh = NAN_;
    s->runp = s->runt = s->runr = 0;
    s->inp = s->int_ = s->inr = 0;
    s->t0_int = s->t0_hi = s->t0_lo = 0;
    s->run = 0;
    s->rn_time = 0;
    s->rn_p = s->rn_t = s->rn_rh = NAN_;
    s->rn_ts = s->rn_tsrh = TNAN;
    s->rn_dt = 0.0;                   /* the run's latest step in time */
    s->dtl = 0.0;                     /* the latest step in time between accepted readings */
    s->runts = 0;                     /* readings in a row with the same stamp */
}

/* tinygeo.h, "Build settings": the caller's struct, config, TG_FLOAT and
 * ring against this file's; on a difference nothing is read or written */
static int same_build(size_t st_size, size_t cfg_size, size_t float_size, long ring)
{
    return st_size == sizeof(tg_station) && cfg_size == sizeof(tg_station_config)
        && float_size == sizeof(TG_FLOAT) && ring == (long)TG_STATION_RING;
}

/* tg_station_init (a macro of tinygeo.h passing the caller's sizes) */
tg_status tg_station_init_checked(tg_station *st, const tg_station_config *cfg, size_t st_size,
                                  size_t cfg_size, size_t float_size, long ring)
{
    derived d;
    int32_t i;
    if (!same_build(st_size, cfg_size, float_size, ring))
        return TG_BUILD;                  /* built with another TG_FLOAT or TG_STATION_RING */
    if (check_config(cfg, &d) != TG_OK)
        return TG_RANGE;
    apply_config(st, cfg, &d);
    for (i = 0; i < TG_STATION_RING; i++)
        st->ring_p[i] = NAN_;
    for (i = 0; i < TG_STATION_RING12; i++)
        st->ring_t[i] = NAN_;
    reset(st);
    return TG_OK;
}

/* ------------------------------------------------------------ results */
int tg_station_tendency_code(const tg_station *st)
{
    return st->code < 0 ? -1 : st->code;
}

/* Station.time_s: t0 - phase + (klast + 1) avg (Python: exact ints for an
 * int t0; the same double below 2^53) */
tg_time tg_station_time_s(const tg_station *st)
{
    if (st->klast < 0 || st->t0 != st->t0)
        return TNAN;
    return st->t0 - st->phase + (double)(((int64_t)st->klast + 1) * st->avg);
}

/* ------------------------------------------------------------ the trace */
/* station._scan's tuple (a, b, c, hi, i_hi, lo, i_lo, i_mid, length, longest) */
typedef struct scan_t {
    TG_FLOAT a, b, c, hi, lo;
    int64_t ih, il, im, length, longest;
} scan_t;

/* station._scan: the trace ring[j0 % n .. k % n]; 0 (None) when an end or
 * every inner value is missing */
static int scan(const TG_FLOAT *ring, int64_t n, int64_t j0, int64_t k, scan_t *o)
{
    TG_FLOAT a = ring[pymod(j0, n)], c = ring[pymod(k, n)], hi, lo, v;
    int64_t ih = 0, il = 0, run = 0, longest = 0, i, length, m, d, im;
    if (a != a || c != c)
        return 0;
    hi = -INF_;
    lo = INF_;
    for (i = j0; i <= k; i++) {
        v = ring[pymod(i, n)];
        if (v != v) {
            run += 1;
            if (run > longest)
                longest = run;
        } else {
            run = 0;
            if (v > hi) {
                hi = v;
                ih = i;
            }
            if (v < lo) {
                lo = v;
                il = i;
            }
        }
    }
    length = k - j0;
    /* the present value nearest the middle, strictly inside */
    m = j0 + length / 2;
    im = -1;
    for (d = 0; d < length; d++) {
        if (j0 < m - d && m - d < k && ring[pymod(m - d, n)] == ring[pymod(m - d, n)]) {
            im = m - d;
            break;
        }
        if (j0 < m + d && m + d < k && ring[pymod(m + d, n)] == ring[pymod(m + d, n)]) {
            im = m + d;
            break;
        }
    }
    if (im < 0)
        return 0;
    o->a = a;
    o->b = ring[pymod(im, n)];
    o->c = c;
    o->hi = hi;
    o->ih = ih - j0;
    o->lo = lo;
    o->il = il - j0;
    o->im = im - j0;
    o->length = length;
    o->longest = longest;
    return 1;
}

/* station._classify: code table 0200 from the scan (station.py, "Tendency") */
static int classify(const scan_t *st, TG_FLOAT s)
{
    TG_FLOAT a = st->a, b = st->b, c = st->c;
    TG_FLOAT d = c - a;
    TG_FLOAT top = a > c ? a : c;
    TG_FLOAT bot = a < c ? a : c;
    int peak = st->hi - top > s;
    int trough = bot - st->lo > s;
    TG_FLOAT half = (TG_FLOAT)st->length * TG_L(0.5);
    TG_FLOAT h1 = (b - a) * half / (TG_FLOAT)st->im;
    TG_FLOAT h2 = (c - b) * half / (TG_FLOAT)(st->length - st->im);
    if (d >= SAME_PA) {
        if (peak && (!trough || st->ih > st->il))
            return 0;
        if (trough)
            return 3;
        if (h1 > s && h2 < TG_L(0.5) * h1)
            return 1;
        if (h2 > s && h2 > TG_L(2.0) * h1)
            return 3;
        return 2;
    }
    if (d <= -SAME_PA) {
        if (trough && (!peak || st->il > st->ih))
            return 5;
        if (peak)
            return 8;
        if (h1 < -s && h2 > TG_L(0.5) * h1)
            return 6;
        if (h2 < -s && h2 < TG_L(2.0) * h1)
            return 8;
        return 7;
    }
    if (peak && (!trough || st->ih > st->il))
        return 0;
    if (trough)
        return 5;
    return 4;
}

tg_status tg_tendency_code(const TG_FLOAT *trace_pa, int32_t n, TG_FLOAT steady_pa, int *code)
{
    scan_t st;
    *code = -1;
    if (n < 3)
        return TG_OK;
    if (trace_pa == NULL)
        return TG_RANGE;
    if (!scan(trace_pa, n, 0, (int64_t)n - 1, &st))
        return TG_OK;
    *code = classify(&st, steady_pa);
    return TG_OK;
}

/* ------------------------------------------------------------ feed */
/* Station._bad: count the rejection (the caller returns TG_READING) */
static tg_status bad(tg_station *s, tg_reason reason)
{
    s->reason = reason;
    if (s->rejected < COUNT_MAX)
        s->rejected += 1;
    return TG_READING;
}

/* why a reading contradicts another (Station._against's tuple: its reason
 * and, for 'time', its message: 5 back, 7 ahead beyond the clock step and
 * twice the latest spacing dtl, message 7's new argument) */
enum { WHY_NONE, WHY_BACK, WHY_AHEAD, WHY_P, WHY_T, WHY_RH };
static const tg_reason WHY_REASON[] = {
    TG_REASON_NONE, TG_REASON_TIME, TG_REASON_TIME, TG_REASON_PRESSURE, TG_REASON_TEMPERATURE,
    TG_REASON_HUMIDITY
};

/* Station._against: WHY_NONE if the reading agrees with the reference
 * reading (lp, lt, lrh at stamps lts, ltsrh; NaN: None): time not going
 * back nor (ahead: against the latest accepted reading) jumping beyond the
 * clock step and twice the latest spacing once the station has two
 * readings, steps within the allowance; else why not */
static int against(const tg_station *s, TG_FLOAT p, TG_FLOAT t, TG_FLOAT rh, tg_time ts,
                   TG_FLOAT lp, TG_FLOAT lt, TG_FLOAT lrh, tg_time lts, tg_time ltsrh, int ahead)
{
    tg_time dt = ts - lts;
    TG_FLOAT d, allow;
    if (dt < 0)
        return WHY_BACK;
    if (ahead && dt > s->clock_s && dt > 2.0 * s->dtl && s->count >= 2)
        return WHY_AHEAD;
    d = p - lp;
    if (d > s->ps || d < -s->ps) {
        allow = s->ps + s->max_p_rate_pa_s * (TG_FLOAT)dt;
        if (d > allow || d < -allow)
            return WHY_P;
    }
    d = t - lt;
    if (d > s->ts_step || d < -s->ts_step) {
        allow = s->ts_step + s->max_t_rate_k_s * (TG_FLOAT)dt;
        if (d > allow || d < -allow)
            return WHY_T;
    }
    if (rh == rh && ltsrh == ltsrh) {
        d = rh - lrh;
        if (d > s->rs || d < -s->rs) {
            allow = s->rs + s->max_rh_rate_pct_s * (TG_FLOAT)(ts - ltsrh);
            if (d > allow || d < -allow)
                return WHY_RH;
        }
    }
    return WHY_NONE;
}

/* Station._contradicts: the reading joins the recovery run (or starts one).
 * -1: rejected (TG_READING) until the run has takeover_readings readings;
 * then 1 when the station must restart (a run started by time going back,
 * or the station had no more readings than the run), 0 when it goes on from
 * this reading after a jump ahead, 2 when it goes on from it after a
 * sensor's real jump (FL_TAKEOVER on the average it goes into) */
static int contradicts(tg_station *s, int why, TG_FLOAT p, TG_FLOAT t, TG_FLOAT rh, tg_time ts)
{
    if (s->run && against(s, p, t, rh, ts, s->rn_p, s->rn_t, s->rn_rh, s->rn_ts, s->rn_tsrh, 0)
                  == WHY_NONE) {
        /* (within a run, time may step ahead by any amount: sparse readings) */
        s->run += 1;
        s->rn_dt = ts - s->rn_ts;
    } else {
        s->run = 1;
        /* 1: began going back in time, 2: jumping ahead, 0: a step */
        s->rn_time = why == WHY_BACK ? 1 : why == WHY_AHEAD ? 2 : 0;
        s->rn_tsrh = TNAN;
        s->rn_dt = 0.0;
    }
    s->rn_p = p;
    s->rn_t = t;
    s->rn_rh = rh;
    s->rn_ts = ts;
    if (rh == rh)
        s->rn_tsrh = ts;
    if (s->run < s->takeover_readings) {
        bad(s, WHY_REASON[why]);
        return -1;
    }
    s->run = 0;
    if (s->rn_time == 1 || s->count <= s->takeover_readings)
        return 1;
    if (s->rn_time == 2) {
        /* after a long outage, or readings sparser than before: go on with
         * the averages in between missing, at the run's spacing */
        s->dtl = s->rn_dt;
        return 0;
    }
    return 2;
}

/* Station._start: the first reading: the clock's origin and the slots'
 * alignment. t0_int: Python's isinstance(ts, int) and |ts| < 2^62; C: a whole
 * number of that size (deliberate: a double cannot tell) */
static void start(tg_station *s, tg_time ts)
{
    const double two32 = 4294967296.0, two62 = 4611686018427387904.0;
    s->t0 = ts;
    s->phase = py_fmod(ts, (double)s->avg);
    s->t0_int = s->t0_hi = s->t0_lo = 0;
    if (ts == floor(ts) && -two62 < ts && ts < two62) {
        double hi = floor(ts / two32);        /* ts >> 32, exact */
        double lo = ts - hi * two32;          /* ts & 0xFFFFFFFF, exact, 0 .. 2^32 - 1 */
        s->t0_int = 1;
        s->t0_hi = (int32_t)hi;
        s->t0_lo = lo >= 2147483648.0 ? (int32_t)(lo - two32) : (int32_t)lo;   /* as int32 */
    }
}

/* Station._open: a new average, slot k; its first reading is the reference
 * of its sums */
static void open_avg(tg_station *s, int32_t k, TG_FLOAT p, TG_FLOAT t, TG_FLOAT rh)
{
    s->k = k;
    s->rp = p;
    s->rt = t;
    s->rr = rh;
    s->sp = s->cp = s->st = s->sr = TG_L(0.0);
    s->np = s->nt = s->nr = 0;
    s->nslot = 0;
    s->sflags = 0;
    s->inp = s->int_ = s->inr = 0;
}

/* Station._add: one accepted reading into the sums, with the stuck test */
static void add(tg_station *s, TG_FLOAT p, TG_FLOAT t, TG_FLOAT rh)
{
    int32_t stuck = s->stuck;
    TG_FLOAT y, sum;
    /* pressure (Kahan-compensated sum of deviations) */
    if (p == s->lp) {
        if (s->runp < COUNT_MAX)
            s->runp += 1;
    } else {
        s->runp = 1;
        s->lp = p;
    }
    if (stuck && s->runp >= stuck) {
        s->sflags |= FL_STUCK_P;
        if (s->inp) {
            y = -((TG_FLOAT)s->inp * (p - s->rp)) - s->cp;
            sum = s->sp + y;
            s->cp = (sum - s->sp) - y;
            s->sp = sum;
            s->np = sat((int64_t)s->np - s->inp);
            s->inp = 0;
        }
    } else {
        y = (p - s->rp) - s->cp;
        sum = s->sp + y;
        s->cp = (sum - s->sp) - y;
        s->sp = sum;
        s->np = sat((int64_t)s->np + 1);
        s->inp = s->runp == 1 ? 1 : sat((int64_t)s->inp + 1);
    }
    /* temperature */
    if (t == s->lt) {
        if (s->runt < COUNT_MAX)
            s->runt += 1;
    } else {
        s->runt = 1;
        s->lt = t;
    }
    if (stuck && s->runt >= stuck) {
        s->sflags |= FL_STUCK_T;
        if (s->int_) {
            s->st = s->st - (TG_FLOAT)s->int_ * (t - s->rt);
            s->nt = sat((int64_t)s->nt - s->int_);
            s->int_ = 0;
        }
    } else {
        s->st = s->st + (t - s->rt);
        s->nt = sat((int64_t)s->nt + 1);
        s->int_ = s->runt == 1 ? 1 : sat((int64_t)s->int_ + 1);
    }
    /* humidity (when given) */
    if (rh != rh)
        return;
    if (s->rr != s->rr)
        s->rr = rh;                   /* the first humidity of this average */
    if (rh == s->lrh && rh < TG_L(100.0)) {     /* (saturation is not a stuck sensor) */
        if (s->runr < COUNT_MAX)
            s->runr += 1;
    } else {
        s->runr = 1;
        s->lrh = rh;
    }
    if (stuck && s->runr >= stuck) {
        s->sflags |= FL_STUCK_RH;
        if (s->inr) {
            s->sr = s->sr - (TG_FLOAT)s->inr * (rh - s->rr);
            s->nr = sat((int64_t)s->nr - s->inr);
            s->inr = 0;
        }
    } else {
        s->sr = s->sr + (rh - s->rr);
        s->nr = sat((int64_t)s->nr + 1);
        s->inr = s->runr == 1 ? 1 : sat((int64_t)s->inr + 1);
    }
}

/* moisture.tv_rh (never raises here: within the station's ranges e < p) */
static TG_FLOAT tv_rh(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice)
{
    TG_FLOAT r = rh_pct * tg__moisture_rh_q(t_k, p_pa, ice);
    return t_k / (TG_L(1.0) - r);
}

/* Station._close: the average of slot k is complete: its means into the
 * ring and the results; returns the event bits */
static int close_avg(tg_station *s)
{
    int64_t k = s->k, n = s->n, n12 = s->n12, j, j0, gap = 0;
    int32_t m = s->min_readings;
    int fl = s->sflags, bits, code;
    TG_FLOAT p = NAN_, t = NAN_, rh = NAN_, td, mslp, qnh, iso, tv, tr, t12, h, q, a;
    TG_FLOAT tend, ch24;
    TG_FLOAT *rp = s->ring_p, *rt = s->mean12 ? s->ring_t : NULL;
    scan_t st;
    if (s->np >= m)
        p = s->rp + (s->sp - s->cp) / (TG_FLOAT)s->np;
    else if (s->np)
        fl |= FL_FEW;
    if (s->nt >= m)
        t = s->rt + s->st / (TG_FLOAT)s->nt;
    else if (s->nt)
        fl |= FL_FEW;
    if (s->nr >= m)
        rh = s->rr + s->sr / (TG_FLOAT)s->nr;
    else if (s->nr)
        fl |= FL_FEW;
    /* the ring(s): slots skipped since the latest write are missing */
    j = (int64_t)s->kring + 1;
    if (j < k - n + 1)
        j = k - n + 1;
    while (j < k) {
        rp[pymod(j, n)] = NAN_;
        if (rt != NULL)
            rt[pymod(j, n12)] = NAN_;
        j += 1;
    }
    rp[pymod(k, n)] = p;
    if (rt != NULL)
        rt[pymod(k, n12)] = t;
    s->kring = (int32_t)k;
    bits = TG_STATION_EV_AVERAGE;
    if (s->klast >= 0)
        gap = k - s->klast - 1;
    if (gap) {
        fl |= FL_GAP;
        bits |= TG_STATION_EV_GAP;
        s->missing = sat((int64_t)s->missing + gap < COUNT_MAX ? (int64_t)s->missing + gap : COUNT_MAX);
    }
    s->klast = (int32_t)k;
    s->gap_s = sat(gap * s->avg < COUNT_MAX ? gap * s->avg : COUNT_MAX);   /* saturates (34 years) */
    s->average_readings = s->nslot;
    if (s->averages < COUNT_MAX)
        s->averages += 1;
    s->p_pa = p;
    s->t_k = t;
    s->rh_pct = rh;
    /* dew point of the means (tinygeo.dew_point_from_rh) */
    td = NAN_;
    if (t == t && rh > TG_L(0.0)) {
        td = tg__moisture_td_rh(t, rh, s->ice);
        if (!(TG_T_LO <= td && td <= TG_T_HI))
            td = NAN_;
    }
    s->dew_point_k = td;
    /* sea level, QNH, isobaric surface (tinygeo.sealevel, tinygeo.highsite) */
    mslp = qnh = iso = NAN_;
    if (p == p && t == t) {
        tv = rh != rh ? t : tv_rh(t, p, rh, s->ice);
        tr = tv;
        if (rt != NULL) {
            t12 = NAN_;
            j = k - (n12 - 1);
            if (j >= 0)
                t12 = rt[pymod(j, n12)];
            if (t12 == t12)
                tr = TG_L(0.5) * (t + t12) + (tv - t);
            else
                fl |= FL_NO_T12;
        }
        mslp = tg__sealevel_msl_tv(p, tr, s->gph);
        if (!(MSLP_LO_PA <= mslp && mslp <= MSLP_HI_PA))
            fl |= FL_MSLP_ODD;
        if (s->iso_p_pa == s->iso_p_pa)
            iso = tg__highsite_iso_tv(p, tv, s->gph, s->iso_p_pa);
    }
    if (p == p) {
        /* tinygeo.qnh: the standard atmosphere's pressure at the pressure
         * altitude of p lowered by the elevation */
        h = tg__standard_altitude_at(p) - s->height_m;
        if (h >= tg__standard_bottom_gph_m()) {
            q = tg__standard_pressure_at(h);
            if (QNH_MIN_PA <= q && q <= QNH_MAX_PA)
                qnh = q;
        }
    }
    s->mslp_pa = mslp;
    s->qnh_pa = qnh;
    s->iso_gph_m = iso;
    /* tendency, characteristic, 24-hour change */
    tend = ch24 = NAN_;
    code = -1;
    j0 = k - s->m3;
    if (j0 >= 0) {
        a = rp[pymod(j0, n)];
        if (p == p && a == a) {
            tend = p - a;
            if (scan(rp, n, j0, k, &st) && (double)(st.longest * s->avg) <= (double)s->max_gap_s)
                code = classify(&st, s->steady_pa);
        }
        if (code < 0)
            fl |= FL_TREND_GAP;
    }
    j = k - (n - 1);
    if (j >= 0) {
        a = rp[pymod(j, n)];
        if (p == p && a == a)
            ch24 = p - a;
    }
    s->tendency_3h_pa = tend;
    s->code = code;
    s->change_24h_pa = ch24;
    if (fl != s->flags)
        bits |= TG_STATION_EV_FLAGS;
    s->flags = fl;
    return bits;
}

tg_status tg_station_feed(tg_station *s, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                          tg_time time_s, int *bits)
{
    TG_FLOAT p = p_pa, t = t_k, rh = NAN_;
    tg_time ts = time_s;
    double x, kd;
    int32_t k, c, r, a, m;
    tg_time run;
    int restart = 0, held = 0, b = 0, why;
    *bits = 0;
    /* 1. the values on their own */
    if (!isfinite(p))
        return bad(s, TG_REASON_NUMBER);
    if (!(P_MIN_PA <= p && p <= P_MAX_PA))
        return bad(s, TG_REASON_PRESSURE);
    if (!isfinite(t))
        return bad(s, TG_REASON_NUMBER);
    if (!(T_MIN_K <= t && t <= T_MAX_K))
        return bad(s, TG_REASON_TEMPERATURE);
    if (rh_pct != NULL) {
        rh = *rh_pct;
        if (!isfinite(rh))
            return bad(s, TG_REASON_NUMBER);
        if (rh < -RH_TOL_PCT || rh > TG_L(100.0) + RH_TOL_PCT)
            return bad(s, TG_REASON_HUMIDITY);
    }
    if (ts != ts)
        return bad(s, TG_REASON_TIME);           /* None (C: NaN) */
    if (!(-TS_MAX < ts && ts < TS_MAX))
        return bad(s, TG_REASON_NUMBER);         /* beyond +-2**62 s, or infinite */
    if (!(s->p_lo <= p && p <= s->p_hi))
        return bad(s, TG_REASON_PRESSURE);
    /* 2. against the latest accepted reading; a reading that contradicts it
     * joins the recovery run, which takes over after takeover_readings
     * readings in a row (station.py, "Recovery") */
    if (s->count) {
        if (ts < s->ts && s->ts - ts <= s->clock_s) {
            ts = s->ts;               /* a small clock step back: held */
            held = 1;
        }
        if (s->nslot >= COUNT_MAX
            && py_floordiv(ts - s->t0 + s->phase, (double)s->avg) == (double)s->k)
            return bad(s, TG_REASON_TIME);       /* 2**30 readings in one average: a stuck
                                                  * clock (refused before anything changes) */
        why = against(s, p, t, rh, ts, s->lp, s->lt, s->lrh, s->ts, s->tsrh, 1);
        if (why != WHY_NONE) {
            restart = contradicts(s, why, p, t, rh, ts);
            if (restart < 0)
                return TG_READING;
        } else {
            s->run = 0;
        }
    }
    if (restart != 1 && s->count
        && py_floordiv(ts - s->t0 + s->phase, (double)s->avg) >= (double)COUNT_MAX)
        restart = 1;    /* the average's number would leave what a checkpoint holds */
    if (restart == 1) {
        /* a clock set back, a bad first reading, or the end of the slot
         * numbers: start afresh from this reading (the counters go on) */
        c = s->count;
        r = s->rejected;
        a = s->averages;
        m = s->missing;
        run = s->rn_dt;
        reset(s);
        s->count = c;
        s->rejected = r;
        s->averages = a;
        s->missing = m;
        s->dtl = run;
    }
    /* 3. accepted: into the average (closing the one before if this reading
     * starts a new one) */
    if (s->count == 0 || restart == 1)
        start(s, ts);
    x = ts - s->t0 + s->phase;
    kd = py_floordiv(x, (double)s->avg);
    /* a valid state keeps 0 <= kd < COUNT_MAX (the restart above); a hostile
     * checkpoint's stamps may not: clamp before the conversion (Python's int
     * has no bound) */
    if (!(kd >= -2147483648.0))
        kd = -2147483648.0;
    if (kd > 2147483647.0)
        kd = 2147483647.0;
    k = (int32_t)kd;
    if (k != s->k) {
        if (s->k >= 0)
            b = close_avg(s);
        open_avg(s, k, p, t, rh);
    }
    if (restart == 2)
        s->sflags |= FL_TAKEOVER;     /* a sensor's real jump: on the average it goes into */
    if (held)
        s->sflags |= FL_CLOCK_HELD;
    if (s->count && restart != 1) {
        s->dtl = ts - s->ts;
        if (ts == s->ts && !held) {
            if (s->runts < COUNT_MAX)
                s->runts += 1;
        } else {
            s->runts = 1;
        }
    } else {
        s->runts = 1;
    }
    if (s->stuck && s->runts >= s->stuck)
        s->sflags |= FL_CLOCK_STUCK;   /* a clock that stopped */
    add(s, p, t, rh);
    s->ts = ts;
    if (rh == rh)
        s->tsrh = ts;
    if (s->count < COUNT_MAX)
        s->count += 1;
    if (s->nslot < COUNT_MAX)
        s->nslot += 1;
    if (restart == 1)
        b |= TG_STATION_EV_RESTART;
    if (b && s->on_event != NULL)
        s->on_event(s, b, s->on_event_ctx);
    *bits = b;
    return TG_OK;
}

/* ------------------------------------------------------------ checkpoint */
/* The frame of checkpoint.py with the layout of Station.to_bytes: _CFG_F,
 * _ST_F, _TS_F (relative to t0 when t0 is an int), t0, the ring (n values)
 * and the mean12 ring (n12, when mean12) as doubles; _CFG_I, _ST_I as
 * int32s. The field lists come from station.py through tg_tables.h. */
#define HEAD_LEN 7
#define N_FIX (TGPY_STATION__CFG_F_N + TGPY_STATION__ST_F_N + TGPY_STATION__TS_F_N + 1)
#define N_I (TGPY_STATION__CFG_I_N + TGPY_STATION__ST_I_N)
typedef char tg__station_magic_len[(sizeof(TGPY_STATION__MAGIC) == 5) ? 1 : -1];
typedef char tg__station_max[(HEAD_LEN + 8 * (N_FIX + TG_STATION_RING + TG_STATION_RING12) + 4 * N_I + 4
                              == TG_STATION_CHECKPOINT_MAX) ? 1 : -1];
typedef char tg__station_u16[(TG_STATION_CHECKPOINT_MAX - HEAD_LEN - 4 <= 65535) ? 1 : -1];

/* positions in _ST_I of the fields the restore reads by name (checked
 * against the X-macro list at compile time below) */
#define ST_I_COUNT 0
#define ST_I_K 8
#define ST_I_T0_INT 22
#define ST_I_RUN 25
#define ST_I_POS(name) ST_I_POS_##name,
enum { TGPY_STATION__ST_I(ST_I_POS) ST_I_POS_END };
#undef ST_I_POS
typedef char tg__station_st_i_pos[(ST_I_POS_count == ST_I_COUNT && ST_I_POS_k == ST_I_K
                                   && ST_I_POS_kring == ST_I_K + 1 && ST_I_POS_klast == ST_I_K + 2
                                   && ST_I_POS_t0_int == ST_I_T0_INT && ST_I_POS_t0_hi == ST_I_T0_INT + 1
                                   && ST_I_POS_t0_lo == ST_I_T0_INT + 2 && ST_I_POS_run == ST_I_RUN) ? 1 : -1];
#define ST_F_POS(name) ST_F_POS_##name,
enum { TGPY_STATION__ST_F(ST_F_POS) ST_F_POS_END };
#undef ST_F_POS
#define TS_F_POS(name) TS_F_POS_##name,
enum { TGPY_STATION__TS_F(TS_F_POS) TS_F_POS_END };
#undef TS_F_POS
typedef char tg__station_ts_f_pos[(TS_F_POS_ts == 0 && TS_F_POS_rn_ts == 2) ? 1 : -1];
typedef char tg__station_cfg_13_5[(TGPY_STATION__CFG_F_N == 13 && TGPY_STATION__CFG_I_N == 5) ? 1 : -1];

#define STR(name) #name,
static const char *const ST_NAMES[] = { TGPY_STATION__ST_F(STR) TGPY_STATION__ST_I(STR) NULL };
#undef STR

static size_t blob_size(int32_t nf)
{
    return (size_t)HEAD_LEN + 8u * (size_t)nf + 4u * N_I + 4u;
}

size_t tg_station_checkpoint_bytes(const tg_station *st)
{
    return blob_size(N_FIX + st->n + (st->mean12 ? st->n12 : 0));
}

tg_status tg_station_to_bytes(const tg_station *st, unsigned char *buf, size_t size)
{
    size_t want = tg_station_checkpoint_bytes(st), payload = want - HEAD_LEN - 4;
    unsigned char *b = buf;
    double t0 = st->t0, v;
    int32_t i;
    if (buf == NULL || size < want)
        return TG_RANGE;
    memcpy(b, TGPY_STATION__MAGIC, 4);
    b[4] = (unsigned char)TGPY_STATION__VERSION;
    b[5] = (unsigned char)(payload & 0xFF);
    b[6] = (unsigned char)(payload >> 8);
    b += HEAD_LEN;
#define PUT_F(name) b = tg__put_f64(b, (double)st->name);
#define PUT_TS(name) \
    v = st->name; \
    if (v == v && st->t0_int) \
        v = v - t0; \
    b = tg__put_f64(b, v);
#define PUT_I(name) b = tg__put_i32(b, st->name);
    TGPY_STATION__CFG_F(PUT_F)
    TGPY_STATION__ST_F(PUT_F)
    TGPY_STATION__TS_F(PUT_TS)
    b = tg__put_f64(b, t0);
    for (i = 0; i < st->n; i++)
        b = tg__put_f64(b, (double)st->ring_p[i]);
    if (st->mean12)
        for (i = 0; i < st->n12; i++)
            b = tg__put_f64(b, (double)st->ring_t[i]);
    TGPY_STATION__CFG_I(PUT_I)
    TGPY_STATION__ST_I(PUT_I)
#undef PUT_F
#undef PUT_TS
#undef PUT_I
    tg__put_u32(b, tg__crc32(buf, (size_t)(b - buf)));
    return TG_OK;
}

/* a restored double that a TG_FLOAT field cannot hold (float build: finite
 * in the blob, infinite as a float; Python on a float32 board would refuse
 * it the same way) */
static int too_big(double v)
{
    TG_FLOAT x;
    return tg__set_num(&x, sizeof x, v) == 0;
}

/* Station.from_bytes: the same refusals (checkpoint.unpack, check_finite, the
 * constructor's checks, the ring's length and values, check_values with
 * _RESTORE, the sums tied to their counts, the clock's consistency); every
 * check runs on the blob before anything is written, so st is untouched on
 * TG_CHECKPOINT */
tg_status tg_station_from_bytes_checked(tg_station *st, const unsigned char *blob, size_t n,
                                        tg_station_event_fn on_event, void *on_event_ctx,
                                        size_t st_size, size_t float_size, long ring)
{
    const unsigned char *fb, *ib;
    tg_station_config cfg;
    derived d;
    double vals[TGPY_STATION__ST_F_N + TGPY_STATION__ST_I_N];
    double t0, v, ts_rel[TGPY_STATION__TS_F_N];
    int32_t nf, want, i, j, iv[N_I], count, k, kring, klast, run;
    uint32_t length;
    size_t nfz;
    if (!same_build(st_size, sizeof(tg_station_config), float_size, ring))
        return TG_BUILD;                  /* built with another TG_FLOAT or TG_STATION_RING */
    if (blob == NULL || n < HEAD_LEN + 4)
        return TG_CHECKPOINT;                                  /* too short */
    if (memcmp(blob, TGPY_STATION__MAGIC, 4) != 0)
        return TG_CHECKPOINT;                                  /* not a station checkpoint */
    if (blob[4] != TGPY_STATION__VERSION)
        return TG_CHECKPOINT;                                  /* another version */
    /* the float count follows from the blob's length (Python: nf from len(blob),
     * at least the fixed part), then the length must be exact */
    if (n < blob_size(N_FIX))
        return TG_CHECKPOINT;
    nfz = (n - HEAD_LEN - 4 - 4u * N_I) / 8u;
    if (nfz > (size_t)(N_FIX + TG_STATION_RING + TG_STATION_RING12))
        return TG_CHECKPOINT;          /* longer than any station of this build (Python: the
                                        * length field or the ring's length refuses it) */
    nf = (int32_t)nfz;
    length = (uint32_t)blob[5] | ((uint32_t)blob[6] << 8);
    if (n != blob_size(nf) || length != n - HEAD_LEN - 4)
        return TG_CHECKPOINT;                                  /* truncated or corrupted */
    if (tg__get_u32(blob + n - 4) != tg__crc32(blob, n - 4))
        return TG_CHECKPOINT;                                  /* CRC-32 mismatch */
    fb = blob + HEAD_LEN;
    ib = fb + 8 * nf;
    for (i = 0; i < nf; i++)
        if (isinf(tg__get_f64(fb + 8 * i)))
            return TG_CHECKPOINT;                              /* checkpoint.check_finite */
    for (i = 0; i < N_I; i++)
        iv[i] = tg__get_i32(ib + 4 * i);
    /* the constructor, with the stored settings (Station.from_bytes unpacks
     * _CFG_F and _CFG_I in this order; NaN: None; stuck 0: None) */
#define F(i) (TG_FLOAT)tg__get_f64(fb + 8 * (i))
    memset(&cfg, 0, sizeof cfg);
    cfg.height_m = F(0);
    cfg.lat_deg = F(1);
    cfg.average_s = F(2);
    cfg.max_p_step_pa = F(3);
    cfg.max_p_rate_pa_s = F(4);
    cfg.max_t_step_k = F(5);
    cfg.max_t_rate_k_s = F(6);
    cfg.max_rh_step_pct = F(7);
    cfg.max_rh_rate_pct_s = F(8);
    cfg.guard_m = F(9);
    cfg.steady_pa = F(10);
    cfg.max_gap_s = F(11);
    cfg.iso_p_pa = F(12);
#undef F
    cfg.ice = (int)iv[0];
    cfg.min_readings = iv[1];
    cfg.stuck_readings = iv[2];
    cfg.mean12 = (int)iv[3];
    cfg.takeover_readings = iv[4];
    cfg.on_event = on_event;
    cfg.on_event_ctx = on_event_ctx;
    if (check_config(&cfg, &d) != TG_OK)
        return TG_CHECKPOINT;                                  /* settings the station refuses */
    want = N_FIX + d.n + (cfg.mean12 ? d.n12 : 0);
    if (nf != want)
        return TG_CHECKPOINT;                                  /* a ring of another length */
    /* _ST_F and _ST_I for check_values (as doubles, in ST_NAMES' order) */
    for (i = 0; i < TGPY_STATION__ST_F_N; i++) {
        vals[i] = tg__get_f64(fb + 8 * (TGPY_STATION__CFG_F_N + i));
        if (too_big(vals[i]))
            return TG_CHECKPOINT;
    }
    for (i = 0; i < TGPY_STATION__ST_I_N; i++)
        vals[TGPY_STATION__ST_F_N + i] = (double)iv[TGPY_STATION__CFG_I_N + i];
    /* the first time stamp: exact from its int32 halves when it was an int */
    j = TGPY_STATION__CFG_F_N + TGPY_STATION__ST_F_N;
    for (i = 0; i < TGPY_STATION__TS_F_N; i++)
        ts_rel[i] = tg__get_f64(fb + 8 * (j + i));
    t0 = tg__get_f64(fb + 8 * (N_FIX - 1));
    {
        int32_t t0_int = iv[TGPY_STATION__CFG_I_N + ST_I_T0_INT];
        int32_t t0_hi = iv[TGPY_STATION__CFG_I_N + ST_I_T0_INT + 1];
        int32_t t0_lo = iv[TGPY_STATION__CFG_I_N + ST_I_T0_INT + 2];
        if (t0 == t0 && t0_int)
            t0 = (double)t0_hi * 4294967296.0 + (double)(uint32_t)t0_lo;   /* (hi << 32) + (lo & 0xFFFFFFFF) */
        /* _TS_F: relative to an int t0 back to the stamp it was (Python:
         * t0 + int(v) for a whole v, else t0 + v: the same double) */
        for (i = 0; i < TGPY_STATION__TS_F_N; i++)
            if (ts_rel[i] == ts_rel[i] && t0_int && t0 == t0)
                ts_rel[i] = t0 + ts_rel[i];
    }
    /* the rings' values */
    for (i = 0; i < d.n; i++) {
        v = tg__get_f64(fb + 8 * (N_FIX + i));
        if (v == v && !((double)P_MIN_PA <= v && v <= (double)P_MAX_PA))
            return TG_CHECKPOINT;
    }
    if (cfg.mean12)
        for (i = 0; i < d.n12; i++) {
            v = tg__get_f64(fb + 8 * (N_FIX + d.n + i));
            if (v == v && !((double)T_MIN_K <= v && v <= (double)T_MAX_K))
                return TG_CHECKPOINT;
        }
    if (!tg__check_values(TGPY_STATION__RESTORE, ST_NAMES, vals))
        return TG_CHECKPOINT;
    /* the sums of the average being built: deviations from its first
     * reading, so at most the count times the widest range (Python's
     * expression, on the blob's doubles) */
#define VF(name) vals[ST_F_POS_##name]
#define VI(name) vals[TGPY_STATION__ST_F_N + ST_I_POS_##name]
    if (!(fabs(VF(sp)) <= VI(np) * 80000.0 && fabs(VF(cp)) <= fabs(VF(sp)) + 1.0
          && fabs(VF(st)) <= VI(nt) * 200.0 && fabs(VF(sr)) <= VI(nr) * 110.0
          && VI(inp) <= VI(np) && VI(int_) <= VI(nt) && VI(inr) <= VI(nr))
        && VI(k) >= 0)
        return TG_CHECKPOINT;                                  /* sums their counts cannot reach */
#undef VF
#undef VI
    count = iv[TGPY_STATION__CFG_I_N + ST_I_COUNT];
    k = iv[TGPY_STATION__CFG_I_N + ST_I_K];
    kring = iv[TGPY_STATION__CFG_I_N + ST_I_K + 1];
    klast = iv[TGPY_STATION__CFG_I_N + ST_I_K + 2];
    run = iv[TGPY_STATION__CFG_I_N + ST_I_RUN];
    if ((count > 0) != (t0 == t0) || (count > 0) != (ts_rel[0] == ts_rel[0]) || k < kring
        || kring < klast || (run > 0 && ts_rel[2] != ts_rel[2]))
        return TG_CHECKPOINT;                                  /* an inconsistent clock */
    /* accepted: the station */
    apply_config(st, &cfg, &d);
    i = TGPY_STATION__CFG_F_N;
    /* (tg__set_num: the steps dtl and rn_dt are tg_time, the rest TG_FLOAT;
     * too_big above refused what a TG_FLOAT cannot hold) */
#define GET_F(name) (void)tg__set_num(&st->name, sizeof st->name, tg__get_f64(fb + 8 * i++));
    TGPY_STATION__ST_F(GET_F)
#undef GET_F
    j = TGPY_STATION__CFG_I_N;
#define GET_I(name) st->name = iv[j++];
    TGPY_STATION__ST_I(GET_I)
#undef GET_I
    st->t0 = t0;
    st->phase = t0 == t0 ? py_fmod(t0, (double)st->avg) : 0.0;
    i = 0;
#define GET_TS(name) st->name = ts_rel[i++];
    TGPY_STATION__TS_F(GET_TS)
#undef GET_TS
    for (i = 0; i < TG_STATION_RING; i++)
        st->ring_p[i] = i < d.n ? (TG_FLOAT)tg__get_f64(fb + 8 * (N_FIX + i)) : NAN_;
    for (i = 0; i < TG_STATION_RING12; i++)
        st->ring_t[i] = cfg.mean12 && i < d.n12 ? (TG_FLOAT)tg__get_f64(fb + 8 * (N_FIX + d.n + i)) : NAN_;
    return TG_OK;
}
