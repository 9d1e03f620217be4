/* test_nlfit.c: the nonlinear least-squares engine against NIST StRD certified values
 * (Misra1a, Misra1b, BoxBOD, Rat42, MGH09, Thurber, Eckerle4, each from both NIST starts). */
#include "cpdomain/nlfit.h"
#include "cpdomain/status.h"
#include "nist.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#ifndef TESTDATA
#define TESTDATA "tests/data"
#endif

/* Each model gives its residual f = model - y and the analytic Jacobian row for one point. */
typedef double (*model_fn)(const double *b, double x, double *grad);

/* Misra1a, BoxBOD: y = b1 (1 - exp(-b2 x)) */
static double m_expo(const double *b, double x, double *g)
{
    double e = exp(-b[1] * x);
    g[0] = 1 - e;
    g[1] = b[0] * x * e;
    return b[0] * (1 - e);
}
/* Misra1b: y = b1 (1 - (1 + b2 x / 2)^-2) */
static double m_misra1b(const double *b, double x, double *g)
{
    double u = 1 + b[1] * x / 2;
    g[0] = 1 - 1 / (u * u);
    g[1] = b[0] * x / (u * u * u);
    return b[0] * (1 - 1 / (u * u));
}
/* Rat42: y = b1 / (1 + exp(b2 - b3 x)) */
static double m_rat42(const double *b, double x, double *g)
{
    double e = exp(b[1] - b[2] * x);
    double d = 1 + e;
    g[0] = 1 / d;
    g[1] = -b[0] * e / (d * d);
    g[2] = b[0] * x * e / (d * d);
    return b[0] / d;
}
/* MGH09: y = b1 (x^2 + x b2) / (x^2 + x b3 + b4) */
static double m_mgh09(const double *b, double x, double *g)
{
    double nu = x * x + x * b[1];
    double de = x * x + x * b[2] + b[3];
    double y = b[0] * nu / de;
    g[0] = nu / de;
    g[1] = b[0] * x / de;
    g[2] = -y * x / de;
    g[3] = -y / de;
    return y;
}
/* Thurber: y = (b1 + b2 x + b3 x^2 + b4 x^3) / (1 + b5 x + b6 x^2 + b7 x^3) */
static double m_thurber(const double *b, double x, double *g)
{
    double x2 = x * x, x3 = x2 * x;
    double nu = b[0] + b[1] * x + b[2] * x2 + b[3] * x3;
    double de = 1 + b[4] * x + b[5] * x2 + b[6] * x3;
    double y = nu / de;
    g[0] = 1 / de;
    g[1] = x / de;
    g[2] = x2 / de;
    g[3] = x3 / de;
    g[4] = -y * x / de;
    g[5] = -y * x2 / de;
    g[6] = -y * x3 / de;
    return y;
}
/* Eckerle4: y = (b1 / b2) exp(-0.5 ((x - b3) / b2)^2) */
static double m_eckerle4(const double *b, double x, double *g)
{
    double z = (x - b[2]) / b[1];
    double e = exp(-0.5 * z * z);
    double y = b[0] / b[1] * e;
    g[0] = e / b[1];
    g[1] = y * (z * z - 1) / b[1];
    g[2] = y * z / b[1];
    return y;
}

typedef struct {
    const nist_set *s;
    model_fn m;
} nist_ctx;

static int nist_f(const double *b, void *ctx, double *f)
{
    const nist_ctx *c = ctx;
    double g[NIST_PMAX];
    for (int i = 0; i < c->s->n; i++)
        f[i] = c->m(b, c->s->x[i], g) - c->s->y[i];
    return 0;
}
static int nist_df(const double *b, void *ctx, double *J)
{
    const nist_ctx *c = ctx;
    int p = c->s->p;
    for (int i = 0; i < c->s->n; i++)
        c->m(b, c->s->x[i], J + (size_t)i * (size_t)p);
    return 0;
}

/* Relative agreement in significant digits, as NIST's "LRE" (log relative error). */
static double lre(double got, double cert)
{
    if (got == cert)
        return 15;
    return -log10(fabs(got - cert) / fabs(cert));
}

/* Fits one NIST set from one start and checks estimates, SDs, RSS and residual SD. NIST
 * certifies 11 digits; the bar is 6 significant digits, which every set here allows
 * (McCullough 1999, Am Stat 53:149, reports LRE >= 6 as the mark of a reliable solver). */
static void check_nist(const char *file, model_fn m, int start)
{
    nist_set s;
    char path[256];
    snprintf(path, sizeof path, "%s/nist/%s", TESTDATA, file);
    assert_int_equal(nist_read(path, 1, &s), 0);
    cpd_nlfit_ws *w = cpd_nlfit_alloc();
    assert_non_null(w);
    nist_ctx c = {&s, m};
    cpd_nlfit_problem pr = {(size_t)s.n, (size_t)s.p, nist_f, nist_df, &c};
    cpd_nlfit_result r;
    int rc = cpd_nlfit_solve(w, &pr, start == 2 ? s.start2 : s.start1, NULL, &r);
    print_message("%s start %d: rc %d iter %zu\n", file, start, rc, r.iter);
    for (int j = 0; j < s.p; j++)
        print_message("  b%d %.12g (cert %.12g, lre %.1f) se %.12g (lre %.1f)\n", j + 1, r.b[j], s.cert[j],
                      lre(r.b[j], s.cert[j]), r.se[j], lre(r.se[j], s.cert_sd[j]));
    assert_int_equal(rc, CPD_OK);
    assert_int_equal(r.has_se, 1);
    for (int j = 0; j < s.p; j++) {
        assert_true(lre(r.b[j], s.cert[j]) >= 6);
        assert_true(lre(r.se[j], s.cert_sd[j]) >= 6);
    }
    assert_true(lre(r.rss, s.rss) >= 6);
    assert_true(lre(r.s, s.resid_sd) >= 6);
    cpd_nlfit_free(w);
}

#define NIST_TEST(name, file, model, start)                                                                            \
    static void name(void **state)                                                                                     \
    {                                                                                                                  \
        (void)state;                                                                                                   \
        check_nist(file, model, start);                                                                                \
    }
NIST_TEST(misra1a_1, "Misra1a.dat", m_expo, 1)
NIST_TEST(misra1a_2, "Misra1a.dat", m_expo, 2)
NIST_TEST(misra1b_1, "Misra1b.dat", m_misra1b, 1)
NIST_TEST(misra1b_2, "Misra1b.dat", m_misra1b, 2)
NIST_TEST(boxbod_1, "BoxBOD.dat", m_expo, 1)
NIST_TEST(boxbod_2, "BoxBOD.dat", m_expo, 2)
NIST_TEST(rat42_1, "Rat42.dat", m_rat42, 1)
NIST_TEST(rat42_2, "Rat42.dat", m_rat42, 2)
NIST_TEST(mgh09_1, "MGH09.dat", m_mgh09, 1)
NIST_TEST(mgh09_2, "MGH09.dat", m_mgh09, 2)
NIST_TEST(thurber_1, "Thurber.dat", m_thurber, 1)
NIST_TEST(thurber_2, "Thurber.dat", m_thurber, 2)
NIST_TEST(eckerle4_1, "Eckerle4.dat", m_eckerle4, 1)
NIST_TEST(eckerle4_2, "Eckerle4.dat", m_eckerle4, 2)

/* Without an analytic Jacobian GSL differences the residuals into strided columns of J; the
 * answers must still be NIST's (this failed before the residuals went through a contiguous
 * buffer). Forward differences cost about half the digits of the SEs, hence LRE >= 4 for them
 * (McCullough 1999 Am Stat 53:149 reports LRE 4-6 for numerical-derivative solvers). */
static void finite_difference_jacobian(void **state)
{
    (void)state;
    static const char *const files[] = {"Misra1a.dat", "Rat42.dat", "Eckerle4.dat"};
    static const model_fn models[] = {m_expo, m_rat42, m_eckerle4};
    cpd_nlfit_ws *w = cpd_nlfit_alloc();
    for (int k = 0; k < 3; k++) {
        nist_set s;
        char path[256];
        snprintf(path, sizeof path, "%s/nist/%s", TESTDATA, files[k]);
        assert_int_equal(nist_read(path, 1, &s), 0);
        nist_ctx c = {&s, models[k]};
        cpd_nlfit_problem pr = {(size_t)s.n, (size_t)s.p, nist_f, NULL, &c};
        cpd_nlfit_result r;
        assert_int_equal(cpd_nlfit_solve(w, &pr, s.start2, NULL, &r), CPD_OK);
        for (int j = 0; j < s.p; j++) {
            assert_true(lre(r.b[j], s.cert[j]) >= 6);
            assert_true(lre(r.se[j], s.cert_sd[j]) >= 4);
        }
    }
    cpd_nlfit_free(w);
}

/* An iteration cap that cannot be met is reported as CPD_ENOCONV, never as an answer. */
static void iteration_limit_is_enoconv(void **state)
{
    (void)state;
    nist_set s;
    assert_int_equal(nist_read(TESTDATA "/nist/MGH09.dat", 1, &s), 0);
    cpd_nlfit_ws *w = cpd_nlfit_alloc();
    nist_ctx c = {&s, m_mgh09};
    cpd_nlfit_problem pr = {(size_t)s.n, (size_t)s.p, nist_f, nist_df, &c};
    cpd_nlfit_opts o;
    cpd_nlfit_opts_init(&o);
    o.max_iter = 3;
    cpd_nlfit_result r;
    assert_int_equal(cpd_nlfit_solve(w, &pr, s.start1, &o, &r), CPD_ENOCONV);
    cpd_nlfit_free(w);
}

/* One workspace serves problems of many sizes in turn (its slot cache evicts the least recently
 * used): every answer must equal the one from a fresh workspace. */
static void workspace_reuse_across_sizes(void **state)
{
    (void)state;
    static const char *const files[] = {"Misra1a.dat", "Rat42.dat", "MGH09.dat", "Thurber.dat", "Eckerle4.dat",
                                        "Misra1b.dat", "BoxBOD.dat"};
    static const model_fn models[] = {m_expo, m_rat42, m_mgh09, m_thurber, m_eckerle4, m_misra1b, m_expo};
    /* n shrinks with the round, so 21 problems of about 14 distinct sizes pass through 8 slots */
    cpd_nlfit_ws *shared = cpd_nlfit_alloc();
    for (int round = 0; round < 3; round++)
        for (int k = 0; k < 7; k++) {
            nist_set s;
            char path[256];
            snprintf(path, sizeof path, "%s/nist/%s", TESTDATA, files[k]);
            assert_int_equal(nist_read(path, 1, &s), 0);
            s.n -= round + k % 2; /* vary n so that slots are evicted and refilled */
            nist_ctx c = {&s, models[k]};
            cpd_nlfit_problem pr = {(size_t)s.n, (size_t)s.p, nist_f, nist_df, &c};
            cpd_nlfit_result a, b;
            cpd_nlfit_ws *fresh = cpd_nlfit_alloc();
            int ra = cpd_nlfit_solve(shared, &pr, s.start2, NULL, &a);
            int rb = cpd_nlfit_solve(fresh, &pr, s.start2, NULL, &b);
            cpd_nlfit_free(fresh);
            assert_int_equal(ra, rb);
            for (int j = 0; j < s.p; j++) {
                assert_true(a.b[j] == b.b[j]);
                assert_true(a.se[j] == b.se[j]);
            }
        }
    cpd_nlfit_free(shared);
}

static int never_f(const double *b, void *ctx, double *f)
{
    (void)b;
    (void)ctx;
    (void)f;
    return 1;
}

static void bad_problems_are_refused(void **state)
{
    (void)state;
    cpd_nlfit_ws *w = cpd_nlfit_alloc();
    double b0[2] = {1, 1};
    cpd_nlfit_result r;
    cpd_nlfit_problem pr = {1, 2, never_f, NULL, NULL};
    assert_int_equal(cpd_nlfit_solve(w, &pr, b0, NULL, &r), CPD_EUSAGE); /* n < p */
    pr.n = 3;
    assert_int_equal(cpd_nlfit_solve(w, &pr, b0, NULL, &r), CPD_ENODATA); /* start outside domain */
    cpd_nlfit_free(w);
    cpd_nlfit_free(NULL);
}

/* A refit started at the converged estimate must succeed: GSL's driver reports such a start as
 * "maximum iterations" with no progress, which once came back as CPD_ENOCONV. */
static void refit_from_the_optimum(void **state)
{
    (void)state;
    nist_set s;
    assert_int_equal(nist_read(TESTDATA "/nist/Misra1a.dat", 1, &s), 0);
    cpd_nlfit_ws *w = cpd_nlfit_alloc();
    nist_ctx c = {&s, m_expo};
    cpd_nlfit_problem pr = {(size_t)s.n, 2, nist_f, nist_df, &c};
    cpd_nlfit_result r, again;
    assert_int_equal(cpd_nlfit_solve(w, &pr, s.start1, NULL, &r), CPD_OK);
    assert_int_equal(cpd_nlfit_solve(w, &pr, r.b, NULL, &again), CPD_OK);
    for (int j = 0; j < 2; j++) {
        assert_true(lre(again.b[j], s.cert[j]) >= 6);
        assert_true(lre(again.se[j], s.cert_sd[j]) >= 6);
    }
    cpd_nlfit_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(refit_from_the_optimum),
        cmocka_unit_test(misra1a_1),  cmocka_unit_test(misra1a_2),  cmocka_unit_test(misra1b_1),
        cmocka_unit_test(misra1b_2),  cmocka_unit_test(boxbod_1),   cmocka_unit_test(boxbod_2),
        cmocka_unit_test(rat42_1),    cmocka_unit_test(rat42_2),    cmocka_unit_test(mgh09_1),
        cmocka_unit_test(mgh09_2),    cmocka_unit_test(thurber_1),  cmocka_unit_test(thurber_2),
        cmocka_unit_test(eckerle4_1), cmocka_unit_test(eckerle4_2), cmocka_unit_test(finite_difference_jacobian), cmocka_unit_test(iteration_limit_is_enoconv),
        cmocka_unit_test(workspace_reuse_across_sizes), cmocka_unit_test(bad_problems_are_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
