/* test_csvfast.c: the fast path for plain numeric CSV (src/csvfast.h) reads every number as the C
 * library's strtod does, bit for bit, on random decimals of every shape; it takes LF and CRLF ends,
 * a byte-order mark and blanks around fields; and it hands every file it is not sure of back to
 * the full parser (-1): quotes, blank lines, short and long rows, a lone CR, h:mm:ss, exponents,
 * words, empty fields, NUL bytes, more rows than room. */
#include "csvfast.h"
#include "rng.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

static const char *const WANT[3] = {"time_s", "power_w", "hr_bpm"};

static long parse(const char *text, int *col, double *t, double *p, double *h, size_t cap)
{
    double *const dst[3] = {t, p, h};
    return cpd_csvfast_numbers(text, strlen(text), 3, WANT, col, dst, cap);
}

static void numbers_as_strtod(void **state)
{
    (void)state;
    enum { ROWS = 4000 };
    size_t cap = ROWS * 96 + 64, len = 0;
    char *text = malloc(cap);
    double *t = malloc(ROWS * sizeof *t), *p = malloc(ROWS * sizeof *p), *h = malloc(ROWS * sizeof *h);
    assert_non_null(text);
    assert_non_null(t);
    assert_non_null(p);
    assert_non_null(h);
    len += (size_t)snprintf(text, cap, "Time_S , other,POWER_W,hr_bpm\r\n");
    rng r = {0xfa57};
    char fields[ROWS][3][40];
    for (int i = 0; i < ROWS; i++) {
        /* whole numbers, 1 to 6 decimals, 15 to 19 significant digits (past the exact division:
         * strtod's own path), leading zeros, signs, a trailing point */
        int shape = i % 7;
        double x = 5000 * rng_uniform(&r);
        switch (shape) {
        case 0: snprintf(fields[i][1], 40, "%d", (int)x); break;
        case 1: snprintf(fields[i][1], 40, "%.*f", 1 + i % 6, x); break;
        case 2: snprintf(fields[i][1], 40, "%.15f", x); break;
        case 3: snprintf(fields[i][1], 40, "%.17g", x); break;
        case 4: snprintf(fields[i][1], 40, "000%.3f", x); break;
        case 5: snprintf(fields[i][1], 40, "+%.2f", x); break;
        default: snprintf(fields[i][1], 40, "%d.", (int)x); break;
        }
        snprintf(fields[i][0], 40, "%.1f", 0.5 * i);
        snprintf(fields[i][2], 40, " %d ", 100 + i % 90);
        len += (size_t)snprintf(text + len, cap - len, "%s,x%d,%s,%s%s", fields[i][0], i, fields[i][1], fields[i][2],
                                i % 2 ? "\n" : "\r\n");
    }
    int col[3];
    assert_int_equal(parse(text, col, t, p, h, ROWS), ROWS);
    assert_int_equal(col[0], 0);
    assert_int_equal(col[1], 2);
    assert_int_equal(col[2], 3);
    for (int i = 0; i < ROWS; i++) {
        /* the C library's strtod (glibc, correctly rounded) is the reference */
        double want[3] = {strtod(fields[i][0], NULL), strtod(fields[i][1], NULL), strtod(fields[i][2], NULL)};
        assert_memory_equal(&t[i], &want[0], sizeof(double));
        assert_memory_equal(&p[i], &want[1], sizeof(double));
        assert_memory_equal(&h[i], &want[2], sizeof(double));
    }
    /* more rows than room */
    assert_int_equal(parse(text, col, t, p, h, ROWS - 1), -1);
    free(text);
    free(t);
    free(p);
    free(h);
}

static void plain_or_not(void **state)
{
    (void)state;
    double t[8], p[8], h[8];
    int col[3];
    /* plain: BOM, no last line end, a missing wanted column, a header only, a negative (the caller
     * checks ranges) */
    assert_int_equal(parse("\xEF\xBB\xBFtime_s,power_w\n1,200\n2,-0.5", col, t, p, h, 8), 2);
    assert_true(col[2] == -1 && p[1] == -0.5 && t[1] == 2);
    assert_int_equal(parse("time_s,power_w\n", col, t, p, h, 8), 0);
    /* the full parser's files */
    const char *const odd[] = {
        "time_s,power_w\n1,\"200\"\n",      /* a quote */
        "time_s,power_w\n1,200\n\n2,210\n", /* a blank line */
        "time_s,power_w\n1\n",              /* a short row */
        "time_s,power_w\n1,200,3\n",        /* a long row */
        "time_s,power_w\r1,200\r",          /* lone CR line ends */
        "time_s,power_w\n0:01,200\n",       /* h:mm:ss */
        "time_s,power_w\n1,2e2\n",          /* an exponent */
        "time_s,power_w\n1,inf\n",          /* a word */
        "time_s,power_w\n1,\n",             /* an empty field */
        "time_s,power_w\n1,.\n",            /* no digit */
        "time_s,power_w\n1,2 0\n",          /* two numbers */
        "time_s,power_w\n1,0x10\n",         /* hex */
    };
    for (size_t k = 0; k < sizeof odd / sizeof odd[0]; k++)
        assert_int_equal(parse(odd[k], col, t, p, h, 8), -1);
    const char nul[] = "time_s,power_w\n1,2\0003\n";
    double *const dst[3] = {t, p, h};
    assert_int_equal(cpd_csvfast_numbers(nul, sizeof nul - 1, 3, WANT, col, dst, 8), -1);
    assert_int_equal(cpd_csvfast_rows_bound("a\nb\nc", 5), 3);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(numbers_as_strtod),
        cmocka_unit_test(plain_or_not),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
