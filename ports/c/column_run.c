/* column_run.c -- drive a tg_column from a text stream, for
 * tests/test_c_port.py (which runs the same stream through Python's Column).
 *
 * Usage: column_run [-s] [-r] < commands
 *   -s: print the checkpoint blob after every feed too ("b <hex>": the whole
 *       state, compared byte for byte);
 *   -r: print the table record (record.c) too: "m <magic>", "h <header>" and
 *       "s <site line>" after init, "w <row>" after every accepted reading
 *       (tg_record_column_row with the reading's number, its rh_pct and gps_m),
 *       "u <resume line>" after a load that succeeded (tg_record_resume_line
 *       with the number of the next feed), and "z <end line>" at the end of
 *       the input (tg_record_end_line with the number of rows written since
 *       the latest init);
 *   -l: print the "r" line of the last command only (long streams).
 *
 * Input, one command per line ("-" stands for Python's None):
 *   init <lat_deg> [<name>=<value> ...]  tg_column_init with Column's keyword
 *        names (ellipsoid=0|1 for WGS84|GRS80; flags 0|1; "-" = None = NaN)
 *   feed <p_pa> <t_k> <rh_pct|-> <time_s|-> <gps_m|-|nan>
 *   reanchor <sigma_gps_m>
 *   save                 prints "b <hex of tg_column_to_bytes>" first
 *   load <hex>           tg_column_from_bytes (on_event passed again)
 * Output: "e <count> <bits> <level_p_pa>" for every on_event call, and one
 * line per command
 *   r <status> <reason> <bits or shift> <the attributes of ATTRS, %.17g>
 * (tests/test_c_port.py, COL_ATTRS, has the same list). Exit status 2 on a
 * malformed line.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

static int every_blob, records, last_only;
static char last_line[4096];

static void on_event(tg_column *col, int bits, void *ctx)
{
    (void)ctx;
    printf("e %ld %d %.17g\n", (long)col->count, bits, (double)col->level_p_pa);
}

/* "-" -> NaN (None); else a number (strtod reads "nan", "inf") */
static double num(const char *tok)
{
    if (strcmp(tok, "-") == 0)
        return NAN;
    return strtod(tok, NULL);
}

static void show(const tg_column *c, tg_status st, double res)
{
    const double v[] = {
        (double)c->count, (double)c->rejected, (double)c->retracted, (double)tg_column_flags(c),
        (double)c->phase, (double)tg_column_p_pa(c), (double)tg_column_t_k(c),
        (double)tg_column_tv_k(c), (double)tg_column_rh_pct(c), (double)tg_column_time_s(c),
        (double)tg_column_gph_m(c), (double)tg_column_height_m(c), (double)tg_column_rate_m_s(c),
        (double)tg_column_noise_gph_m(c), (double)c->smooth_gph_m,
        (double)tg_column_smooth_rate_gpm_s(c), (double)c->max_gph_m, (double)c->launch_time_s,
        (double)c->burst_gph_m, (double)c->burst_time_s, (double)c->burst_p_pa,
        (double)c->float_gph_m, (double)c->float_time_s, (double)c->landing_time_s,
        (double)c->level_p_pa, (double)c->level_gph_m, (double)c->level_height_m,
        (double)c->level_t_k, (double)c->tropopause_p_pa, (double)c->tropopause_gph_m,
        (double)c->tropopause_t_k, (double)c->tropopause_time_s, (double)tg_column_gps_m(c),
        (double)tg_column_gps_diff_m(c), (double)tg_column_sigma_m(c),
        (double)tg_column_sigma_random_m(c), (double)tg_column_sigma_bias_m(c),
        tg_column_time_origin(c)
    };
    size_t i, len;
    len = (size_t)sprintf(last_line, "r %s %s %.17g", tg_status_name(st), tg_reason_name(c->reason), res);
    for (i = 0; i < sizeof v / sizeof v[0]; i++)
        len += (size_t)sprintf(last_line + len, " %.17g", v[i]);
    if (!last_only)
        printf("%s\n", last_line);
}

static void blob(tg_column *col)
{
    unsigned char buf[TG_CHECKPOINT_BYTES];
    size_t i;
    tg_column_to_bytes(col, buf, sizeof buf);
    printf("b ");
    for (i = 0; i < sizeof buf; i++)
        printf("%02x", buf[i]);
    printf("\n");
}

/* one name=value of init into the config; 0 for an unknown name */
static int setting(tg_column_config *cfg, const char *name, const char *val)
{
    double x = num(val);
#define F(n) if (strcmp(name, #n) == 0) { cfg->n = (TG_FLOAT)x; return 1; }
#define I(n) if (strcmp(name, #n) == 0) { cfg->n = (int)x; return 1; }
    F(start_height_m) F(anchor_p_pa) F(sigma_p_pa) F(sigma_t_k) F(sigma_rh_pct) F(bias_p_pa)
    F(bias_t_k) F(bias_rh_pct) F(max_rate_m_s) F(start_guard_m) F(time_unit_s) F(smooth_s)
    F(launch_gpm) F(burst_drop_gpm) F(burst_rate_gpm_s) F(float_s) F(float_band_gpm) F(landing_s)
    F(landing_band_gpm) F(tropopause_max_p_pa) F(tropopause_layer_gpm) F(rh_tol_pct)
    F(geoid_undulation_m) F(max_t_step_k) F(max_t_rate_k_s) F(max_t_gradient_k_gpm) F(launch_rate_gpm_s)
    I(ice) I(dry_fallback) I(track_sigma)
#undef F
#undef I
    if (strcmp(name, "burst_readings") == 0) {
        cfg->burst_readings = (int32_t)x;
        return 1;
    }
    if (strcmp(name, "takeover_readings") == 0) {
        cfg->takeover_readings = (int32_t)x;
        return 1;
    }
    if (strcmp(name, "ellipsoid") == 0) {
        cfg->ellipsoid = x == 1.0 ? &tg_grs80 : &tg_wgs84;
        return 1;
    }
    return 0;
}

int main(int argc, char **argv)
{
    static tg_column col;
    static char line[16384];
    int lineno = 0;
    int i, n_feed = 0;
    int32_t n_rows = -1;   /* rows written since the latest init (-1: none yet) */
    for (i = 1; i < argc; i++) {
        every_blob |= strcmp(argv[i], "-s") == 0;
        records |= strcmp(argv[i], "-r") == 0;
        last_only |= strcmp(argv[i], "-l") == 0;
    }
    while (fgets(line, sizeof line, stdin) != NULL) {
        char *tok[64];
        int n = 0;
        char *s = strtok(line, " \t\r\n");
        lineno++;
        while (s != NULL && n < 64) {
            tok[n++] = s;
            s = strtok(NULL, " \t\r\n");
        }
        if (n == 0)
            continue;
        if (strcmp(tok[0], "init") == 0 && n >= 2) {
            tg_column_config cfg;
            tg_status st;
            tg_column_config_defaults(&cfg, (TG_FLOAT)num(tok[1]));
            for (i = 2; i < n; i++) {
                char *eq = strchr(tok[i], '=');
                if (eq == NULL)
                    break;
                *eq = '\0';
                if (!setting(&cfg, tok[i], eq + 1))
                    break;
            }
            if (i < n) {
                fprintf(stderr, "column_run: line %d: bad setting %s\n", lineno, tok[i]);
                return 2;
            }
            cfg.on_event = on_event;
            st = tg_column_init(&col, &cfg);
            if (records && st == TG_OK) {
                char text[512];
                tg_record_site_line(&col, text, sizeof text);
                printf("m %s\nh %s\ns %s\n", tg_record_magic, tg_record_header, text);
                n_rows = 0;
            }
            show(&col, st, 0.0);
        } else if (strcmp(tok[0], "feed") == 0 && n == 6) {
            TG_FLOAT rh = (TG_FLOAT)num(tok[3]), gps = (TG_FLOAT)num(tok[5]);
            int has_rh = strcmp(tok[3], "-") != 0, has_gps = strcmp(tok[5], "-") != 0;
            int bits = -1;
            tg_status st = tg_column_feed(&col, (TG_FLOAT)num(tok[1]), (TG_FLOAT)num(tok[2]),
                                          has_rh ? &rh : NULL, num(tok[4]),
                                          has_gps ? &gps : NULL, &bits);
            if (every_blob)
                blob(&col);
            if (records && st == TG_OK) {
                char text[512];
                tg_record_column_row(n_feed, &col, bits, has_rh ? &rh : NULL, has_gps ? &gps : NULL,
                                     NULL, text, sizeof text);
                printf("w %s\n", text);
                n_rows++;
            }
            n_feed++;
            show(&col, st, (double)bits);
        } else if (strcmp(tok[0], "reanchor") == 0 && n == 2) {
            TG_FLOAT shift;
            tg_status st = tg_column_reanchor_gps(&col, (TG_FLOAT)num(tok[1]), &shift);
            show(&col, st, (double)shift);
        } else if (strcmp(tok[0], "save") == 0 && n == 1) {
            blob(&col);
            show(&col, TG_OK, 0.0);
        } else if (strcmp(tok[0], "load") == 0 && n == 2) {
            static unsigned char buf[4096];
            size_t len = strlen(tok[1]) / 2, i;
            tg_status st;
            if (len > sizeof buf) {
                fprintf(stderr, "column_run: line %d: blob too long\n", lineno);
                return 2;
            }
            for (i = 0; i < len; i++) {
                unsigned x;
                if (sscanf(tok[1] + 2 * i, "%2x", &x) != 1) {
                    fprintf(stderr, "column_run: line %d: bad hex\n", lineno);
                    return 2;
                }
                buf[i] = (unsigned char)x;
            }
            st = tg_column_from_bytes(&col, buf, len, on_event, NULL);
            if (records && st == TG_OK) {
                char text[64];
                tg_record_resume_line(n_feed, text, sizeof text);
                printf("u %s\n", text);
            }
            show(&col, st, 0.0);
        } else {
            fprintf(stderr, "column_run: line %d malformed\n", lineno);
            return 2;
        }
    }
    if (records && n_rows >= 0) {
        char text[512];
        tg_record_end_line(n_rows, &col, text, sizeof text);
        printf("z %s\n", text);
    }
    if (last_only)
        printf("%s\n", last_line);
    return 0;
}
