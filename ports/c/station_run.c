/* station_run.c -- drive a tg_station from a text stream, for
 * tests/test_c_port.py (which runs the same stream through Python's Station).
 *
 * Usage: station_run [-s] < commands
 *   -s: print the checkpoint blob after every feed too ("b <hex>").
 *
 * Input, one command per line ("-" stands for Python's None):
 *   init <height_m> <lat_deg> [<name>=<value> ...]  tg_station_init with
 *        Station's keyword names (flags 0|1; "-" = None: NaN, stuck_readings 0)
 *   feed <p_pa> <t_k> <rh_pct|-> <time_s|->
 *   save                 prints "b <hex of tg_station_to_bytes>" first
 *   load <hex>           tg_station_from_bytes (on_event passed again)
 * Output: "e <count> <bits>" for every on_event call, and one line per command
 *   r <status> <reason> <bits> <the attributes of show(), %.17g>
 * (tests/test_c_port.py, STA_ATTRS, has the same list). Exit status 2 on a
 * malformed line.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

static int every_blob;
static tg_station sta;                /* static: 17 kB with the default ring in double */

static void on_event(tg_station *st, int bits, void *ctx)
{
    (void)ctx;
    printf("e %ld %d\n", (long)st->count, bits);
}

static double num(const char *tok)
{
    if (strcmp(tok, "-") == 0)
        return NAN;
    return strtod(tok, NULL);
}

static void show(const tg_station *s, tg_status st, int bits)
{
    const double v[] = {
        (double)s->count, (double)s->rejected, (double)s->averages, (double)s->missing,
        (double)s->flags, (double)tg_station_tendency_code(s), (double)s->gap_s,
        (double)s->average_readings, tg_station_time_s(s), (double)s->p_pa, (double)s->t_k,
        (double)s->rh_pct, (double)s->dew_point_k, (double)s->mslp_pa, (double)s->qnh_pa,
        (double)s->iso_p_pa, (double)s->iso_gph_m, (double)s->tendency_3h_pa,
        (double)s->change_24h_pa
    };
    size_t i;
    printf("r %s %s %d", tg_status_name(st), st == TG_READING ? tg_reason_name(s->reason) : "-", bits);
    for (i = 0; i < sizeof v / sizeof v[0]; i++)
        printf(" %.17g", v[i]);
    printf("\n");
}

static void blob(const tg_station *s)
{
    static unsigned char buf[TG_STATION_CHECKPOINT_MAX];
    size_t i, n = tg_station_checkpoint_bytes(s);
    if (tg_station_to_bytes(s, buf, sizeof buf) != TG_OK) {
        printf("b -\n");
        return;
    }
    printf("b ");
    for (i = 0; i < n; i++)
        printf("%02x", buf[i]);
    printf("\n");
}

static int setting(tg_station_config *cfg, const char *name, const char *val)
{
    double x = num(val);
#define F(n) if (strcmp(name, #n) == 0) { cfg->n = (TG_FLOAT)x; return 1; }
#define I(n) if (strcmp(name, #n) == 0) { cfg->n = (int)x; return 1; }
    F(average_s) F(max_p_step_pa) F(max_p_rate_pa_s) F(max_t_step_k) F(max_t_rate_k_s)
    F(max_rh_step_pct) F(max_rh_rate_pct_s) F(guard_m) F(steady_pa) F(max_gap_s) F(iso_p_pa)
    I(ice) I(mean12)
#undef F
#undef I
    if (strcmp(name, "min_readings") == 0) { cfg->min_readings = (int32_t)x; return 1; }
    if (strcmp(name, "takeover_readings") == 0) { cfg->takeover_readings = (int32_t)x; return 1; }
    if (strcmp(name, "stuck_readings") == 0) {
        cfg->stuck_readings = x == x ? (int32_t)x : 0;    /* None: 0 */
        return 1;
    }
    return 0;
}

int main(int argc, char **argv)
{
    static char line[1 << 16];
    static unsigned char buf[TG_STATION_CHECKPOINT_MAX + 16];
    int lineno = 0, i;
    for (i = 1; i < argc; i++)
        every_blob |= strcmp(argv[i], "-s") == 0;
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
        if (strcmp(tok[0], "init") == 0 && n >= 3) {
            tg_station_config cfg;
            tg_status st;
            tg_station_config_defaults(&cfg, (TG_FLOAT)num(tok[1]), (TG_FLOAT)num(tok[2]));
            for (i = 3; i < n; i++) {
                char *eq = strchr(tok[i], '=');
                if (eq == NULL)
                    break;
                *eq = '\0';
                if (!setting(&cfg, tok[i], eq + 1))
                    break;
            }
            if (i < n) {
                fprintf(stderr, "station_run: line %d: bad setting %s\n", lineno, tok[i]);
                return 2;
            }
            cfg.on_event = on_event;
            st = tg_station_init(&sta, &cfg);
            show(&sta, st, 0);
        } else if (strcmp(tok[0], "feed") == 0 && n == 5) {
            TG_FLOAT rh = (TG_FLOAT)num(tok[3]);
            int bits = -1;
            tg_status st = tg_station_feed(&sta, (TG_FLOAT)num(tok[1]), (TG_FLOAT)num(tok[2]),
                                           strcmp(tok[3], "-") != 0 ? &rh : NULL, num(tok[4]), &bits);
            if (every_blob)
                blob(&sta);
            show(&sta, st, bits);
        } else if (strcmp(tok[0], "save") == 0 && n == 1) {
            blob(&sta);
            show(&sta, TG_OK, 0);
        } else if (strcmp(tok[0], "load") == 0 && n == 2) {
            size_t len = strlen(tok[1]) / 2, j;
            tg_status st;
            if (len > sizeof buf) {
                fprintf(stderr, "station_run: line %d: blob too long\n", lineno);
                return 2;
            }
            for (j = 0; j < len; j++) {
                unsigned x;
                if (sscanf(tok[1] + 2 * j, "%2x", &x) != 1) {
                    fprintf(stderr, "station_run: line %d: bad hex\n", lineno);
                    return 2;
                }
                buf[j] = (unsigned char)x;
            }
            st = tg_station_from_bytes(&sta, buf, len, on_event, NULL);
            show(&sta, st, 0);
        } else {
            fprintf(stderr, "station_run: line %d malformed\n", lineno);
            return 2;
        }
    }
    return 0;
}
