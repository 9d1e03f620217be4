/* test_linfit.c: the OLS engine against NIST StRD certified values (Norris, Pontius, NoInt1, NoInt2)
 * and against numpy.linalg.lstsq computed at test time. */
#include "cpdomain/linfit.h"
#include "cpdomain/status.h"
#include "nist.h"
#include "pyref.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"

static double lre(double got, double cert)
{
    if (got == cert)
        return 15;
    return -log10(fabs(got - cert) / fabs(cert));
}

/* NIST certifies LLS values to 15 digits; a double-precision SVD reproduces at least 9 on these
 * lower/average-difficulty sets (NIST's own guidance treats LRE >= 9 as good for them). */
static void check_poly(const char *file, size_t deg, int with_intercept, double min_lre)
{
    nist_set s;
    char path[256];
    snprintf(path, sizeof path, "tests/data/nist/%s", file);
    assert_int_equal(nist_read(path, 0, &s), 0);
    cpd_linfit_result r;
    if (with_intercept) {
        assert_int_equal(cpd_linfit_poly(s.x, s.y, (size_t)s.n, deg, &r), CPD_OK);
        for (size_t j = 0; j <= deg; j++) {
            assert_true(lre(r.b[j], s.cert[j]) >= min_lre);
            assert_true(lre(r.se[j], s.cert_sd[j]) >= min_lre);
        }
    } else {
        assert_int_equal(cpd_linfit(s.x, s.y, (size_t)s.n, 1, 0, &r), CPD_OK);
        assert_true(lre(r.b[0], s.cert[1]) >= min_lre); /* NoInt files number the slope B1 */
        assert_true(lre(r.se[0], s.cert_sd[1]) >= min_lre);
    }
    assert_true(lre(r.s, s.resid_sd) >= min_lre);
}

static void norris(void **state)
{
    (void)state;
    check_poly("Norris.dat", 1, 1, 9);
}
static void pontius(void **state)
{
    (void)state;
    check_poly("Pontius.dat", 2, 1, 9);
}
static void noint1(void **state)
{
    (void)state;
    check_poly("NoInt1.dat", 1, 0, 9);
}
static void noint2(void **state)
{
    (void)state;
    check_poly("NoInt2.dat", 1, 0, 9);
}

static void cubic_against_numpy(void **state)
{
    (void)state;
    /* lactate-like data (invented): numpy.polyfit is the reference, computed now */
    const double x[7] = {100, 140, 180, 220, 260, 300, 340};
    const double y[7] = {1.12, 1.08, 1.31, 1.77, 2.64, 4.21, 7.03};
    char text[512] = "";
    for (int i = 0; i < 7; i++)
        snprintf(text + strlen(text), sizeof text - strlen(text), "%.17g %.17g\n", x[i], y[i]);
    double ref[4];
    assert_int_equal(pyref_run("polyfit.py", text, ref, 4, 0), 4);
    cpd_linfit_result r;
    assert_int_equal(cpd_linfit_poly(x, y, 7, 3, &r), CPD_OK);
    for (int j = 0; j < 4; j++)
        assert_true(fabs(r.b[j] - ref[j]) <= 1e-8 * fabs(ref[j]));
}

static void degenerate_input_is_refused(void **state)
{
    (void)state;
    const double x[3] = {2.385, 2.385, 2.385}, y[3] = {1, 2, 3};
    cpd_linfit_result r;
    assert_int_equal(cpd_linfit_line(x, y, 3, &r), CPD_ENODATA);
    assert_int_equal(cpd_linfit_line(x, y, 1, &r), CPD_EUSAGE);
    const double xn[2] = {1, NAN};
    assert_int_equal(cpd_linfit_line(xn, y, 2, &r), CPD_ENODATA);
    /* two points: exact line, zero residual, no standard error */
    const double x2[2] = {120, 480}, y2[2] = {36000, 126000};
    assert_int_equal(cpd_linfit_line(x2, y2, 2, &r), CPD_OK);
    assert_near(r.b[1], 250, 1e-9);
    assert_near(r.b[0], 6000, 1e-6);
    assert_int_equal(r.dof, 0);
    assert_near(r.se[1], 0, 0);
}

/* A workspace fit on the corner of larger scratch gives the same numbers as a one-off fit
 * (NIST Pontius, quadratic), and refuses problems larger than it was sized for. */
static void workspace_matches_one_off(void **state)
{
    (void)state;
    nist_set s;
    assert_int_equal(nist_read("tests/data/nist/Pontius.dat", 0, &s), 0);
    double X[NIST_NMAX * 3];
    for (int i = 0; i < s.n; i++) {
        X[3 * i] = 1;
        X[3 * i + 1] = s.x[i];
        X[3 * i + 2] = s.x[i] * s.x[i];
    }
    cpd_linfit_ws *w = cpd_linfit_alloc((size_t)s.n + 7, 4);
    assert_non_null(w);
    cpd_linfit_result a, b;
    assert_int_equal(cpd_linfit(X, s.y, (size_t)s.n, 3, 1, &a), CPD_OK);
    for (int rep = 0; rep < 2; rep++) {
        assert_int_equal(cpd_linfit_solve(w, X, s.y, (size_t)s.n, 3, 1, &b), CPD_OK);
        for (int j = 0; j < 3; j++) {
            assert_true(a.b[j] == b.b[j]);
            assert_true(a.se[j] == b.se[j]);
        }
        assert_true(a.rss == b.rss);
    }
    assert_int_equal(cpd_linfit_solve(w, X, s.y, (size_t)s.n + 8, 3, 1, &b), CPD_EUSAGE);
    assert_int_equal(cpd_linfit_solve(w, X, s.y, 6, 5, 1, &b), CPD_EUSAGE);
    assert_null(cpd_linfit_alloc(3, 4));
    assert_null(cpd_linfit_alloc(10, 0));
    cpd_linfit_free(w);
    cpd_linfit_free(NULL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(norris), cmocka_unit_test(pontius), cmocka_unit_test(noint1), cmocka_unit_test(noint2),
        cmocka_unit_test(cubic_against_numpy), cmocka_unit_test(degenerate_input_is_refused),
        cmocka_unit_test(workspace_matches_one_off),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
