/* record.c -- twin of tinygeo/record.py: tinygeo's plain-text table of
 * per-reading results, written by a device. The layout (record.MAGIC,
 * record.HEADER, record.FORMAT, record.EVENT_WORDS, record.SITE_PREFIX) comes
 * from record.py through tg_tables.h, so the two cannot drift; the functions
 * are record.events_text, record.row, record.column_row,
 * record.site_line, record.end_line and record.resume_line with a tg_record_
 * prefix. Each writes into the caller's
 * buffer like snprintf and returns the length of the whole text (without the
 * NUL), so a result >= size means it was cut; no allocation.
 *
 * Numbers: FORMAT's %d/%.Nf are C's printf conversions, which round
 * correctly (glibc, newlib with its full printf), as Python's % does; a NaN
 * is written "nan" whatever its sign bit (Python writes no sign on a NaN,
 * printf may write "-nan"). site_line's %r is Python's repr of a float: the
 * shortest text that reads back to the same double, "48.2", "512.0",
 * "1e+16", "nan" (repr_double below). In the float build the values are the
 * float's, printed as the double of the same value.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "tg_internal.h"

const char tg_record_magic[] = TGPY_RECORD_MAGIC;
const char tg_record_header[] = TGPY_RECORD_HEADER;

/* a NaN of either sign as the quiet NaN printf writes "nan" for */
static double plain(TG_FLOAT x)
{
    return x != x ? (double)NAN : (double)x;
}

/* record.events_text: the events field for event bits ('-' when none); a
 * level word per pressure of level_p_pa (n_levels of them, lowest first) */
int tg_record_events_text(int bits, const TG_FLOAT *level_p_pa, int n_levels, char *buf,
                          size_t size)
{
    char out[256];
    size_t len = 0;
    int i;
    if (!bits)
        return snprintf(buf, size, "-");
#define WORD(bit, word) \
    if (bits & (bit)) { \
        if ((bit) == TGPY_RECORD_EV_LEVEL) { \
            for (i = 0; i < n_levels && len < sizeof out - 16; i++) \
                len += (size_t)sprintf(out + len, "+level%d", (int)((double)level_p_pa[i] / 100.0 + 0.5)); \
        } else if (len < sizeof out - 16) { \
            len += (size_t)sprintf(out + len, "+%s", word); \
        } \
    }
    TGPY_RECORD_EVENT_WORDS(WORD)
#undef WORD
    out[len] = '\0';
    return snprintf(buf, size, "%s", out + 1);
}

/* record.row: one table row (no newline); NaN for a value not given */
int tg_record_row(int32_t line, TG_FLOAT time_s, TG_FLOAT p_pa, TG_FLOAT t_k, TG_FLOAT rh_pct,
                  TG_FLOAT td_k, TG_FLOAT gps_m, TG_FLOAT gph_m, TG_FLOAT height_m,
                  TG_FLOAT rate_m_s, TG_FLOAT sigma_m, int32_t flags, const char *events,
                  char *buf, size_t size)
{
    return snprintf(buf, size, TGPY_RECORD_FORMAT, (int)line, plain(time_s), plain(p_pa),
                    plain(t_k), plain(rh_pct), plain(td_k), plain(gps_m), plain(gph_m),
                    plain(height_m), plain(rate_m_s), plain(sigma_m), (int)flags, events);
}

/* record.column_row: the row of the reading the column has just accepted;
 * rh_pct, gps_m, td_k: NULL for None */
int tg_record_column_row(int32_t line, const tg_column *col, int bits, const TG_FLOAT *rh_pct,
                         const TG_FLOAT *gps_m, const TG_FLOAT *td_k, char *buf, size_t size)
{
    char ev[256];
    TG_FLOAT lev = col->level_p_pa;
    tg_record_events_text(bits, &lev, 1, ev, sizeof ev);
    return tg_record_row(line, tg_column_time_s(col), tg_column_p_pa(col), tg_column_t_k(col),
                         rh_pct ? *rh_pct : TG_NAN, td_k ? *td_k : TG_NAN, gps_m ? *gps_m : TG_NAN,
                         tg_column_gph_m(col), tg_column_height_m(col), tg_column_rate_m_s(col),
                         tg_column_sigma_m(col), tg_column_flags(col), ev, buf, size);
}

/* Python's repr of a float: the shortest %.Ne text that reads back as x,
 * written as repr writes it (fixed notation with at least one decimal for
 * exponents -4..15, else d.ddde+XX) */
static void repr_double(double x, char *out)
{
    char e[40], digits[24];
    int prec, exp10, nd = 0, i;
    const char *s;
    char *w = out;
    if (x != x) {
        strcpy(out, "nan");
        return;
    }
    if (isinf(x)) {
        strcpy(out, x > 0 ? "inf" : "-inf");
        return;
    }
    for (prec = 0; prec < 17; prec++) {
        sprintf(e, "%.*e", prec, x);
        if (strtod(e, NULL) == x)
            break;
    }
    s = e;
    if (*s == '-') {
        *w++ = '-';
        s++;
    }
    for (; *s && *s != 'e'; s++)
        if (*s != '.')
            digits[nd++] = *s;
    digits[nd] = '\0';
    exp10 = atoi(s + 1);
    while (nd > 1 && digits[nd - 1] == '0')
        digits[--nd] = '\0';
    if (-4 <= exp10 && exp10 < 16) {
        if (exp10 < 0) {
            w += sprintf(w, "0.");
            for (i = -1; i > exp10; i--)
                *w++ = '0';
            w += sprintf(w, "%s", digits);
        } else {
            for (i = 0; i <= exp10; i++)
                *w++ = i < nd ? digits[i] : '0';
            *w++ = '.';
            if (nd > exp10 + 1)
                w += sprintf(w, "%s", digits + exp10 + 1);
            else
                *w++ = '0';
            *w = '\0';
        }
    } else {
        *w++ = digits[0];
        if (nd > 1) {
            *w++ = '.';
            w += sprintf(w, "%s", digits + 1);
        }
        sprintf(w, "e%c%02d", exp10 < 0 ? '-' : '+', exp10 < 0 ? -exp10 : exp10);
    }
}

/* the flag settings (Python's True/False, written 1/0 by site_line) */
static int is_flag(const char *name)
{
    return strcmp(name, "ice") == 0 || strcmp(name, "dry_fallback") == 0
           || strcmp(name, "track_sigma") == 0;
}

/* record.site_line: the "# site" line of the column's set-up: key=value
 * words of record.SITE_KEYS (nan for a setting that is None, 1/0 for a flag) */
int tg_record_site_line(const tg_column *col, char *buf, size_t size)
{
    char out[1024], v[40];
    size_t len;
    strcpy(out, TGPY_RECORD_SITE_PREFIX);
    len = strlen(out) - 1;     /* SITE_PREFIX[:-1]: each word brings its space */
    out[len] = '\0';
#define WORD(name) \
    if (is_flag(#name)) \
        sprintf(v, "%d", (int)col->name != 0); \
    else \
        repr_double(plain((TG_FLOAT)col->name), v); \
    len += (size_t)sprintf(out + len, " %s=%s", #name, v);
    TGPY_RECORD_SITE_KEYS(WORD)
#undef WORD
    return snprintf(buf, size, "%s", out);
}

/* record.end_line: the end record after the last row (END_PREFIX, the rows
 * written and the column's counters) */
int tg_record_end_line(int32_t rows, const tg_column *col, char *buf, size_t size)
{
    return snprintf(buf, size, "%srows=%ld count=%ld rejected=%ld retracted=%ld", TGPY_RECORD_END_PREFIX,
                    (long)rows, (long)col->count, (long)col->rejected, (long)col->retracted);
}

/* record.resume_line: the resume record of a logger that goes on from a
 * checkpoint taken before reading `line` (RESUME_PREFIX "line=N"): rows
 * written earlier with a line of N or more are void. Write it after a line
 * end of its own ("\n" first: the power cut may have torn the last row). The
 * last word, RESUME_WHOLE ("whole"), tells a reader the record is whole. */
int tg_record_resume_line(int32_t line, char *buf, size_t size)
{
    return snprintf(buf, size, "%sline=%ld %s", TGPY_RECORD_RESUME_PREFIX, (long)line,
                    TGPY_RECORD_RESUME_WHOLE);
}
