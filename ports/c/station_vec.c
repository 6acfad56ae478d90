/* station_vec.c -- run the shared stream vectors of the station (the .txt
 * files of tests/vectors/station) through tg_station: the same files, the
 * same semantics and the same summary as tests/vectors/runsta.py (read its
 * docstring for the format).
 *
 * Usage: station_vec [-v] FILE...   prints one line per failed check and
 *   "stations N checks M failed K"; exit status 1 when a check failed, 2 on a
 *   file it cannot read or a malformed line.
 * -v: also one line per "expect value" check,
 *   "v <file>:<line> <attribute> <got> <expected> <tol>" (%.17g), from which
 *   tests/test_c_port.py measures the float build's errors.
 *
 * Differences from runsta.py that follow from C: a bool in a reading (true,
 * false) is passed as a NaN pressure, refused as 'number' as Python refuses
 * the bool (only rejected changes, in both); a time stamp is a double
 * whatever it is written as (whole stamps below 2^53 give the same results,
 * tinygeo.h); settings are tg_station_config members of the same names;
 * "none" is NaN (stuck_readings: 0).
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

static tg_station sta;
static int verbose;

static const struct { const char *name; int bit; } FLAGS[] = {
    {"FL_STUCK_P", TG_STATION_FL_STUCK_P}, {"FL_STUCK_T", TG_STATION_FL_STUCK_T},
    {"FL_STUCK_RH", TG_STATION_FL_STUCK_RH}, {"FL_GAP", TG_STATION_FL_GAP},
    {"FL_TREND_GAP", TG_STATION_FL_TREND_GAP}, {"FL_NO_T12", TG_STATION_FL_NO_T12},
    {"FL_FEW", TG_STATION_FL_FEW}, {"FL_TAKEOVER", TG_STATION_FL_TAKEOVER},
    {"FL_CLOCK_HELD", TG_STATION_FL_CLOCK_HELD}
};

static int flag_bit(const char *name)
{
    size_t i;
    for (i = 0; i < sizeof FLAGS / sizeof FLAGS[0]; i++)
        if (strcmp(FLAGS[i].name, name) == 0)
            return FLAGS[i].bit;
    return -1;
}

/* runsta._value for a number: "-"/"none" NaN, true 1, false 0 */
static double value(const char *w)
{
    if (strcmp(w, "-") == 0 || strcmp(w, "none") == 0)
        return NAN;
    if (strcmp(w, "true") == 0)
        return 1.0;
    if (strcmp(w, "false") == 0)
        return 0.0;
    return strtod(w, NULL);
}

/* the attribute of an "expect value" line; 0 for an unknown name */
static int attribute(const tg_station *s, const char *name, double *out)
{
#define A(n) if (strcmp(name, #n) == 0) { *out = (double)s->n; return 1; }
    A(p_pa) A(t_k) A(rh_pct) A(dew_point_k) A(mslp_pa) A(qnh_pa) A(iso_p_pa) A(iso_gph_m)
    A(tendency_3h_pa) A(change_24h_pa) A(count) A(rejected) A(averages) A(missing) A(flags)
    A(gap_s) A(average_readings)
#undef A
    if (strcmp(name, "time_s") == 0) {
        *out = tg_station_time_s(s);
        return 1;
    }
    return 0;
}

static int setting(tg_station_config *cfg, const char *name, double x)
{
#define F(n) if (strcmp(name, #n) == 0) { cfg->n = (TG_FLOAT)x; return 1; }
    F(height_m) F(lat_deg) F(average_s) F(max_p_step_pa) F(max_p_rate_pa_s) F(max_t_step_k)
    F(max_t_rate_k_s) F(max_rh_step_pct) F(max_rh_rate_pct_s) F(guard_m) F(steady_pa)
    F(max_gap_s) F(iso_p_pa)
#undef F
    if (strcmp(name, "ice") == 0) { cfg->ice = (int)x; return 1; }
    if (strcmp(name, "mean12") == 0) { cfg->mean12 = (int)x; return 1; }
    if (strcmp(name, "min_readings") == 0) { cfg->min_readings = (int32_t)x; return 1; }
    if (strcmp(name, "takeover_readings") == 0) { cfg->takeover_readings = (int32_t)x; return 1; }
    if (strcmp(name, "stuck_readings") == 0) { cfg->stuck_readings = x == x ? (int32_t)x : 0; return 1; }
    return 0;
}

/* split a line into words before '#'; *source: the text after it */
static int words(char *line, char **w, int max, char **source)
{
    int n = 0;
    char *hash = strchr(line, '#'), *s;
    *source = NULL;
    if (hash != NULL) {
        *hash = '\0';
        *source = hash + 1;
    }
    for (s = strtok(line, " \t\r\n"); s != NULL && n < max; s = strtok(NULL, " \t\r\n"))
        w[n++] = s;
    return n;
}

static int run_file(const char *path, long *checks, long *failed)
{
    FILE *f = fopen(path, "r");
    static char line[4096];
    tg_station_config cfg;
    int lineno = 0, started = 0, bits = 0;
    long number = -1;
    char last[32] = "none";
    if (f == NULL)
        return 2;
    tg_station_config_defaults(&cfg, NAN, NAN);
    while (fgets(line, sizeof line, f) != NULL) {
        char *w[16], *source;
        int n, ok = 0;
        double got = NAN;
        lineno++;
        n = words(line, w, 16, &source);
        if (n == 0)
            continue;
        if (strcmp(w[0], "setting") == 0 && n == 3) {
            if (started || !setting(&cfg, w[1], value(w[2]))) {
                fprintf(stderr, "%s:%d: bad setting\n", path, lineno);
                return 2;
            }
            continue;
        }
        if (!started) {
            if (tg_station_init(&sta, &cfg) != TG_OK) {
                fprintf(stderr, "%s: settings refused\n", path);
                return 2;
            }
            started = 1;
        }
        if (strcmp(w[0], "reading") == 0 && n == 5) {
            TG_FLOAT rh = (TG_FLOAT)value(w[3]), p = (TG_FLOAT)value(w[1]);
            int b, k;
            number++;
            /* a bool (true/false) has no C form: Python refuses it as 'number'
             * and changes only rejected; a NaN pressure does the same here */
            for (k = 1; k < 5; k++)
                if (strcmp(w[k], "true") == 0 || strcmp(w[k], "false") == 0)
                    p = (TG_FLOAT)NAN;
            if (tg_station_feed(&sta, p, (TG_FLOAT)value(w[2]),
                                strcmp(w[3], "-") != 0 ? &rh : NULL, value(w[4]), &b) == TG_OK) {
                strcpy(last, "ok");
                bits = b;
            } else {
                snprintf(last, sizeof last, "%s", tg_reason_name(sta.reason));
            }
            continue;
        }
        if (strcmp(w[0], "expect") != 0 || n < 2 || source == NULL) {
            fprintf(stderr, "%s:%d: expected 'expect ... # source'\n", path, lineno);
            return 2;
        }
        *checks += 1;
        if (strcmp(w[1], "accept") == 0) {
            ok = strcmp(last, "ok") == 0;
        } else if (strcmp(w[1], "reject") == 0 && n == 3) {
            ok = strcmp(last, w[2]) == 0;
        } else if (strcmp(w[1], "bits") == 0 && n == 3) {
            got = bits;
            ok = bits == atoi(w[2]);
        } else if ((strcmp(w[1], "flag") == 0 || strcmp(w[1], "noflag") == 0) && n == 3) {
            int bit = flag_bit(w[2]);
            got = sta.flags;
            ok = bit > 0 && ((sta.flags & bit) != 0) == (w[1][0] == 'f');
        } else if (strcmp(w[1], "value") == 0 && n == 5) {
            double want = strtod(w[3], NULL), tol = strtod(w[4], NULL);
            if (!attribute(&sta, w[2], &got)) {
                fprintf(stderr, "%s:%d: unknown attribute %s\n", path, lineno, w[2]);
                return 2;
            }
            ok = want != want ? got != got : fabs(got - want) <= tol;
            if (verbose)
                printf("v %s:%d %s %.17g %.17g %.17g\n", path, lineno, w[2], got, want, tol);
        } else if (strcmp(w[1], "code") == 0 && n == 3) {
            got = tg_station_tendency_code(&sta);
            ok = strcmp(w[2], "none") == 0 ? got == -1 : got == atof(w[2]);
        } else {
            fprintf(stderr, "%s:%d: unknown expectation\n", path, lineno);
            return 2;
        }
        if (!ok) {
            *failed += 1;
            printf("%s:%d %s %s: got %.17g (%s) after reading %ld\n", path, lineno, w[0], w[1], got,
                   last, number);
        }
    }
    fclose(f);
    return 0;
}

int main(int argc, char **argv)
{
    long checks = 0, failed = 0;
    int i, files = 0;
    for (i = 1; i < argc; i++) {
        if (strcmp(argv[i], "-v") == 0) {
            verbose = 1;
            continue;
        }
        if (run_file(argv[i], &checks, &failed) != 0)
            return 2;
        files++;
    }
    printf("stations %d checks %ld failed %ld\n", files, checks, failed);
    return failed ? 1 : 0;
}
