/* column_vec.c -- run the shared stream vectors of the column
 * (the .txt files of tests/vectors/column) through tg_column: the same files, the same
 * semantics and the same report as tests/vectors/runcol.py (read its
 * docstring for the format).
 *
 * Usage: column_vec [-f] FILE...   prints one line per failed check and
 *   "streams N checks M failed K"; exit status 1 when a check failed, 2 on a
 *   file it cannot read.
 * -f (the float build's policy, tests/test_c_port.py and README.md): an
 *   "expect value" check passes within its tolerance plus 4 float32
 *   spacings of the expected value (float_slack below); every other check
 *   is the same.
 *
 * Differences from runcol.py that follow from C: a time stamp is a double
 * whatever it is written as (runcol.py passes "1700000000000" as an int;
 * whole stamps below 2^53 give the same results, tinygeo.h); settings are
 * tg_column_config members of the same names; "none" is NaN.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

#define MAX_EVENTS 4096

struct seen {
    char word[24];
    long number;
};

static struct seen seen[MAX_EVENTS];
static int n_seen;
static long number;        /* the reading's number (0-based, file order) */
static int float_policy;

/* the event words of one on_event call (runcol.py _words: launch,
 * tropopause, burst, landed, float, then the level with its pressure) */
static void on_event(tg_column *col, int bits, void *ctx)
{
    static const struct { int bit; const char *word; } names[] = {
        { TG_EV_LAUNCH, "launch" }, { TG_EV_TROPOPAUSE, "tropopause" }, { TG_EV_BURST, "burst" },
        { TG_EV_LANDED, "landed" }, { TG_EV_FLOAT, "float" }
    };
    size_t i;
    (void)ctx;
    for (i = 0; i < sizeof names / sizeof names[0] && n_seen < MAX_EVENTS; i++) {
        if (bits & names[i].bit) {
            strcpy(seen[n_seen].word, names[i].word);
            seen[n_seen++].number = number;
        }
    }
    if ((bits & TG_EV_LEVEL) && n_seen < MAX_EVENTS) {
        sprintf(seen[n_seen].word, "level%d", (int)((double)col->level_p_pa / 100.0 + 0.5));
        seen[n_seen++].number = number;
    }
}

/* runcol.py _value: "-" and "none" are None (NaN), "true"/"false" 1/0, a number otherwise */
static double value(const char *w, int *is_none)
{
    *is_none = strcmp(w, "-") == 0 || strcmp(w, "none") == 0;
    if (*is_none)
        return NAN;
    if (strcmp(w, "true") == 0)
        return 1.0;
    if (strcmp(w, "false") == 0)
        return 0.0;
    return strtod(w, NULL);
}

/* a tg_column_config member by its Python keyword name; 0 if unknown */
static int setting(tg_column_config *cfg, const char *name, double x)
{
#define F(n) if (strcmp(name, #n) == 0) { cfg->n = (TG_FLOAT)x; return 1; }
#define I(n) if (strcmp(name, #n) == 0) { cfg->n = (int)x; return 1; }
    F(lat_deg) F(start_height_m) F(anchor_p_pa) F(sigma_p_pa) F(sigma_t_k) F(sigma_rh_pct)
    F(bias_p_pa) F(bias_t_k) F(bias_rh_pct) F(max_rate_m_s) F(start_guard_m) F(time_unit_s)
    F(smooth_s) F(launch_gpm) F(burst_drop_gpm) F(burst_rate_gpm_s) F(float_s) F(float_band_gpm)
    F(landing_s) F(landing_band_gpm) F(tropopause_max_p_pa) F(tropopause_layer_gpm)
    F(rh_tol_pct) F(geoid_undulation_m) F(max_t_step_k) F(max_t_rate_k_s) F(max_t_gradient_k_gpm) F(launch_rate_gpm_s)
    I(ice) I(dry_fallback) I(track_sigma) I(burst_readings) I(takeover_readings)
#undef F
#undef I
    return 0;
}

/* a Column attribute by name (what "expect value" reads); 0 if unknown */
static int attribute(const tg_column *c, const char *name, double *out)
{
#define A(n, expr) if (strcmp(name, #n) == 0) { *out = (double)(expr); return 1; }
    A(count, c->count) A(rejected, c->rejected) A(retracted, c->retracted) A(phase, c->phase)
    A(flags, tg_column_flags(c)) A(p_pa, tg_column_p_pa(c)) A(t_k, tg_column_t_k(c))
    A(tv_k, tg_column_tv_k(c)) A(rh_pct, tg_column_rh_pct(c)) A(time_s, tg_column_time_s(c))
    A(gph_m, tg_column_gph_m(c)) A(height_m, tg_column_height_m(c))
    A(rate_m_s, tg_column_rate_m_s(c)) A(noise_gph_m, tg_column_noise_gph_m(c))
    A(smooth_gph_m, c->smooth_gph_m) A(smooth_rate_gpm_s, tg_column_smooth_rate_gpm_s(c))
    A(max_gph_m, c->max_gph_m) A(launch_time_s, c->launch_time_s) A(burst_gph_m, c->burst_gph_m)
    A(burst_time_s, c->burst_time_s) A(burst_p_pa, c->burst_p_pa) A(float_gph_m, c->float_gph_m)
    A(float_time_s, c->float_time_s) A(landing_time_s, c->landing_time_s)
    A(level_p_pa, c->level_p_pa) A(level_gph_m, c->level_gph_m)
    A(level_height_m, c->level_height_m) A(level_t_k, c->level_t_k)
    A(tropopause_p_pa, c->tropopause_p_pa) A(tropopause_gph_m, c->tropopause_gph_m)
    A(tropopause_t_k, c->tropopause_t_k) A(tropopause_time_s, c->tropopause_time_s)
    A(gps_m, tg_column_gps_m(c)) A(gps_diff_m, tg_column_gps_diff_m(c))
    A(sigma_m, tg_column_sigma_m(c)) A(sigma_random_m, tg_column_sigma_random_m(c))
    A(sigma_bias_m, tg_column_sigma_bias_m(c))
#undef A
    return 0;
}

/* The float build's policy for "expect value" (-f): the file's tolerance,
 * set for the readings' truth in double, plus what float32 itself cannot
 * hold: a value of magnitude x is known in float32 only to its spacing,
 * 2^-23 x at most, and the inputs it is computed from are rounded the same
 * way. The slack is 4 spacings, |expected| 2^-21; counters, phase and flags
 * get none (they are exact in every build). */
static double float_slack(const char *name, double expected)
{
    if (strcmp(name, "count") == 0 || strcmp(name, "rejected") == 0 || strcmp(name, "retracted") == 0
        || strcmp(name, "phase") == 0 || strcmp(name, "flags") == 0)
        return 0.0;
    return fabs(expected) / 2097152.0;
}

static const struct { const char *name; int bit; } FLAGS[] = {
    { "FL_DRY", TG_FL_DRY }, { "FL_HELD_MIXING", TG_FL_HELD_MIXING }, { "FL_NO_TIME", TG_FL_NO_TIME },
    { "FL_DESCENT", TG_FL_DESCENT }, { "FL_SAME_P", TG_FL_SAME_P }, { "FL_NO_GPS", TG_FL_NO_GPS },
    { "FL_CAPPED", TG_FL_CAPPED }, { "FL_REPLACED", TG_FL_REPLACED }, { "FL_TAKEOVER", TG_FL_TAKEOVER },
    { "FL_SAME_TIME", TG_FL_SAME_TIME }
};

/* one line: its words (at most 8) and the source after '#'; 0 for a blank or comment line */
static int split(char *line, char **w, char **source)
{
    char *hash = strchr(line, '#');
    char *s;
    int n = 0;
    *source = NULL;
    s = line;
    while (*s == ' ' || *s == '\t')
        s++;
    if (*s == '#' || *s == '\0' || *s == '\n' || *s == '\r')
        return 0;
    if (hash != NULL) {
        *hash = '\0';
        *source = hash + 1;
        while (**source == ' ')
            (*source)++;
        (*source)[strcspn(*source, "\r\n")] = '\0';
    }
    for (s = strtok(line, " \t\r\n"); s != NULL && n < 8; s = strtok(NULL, " \t\r\n"))
        w[n++] = s;
    return n;
}

struct pending {
    int lineno;
    char what[16], word[24];
    long first, last;
};

/* run_file: feed the file's readings; returns the number of checks, adds failures */
static int run_file(const char *path, int *fails)
{
    static char line[4096];
    static struct pending pend[256];
    int n_pend = 0, checks = 0, lineno = 0, in_settings = 1, i;
    tg_column_config cfg;
    tg_column col;
    const char *last = "none";
    static char last_buf[24];
    FILE *f = fopen(path, "r");
    if (f == NULL) {
        fprintf(stderr, "column_vec: cannot read %s\n", path);
        exit(2);
    }
    tg_column_config_defaults(&cfg, NAN);
    n_seen = 0;
    number = -1;
    while (fgets(line, sizeof line, f) != NULL) {
        char *w[8], *source;
        int n;
        lineno++;
        n = split(line, w, &source);
        if (n == 0)
            continue;
        if (strcmp(w[0], "setting") == 0 && n == 3) {
            int none;
            double x = value(w[2], &none);
            if (!in_settings)
                continue;                 /* runcol.py reads the settings before the first other line */
            if (!setting(&cfg, w[1], x)) {
                fprintf(stderr, "%s:%d: setting %s not read\n", path, lineno, w[1]);
                exit(2);
            }
            continue;
        }
        if (in_settings) {
            tg_status st;
            in_settings = 0;
            cfg.on_event = on_event;
            st = tg_column_init(&col, &cfg);
            if (st != TG_OK) {
                fprintf(stderr, "%s: the settings are refused (%s)\n", path, tg_status_name(st));
                exit(2);
            }
        }
        if (strcmp(w[0], "reading") == 0) {
            double v[5];
            int none[5], bits;
            TG_FLOAT rh, gps;
            tg_status st;
            if (n != 6) {
                fprintf(stderr, "%s:%d: a reading has 5 values\n", path, lineno);
                exit(2);
            }
            for (i = 0; i < 5; i++)
                v[i] = value(w[i + 1], &none[i]);
            rh = (TG_FLOAT)v[2];
            gps = (TG_FLOAT)v[4];
            number++;
            st = tg_column_feed(&col, (TG_FLOAT)v[0], (TG_FLOAT)v[1], none[2] ? NULL : &rh, v[3],
                                none[4] ? NULL : &gps, &bits);
            if (st == TG_OK) {
                last = "ok";
            } else {
                strcpy(last_buf, tg_reason_name(col.reason));
                last = last_buf;
            }
            continue;
        }
        if (strcmp(w[0], "expect") != 0 || source == NULL || *source == '\0' || n < 2) {
            fprintf(stderr, "%s:%d: expected 'expect ... # source'\n", path, lineno);
            exit(2);
        }
        if ((strcmp(w[1], "event") == 0 && n == 5) || (strcmp(w[1], "no_event") == 0 && n == 3)) {
            struct pending *p = &pend[n_pend++];
            p->lineno = lineno;
            strcpy(p->what, w[1]);
            strncpy(p->word, w[2], sizeof p->word - 1);
            p->word[sizeof p->word - 1] = '\0';
            p->first = n == 5 ? atol(w[3]) : 0;
            p->last = n == 5 ? atol(w[4]) : 0;
            continue;
        }
        checks++;
        if (strcmp(w[1], "accept") == 0) {
            if (strcmp(last, "ok") != 0) {
                printf("%s:%d expect accept: got '%s' after reading %ld (%s)\n", path, lineno, last,
                       number, source);
                (*fails)++;
            }
        } else if (strcmp(w[1], "reject") == 0 && n == 3) {
            if (strcmp(last, w[2]) != 0) {
                printf("%s:%d expect reject %s: got '%s' after reading %ld (%s)\n", path, lineno, w[2],
                       last, number, source);
                (*fails)++;
            }
        } else if (strcmp(w[1], "flag") == 0 && n == 3) {
            int bit = -1;
            for (i = 0; i < (int)(sizeof FLAGS / sizeof FLAGS[0]); i++)
                if (strcmp(FLAGS[i].name, w[2]) == 0)
                    bit = FLAGS[i].bit;
            if (bit < 0) {
                fprintf(stderr, "%s:%d: unknown flag %s\n", path, lineno, w[2]);
                exit(2);
            }
            if (!(tg_column_flags(&col) & bit)) {
                printf("%s:%d expect flag %s: got %d after reading %ld (%s)\n", path, lineno, w[2],
                       (int)tg_column_flags(&col), number, source);
                (*fails)++;
            }
        } else if (strcmp(w[1], "value") == 0 && n == 5) {
            double got, want = strtod(w[3], NULL), tol = strtod(w[4], NULL);
            if (!attribute(&col, w[2], &got)) {
                fprintf(stderr, "%s:%d: unknown attribute %s\n", path, lineno, w[2]);
                exit(2);
            }
            if (float_policy)
                tol += float_slack(w[2], want);
            if (!(fabs(got - want) <= tol)) {
                printf("%s:%d expect value %s %s %s: got %.17g after reading %ld (%s)\n", path, lineno,
                       w[2], w[3], w[4], got, number, source);
                (*fails)++;
            }
        } else {
            fprintf(stderr, "%s:%d: unknown expectation %s\n", path, lineno, w[1]);
            exit(2);
        }
    }
    fclose(f);
    for (i = 0; i < n_pend; i++) {
        const struct pending *p = &pend[i];
        int hits = 0, k;
        long at = -1;
        checks++;
        for (k = 0; k < n_seen; k++) {
            if (strcmp(seen[k].word, p->word) == 0) {
                hits++;
                at = seen[k].number;
            }
        }
        if (strcmp(p->what, "no_event") == 0 ? hits != 0
                                             : !(hits == 1 && p->first <= at && at <= p->last)) {
            printf("%s:%d expect %s %s: reported %d times (last by reading %ld)\n", path, p->lineno,
                   p->what, p->word, hits, at);
            (*fails)++;
        }
    }
    return checks;
}

int main(int argc, char **argv)
{
    int i, files = 0, checks = 0, fails = 0;
    for (i = 1; i < argc; i++) {
        if (strcmp(argv[i], "-f") == 0) {
            float_policy = 1;
            continue;
        }
        checks += run_file(argv[i], &fails);
        files++;
    }
    printf("streams %d checks %d failed %d\n", files, checks, fails);
    return fails ? 1 : 0;
}
