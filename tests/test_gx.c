/* test_gx.c: gas-exchange series: outliers, interpolation, rolling means. Hand-checkable values. */
#include "cpdomain/gx.h"
#include "cpdomain/status.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"

static void interpolation_is_linear_and_merges_ties(void **state)
{
    (void)state;
    cpd_gx_series *s = cpd_gx_alloc(4, CPD_GX_BIT(CPD_GX_VO2));
    const double t[4] = {0.4, 2.4, 2.4, 5.9}, v[4] = {1000, 1200, 1400, 1650};
    for (int i = 0; i < 4; i++) {
        s->t_s[i] = t[i];
        s->ch[CPD_GX_VO2][i] = v[i];
    }
    cpd_gx_series *g = NULL;
    assert_int_equal(cpd_gx_interp(s, 1.0, &g), CPD_OK);
    /* grid 1..5 s; the two breaths at 2.4 s merge to 1300 */
    assert_int_equal(g->n, 5);
    assert_near(g->t_s[0], 1.0, 1e-12);
    assert_near(g->ch[CPD_GX_VO2][0], 1000 + 0.6 / 2.0 * 300, 1e-9);
    assert_near(g->ch[CPD_GX_VO2][2], 1300 + 0.6 / 3.5 * 350, 1e-9);
    assert_near(g->ch[CPD_GX_VO2][4], 1300 + 2.6 / 3.5 * 350, 1e-9);
    assert_null(g->ch[CPD_GX_VCO2]);
    cpd_gx_free(g);
    s->n = 1;
    assert_int_equal(cpd_gx_interp(s, 1.0, &g), CPD_ENODATA);
    assert_int_equal(cpd_gx_interp(s, 0.0, &g), CPD_EUSAGE);
    cpd_gx_free(s);
}

static void outliers_flag_only_the_wild_breath(void **state)
{
    (void)state;
    enum { N = 40 };
    cpd_gx_series *s = cpd_gx_alloc(N, CPD_GX_BIT(CPD_GX_VO2));
    for (int i = 0; i < N; i++) {
        s->t_s[i] = 2.1 * i;
        s->ch[CPD_GX_VO2][i] = 2000 + 37.0 * sin(1.7 * i); /* deterministic breath noise, SD about 26 */
    }
    s->ch[CPD_GX_VO2][17] = 3100; /* a cough */
    unsigned char flag[N];
    size_t nf = 0;
    assert_int_equal(cpd_gx_outliers(s, CPD_GX_VO2, 5, 4.0, flag, &nf), CPD_OK);
    assert_int_equal(nf, 1);
    assert_int_equal(flag[17], 1);
    cpd_gx_series *f = cpd_gx_filter(s, flag);
    assert_int_equal(f->n, N - 1);
    assert_near(f->t_s[17], 2.1 * 18, 1e-12);
    cpd_gx_free(f);
    assert_int_equal(cpd_gx_outliers(s, CPD_GX_VCO2, 5, 4.0, flag, &nf), CPD_EUSAGE);
    cpd_gx_free(s);
}

static void rolling_mean(void **state)
{
    (void)state;
    const double x[5] = {1, 2, 3, 4, 10};
    double m[5];
    assert_int_equal(cpd_gx_rolling_mean(x, 5, 3, m), CPD_OK);
    assert_near(m[0], 1, 1e-12);
    assert_near(m[1], 1.5, 1e-12);
    assert_near(m[2], 2, 1e-12);
    assert_near(m[4], 17.0 / 3, 1e-12);
    assert_int_equal(cpd_gx_rolling_mean(x, 5, 0, m), CPD_EUSAGE);
    assert_string_equal(cpd_gx_channel_name(CPD_GX_PETCO2), "petco2_mmhg");
    assert_null(cpd_gx_channel_name(CPD_GX_NCHAN));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(interpolation_is_linear_and_merges_ties),
        cmocka_unit_test(outliers_flag_only_the_wild_breath),
        cmocka_unit_test(rolling_mean),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
