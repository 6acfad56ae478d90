/* checkpoint.c -- twin of tinygeo/checkpoint.py: the frame every checkpoint
 * blob shares (tg_column_to_bytes, tg_station_to_bytes): little-endian IEEE
 * doubles and int32s, the CRC-32 of IEEE 802.3 four bits at a time
 * (checkpoint.crc32_soft), and the restore checks of checkpoint.check_values
 * read from the same spec text as Python's. Internal (tg_internal.h). */
#include <stddef.h>
#include <stdint.h>
#include <string.h>
#include "tg_internal.h"

typedef char tg__ieee_double[(sizeof(double) == 8 && sizeof(uint64_t) == 8) ? 1 : -1];

/* checkpoint.crc32_soft: CRC-32 (IEEE 802.3, reflected polynomial
 * 0xEDB88320, as zlib/binascii), four bits at a time with a 16-entry table */
uint32_t tg__crc32(const unsigned char *data, size_t n)
{
    static const uint32_t T[16] = {
        0x00000000u, 0x1db71064u, 0x3b6e20c8u, 0x26d930acu, 0x76dc4190u, 0x6b6b51f4u,
        0x4db26158u, 0x5005713cu, 0xedb88320u, 0xf00f9344u, 0xd6d6a3e8u, 0xcb61b38cu,
        0x9b64c2b0u, 0x86d3d2d4u, 0xa00ae278u, 0xbdbdf21cu
    };
    uint32_t c = 0xFFFFFFFFu;
    size_t i;
    for (i = 0; i < n; i++) {
        unsigned b = data[i];
        c = T[(c ^ b) & 15u] ^ (c >> 4);
        c = T[(c ^ (b >> 4)) & 15u] ^ (c >> 4);
    }
    return c ^ 0xFFFFFFFFu;
}

unsigned char *tg__put_f64(unsigned char *b, double d)
{
    uint64_t u;
    int i;
    memcpy(&u, &d, 8);
    for (i = 0; i < 8; i++)
        b[i] = (unsigned char)(u >> (8 * i));
    return b + 8;
}

double tg__get_f64(const unsigned char *b)
{
    uint64_t u = 0;
    double x;
    int i;
    for (i = 7; i >= 0; i--)
        u = (u << 8) | b[i];
    memcpy(&x, &u, 8);
    return x;
}

/* struct "<I": little-endian uint32 */
unsigned char *tg__put_u32(unsigned char *b, uint32_t u)
{
    int i;
    for (i = 0; i < 4; i++)
        b[i] = (unsigned char)(u >> (8 * i));
    return b + 4;
}

uint32_t tg__get_u32(const unsigned char *b)
{
    return (uint32_t)b[0] | ((uint32_t)b[1] << 8) | ((uint32_t)b[2] << 16) | ((uint32_t)b[3] << 24);
}

/* struct "<i": two's complement int32. Both directions are defined for every
 * value and bit pattern whatever the width of int and long: int32_t ->
 * uint32_t is modular; back, a pattern of 2^31 or more is -(int32_t)~u - 1
 * (~u is below 2^31), never an out-of-range conversion or an overflow. */
unsigned char *tg__put_i32(unsigned char *b, int32_t v)
{
    return tg__put_u32(b, (uint32_t)v);
}

int32_t tg__get_i32(const unsigned char *b)
{
    uint32_t u = tg__get_u32(b);
    return u <= 0x7FFFFFFFu ? (int32_t)u : -(int32_t)~u - 1;
}

/* parse one bound of a check_values spec: "*" (none) or a decimal number
 * (sign, digits, optional fraction: digits / 10^k, correctly rounded for the
 * short literals the specs hold); advances *s */
static int spec_num(const char **s, double *v)
{
    const char *p = *s;
    double mant = 0.0, scale = 1.0, p10 = 1.0;
    int neg = 0, frac = 0, nfrac = 0, e = 0, eneg = 0, k;
    while (*p == ' ')
        p++;
    if (*p == '*') {
        *s = p + 1;
        return 0;
    }
    if (*p == '-') {
        neg = 1;
        p++;
    }
    for (; (*p >= '0' && *p <= '9') || *p == '.'; p++) {
        if (*p == '.') {
            frac = 1;
            continue;
        }
        mant = mant * 10.0 + (double)(*p - '0');
        if (frac) {
            scale *= 10.0;
            nfrac++;
        }
    }
    if (*p != 'e') {
        *v = (neg ? -mant : mant) / scale;
        *s = p;
        return 1;
    }
    /* an exponent: mant x 10^(e - digits after the point), rounded once (10^k
     * is exact up to k = 22; the spec's larger powers have the mantissa 1,
     * 1e25 = 1e22 x 10^3 rounded once: float()'s value) */
    p++;
    if (*p == '-' || *p == '+')
        eneg = *p++ == '-';
    for (; *p >= '0' && *p <= '9'; p++)
        e = e * 10 + (*p - '0');
    e = (eneg ? -e : e) - nfrac;
    k = e < 0 ? -e : e;
    if (k > 22) {
        p10 = 1e22;
        k -= 22;
    }
    for (; k > 0; k--)
        p10 *= 10.0;
    *v = e < 0 ? mant / p10 : mant * p10;
    if (neg)
        *v = -*v;
    *s = p;
    return 1;
}

/* checkpoint.check_values: every entry "name lo hi [n]" of spec must hold for
 * the value of that name (names, vals: the layout's names as C members and
 * the restored values as doubles). 0 if one fails. */
int tg__check_values(const char *spec, const char *const *names, const double *vals)
{
    const char *s = spec;
    while (*s) {
        char name[40];
        size_t len = 0;
        double lo = 0.0, hi = 0.0, v;
        int has_lo, has_hi, nan_ok = 0, i;
        while (*s == ' ' || *s == ';')
            s++;
        if (*s == '\0')
            break;
        if (*s == '_')
            s++;                      /* the C member has no leading underscore */
        while (*s && *s != ' ' && len < sizeof name - 2)
            name[len++] = *s++;
        name[len] = '\0';
        if (strcmp(name, "int") == 0) {   /* gen_tables.c_member: a C keyword gets a '_' */
            name[len++] = '_';
            name[len] = '\0';
        }
        has_lo = spec_num(&s, &lo);
        has_hi = spec_num(&s, &hi);
        while (*s == ' ')
            s++;
        if (*s == 'n') {
            nan_ok = 1;
            s++;
        }
        for (i = 0; names[i] != NULL && strcmp(names[i], name) != 0; i++)
            ;
        if (names[i] == NULL)
            return 0;                 /* a spec naming no field: never written by the Python class */
        v = vals[i];
        if (v != v) {
            if (nan_ok)
                continue;
            return 0;
        }
        if ((has_lo && v < lo) || (has_hi && v > hi))
            return 0;
    }
    return 1;
}

/* a restored double into a field of the object: a tg_time (double) field
 * takes it as it is, a TG_FLOAT field rounded to TG_FLOAT; 0 when a float
 * build cannot hold it (finite in the blob, infinite as a float: a blob of
 * another build; Python on a float32 board would refuse it the same way) */
int tg__set_num(void *field, size_t size, double v)
{
    if (size == sizeof(double)) {
        memcpy(field, &v, sizeof v);
    } else {
        float x = (float)v;
        if (isinf(x) && !isinf(v))
            return 0;
        memcpy(field, &x, sizeof x);
    }
    return 1;
}
typedef char tg__float_or_double[(sizeof(TG_FLOAT) == sizeof(double) || sizeof(TG_FLOAT) == sizeof(float))
                                 ? 1 : -1];

