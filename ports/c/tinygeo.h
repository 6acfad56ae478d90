/* tinygeo.h -- C99 port of the tinygeo core (tinygeo/ modules).
 *
 * Each Python module has its C twin (gravity.c, potential.c, moisture.c,
 * layers.c, standard.c, sealevel.c, column.c): the same names with a tg_
 * prefix, the same argument order and units, the same branch order, so both
 * read side by side. The formulas, their sources and their accuracy are
 * documented in the Python docstrings; the C comments point to them and note
 * every deliberate difference where it happens.
 *
 * Float type
 * ----------
 * TG_FLOAT is double unless the build says -DTG_FLOAT=float (single
 * precision, what firmware uses). All arithmetic, constants and libm calls
 * (sinf, logf, expm1f, ... in the float build) then use that type.
 *
 * Error convention (one rule for every function)
 * -----------------------------------------------
 * A function returns a tg_status and writes its result through the last
 * argument, a pointer `out`:
 *   TG_OK           the result is in *out;
 *   TG_RANGE        an argument is not finite or lies outside its accepted
 *                   range (Python: tinygeo.errors.RangeError);
 *   TG_MODEL_RANGE  the value lies outside the range the published model is
 *                   defined for (Python: ModelRangeError);
 *   TG_ELLIPSOID    an ellipsoid without a geopotential series (Python:
 *                   TinygeoError from potential.series);
 *   TG_READING      a column reading was rejected (Python: ReadingError; the
 *                   reason is stored in the column, see tg_column_feed);
 *   TG_STATE        a column method called in a state that does not allow it
 *                   (Python: TinygeoError from reanchor_gps);
 *   TG_CHECKPOINT   a checkpoint blob is truncated, corrupted, of another
 *                   version or holds impossible settings (CheckpointError);
 *   TG_BUILD        (C only) the caller was compiled with another TG_FLOAT or
 *                   TG_STATION_RING than the library: tg_column_init,
 *                   tg_station_init and the from_bytes functions refuse and
 *                   write nothing (see "Build settings" below).
 * On any status other than TG_OK, *out is set to NaN (never left holding a
 * stale value) and no other state changes. tg_status_name() gives a short
 * word for logs. Arguments are checked in the same order as in Python, so
 * the status is the class of the exception Python raises for the same call.
 *
 * Optional arguments: Python's keyword defaults become explicit arguments.
 * An ellipsoid pointer may be NULL (= &tg_wgs84, the Python default). An
 * optional number that Python takes as None (rh_pct, lat_deg of
 * tg_sea_level_pressure, ...) is passed as a pointer, NULL meaning None.
 * Booleans (ice) are ints, 0 or 1.
 *
 * No function allocates memory, reads a clock or keeps hidden state.
 *
 * Build settings
 * --------------
 * TG_FLOAT and TG_STATION_RING change the layout of tg_column and
 * tg_station: every translation unit (the library's .c files and every file
 * of the application that includes this header) must be built with the same
 * values. Otherwise the caller's struct is smaller or larger than the one the
 * library fills, and the library would write past it. So tg_column_init,
 * tg_station_init, tg_column_from_bytes and tg_station_from_bytes are macros
 * that pass the caller's sizeof of the struct and of its config, sizeof
 * (TG_FLOAT) and TG_STATION_RING to the library's *_checked function, which
 * compares them with its own and returns TG_BUILD, writing nothing, when any
 * differs. Check their status: a struct they refused is not initialised.
 * tg_column_config_defaults and tg_station_config_defaults are macros too:
 * for a config of another size they write nothing (the init then refuses).
 * (The free functions taking TG_FLOAT are not checked: with another TG_FLOAT
 * their arguments and results are garbage; build everything the same way.)
 */
#ifndef TINYGEO_H
#define TINYGEO_H

#ifndef TG_FLOAT
#define TG_FLOAT double
#endif

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

typedef enum tg_status {
    TG_OK = 0,
    TG_RANGE = 1,
    TG_MODEL_RANGE = 2,
    TG_ELLIPSOID = 3,
    TG_READING = 4,
    TG_STATE = 5,
    TG_CHECKPOINT = 6,
    TG_BUILD = 7
} tg_status;

/* "ok", "range", "model_range", "ellipsoid", "reading", "state", "checkpoint",
 * "build" */
const char *tg_status_name(tg_status st);

/* ---- constants.py ------------------------------------------------------ */
/* Geopotential series of potential.py for one ellipsoid: D_1..D_6, each a
 * polynomial in s = sin^2(lat) with lens[n] coefficients (s^0 first). */
typedef struct tg_series {
    unsigned char lens[6];
    TG_FLOAT d[6][6];
} tg_series;

/* constants.Ellipsoid: the same attributes (SI), plus the geopotential
 * series of potential.py (Python picks it by name; C keeps a pointer, NULL
 * for an ellipsoid without one -> TG_ELLIPSOID). */
typedef struct tg_ellipsoid {
    const char *name;
    TG_FLOAT a_m, f, gm, omega, b_m, e2, ep2, lin_ecc_m;
    TG_FLOAT gamma_e, gamma_p, k_somigliana, m, u0;
    const tg_series *series;
} tg_ellipsoid;

extern const tg_ellipsoid tg_wgs84;   /* constants.WGS84 [NIMA TR8350.2] */
extern const tg_ellipsoid tg_grs80;   /* constants.GRS80 [Moritz 1980] */

/* ---- gravity.py: m/s^2 ------------------------------------------------- */
tg_status tg_somigliana_gravity(TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid, TG_FLOAT *out);
tg_status tg_normal_gravity(TG_FLOAT lat_deg, TG_FLOAT height_m, const tg_ellipsoid *ellipsoid,
                            TG_FLOAT *out);

/* ---- potential.py ------------------------------------------------------ */
tg_status tg_geopotential_height(TG_FLOAT height_m, TG_FLOAT lat_deg,
                                 const tg_ellipsoid *ellipsoid, TG_FLOAT *out);   /* gpm */
tg_status tg_geopotential(TG_FLOAT height_m, TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid,
                          TG_FLOAT *out);                                       /* m^2/s^2 */
tg_status tg_geometric_height(TG_FLOAT gph_m, TG_FLOAT lat_deg, const tg_ellipsoid *ellipsoid,
                              TG_FLOAT *out);                                   /* m */
tg_status tg_msl_height(TG_FLOAT ellipsoidal_height_m, TG_FLOAT geoid_undulation_m,
                        TG_FLOAT *out);                                         /* m */

/* ---- moisture.py ------------------------------------------------------- */
tg_status tg_saturation_vapour_pressure(TG_FLOAT t_k, int ice, TG_FLOAT *out);      /* Pa */
tg_status tg_enhancement_factor(TG_FLOAT p_pa, TG_FLOAT *out);                      /* 1 */
tg_status tg_vapour_pressure(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice,
                             TG_FLOAT *out);                                        /* Pa */
tg_status tg_vapour_pressure_from_dew_point(TG_FLOAT td_k, TG_FLOAT p_pa, int ice,
                                            TG_FLOAT *out);                         /* Pa */
tg_status tg_dew_point(TG_FLOAT e_pa, TG_FLOAT p_pa, int ice, TG_FLOAT *out);       /* K */
/* dew_point_from_rh(t_k, rh_pct, ice): TG_RANGE also for rh_pct <= 0 (dry air) */
tg_status tg_dew_point_from_rh(TG_FLOAT t_k, TG_FLOAT rh_pct, int ice, TG_FLOAT *out);   /* K */
tg_status tg_mixing_ratio(TG_FLOAT e_pa, TG_FLOAT p_pa, TG_FLOAT *out);             /* kg/kg */
tg_status tg_specific_humidity(TG_FLOAT e_pa, TG_FLOAT p_pa, TG_FLOAT *out);        /* kg/kg */
tg_status tg_virtual_temperature(TG_FLOAT t_k, TG_FLOAT p_pa, TG_FLOAT rh_pct, int ice,
                                 TG_FLOAT *out);                                    /* K */
tg_status tg_virtual_temperature_from_mixing_ratio(TG_FLOAT t_k, TG_FLOAT w_kg_kg,
                                                   TG_FLOAT *out);                  /* K */

/* ---- layers.py --------------------------------------------------------- */
tg_status tg_ln_ratio(TG_FLOAT p1_pa, TG_FLOAT p2_pa, TG_FLOAT *out);                /* 1 */
tg_status tg_layer_thickness(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa, TG_FLOAT tv_lower_k,
                             TG_FLOAT tv_upper_k, TG_FLOAT *out);                   /* gpm */
tg_status tg_layer_thickness_lapse(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa,
                                   TG_FLOAT tv_lower_k, TG_FLOAT lapse_k_gpm,
                                   TG_FLOAT *out);                                  /* gpm */
tg_status tg_pressure_across_layer(TG_FLOAT p_lower_pa, TG_FLOAT thickness_gpm,
                                   TG_FLOAT tv_mean_k, TG_FLOAT *out);              /* Pa */
tg_status tg_layer_mean_tv(TG_FLOAT p_lower_pa, TG_FLOAT p_upper_pa, TG_FLOAT thickness_gpm,
                           TG_FLOAT *out);                                          /* K */

/* ---- standard.py (U.S. Standard Atmosphere 1976) ----------------------- */
tg_status tg_standard_temperature(TG_FLOAT gph_m, TG_FLOAT *out);                   /* K */
tg_status tg_standard_pressure(TG_FLOAT gph_m, TG_FLOAT *out);                      /* Pa */
tg_status tg_pressure_altitude(TG_FLOAT p_pa, TG_FLOAT *out);                       /* gpm */
tg_status tg_ussa76_geopotential_height(TG_FLOAT z_m, TG_FLOAT *out);               /* gpm */
tg_status tg_ussa76_geometric_height(TG_FLOAT gph_m, TG_FLOAT *out);                /* m */

/* ---- sealevel.py: Pa (indicated_altitude: m) ---------------------------- */
/* rh_pct, lat_deg: NULL = None (dry air; height_m used as gpm). */
tg_status tg_sea_level_pressure(TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT height_m,
                                const TG_FLOAT *rh_pct, const TG_FLOAT *lat_deg, int ice,
                                TG_FLOAT *out);
tg_status tg_qfe(TG_FLOAT p_pa, TG_FLOAT barometer_above_field_m, TG_FLOAT t_k,
                 const TG_FLOAT *rh_pct, int ice, TG_FLOAT *out);
tg_status tg_qnh(TG_FLOAT p_pa, TG_FLOAT elevation_m, TG_FLOAT *out);
tg_status tg_indicated_altitude(TG_FLOAT p_pa, TG_FLOAT qnh_pa, TG_FLOAT *out);
/* ---- highsite.py (in sealevel.c): Pa, gpm -------------------------------- */
/* standard_surface_pa(height_m): *out the surface, Pa, NaN for None (below
 * highsite.HIGH_STATION_M, 800 m) */
tg_status tg_standard_surface_pa(TG_FLOAT height_m, TG_FLOAT *out);
/* isobaric_height(p_pa, t_k, height_m, iso_p_pa, rh_pct, lat_deg, ice): gpm */
tg_status tg_isobaric_height(TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT height_m, TG_FLOAT iso_p_pa,
                             const TG_FLOAT *rh_pct, const TG_FLOAT *lat_deg, int ice,
                             TG_FLOAT *out);

/* ---- column.py: the streaming Column ------------------------------------ */
/* Event bits, flags and phases: the values of column.py (EV_*, FL_*, PH_*;
 * column.c stops the build if they drift). */
#define TG_EV_LEVEL 1
#define TG_EV_TROPOPAUSE 2
#define TG_EV_BURST 4
#define TG_EV_LANDED 8
#define TG_EV_LAUNCH 16
#define TG_EV_FLOAT 32
#define TG_FL_DRY 1
#define TG_FL_HELD_MIXING 2
#define TG_FL_NO_TIME 4
#define TG_FL_DESCENT 8
#define TG_FL_SAME_P 16
#define TG_FL_NO_GPS 32
#define TG_FL_CAPPED 64
#define TG_FL_REPLACED 128
#define TG_FL_TAKEOVER 256
#define TG_FL_SAME_TIME 512
#define TG_PH_WAIT 0
#define TG_PH_ASCENT 1
#define TG_PH_FLOAT 2
#define TG_PH_DESCENT 3
#define TG_PH_LANDED 4
/* column.COUNT_MAX: count, rejected and retracted stop here */
#define TG_COUNT_MAX 1073741823

/* Time stamps and the event clocks made of them are double in every build
 * (also with TG_FLOAT float); NaN stands for None (no time stamp). A
 * difference of two stamps is taken in double and only then becomes a
 * TG_FLOAT (Python keeps int stamps as ints and subtracts them exactly: for
 * whole-number stamps below 2^53 double subtraction is exact too, so integer
 * millisecond ticks with a 1.7e12 origin keep their 1 ms in the float build;
 * see README.md, "Time"). */
typedef double tg_time;

struct tg_column;
/* on_event(column, bits, ctx): called once per feed with events, after the
 * reading is fully committed (Python: on_event(column, bits); ctx is C's
 * closure). A reading that crosses several mandatory levels sets level_* to
 * the highest; levels[0 .. levels_n - 1] are all of them, lowest first
 * (tg_column.levels). */
typedef void (*tg_column_event_fn)(struct tg_column *col, int bits, void *ctx);

/* The Column constructor's keyword arguments, in Python's order, names and
 * units. tg_column_config_defaults() fills in Python's defaults (generated
 * from Column.__init__ into tg_tables.h, as are the ranges). The settings
 * Python takes as None are NaN here: anchor_p_pa (no anchor), max_rate_m_s
 * (no rate check), start_guard_m (no guard), geoid_undulation_m (gps_m is
 * above mean sea level), max_t_step_k (no temperature-step check). Flags
 * (ice, dry_fallback, track_sigma) must be 0 or 1 (errors.check_flag). */
typedef struct tg_column_config {
    TG_FLOAT lat_deg, start_height_m, anchor_p_pa;
    const tg_ellipsoid *ellipsoid;   /* NULL = &tg_wgs84 */
    int ice, dry_fallback;
    TG_FLOAT sigma_p_pa, sigma_t_k, sigma_rh_pct, bias_p_pa, bias_t_k, bias_rh_pct;
    TG_FLOAT max_rate_m_s, start_guard_m, time_unit_s, smooth_s, launch_gpm, burst_drop_gpm;
    TG_FLOAT burst_rate_gpm_s;
    int32_t burst_readings;
    TG_FLOAT float_s, float_band_gpm, landing_s, landing_band_gpm;
    TG_FLOAT tropopause_max_p_pa, tropopause_layer_gpm, rh_tol_pct;
    int32_t takeover_readings;
    int track_sigma;
    tg_column_event_fn on_event;
    void *on_event_ctx;
    TG_FLOAT geoid_undulation_m, max_t_step_k, max_t_rate_k_s, max_t_gradient_k_gpm;
    TG_FLOAT launch_rate_gpm_s;
} tg_column_config;

/* Why the latest rejected reading was rejected (Python: ReadingError.reason). */
typedef enum tg_reason {
    TG_REASON_NONE = 0, TG_REASON_NUMBER, TG_REASON_PRESSURE, TG_REASON_TEMPERATURE,
    TG_REASON_HUMIDITY, TG_REASON_TIME, TG_REASON_RATE, TG_REASON_GPS
} tg_reason;
const char *tg_reason_name(tg_reason reason);   /* "number", "pressure", ... */

/* A new height node (Python: the 6-tuple of Column._nodes). */
typedef struct tg_nodes {
    TG_FLOAT g, h, k1, k2, lo, hi;
} tg_nodes;

/* One reading and the integration state after it (Python: column._Rec, the
 * same field names; see its docstring). tsr, tr, t0 are time stamps as given
 * (NaN: None); gpsr and gps_given hold the GPS as given (gps_given 0: None;
 * gpsr NaN: no fix); q is moisture.rh_q at the reading; half and lay the
 * layer's (Rd/g0)/2 ln(p0/p) and Tv0 + Tv for the uncertainty step; nodes
 * holds a new height node while has_nodes is 1. */
typedef struct tg_rec {
    TG_FLOAT p_pa, t_k, rh_pct, tv_k, gph_m, c, height_m, rdh, rdt, q, half, lay;
    tg_time tsr, tr, t0;
    TG_FLOAT dt, g_t, h_tm, h_rh, h_t, h_p, w, gps_m, gps_diff_m;
    TG_FLOAT var_done, var_p, ct, tm2, s2, p_start, sum_rh, sum_p, slope, sum_hum, tvh;
    TG_FLOAT gpsr;
    int32_t gps_given, flags, gps_here, has_nodes;
    tg_nodes nodes;
} tg_rec;

/* The column. Settings and event state are the Python attributes of the same
 * name (private ones without their leading underscore; NaN where Python has
 * nan or None); the attributes Python computes from the latest record
 * (p_pa, gph_m, height_m, rate_m_s, sigma_m, ...) are the tg_column_<name>
 * functions below. Fixed size, no allocation, no pointer into itself (the
 * records are addressed by index): a tg_column can be a static or a stack
 * variable and may be copied. The integers are int32_t, the checkpoint's
 * int32s ('<i'), whatever the width of int and long. */
typedef uint16_t tg_recoff;   /* a byte offset into tg_column.rec */

typedef struct tg_column {
    /* settings (Column.__init__) */
    TG_FLOAT lat_deg, start_height_m, anchor_p_pa;
    const tg_ellipsoid *ellipsoid;
    int32_t ellipsoid_code, ice, dry_fallback, burst_readings, takeover_readings, track_sigma;
    TG_FLOAT sigma_p_pa, sigma_t_k, sigma_rh_pct, bias_p_pa, bias_t_k, bias_rh_pct;
    TG_FLOAT max_rate_m_s, start_guard_m, time_unit_s, smooth_s, launch_gpm, burst_drop_gpm;
    TG_FLOAT burst_rate_gpm_s, float_s, float_band_gpm, landing_s, landing_band_gpm;
    TG_FLOAT tropopause_max_p_pa, tropopause_layer_gpm, rh_tol_pct;
    TG_FLOAT geoid_undulation_m, max_t_step_k, max_t_rate_k_s, max_t_gradient_k_gpm;
    TG_FLOAT launch_rate_gpm_s;
    tg_column_event_fn on_event;
    void *on_event_ctx;
    /* derived settings */
    TG_FLOAT pc[12];                  /* the geopotential series at lat_deg (potential.series) */
    TG_FLOAT a_m, g_start, anchor, max_rate, unit, float_u, land_u, kz, kn, t_lim;
    TG_FLOAT spk2, st2;
    /* counters */
    int32_t count, rejected, retracted;
    tg_reason reason;                 /* of the latest rejection (C only; Python: ReadingError.reason) */
    /* event state (column._ST_F, _ST_I); the clocks are tg_time */
    int32_t phase, has_b, e_n, lvl, burst_n, tb_n, tp_state;
    int32_t t0_int, t0_hi, t0_lo;     /* the first stamp's int32 halves (written by to_bytes) */
    TG_FLOAT smooth_gph_m, f_v, max_gph_m, launch_time_s, burst_gph_m, burst_time_s, burst_p_pa;
    TG_FLOAT float_gph_m, float_time_s, landing_time_s, level_p_pa, level_gph_m, level_height_m;
    TG_FLOAT level_t_k, tropopause_p_pa, tropopause_gph_m, tropopause_t_k, tropopause_time_s;
    TG_FLOAT e_p, e_g, e_t, f_dt, f_lo, f_hi, f_a, f_b, f_cx, f_cv, f_bv, max_p, min_g, launch_line;
    TG_FLOAT fl_g, fl_lo, fl_hi, land_lo, land_hi, tb_top, tb_g0, tb_g1, tb_st, tb_th;
    TG_FLOAT tp_g, tp_top, tp_th, tp_p, tp_t;
    tg_time max_clk, fl_clk, fl_end, land_end, tb_c0, tb_c1, tp_clk;
    TG_FLOAT n_g, n_h, n_k1, n_k2, n_lo, n_hi, var_anchor;
    /* the mandatory levels of the latest EV_LEVEL, lowest first (Python: the
     * list levels of (p_pa, gph_m, height_m, t_k)), levels_n of them; not in
     * checkpoints (none after a restore) */
    TG_FLOAT levels[16][4];
    int32_t levels_n;
    /* the records: at byte offset h of rec the latest accepted reading, at
     * b the one before, at n, m and k scratch, at cr the recovery run's latest
     * reading (offsets, i * sizeof(tg_rec), not pointers: the column may be
     * copied) */
    tg_rec rec[6];
    tg_recoff h, b, n, m, k, cr;
    /* the recovery memory (not in checkpoints) */
    int32_t run, run_b;
    tg_reason why, run_why;           /* Python: _why, _run_why (C keeps the reason only) */
    TG_FLOAT run_f;                   /* Python: _run_f */
} tg_column;

/* a macro: with another TG_FLOAT than the library's it writes nothing (and
 * tg_column_init then returns TG_BUILD) */
void tg_column_config_defaults_checked(tg_column_config *cfg, TG_FLOAT lat_deg, size_t cfg_size);
#define tg_column_config_defaults(cfg, lat_deg) \
    tg_column_config_defaults_checked((cfg), (lat_deg), sizeof(tg_column_config))
/* Column(...): TG_RANGE for a bad setting (col untouched); TG_BUILD (col
 * untouched) if the caller's TG_FLOAT differs from the library's. A macro:
 * the real function is tg_column_init_checked. */
tg_status tg_column_init_checked(tg_column *col, const tg_column_config *cfg, size_t col_size,
                                 size_t cfg_size, size_t float_size);
#define tg_column_init(col, cfg) \
    tg_column_init_checked((col), (cfg), sizeof(tg_column), sizeof(tg_column_config), \
                           sizeof(TG_FLOAT))
/* col.feed(p_pa, t_k, rh_pct, time_s, gps_m): rh_pct NULL for None;
 * time_s NaN for None (an infinite time_s is rejected as 'number'); gps_m
 * NULL for None, pointing to NaN for "no fix". A time_s beyond +-2^62 is
 * rejected as 'time' (as Python's, int or float; a double holds every whole
 * stamp below 2^53 exactly, an int64 tick counter converted to double beyond
 * that is rounded to the double's spacing). On TG_OK *bits holds the event
 * bits; on TG_READING the reading was rejected, col->reason says why, and the
 * results are unchanged (rejected, retracted and the recovery memory move,
 * as in Python); *bits = 0. */
tg_status tg_column_feed(tg_column *col, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                         tg_time time_s, const TG_FLOAT *gps_m, int *bits);
/* col.reanchor_gps(sigma_gps_m): *out = the shift applied, m. TG_STATE when
 * the latest reading has no gps_m, TG_RANGE for a bad sigma_gps_m. */
tg_status tg_column_reanchor_gps(tg_column *col, TG_FLOAT sigma_gps_m, TG_FLOAT *out);

/* The properties of Column (NaN where not known yet). */
TG_FLOAT tg_column_p_pa(const tg_column *col);
TG_FLOAT tg_column_t_k(const tg_column *col);
TG_FLOAT tg_column_tv_k(const tg_column *col);
TG_FLOAT tg_column_rh_pct(const tg_column *col);
TG_FLOAT tg_column_time_s(const tg_column *col);        /* s since time_origin */
tg_time tg_column_time_origin(const tg_column *col);    /* NaN: None */
TG_FLOAT tg_column_gph_m(const tg_column *col);
TG_FLOAT tg_column_height_m(const tg_column *col);
TG_FLOAT tg_column_rate_m_s(const tg_column *col);
int32_t tg_column_flags(const tg_column *col);
TG_FLOAT tg_column_gps_m(const tg_column *col);
TG_FLOAT tg_column_gps_diff_m(const tg_column *col);
TG_FLOAT tg_column_noise_gph_m(const tg_column *col);
TG_FLOAT tg_column_smooth_rate_gpm_s(const tg_column *col);
TG_FLOAT tg_column_sigma_random_m(const tg_column *col);
TG_FLOAT tg_column_sigma_bias_m(const tg_column *col);
TG_FLOAT tg_column_sigma_m(const tg_column *col);

/* Checkpoints, byte for byte Column.to_bytes (tinygeo/checkpoint.py's frame:
 * magic "TGCK", version, payload length, the settings and state as
 * little-endian IEEE doubles and int32s, CRC-32): a blob written by C is read
 * by Python's Column.from_bytes and the other way round. Time stamps are
 * stored relative to the first one; the first one as a double and, when it
 * is a whole number of magnitude below 2^62, also as two int32 halves
 * (Python: when it is an int; see README.md). Needs IEEE 754 binary64 doubles
 * for the packing (a float build converts each value to double, exactly).
 * on_event is not stored: pass it to tg_column_from_bytes. */
#define TG_CHECKPOINT_BYTES 1319
/* col.to_bytes(): writes TG_CHECKPOINT_BYTES bytes (TG_RANGE if size is
 * smaller); like Python it sets col->t0_int, t0_hi, t0_lo on the way */
tg_status tg_column_to_bytes(tg_column *col, unsigned char *buf, size_t size);
/* Column.from_bytes(blob, on_event): TG_CHECKPOINT and col untouched for a
 * blob Python refuses; TG_BUILD as tg_column_init (a macro too) */
tg_status tg_column_from_bytes_checked(tg_column *col, const unsigned char *blob, size_t n,
                                       tg_column_event_fn on_event, void *on_event_ctx,
                                       size_t col_size, size_t float_size);
#define tg_column_from_bytes(col, blob, n, on_event, on_event_ctx) \
    tg_column_from_bytes_checked((col), (blob), (n), (on_event), (on_event_ctx), \
                                 sizeof(tg_column), sizeof(TG_FLOAT))

/* ---- station.py: the Station (station.c) -------------------------------- */
/* Event bits and flags: the values of station.py (EV_*, FL_*; station.c stops
 * the build if they drift). */
#define TG_STATION_EV_AVERAGE 1
#define TG_STATION_EV_FLAGS 2
#define TG_STATION_EV_GAP 4
#define TG_STATION_EV_RESTART 8
#define TG_STATION_FL_STUCK_P 1
#define TG_STATION_FL_STUCK_T 2
#define TG_STATION_FL_STUCK_RH 4
#define TG_STATION_FL_GAP 8
#define TG_STATION_FL_TREND_GAP 16
#define TG_STATION_FL_NO_T12 32
#define TG_STATION_FL_FEW 64
#define TG_STATION_FL_TAKEOVER 128
#define TG_STATION_FL_CLOCK_HELD 256
#define TG_STATION_FL_CLOCK_STUCK 512
#define TG_STATION_FL_MSLP_ODD 1024

/* The ring of averages, fixed at compile time: TG_STATION_RING slots hold 24
 * hours and the latest average for average_s >= 86400 / (TG_STATION_RING - 1).
 * The default, 1441, is the largest ring Station allows (average_s = 60 s);
 * a firmware that averages 600 s or longer may build with
 * -DTG_STATION_RING=145 (tg_station_init refuses a shorter average_s with
 * TG_RANGE). The mean12 ring of temperatures has (TG_STATION_RING - 1)/2 + 1. */
#ifndef TG_STATION_RING
#define TG_STATION_RING 1441
#endif
#define TG_STATION_RING12 ((TG_STATION_RING - 1) / 2 + 1)

struct tg_station;
/* on_event(station, bits, ctx): called after a feed that raised events */
typedef void (*tg_station_event_fn)(struct tg_station *st, int bits, void *ctx);

/* The Station constructor's arguments, in Python's order, names and units;
 * tg_station_config_defaults() fills in Python's defaults (generated from
 * Station.__init__ into tg_tables.h). The settings Python takes as None are
 * NaN here (max_p_step_pa, max_t_step_k, max_rh_step_pct, guard_m,
 * iso_p_pa), and 0 for stuck_readings. Flags (ice, mean12) are 0 or 1. */
typedef struct tg_station_config {
    TG_FLOAT height_m, lat_deg, average_s;
    int ice;
    int32_t min_readings, stuck_readings;
    TG_FLOAT max_p_step_pa, max_p_rate_pa_s, max_t_step_k, max_t_rate_k_s, max_rh_step_pct;
    TG_FLOAT max_rh_rate_pct_s, guard_m, steady_pa, max_gap_s;
    int mean12;
    TG_FLOAT iso_p_pa;
    int32_t takeover_readings;
    tg_station_event_fn on_event;
    void *on_event_ctx;
} tg_station_config;

/* The station: the Python attributes of the same name (private ones without
 * their leading underscore; _int is int_), NaN where Python has nan or None,
 * code -1 for a tendency_code of None. Fixed size, no allocation, no pointer
 * into itself: it may be a static variable and may be copied. Time stamps
 * (t0, ts, tsrh, rn_ts, rn_tsrh), the steps between them (dtl, rn_dt) and
 * phase are tg_time (double) in every build; the integers are int32_t, the
 * checkpoint's int32s. */
typedef struct tg_station {
    /* settings (Station.__init__) */
    TG_FLOAT height_m, lat_deg, average_s, max_p_step_pa, max_p_rate_pa_s, max_t_step_k;
    TG_FLOAT max_t_rate_k_s, max_rh_step_pct, max_rh_rate_pct_s, guard_m, steady_pa, max_gap_s;
    TG_FLOAT iso_set, iso_p_pa;
    int32_t ice, min_readings, stuck_readings, stuck_set, mean12, takeover_readings;
    tg_station_event_fn on_event;
    void *on_event_ctx;
    /* derived settings */
    int32_t avg, stuck, m3, n, n12;
    TG_FLOAT gph, p_lo, p_hi, ps, ts_step, rs;
    tg_time clock_s;                  /* the clock step, max_gap_s + average_s, s */
    /* results of the latest average */
    TG_FLOAT p_pa, t_k, rh_pct, dew_point_k, mslp_pa, qnh_pa, iso_gph_m, tendency_3h_pa;
    TG_FLOAT change_24h_pa;
    int32_t code, flags, gap_s, average_readings, count, rejected, averages, missing;
    tg_reason reason;                 /* of the latest rejection (C only; Python: ReadingError.reason) */
    /* the clock and the slots */
    tg_time t0, phase, ts, tsrh;
    tg_time dtl;                      /* the latest step in time between accepted readings, s */
    int32_t k, kring, klast, t0_int, t0_hi, t0_lo;
    int32_t runts;                    /* readings in a row with the same stamp */
    /* the average being built, the stuck test */
    TG_FLOAT rp, sp, cp, rt, st, rr, sr, lp, lt, lrh;
    int32_t np, nt, nr, nslot, sflags, runp, runt, runr, inp, int_, inr;
    /* the recovery memory (kept in checkpoints) */
    int32_t run, rn_time;
    TG_FLOAT rn_p, rn_t, rn_rh;
    tg_time rn_ts, rn_tsrh;
    tg_time rn_dt;                    /* the run's latest step in time, s */
    /* the rings: ring_p[0 .. n-1], ring_t[0 .. n12-1] (mean12) */
    TG_FLOAT ring_p[TG_STATION_RING];
    TG_FLOAT ring_t[TG_STATION_RING12];
} tg_station;

/* a macro: with another TG_FLOAT than the library's it writes nothing (and
 * tg_station_init then returns TG_BUILD) */
void tg_station_config_defaults_checked(tg_station_config *cfg, TG_FLOAT height_m, TG_FLOAT lat_deg,
                                        size_t cfg_size);
#define tg_station_config_defaults(cfg, height_m, lat_deg) \
    tg_station_config_defaults_checked((cfg), (height_m), (lat_deg), sizeof(tg_station_config))
/* Station(...): TG_RANGE for a bad setting, or an average_s whose ring is
 * longer than TG_STATION_RING (st untouched); TG_BUILD (st untouched) if the
 * caller's TG_FLOAT or TG_STATION_RING differs from the library's. A macro:
 * the real function is tg_station_init_checked. */
tg_status tg_station_init_checked(tg_station *st, const tg_station_config *cfg, size_t st_size,
                                  size_t cfg_size, size_t float_size, long ring);
#define tg_station_init(st, cfg) \
    tg_station_init_checked((st), (cfg), sizeof(tg_station), sizeof(tg_station_config), \
                            sizeof(TG_FLOAT), (long)(TG_STATION_RING))
/* st.feed(p_pa, t_k, rh_pct, time_s): rh_pct NULL for None, time_s NaN for
 * None ('time'; Python rejects a nan stamp as 'number'), one of magnitude
 * 2^62 s or more (or infinite) is 'number'. TG_OK: *bits the event bits. TG_READING: rejected, st->reason
 * says why, nothing changed but rejected and the recovery memory; *bits = 0. */
tg_status tg_station_feed(tg_station *st, TG_FLOAT p_pa, TG_FLOAT t_k, const TG_FLOAT *rh_pct,
                          tg_time time_s, int *bits);
/* st.time_s: the end of the latest average (NaN before one) */
tg_time tg_station_time_s(const tg_station *st);
/* st.tendency_code: 0..8, -1 for None */
int tg_station_tendency_code(const tg_station *st);
/* station.tendency_code(trace_pa, steady_pa): *code 0..8 or -1 (None); NaN
 * for a missing value of the trace; TG_RANGE for trace_pa NULL with n > 0 */
tg_status tg_tendency_code(const TG_FLOAT *trace_pa, int32_t n, TG_FLOAT steady_pa, int *code);
/* Checkpoints, byte for byte Station.to_bytes (checkpoint.py's frame, magic
 * "TGST"); the length depends on average_s and mean12 (the ring):
 * tg_station_checkpoint_bytes(st), at most TG_STATION_CHECKPOINT_MAX. */
#define TG_STATION_CHECKPOINT_MAX (7 + 8 * (42 + TG_STATION_RING + TG_STATION_RING12) + 4 * 33 + 4)
size_t tg_station_checkpoint_bytes(const tg_station *st);
/* st.to_bytes(): writes tg_station_checkpoint_bytes(st) bytes (TG_RANGE if size is smaller) */
tg_status tg_station_to_bytes(const tg_station *st, unsigned char *buf, size_t size);
/* Station.from_bytes(blob, on_event): TG_CHECKPOINT and st untouched for a
 * blob Python refuses (and for a ring longer than TG_STATION_RING); TG_BUILD
 * as tg_station_init (a macro too) */
tg_status tg_station_from_bytes_checked(tg_station *st, const unsigned char *blob, size_t n,
                                        tg_station_event_fn on_event, void *on_event_ctx,
                                        size_t st_size, size_t float_size, long ring);
#define tg_station_from_bytes(st, blob, n, on_event, on_event_ctx) \
    tg_station_from_bytes_checked((st), (blob), (n), (on_event), (on_event_ctx), \
                                  sizeof(tg_station), sizeof(TG_FLOAT), (long)(TG_STATION_RING))

/* ---- record.py: the table of per-reading results (record.c) -------------- */
/* record.MAGIC ("# tinygeo table 1") and record.HEADER (the column names,
 * TAB-separated): the first line and the header line of a table. */
extern const char tg_record_magic[];
extern const char tg_record_header[];
/* Each writes its text into buf like snprintf (no newline) and returns the
 * length of the whole text: a result >= size means it was cut. */
/* record.events_text(bits, level_p_pa): "-" when no bit is set; n_levels
 * pressures for the level bit (lowest first) */
int tg_record_events_text(int bits, const TG_FLOAT *level_p_pa, int n_levels, char *buf,
                          size_t size);
/* record.row(...): NaN for a value not given */
int tg_record_row(int32_t line, TG_FLOAT time_s, TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT rh_pct,
                  TG_FLOAT td_k, TG_FLOAT gps_m, TG_FLOAT gph_m, TG_FLOAT height_m,
                  TG_FLOAT rate_m_s, TG_FLOAT sigma_m, int32_t flags, const char *events,
                  char *buf, size_t size);
/* record.column_row(line, col, bits, rh_pct, gps_m, td_k): NULL for None */
int tg_record_column_row(int32_t line, const tg_column *col, int bits, const TG_FLOAT *rh_pct,
                         const TG_FLOAT *gps_m, const TG_FLOAT *td_k, char *buf, size_t size);
/* record.site_line(col) */
int tg_record_site_line(const tg_column *col, char *buf, size_t size);
/* record.end_line(rows, col): after the last row ("#: end rows=... count=...") */
int tg_record_end_line(int32_t rows, const tg_column *col, char *buf, size_t size);
/* record.resume_line(line): "#: resume line=N whole", written by a logger that goes
 * on from a checkpoint taken before reading N (earlier rows from N on are void) */
int tg_record_resume_line(int32_t line, char *buf, size_t size);

#ifdef __cplusplus
}
#endif

#endif /* TINYGEO_H */
