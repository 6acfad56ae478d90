/* column_run.c -- drive a tg_column from a text stream, for
 * tests/test_c_port.py (which runs the same stream through Python's Column).
 *
 * Input, one command per line ("-" stands for Python's None):
 *   init <lat_deg> <start_height_m> <anchor_p_pa|-> <ellipsoid 0|1> <ice 0|1>
 *        <dry_fallback 0|1> <track_sigma 0|1> <max_rate_m_s|-> <geoid_undulation_m|->
 *        [<max_t_step_k|-> <max_t_rate_k_s> <max_t_gradient_k_m>]   (default 3 1 0.1)
 *   feed <p_pa> <t_k> <rh_pct|-> <time_s|-> <gps_m|->
 *   reanchor <sigma_gps_m>
 *   save                 prints "b <hex of tg_column_to_bytes>" first
 *   load <hex>           tg_column_from_bytes (on_event passed again)
 * Output: "e <count> <bits>" for every on_event call, and one line per command
 *   r <status> <reason> <bits or shift> <count> <rejected> <flags> <phase> <p_pa> ...
 * (the attributes of ATTRS below, %.17g). Exit status 2 on a malformed line.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

static void on_event(tg_column *col, int bits, void *ctx)
{
    (void)ctx;
    printf("e %ld %d\n", (long)col->count, bits);
}

static int opt(const char *tok, TG_FLOAT *v)
{
    if (strcmp(tok, "-") == 0)
        return 0;
    *v = (TG_FLOAT)strtod(tok, NULL);
    return 1;
}

static void show(const tg_column *c, tg_status st, double res)
{
    const TG_FLOAT v[] = {
        c->p_pa, c->t_k, c->tv_k, c->rh_pct, c->time_s, c->gph_m, c->height_m, c->rate_m_s,
        c->max_gph_m, c->launch_time_s, c->burst_gph_m, c->burst_time_s, c->burst_p_pa,
        c->level_p_pa, c->level_gph_m, c->level_height_m, c->level_t_k,
        c->tropopause_p_pa, c->tropopause_gph_m, c->tropopause_t_k, c->gps_m, c->gps_diff_m,
        tg_column_sigma_m(c), tg_column_sigma_random_m(c), tg_column_sigma_bias_m(c)
    };
    size_t i;
    printf("r %s %s %.17g %ld %ld %d %d", tg_status_name(st), tg_reason_name(c->reason), res,
           (long)c->count, (long)c->rejected, (int)c->flags, (int)c->phase);
    for (i = 0; i < sizeof v / sizeof v[0]; i++)
        printf(" %.17g", (double)v[i]);
    printf("\n");
}

int main(void)
{
    static tg_column col;
    static char line[16384];
    int lineno = 0;
    while (fgets(line, sizeof line, stdin) != NULL) {
        char *tok[16];
        int n = 0;
        char *s = strtok(line, " \t\r\n");
        lineno++;
        while (s != NULL && n < 16) {
            tok[n++] = s;
            s = strtok(NULL, " \t\r\n");
        }
        if (n == 0)
            continue;
        if (strcmp(tok[0], "init") == 0 && (n == 10 || n == 13)) {
            tg_column_config cfg;
            tg_status st;
            tg_column_config_defaults(&cfg, (TG_FLOAT)strtod(tok[1], NULL));
            cfg.start_height_m = (TG_FLOAT)strtod(tok[2], NULL);
            opt(tok[3], &cfg.anchor_p_pa);
            cfg.ellipsoid = atoi(tok[4]) ? &tg_grs80 : &tg_wgs84;
            cfg.ice = atoi(tok[5]);
            cfg.dry_fallback = atoi(tok[6]);
            cfg.track_sigma = atoi(tok[7]);
            if (!opt(tok[8], &cfg.max_rate_m_s))
                cfg.max_rate_m_s = (TG_FLOAT)NAN;
            opt(tok[9], &cfg.geoid_undulation_m);
            if (n == 13) {
                if (!opt(tok[10], &cfg.max_t_step_k))
                    cfg.max_t_step_k = (TG_FLOAT)NAN;
                cfg.max_t_rate_k_s = (TG_FLOAT)strtod(tok[11], NULL);
                cfg.max_t_gradient_k_m = (TG_FLOAT)strtod(tok[12], NULL);
            }
            cfg.on_event = on_event;
            st = tg_column_init(&col, &cfg);
            show(&col, st, 0.0);
        } else if (strcmp(tok[0], "feed") == 0 && n == 6) {
            TG_FLOAT rh, ts, gps;
            int has_rh = opt(tok[3], &rh), has_ts = opt(tok[4], &ts), has_gps = opt(tok[5], &gps);
            int bits = -1;
            tg_status st = tg_column_feed(&col, (TG_FLOAT)strtod(tok[1], NULL), (TG_FLOAT)strtod(tok[2], NULL),
                                          has_rh ? &rh : NULL, has_ts ? &ts : NULL, has_gps ? &gps : NULL,
                                          &bits);
            show(&col, st, (double)bits);
        } else if (strcmp(tok[0], "reanchor") == 0 && n == 2) {
            TG_FLOAT shift;
            tg_status st = tg_column_reanchor_gps(&col, (TG_FLOAT)strtod(tok[1], NULL), &shift);
            show(&col, st, (double)shift);
        } else if (strcmp(tok[0], "save") == 0 && n == 1) {
            unsigned char buf[TG_CHECKPOINT_BYTES];
            tg_status st = tg_column_to_bytes(&col, buf, sizeof buf);
            size_t i;
            printf("b ");
            for (i = 0; i < sizeof buf; i++)
                printf("%02x", buf[i]);
            printf("\n");
            show(&col, st, 0.0);
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
            show(&col, st, 0.0);
        } else {
            fprintf(stderr, "column_run: line %d malformed\n", lineno);
            return 2;
        }
    }
    return 0;
}
