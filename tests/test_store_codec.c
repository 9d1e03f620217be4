/* test_store_codec.c: the store's compact encoding (src/store_codec.h) gives back every value bit
 * for bit on every kind of series it meets (whole watts, 1-Hz times with gaps, decimals, the
 * sixtieths of a linear fill, curve means weighted by their durations, arbitrary doubles), keeps
 * a 1-Hz time channel in a few bytes, refuses damaged bytes, and a session stored through the
 * store comes back exactly. */
#include "cpdomain/status.h"
#include "cpdomain/store.h"
#include "rng.h"
#include "store_codec.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <cmocka.h>
#include "tmpstore.h"

enum { N = 7200 };

/* Encodes v, decodes it and checks every bit; returns the encoded size. */
static size_t round_trip(const double *v, const double *w, size_t n)
{
    cpd_codec *z = cpd_codec_alloc();
    assert_non_null(z);
    size_t cap = cpd_codec_bound(n), len = 0;
    unsigned char *buf = malloc(cap);
    double *back = malloc(n * sizeof *back);
    assert_non_null(buf);
    assert_non_null(back);
    assert_int_equal(cpd_codec_encode(z, v, w, n, buf, cap, &len), CPD_OK);
    assert_true(len > 2 && len <= cap);
    assert_int_equal(cpd_codec_decode(z, buf, len, w, n, back), CPD_OK);
    assert_memory_equal(back, v, n * sizeof *v);
    /* the count must match: one value more or fewer is damage */
    if (n > 1)
        assert_int_equal(cpd_codec_decode(z, buf, len, w, n - 1, back), CPD_EDATA);
    free(back);
    free(buf);
    cpd_codec_free(z);
    return len;
}

static void series(void **state)
{
    (void)state;
    double *v = malloc(N * sizeof *v), *w = malloc(N * sizeof *w);
    assert_non_null(v);
    assert_non_null(w);
    rng r = {0xc0dec};
    /* 1-Hz times from 1037 s with a 3-s dropout and a 2-min pause: a few bytes */
    double t = 1037;
    for (int i = 0; i < N; i++) {
        v[i] = t;
        t += i == 2000 ? 4 : i == 4800 ? 121 : 1;
    }
    size_t time_bytes = round_trip(v, NULL, N);
    assert_true(time_bytes < 64);
    /* whole watts: about a byte or two per value, far below 8 */
    for (int i = 0; i < N; i++)
        v[i] = nearbyint(fmax(0, 215 + 60 * rng_normal(&r)));
    assert_true(round_trip(v, NULL, N) < 2 * N);
    /* speeds to 0.01 m/s, distances to 0.1 m, the sixtieths of a linear fill of whole numbers */
    for (int i = 0; i < N; i++)
        v[i] = (double)(300 + (int)(90 * rng_uniform(&r))) / 100;
    round_trip(v, NULL, N);
    for (int i = 0; i < N; i++)
        v[i] = (double)(i * 93 + (int)(10 * rng_uniform(&r))) / 10;
    round_trip(v, NULL, N);
    for (int i = 0; i < N; i++)
        v[i] = (double)(200 * 3 + (int)(3 * rng_uniform(&r))) / 3;
    round_trip(v, NULL, N);
    /* curve means: whole sums over each duration, weighted by the duration */
    for (int i = 0; i < N; i++) {
        w[i] = i + 1;
        v[i] = (double)(250 * (i + 1) + (int)(5000 * rng_uniform(&r))) / (i + 1);
    }
    assert_true(round_trip(v, w, N) < 4 * N);
    /* arbitrary doubles, negatives, signed zero, huge and tiny: kept as doubles, still exact */
    for (int i = 0; i < N; i++)
        v[i] = 250 * rng_normal(&r);
    v[3] = -0.0;
    v[4] = 1e300;
    v[5] = 5e-324;
    v[6] = 9007199254740993.0;
    round_trip(v, NULL, N);
    round_trip(v, w, N);
    /* one value */
    round_trip(v + 4, NULL, 1);
    free(w);
    free(v);
}

static void damage(void **state)
{
    (void)state;
    double v[64], back[64];
    cpd_codec *z = cpd_codec_alloc();
    assert_non_null(z);
    for (int i = 0; i < 64; i++)
        v[i] = 100 + i % 7;
    unsigned char buf[1024];
    size_t len = 0;
    assert_true(cpd_codec_bound(64) <= sizeof buf);
    assert_int_equal(cpd_codec_encode(z, v, NULL, 64, buf, sizeof buf, &len), CPD_OK);
    /* truncated, a bad tag, a bad scale, nothing at all, a cap too small, no values */
    assert_int_equal(cpd_codec_decode(z, buf, len - 1, NULL, 64, back), CPD_EDATA);
    unsigned char bad[1024];
    memcpy(bad, buf, len);
    bad[0] = 'X';
    assert_int_equal(cpd_codec_decode(z, bad, len, NULL, 64, back), CPD_EDATA);
    memcpy(bad, buf, len);
    bad[1] = 200;
    assert_int_equal(cpd_codec_decode(z, bad, len, NULL, 64, back), CPD_EDATA);
    assert_int_equal(cpd_codec_decode(z, buf, 1, NULL, 64, back), CPD_EDATA);
    assert_int_equal(cpd_codec_encode(z, v, NULL, 64, buf, 10, &len), CPD_EUSAGE);
    assert_int_equal(cpd_codec_encode(z, v, NULL, 0, buf, sizeof buf, &len), CPD_EUSAGE);
    /* every single flipped byte is refused or decodes to some values, never crashes */
    assert_int_equal(cpd_codec_encode(z, v, NULL, 64, buf, sizeof buf, &len), CPD_OK);
    for (size_t i = 2; i < len; i++) {
        memcpy(bad, buf, len);
        bad[i] ^= 0x5a;
        int rc = cpd_codec_decode(z, bad, len, NULL, 64, back);
        assert_true(rc == CPD_OK || rc == CPD_EDATA);
    }
    cpd_codec_free(z);
    cpd_codec_free(NULL);
}

static void through_the_store(void **state)
{
    (void)state;
    char path[TMPSTORE_MAX];
    cpd_store *s = NULL;
    assert_int_equal(tmpstore_open(path, sizeof path, "codec", &s), 0);
    cpd_athlete a = {0};
    snprintf(a.code, sizeof a.code, "K7");
    snprintf(a.name, sizeof a.name, "Codec Check");
    snprintf(a.sport, sizeof a.sport, "cycling");
    int64_t aid = 0, id = 0;
    assert_int_equal(cpd_store_athlete_add(s, &a, &aid), CPD_OK);
    enum { M = 3000 };
    double t[M], p[M], hr[M], dist[M];
    rng r = {0x5702e};
    for (int i = 0; i < M; i++) {
        t[i] = 12.5 + i + (i > 1700 ? 30 : 0);
        p[i] = nearbyint(220 + 70 * rng_normal(&r));
        hr[i] = 131.25 + 20 * rng_uniform(&r); /* any double */
        dist[i] = (double)(9 * i + (int)(10 * rng_uniform(&r))) / 10;
    }
    cpd_session_samples x = {M, t, p, hr, NULL, dist};
    cpd_session_rec rec = {0};
    snprintf(rec.athlete, sizeof rec.athlete, "K7");
    snprintf(rec.date, sizeof rec.date, "2026-04-01");
    rec.hash = 0x1234abcdULL;
    rec.n_samples = M;
    rec.spike_limit = 2500;
    /* a curve of 3 points with means that are sums over 1, 2, 3 s, and integer starts */
    double cd[3] = {1, 2, 3}, cv[3] = {611, 1103.0 / 2, 1502.0 / 3}, cs[3] = {17, 16, 1800};
    cpd_mmp_curve c = {3, cd, cv, cs};
    assert_int_equal(cpd_store_session_add(s, &rec, &x, &c, &id), CPD_OK);
    cpd_session_rec back;
    cpd_session_samples *y = NULL;
    assert_int_equal(cpd_store_session_get(s, id, 0, &back, &y), CPD_OK);
    assert_int_equal(y->n, M);
    assert_memory_equal(y->time_s, t, sizeof t);
    assert_memory_equal(y->value, p, sizeof p);
    assert_memory_equal(y->hr_bpm, hr, sizeof hr);
    assert_memory_equal(y->distance_m, dist, sizeof dist);
    assert_null(y->cadence_rpm);
    cpd_store_samples_free(y);
    double *buf = NULL;
    cpd_mmp_curve cb;
    assert_int_equal(cpd_store_session_curve(s, id, &buf, &cb), CPD_OK);
    assert_int_equal(cb.n, 3);
    assert_memory_equal(cb.value, cv, sizeof cv);
    assert_memory_equal(cb.start_s, cs, sizeof cs);
    free(buf);
    tmpstore_close(path, s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(series),
        cmocka_unit_test(damage),
        cmocka_unit_test(through_the_store),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
