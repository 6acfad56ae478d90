/* runvec.c -- the C runner of the shared test vectors in tests/vectors/ (the .txt files)
 * (format: tests/vectors/runvec.py):
 *     <function> <arg> ... = <expected> <abs|rel> <tol>  # source
 * <function> is the public Python name; it maps to tg_<function> below.
 * Lines naming a function the C port does not have are skipped and counted.
 *
 * Usage: runvec [-q] FILE...
 * Prints one line per case
 *     <file>:<line> <function> <status> <got> <expected> <ok|FAIL|skip>
 * (status: tg_status_name, got printed with %.17g, nan on error) and then
 *     cases N ok K failed M skipped S
 *     skipped: name(count) ...
 * -q prints only failures and the summary. Exit status 1 when a case failed
 * or a line could not be parsed. Built once with TG_FLOAT double and once
 * with float; the tolerances in the files are for double precision.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tinygeo.h"

typedef tg_status (*fn_t)(const TG_FLOAT *a, TG_FLOAT *out);

#define A(i) a[i]
#define ICE(i) (a[i] != (TG_FLOAT)0)

static tg_status w_normal_gravity(const TG_FLOAT *a, TG_FLOAT *o) { return tg_normal_gravity(A(0), A(1), NULL, o); }
static tg_status w_somigliana_gravity(const TG_FLOAT *a, TG_FLOAT *o) { return tg_somigliana_gravity(A(0), NULL, o); }
static tg_status w_geopotential(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geopotential(A(0), A(1), NULL, o); }
static tg_status w_geopotential_height(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geopotential_height(A(0), A(1), NULL, o); }
static tg_status w_geometric_height(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geometric_height(A(0), A(1), NULL, o); }
static tg_status w_msl_height(const TG_FLOAT *a, TG_FLOAT *o) { return tg_msl_height(A(0), A(1), o); }
static tg_status w_saturation_vapour_pressure(const TG_FLOAT *a, TG_FLOAT *o) { return tg_saturation_vapour_pressure(A(0), ICE(1), o); }
static tg_status w_saturation_vapour_pressure1(const TG_FLOAT *a, TG_FLOAT *o) { return tg_saturation_vapour_pressure(A(0), 0, o); }
static tg_status w_enhancement_factor(const TG_FLOAT *a, TG_FLOAT *o) { return tg_enhancement_factor(A(0), o); }
static tg_status w_vapour_pressure(const TG_FLOAT *a, TG_FLOAT *o) { return tg_vapour_pressure(A(0), A(1), A(2), ICE(3), o); }
static tg_status w_vapour_pressure3(const TG_FLOAT *a, TG_FLOAT *o) { return tg_vapour_pressure(A(0), A(1), A(2), 0, o); }
static tg_status w_vapour_pressure_from_dew_point(const TG_FLOAT *a, TG_FLOAT *o) { return tg_vapour_pressure_from_dew_point(A(0), A(1), ICE(2), o); }
static tg_status w_vapour_pressure_from_dew_point2(const TG_FLOAT *a, TG_FLOAT *o) { return tg_vapour_pressure_from_dew_point(A(0), A(1), 0, o); }
static tg_status w_dew_point(const TG_FLOAT *a, TG_FLOAT *o) { return tg_dew_point(A(0), A(1), ICE(2), o); }
static tg_status w_dew_point2(const TG_FLOAT *a, TG_FLOAT *o) { return tg_dew_point(A(0), A(1), 0, o); }
static tg_status w_dew_point_from_rh(const TG_FLOAT *a, TG_FLOAT *o) { return tg_dew_point_from_rh(A(0), A(1), ICE(2), o); }
static tg_status w_dew_point_from_rh2(const TG_FLOAT *a, TG_FLOAT *o) { return tg_dew_point_from_rh(A(0), A(1), 0, o); }
static tg_status w_mixing_ratio(const TG_FLOAT *a, TG_FLOAT *o) { return tg_mixing_ratio(A(0), A(1), o); }
static tg_status w_specific_humidity(const TG_FLOAT *a, TG_FLOAT *o) { return tg_specific_humidity(A(0), A(1), o); }
static tg_status w_virtual_temperature(const TG_FLOAT *a, TG_FLOAT *o) { return tg_virtual_temperature(A(0), A(1), A(2), ICE(3), o); }
static tg_status w_virtual_temperature3(const TG_FLOAT *a, TG_FLOAT *o) { return tg_virtual_temperature(A(0), A(1), A(2), 0, o); }
static tg_status w_virtual_temperature_from_mixing_ratio(const TG_FLOAT *a, TG_FLOAT *o) { return tg_virtual_temperature_from_mixing_ratio(A(0), A(1), o); }
static tg_status w_ln_ratio(const TG_FLOAT *a, TG_FLOAT *o) { return tg_ln_ratio(A(0), A(1), o); }
static tg_status w_layer_thickness(const TG_FLOAT *a, TG_FLOAT *o) { return tg_layer_thickness(A(0), A(1), A(2), A(3), o); }
static tg_status w_layer_thickness_lapse(const TG_FLOAT *a, TG_FLOAT *o) { return tg_layer_thickness_lapse(A(0), A(1), A(2), A(3), o); }
static tg_status w_pressure_across_layer(const TG_FLOAT *a, TG_FLOAT *o) { return tg_pressure_across_layer(A(0), A(1), A(2), o); }
static tg_status w_layer_mean_tv(const TG_FLOAT *a, TG_FLOAT *o) { return tg_layer_mean_tv(A(0), A(1), A(2), o); }
static tg_status w_standard_temperature(const TG_FLOAT *a, TG_FLOAT *o) { return tg_standard_temperature(A(0), o); }
static tg_status w_standard_pressure(const TG_FLOAT *a, TG_FLOAT *o) { return tg_standard_pressure(A(0), o); }
static tg_status w_pressure_altitude(const TG_FLOAT *a, TG_FLOAT *o) { return tg_pressure_altitude(A(0), o); }
static tg_status w_sea_level_pressure3(const TG_FLOAT *a, TG_FLOAT *o) { return tg_sea_level_pressure(A(0), A(1), A(2), NULL, NULL, 0, o); }
static tg_status w_sea_level_pressure4(const TG_FLOAT *a, TG_FLOAT *o) { return tg_sea_level_pressure(A(0), A(1), A(2), &a[3], NULL, 0, o); }
static tg_status w_sea_level_pressure5(const TG_FLOAT *a, TG_FLOAT *o) { return tg_sea_level_pressure(A(0), A(1), A(2), &a[3], &a[4], 0, o); }
static tg_status w_sea_level_pressure6(const TG_FLOAT *a, TG_FLOAT *o) { return tg_sea_level_pressure(A(0), A(1), A(2), &a[3], &a[4], ICE(5), o); }
static tg_status w_isobaric_height4(const TG_FLOAT *a, TG_FLOAT *o) { return tg_isobaric_height(A(0), A(1), A(2), A(3), NULL, NULL, 0, o); }
static tg_status w_isobaric_height5(const TG_FLOAT *a, TG_FLOAT *o) { return tg_isobaric_height(A(0), A(1), A(2), A(3), &a[4], NULL, 0, o); }
static tg_status w_isobaric_height6(const TG_FLOAT *a, TG_FLOAT *o) { return tg_isobaric_height(A(0), A(1), A(2), A(3), &a[4], &a[5], 0, o); }
static tg_status w_isobaric_height7(const TG_FLOAT *a, TG_FLOAT *o) { return tg_isobaric_height(A(0), A(1), A(2), A(3), &a[4], &a[5], ICE(6), o); }
static tg_status w_standard_surface_pa(const TG_FLOAT *a, TG_FLOAT *o) { return tg_standard_surface_pa(A(0), o); }
static tg_status w_qfe3(const TG_FLOAT *a, TG_FLOAT *o) { return tg_qfe(A(0), A(1), A(2), NULL, 0, o); }
static tg_status w_qfe4(const TG_FLOAT *a, TG_FLOAT *o) { return tg_qfe(A(0), A(1), A(2), &a[3], 0, o); }
static tg_status w_qfe5(const TG_FLOAT *a, TG_FLOAT *o) { return tg_qfe(A(0), A(1), A(2), &a[3], ICE(4), o); }
static tg_status w_ussa76_geopotential_height(const TG_FLOAT *a, TG_FLOAT *o) { return tg_ussa76_geopotential_height(A(0), o); }
static tg_status w_ussa76_geometric_height(const TG_FLOAT *a, TG_FLOAT *o) { return tg_ussa76_geometric_height(A(0), o); }

/* An extra last argument 0, 1, 2 or 3 selects the ellipsoid: tg_wgs84,
 * tg_grs80, a copy of WGS 84 under another name and without the series
 * pointer (constants.check_ellipsoid maps it to WGS 84), or an ellipsoid of
 * its own (a 1 m larger: TG_RANGE). Used by tests/test_c_port.py, which
 * passes the same ellipsoids to Python. */
static const tg_ellipsoid *ell(TG_FLOAT code)
{
    static tg_ellipsoid bare;
    if (code == (TG_FLOAT)1)
        return &tg_grs80;
    if (code == (TG_FLOAT)2 || code == (TG_FLOAT)3) {
        bare = tg_wgs84;
        bare.name = "BARE";
        bare.series = NULL;
        if (code == (TG_FLOAT)3)
            bare.a_m = bare.a_m + (TG_FLOAT)1;
        return &bare;
    }
    return &tg_wgs84;
}
static tg_status w_normal_gravity_e(const TG_FLOAT *a, TG_FLOAT *o) { return tg_normal_gravity(A(0), A(1), ell(A(2)), o); }
static tg_status w_somigliana_gravity_e(const TG_FLOAT *a, TG_FLOAT *o) { return tg_somigliana_gravity(A(0), ell(A(1)), o); }
static tg_status w_geopotential_e(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geopotential(A(0), A(1), ell(A(2)), o); }
static tg_status w_geopotential_height_e(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geopotential_height(A(0), A(1), ell(A(2)), o); }
static tg_status w_geometric_height_e(const TG_FLOAT *a, TG_FLOAT *o) { return tg_geometric_height(A(0), A(1), ell(A(2)), o); }
static tg_status w_qnh(const TG_FLOAT *a, TG_FLOAT *o) { return tg_qnh(A(0), A(1), o); }
static tg_status w_indicated_altitude(const TG_FLOAT *a, TG_FLOAT *o) { return tg_indicated_altitude(A(0), A(1), o); }

/* Python public name, number of arguments on the line, C wrapper. A name may
 * appear with several argument counts (Python keyword defaults). */
static const struct { const char *name; int nargs; fn_t fn; } MAP[] = {
    {"normal_gravity", 2, w_normal_gravity},
    {"somigliana_gravity", 1, w_somigliana_gravity},
    {"geopotential", 2, w_geopotential},
    {"geopotential_height", 2, w_geopotential_height},
    {"geometric_height", 2, w_geometric_height},
    {"msl_height", 2, w_msl_height},
    {"saturation_vapour_pressure", 2, w_saturation_vapour_pressure},
    {"saturation_vapour_pressure", 1, w_saturation_vapour_pressure1},
    {"enhancement_factor", 1, w_enhancement_factor},
    {"vapour_pressure", 4, w_vapour_pressure},
    {"vapour_pressure", 3, w_vapour_pressure3},
    {"vapour_pressure_from_dew_point", 3, w_vapour_pressure_from_dew_point},
    {"vapour_pressure_from_dew_point", 2, w_vapour_pressure_from_dew_point2},
    {"dew_point", 3, w_dew_point},
    {"dew_point", 2, w_dew_point2},
    {"dew_point_from_rh", 3, w_dew_point_from_rh},
    {"dew_point_from_rh", 2, w_dew_point_from_rh2},
    {"mixing_ratio", 2, w_mixing_ratio},
    {"specific_humidity", 2, w_specific_humidity},
    {"virtual_temperature", 4, w_virtual_temperature},
    {"virtual_temperature", 3, w_virtual_temperature3},
    {"virtual_temperature_from_mixing_ratio", 2, w_virtual_temperature_from_mixing_ratio},
    {"ln_ratio", 2, w_ln_ratio},
    {"layer_thickness", 4, w_layer_thickness},
    {"layer_thickness_lapse", 4, w_layer_thickness_lapse},
    {"pressure_across_layer", 3, w_pressure_across_layer},
    {"layer_mean_tv", 3, w_layer_mean_tv},
    {"standard_temperature", 1, w_standard_temperature},
    {"standard_pressure", 1, w_standard_pressure},
    {"pressure_altitude", 1, w_pressure_altitude},
    {"sea_level_pressure", 3, w_sea_level_pressure3},
    {"sea_level_pressure", 4, w_sea_level_pressure4},
    {"sea_level_pressure", 5, w_sea_level_pressure5},
    {"sea_level_pressure", 6, w_sea_level_pressure6},
    {"isobaric_height", 4, w_isobaric_height4},
    {"isobaric_height", 5, w_isobaric_height5},
    {"isobaric_height", 6, w_isobaric_height6},
    {"isobaric_height", 7, w_isobaric_height7},
    {"standard_surface_pa", 1, w_standard_surface_pa},
    {"qfe", 3, w_qfe3},
    {"qfe", 4, w_qfe4},
    {"qfe", 5, w_qfe5},
    {"qnh", 2, w_qnh},
    {"indicated_altitude", 2, w_indicated_altitude},
    {"ussa76_geopotential_height", 1, w_ussa76_geopotential_height},
    {"ussa76_geometric_height", 1, w_ussa76_geometric_height},
    {"normal_gravity", 3, w_normal_gravity_e},
    {"somigliana_gravity", 2, w_somigliana_gravity_e},
    {"geopotential", 3, w_geopotential_e},
    {"geopotential_height", 3, w_geopotential_height_e},
    {"geometric_height", 3, w_geometric_height_e},
};
#define NMAP ((int)(sizeof MAP / sizeof MAP[0]))

#define MAXSKIP 64
static char skip_names[MAXSKIP][64];
static int skip_counts[MAXSKIP];
static int n_skip_names;

static void note_skip(const char *name)
{
    int i;
    for (i = 0; i < n_skip_names; i++) {
        if (strcmp(skip_names[i], name) == 0) {
            skip_counts[i]++;
            return;
        }
    }
    if (n_skip_names < MAXSKIP) {
        size_t len = strlen(name);
        if (len > 63)
            len = 63;
        memcpy(skip_names[n_skip_names], name, len);
        skip_names[n_skip_names][len] = '\0';
        skip_counts[n_skip_names] = 1;
        n_skip_names++;
    }
}

int main(int argc, char **argv)
{
    long n = 0, n_ok = 0, n_bad = 0, n_skip = 0, n_parse = 0;
    int quiet = 0, k;
    for (k = 1; k < argc; k++) {
        FILE *f;
        char line[1024];
        int lineno = 0;
        if (strcmp(argv[k], "-q") == 0) {
            quiet = 1;
            continue;
        }
        f = fopen(argv[k], "r");
        if (f == NULL) {
            fprintf(stderr, "runvec: cannot open %s\n", argv[k]);
            return 2;
        }
        while (fgets(line, sizeof line, f) != NULL) {
            char *s = line, *hash, *eq, *tok, *end;
            char name[64];
            double args[8], expected, tol;
            TG_FLOAT fargs[8], got;
            int nargs = 0, i, found = -1, ok;
            char kind[8];
            tg_status st;
            double err;
            lineno++;
            while (*s == ' ' || *s == '\t')
                s++;
            if (*s == '\0' || *s == '\n' || *s == '\r' || *s == '#')
                continue;
            hash = strchr(s, '#');
            eq = strchr(s, '=');
            if (hash == NULL || eq == NULL || eq > hash) {
                printf("%s:%d parse error (no '# source' or no '=')\n", argv[k], lineno);
                n_parse++;
                continue;
            }
            *hash = '\0';
            *eq = '\0';
            tok = strtok(s, " \t");
            if (tok == NULL || strlen(tok) >= sizeof name) {
                printf("%s:%d parse error (function name)\n", argv[k], lineno);
                n_parse++;
                continue;
            }
            strcpy(name, tok);
            while ((tok = strtok(NULL, " \t\r\n")) != NULL) {
                if (nargs == 8)
                    break;
                args[nargs++] = strtod(tok, &end);
                if (*end != '\0')
                    nargs = -100;
            }
            if (nargs < 0 || sscanf(eq + 1, "%lf %7s %lf", &expected, kind, &tol) != 3
                || (strcmp(kind, "abs") != 0 && strcmp(kind, "rel") != 0)) {
                printf("%s:%d parse error (arguments or '= value abs|rel tol')\n", argv[k], lineno);
                n_parse++;
                continue;
            }
            for (i = 0; i < NMAP; i++) {
                if (strcmp(MAP[i].name, name) == 0 && MAP[i].nargs == nargs) {
                    found = i;
                    break;
                }
            }
            n++;
            if (found < 0) {
                n_skip++;
                note_skip(name);
                if (!quiet)
                    printf("%s:%d %s - nan %.17g skip\n", argv[k], lineno, name, expected);
                continue;
            }
            for (i = 0; i < nargs; i++)
                fargs[i] = (TG_FLOAT)args[i];   /* the float build rounds each argument once */
            st = MAP[found].fn(fargs, &got);
            err = fabs((double)got - expected);
            if (strcmp(kind, "rel") == 0)
                err = err / fabs(expected);
            ok = st == TG_OK && err <= tol;
            if (ok)
                n_ok++;
            else
                n_bad++;
            if (!quiet || !ok)
                printf("%s:%d %s %s %.17g %.17g %s\n", argv[k], lineno, name, tg_status_name(st),
                       (double)got, expected, ok ? "ok" : "FAIL");
        }
        fclose(f);
    }
    printf("cases %ld ok %ld failed %ld skipped %ld\n", n, n_ok, n_bad, n_skip);
    printf("skipped:");
    for (k = 0; k < n_skip_names; k++)
        printf(" %s(%d)", skip_names[k], skip_counts[k]);
    printf("\n");
    return (n_bad || n_parse) ? 1 : 0;
}
