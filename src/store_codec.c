/* store_codec.c: the compact, lossless encoding of the store's series (format in store_codec.h):
 * integer counts at the series' own resolution, delta + zigzag varints + zstd; raw doubles
 * otherwise. Every encoding is checked value by value, so decoding gives back the same bits. */
#include "store_codec.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <zstd.h>

static const double SCALES[] = {1, 10, 100, 1000, 60, 600, 6000, 60000, 1e4, 1e5, 1e6};
#define NSCALES (sizeof SCALES / sizeof SCALES[0])
#define HEAD 2
#define LEVEL 1 /* zstd's fastest: 4 % larger stores than its default level 3 here, for a faster import */
#define COUNT_MAX 2251799813685248.0 /* 2^51: counts stay below this */

struct cpd_codec {
    ZSTD_CCtx *cc;
    ZSTD_DCtx *dc;
    unsigned char *raw; /* the payload before compression or after decompression */
    size_t cap;
};

cpd_codec *cpd_codec_alloc(void)
{
    cpd_codec *z = calloc(1, sizeof *z);
    if (!z)
        return NULL;
    z->cc = ZSTD_createCCtx();
    z->dc = ZSTD_createDCtx();
    if (!z->cc || !z->dc) {
        cpd_codec_free(z);
        return NULL;
    }
    return z;
}

void cpd_codec_free(cpd_codec *z)
{
    if (!z)
        return;
    ZSTD_freeCCtx(z->cc);
    ZSTD_freeDCtx(z->dc);
    free(z->raw);
    free(z);
}

static unsigned char *scratch(cpd_codec *z, size_t need)
{
    if (need > z->cap) {
        unsigned char *p = realloc(z->raw, need);
        if (!p)
            return NULL;
        z->raw = p;
        z->cap = need;
    }
    return z->raw;
}

size_t cpd_codec_bound(size_t n)
{
    return HEAD + ZSTD_compressBound(8 * n + 16);
}

static uint64_t bits(double a)
{
    uint64_t u;
    memcpy(&u, &a, sizeof u);
    return u;
}

/* x rounded to the nearest integer, ties to even, for |x| < 2^51 (the caller checks): adding and
 * taking away 1.5·2^52 leaves no fraction in round-to-nearest, without a call to nearbyint. C17
 * evaluates double sums in double on x86-64 and elsewhere with FLT_EVAL_METHOD 0, and the
 * compiler may not fold (x + c) - c without -ffast-math, which this project never uses. */
static double round_int(double x)
{
    const double big = 6755399441055744.0;
    double y = x + big;
    return y - big;
}

static size_t put_varint(unsigned char *p, uint64_t x)
{
    size_t k = 0;
    while (x >= 0x80) {
        p[k++] = (unsigned char)(x | 0x80);
        x >>= 7;
    }
    p[k++] = (unsigned char)x;
    return k;
}

/* The counts of v at scale sc (with the weights) as zigzag varints of their differences into raw;
 * returns the bytes written, or 0 when some value is no count at this scale. One pass: the check
 * and the encoding together. */
static size_t counts(const double *v, const double *weight, size_t n, double sc, unsigned char *raw)
{
    size_t rl = 0;
    int64_t prev = 0;
    for (size_t i = 0; i < n; i++) {
        double m = weight ? sc * weight[i] : sc, x = v[i] * m;
        if (!(fabs(x) < COUNT_MAX))
            return 0;
        double q = round_int(x);
        if (bits(m == 1 ? q : q / m) != bits(v[i]))
            return 0;
        int64_t iq = (int64_t)q, d = iq - prev;
        rl += put_varint(raw + rl, ((uint64_t)d << 1) ^ (uint64_t)(d >> 63));
        prev = iq;
    }
    return rl;
}

int cpd_codec_encode(cpd_codec *z, const double *v, const double *weight, size_t n, unsigned char *out, size_t cap,
                     size_t *len)
{
    *len = 0;
    if (n == 0 || cap < cpd_codec_bound(n))
        return CPD_EUSAGE;
    /* counts take at most 10 bytes each as varints; doubles exactly 8 */
    unsigned char *raw = scratch(z, 10 * n);
    if (!raw)
        return CPD_ENOMEM;
    size_t rl = 0;
    int sc = 0;
    for (; sc < (int)NSCALES && !(rl = counts(v, weight, n, SCALES[sc], raw)); sc++)
        ;
    if (sc == (int)NSCALES) {
        sc = -1;
        for (size_t i = 0; i < n; i++) {
            uint64_t b = bits(v[i]);
            for (size_t k = 0; k < 8; k++)
                raw[k * n + i] = (unsigned char)(b >> (8 * k));
        }
        rl = 8 * n;
    }
    out[0] = sc >= 0 ? 'Q' : 'F';
    out[1] = (unsigned char)(sc >= 0 ? sc : 0);
    size_t got = ZSTD_compressCCtx(z->cc, out + HEAD, cap - HEAD, raw, rl, LEVEL);
    if (ZSTD_isError(got))
        return CPD_ENOMEM; /* with cap >= the bound, only an allocation inside zstd can fail */
    *len = HEAD + got;
    return CPD_OK;
}

int cpd_codec_decode(cpd_codec *z, const void *in, size_t len, const double *weight, size_t n, double *out)
{
    const unsigned char *p = in;
    if (len < HEAD || n == 0 || (p[0] != 'Q' && p[0] != 'F') || (p[0] == 'Q' && p[1] >= NSCALES) ||
        (p[0] == 'F' && p[1] != 0))
        return CPD_EDATA;
    unsigned long long rl = ZSTD_getFrameContentSize(p + HEAD, len - HEAD);
    if (rl == ZSTD_CONTENTSIZE_ERROR || rl == ZSTD_CONTENTSIZE_UNKNOWN || rl > 10ull * n ||
        (p[0] == 'F' && rl != 8ull * n))
        return CPD_EDATA;
    unsigned char *raw = scratch(z, rl ? (size_t)rl : 1);
    if (!raw)
        return CPD_ENOMEM;
    int rc = CPD_OK;
    size_t got = ZSTD_decompressDCtx(z->dc, raw, (size_t)rl, p + HEAD, len - HEAD);
    if (ZSTD_isError(got) || got != rl) {
        rc = CPD_EDATA;
        goto done;
    }
    if (p[0] == 'F') {
        for (size_t i = 0; i < n; i++) {
            uint64_t b = 0;
            for (size_t k = 0; k < 8; k++)
                b |= (uint64_t)raw[k * n + i] << (8 * k);
            memcpy(&out[i], &b, 8);
        }
        goto done;
    }
    double sc = SCALES[p[1]];
    size_t at = 0;
    int64_t q = 0;
    for (size_t i = 0; i < n; i++) {
        uint64_t x = 0;
        for (unsigned sh = 0;; sh += 7) {
            if (at == got || sh > 63) {
                rc = CPD_EDATA;
                goto done;
            }
            unsigned char b = raw[at++];
            x |= (uint64_t)(b & 0x7f) << sh;
            if (!(b & 0x80))
                break;
        }
        /* unsigned: damaged bytes wrap instead of overflowing */
        q = (int64_t)((uint64_t)q + ((x >> 1) ^ (0 - (x & 1))));
        double m = weight ? sc * weight[i] : sc;
        out[i] = (double)q / m;
    }
    if (at != got)
        rc = CPD_EDATA;
done:
    return rc;
}
