/* test_kinetics.c: VO2 on-kinetics: the fitting path against NIST StRD (Misra1a, BoxBOD) and scipy,
 * CI coverage on synthetic bouts (single and ensemble), data handling by hand, domains, errors. */
#include "cpdomain/kinetics.h"
#include "cpdomain/status.h"
#include "nist.h"
#include "pyref.h"
#include "synth_bout.h"

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_errno.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <string.h>

#ifndef TESTDATA
#define TESTDATA "tests/data"
#endif

/* |got - want| <= tol in double precision, printing both on failure (cmocka's assert_float_equal
 * converts to float). */
#define assert_near(got, want, tol) check_near((got), (want), (tol), #got, __FILE__, __LINE__)
static void check_near(double got, double want, double tol, const char *expr, const char *file, int line)
{
    if (!(fabs(got - want) <= tol)) {
        print_error("%s = %.17g, expected %.17g +- %g\n", expr, got, want, tol);
        _fail(file, line);
    }
}

/* Agreement in significant digits (NIST's log relative error). */
static double lre(double got, double cert)
{
    if (got == cert)
        return 15;
    return -log10(fabs(got - cert) / fabs(cert));
}

static cpd_kinetics_ws *ws(void)
{
    cpd_kinetics_ws *w = cpd_kinetics_alloc();
    assert_non_null(w);
    return w;
}

/* ---- NIST StRD through the kinetics fitting path ---- */

/* Misra1a and BoxBOD are y = b1 (1 - e^(-b2 x)): the mono-exponential with base = TD = 0 fixed,
 * A = b1 and tau = 1/b2. Under that reparameterisation the covariance transforms with the
 * Jacobian, so SE(b2) = SE(tau) / tau^2 exactly at the optimum. NIST certifies 11 digits; the
 * issue's bar is 6 significant digits for estimates and SDs, from both NIST starts. */
static void check_nist(const char *file)
{
    nist_set s;
    char path[256];
    snprintf(path, sizeof path, "%s/nist/%s", TESTDATA, file);
    assert_int_equal(nist_read(path, 1, &s), 0);
    cpd_kinetics_ws *w = ws();
    for (int start = 0; start < 2; start++) {
        const double *b = start ? s.start2 : s.start1;
        cpd_kinetics_spec sp;
        cpd_kinetics_spec_init(&sp, CPD_KIN_MONO);
        sp.fixed = CPD_KIN_BIT(CPD_KIN_BASE) | CPD_KIN_BIT(CPD_KIN_TD1);
        sp.b0[CPD_KIN_A1] = b[0];
        sp.b0[CPD_KIN_TAU1] = 1.0 / b[1];
        cpd_kinetics_fitres f;
        assert_int_equal(cpd_kinetics_fit(w, s.x, s.y, (size_t)s.n, &sp, &f), CPD_OK);
        assert_true(f.valid && f.has_se);
        assert_int_equal(f.p, 2);
        assert_int_equal(f.n_eff, (size_t)s.n);
        double tau = f.b[CPD_KIN_TAU1];
        assert_true(lre(f.b[CPD_KIN_A1], s.cert[0]) >= 6);
        assert_true(lre(1.0 / tau, s.cert[1]) >= 6);
        assert_true(lre(f.se[CPD_KIN_A1], s.cert_sd[0]) >= 6);
        assert_true(lre(f.se[CPD_KIN_TAU1] / (tau * tau), s.cert_sd[1]) >= 6);
        assert_true(lre(f.rss, s.rss) >= 6);
        assert_true(lre(f.resid_sd_ml_min, s.resid_sd) >= 6);
        /* fixed parameters stay put and carry no uncertainty */
        assert_true(f.b[CPD_KIN_BASE] == 0 && f.b[CPD_KIN_TD1] == 0 && f.se[CPD_KIN_TD1] == 0);
    }
    cpd_kinetics_free(w);
}

static void nist_misra1a(void **state)
{
    (void)state;
    check_nist("Misra1a.dat");
}

static void nist_boxbod(void **state)
{
    (void)state;
    check_nist("BoxBOD.dat");
}

/* ---- the model and the fit statistics, by hand ---- */

static void model_values_by_hand(void **state)
{
    (void)state;
    const double b[CPD_KIN_NPAR] = {812.5, 1430.0, 11.2, 26.7, 385.0, 118.0, 91.0};
    assert_near(cpd_kinetics_eval(CPD_KIN_MONO, b, 5.0), 812.5, 1e-12); /* before TD1 */
    double t = 73.4;
    double mono = 812.5 + 1430.0 * (1 - exp(-(t - 11.2) / 26.7));
    assert_near(cpd_kinetics_eval(CPD_KIN_MONO, b, t), mono, 1e-9);
    assert_near(cpd_kinetics_eval(CPD_KIN_BI, b, t), mono, 1e-9); /* before TD2 */
    t = 301.9;
    double bi = 812.5 + 1430.0 * (1 - exp(-(t - 11.2) / 26.7)) + 385.0 * (1 - exp(-(t - 118.0) / 91.0));
    assert_near(cpd_kinetics_eval(CPD_KIN_BI, b, t), bi, 1e-9);
}

/* A constant model (only the baseline free) has closed-form statistics: the estimate is the mean,
 * SE = s / sqrt(n); the runs test and AICc follow from their textbook formulas (Wald & Wolfowitz
 * 1940 Ann Math Stat 11:147; Hurvich & Tsai 1989 Biometrika 76:297; both from memory). */
static void fit_statistics_by_hand(void **state)
{
    (void)state;
    enum { N = 40 };
    double t[N], y[N];
    for (int i = 0; i < N; i++) {
        t[i] = 3.7 + 2.45 * i;
        y[i] = 1234.5 + ((i / 2) % 2 ? -5.0 : 5.0); /* + + - - + + ...: 20 runs */
    }
    cpd_kinetics_spec sp;
    cpd_kinetics_spec_init(&sp, CPD_KIN_MONO);
    sp.fixed = CPD_KIN_BIT(CPD_KIN_A1) | CPD_KIN_BIT(CPD_KIN_TD1) | CPD_KIN_BIT(CPD_KIN_TAU1);
    sp.b0[CPD_KIN_BASE] = 1000.0;
    sp.b0[CPD_KIN_TAU1] = 30.0;
    sp.noise_sd_ml_min = 5.0;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_fitres f;
    assert_int_equal(cpd_kinetics_fit(w, t, y, N, &sp, &f), CPD_OK);
    /* the engine converges to about 1e-11 relative (SPEC: tightly, about 1e-12), hence 1e-7 here */
    assert_near(f.b[CPD_KIN_BASE], 1234.5, 1e-7);
    assert_near(f.rss, 1000.0, 1e-9 * 1000.0);
    double s = sqrt(1000.0 / 39.0);
    assert_near(f.resid_sd_ml_min, s, 1e-9 * s);
    assert_near(f.se[CPD_KIN_BASE], s / sqrt(40.0), 1e-9 * s);
    double tq = gsl_cdf_tdist_Pinv(0.975, 39.0);
    assert_near(f.ci95_lo[CPD_KIN_BASE], 1234.5 - tq * s / sqrt(40.0), 1e-7);
    assert_int_equal(f.runs, 20);
    assert_int_equal(f.n_pos, 20);
    assert_int_equal(f.n_neg, 20);
    assert_true(f.runs_valid);
    double mu = 21.0, var = 2.0 * 400.0 * (800.0 - 40.0) / (1600.0 * 39.0);
    assert_near(f.runs_z, (20.0 - mu) / sqrt(var), 1e-12);
    assert_near(f.chi2_red, 1000.0 / (39.0 * 25.0), 1e-9);
    assert_true(f.aicc_valid);
    assert_near(f.aicc, 40.0 * log(25.0) + 4.0 + 12.0 / 37.0, 1e-9);

    /* the same 40 observations as 10 averages of 4: with the raw observations given, the
     * covariance counts the 40 and the noise comes from them: SE = s_raw / sqrt(40) again */
    double ta[10], ya[10];
    for (int k = 0; k < 10; k++) {
        ta[k] = 0.25 * (t[4 * k] + t[4 * k + 1] + t[4 * k + 2] + t[4 * k + 3]);
        ya[k] = 1234.5; /* every block of four averages to the mean */
    }
    ya[3] += 0.8; /* a little misfit so that the averaged residual variance is not zero */
    ya[6] -= 0.8;
    sp.raw_t_s = t;
    sp.raw_vo2_ml_min = y;
    sp.raw_n = N;
    cpd_kinetics_fitres g;
    assert_int_equal(cpd_kinetics_fit(w, ta, ya, 10, &sp, &g), CPD_OK);
    assert_int_equal(g.n, 10);
    assert_int_equal(g.n_eff, 40);
    assert_int_equal(g.dof, 39);
    assert_near(g.b[CPD_KIN_BASE], 1234.5, 1e-7);
    assert_near(g.rss_eff, 1000.0, 1e-9 * 1000.0);
    assert_near(g.se[CPD_KIN_BASE], s / sqrt(40.0), 1e-9 * s);
    cpd_kinetics_free(w);
}

/* ---- data handling, by hand ---- */

/* Two repeats whose VO2 is linear in time after alignment: linear interpolation is exact, so the
 * 1-s ensemble average, its bins and the baseline are known in closed form. */
static void prepare_aligns_averages_and_bins(void **state)
{
    (void)state;
    enum { N = 160 };
    cpd_gx_series *a = cpd_gx_alloc(N, CPD_GX_BIT(CPD_GX_VO2));
    cpd_gx_series *b = cpd_gx_alloc(N, CPD_GX_BIT(CPD_GX_VO2));
    const double on_a = 93.7, on_b = 211.35;
    double base_sum = 0.0;
    size_t base_n = 0;
    for (int i = 0; i < N; i++) {
        double ua = -88.1 + 2.37 * i + 0.3 * sin(1.3 * i); /* aligned breath times */
        double ub = -91.6 + 2.41 * i + 0.3 * cos(0.7 * i);
        a->t_s[i] = on_a + ua;
        a->ch[CPD_GX_VO2][i] = 1000.0 + 2.0 * ua;
        b->t_s[i] = on_b + ub;
        b->ch[CPD_GX_VO2][i] = 1200.0 + 3.0 * ub;
        if (ua >= -60 && ua < 0) {
            base_sum += a->ch[CPD_GX_VO2][i];
            base_n++;
        }
        if (ub >= -60 && ub < 0) {
            base_sum += b->ch[CPD_GX_VO2][i];
            base_n++;
        }
    }
    a->ch[CPD_GX_VO2][101] += 900.0; /* a cough in repeat 1, mid-exercise */
    cpd_kinetics_input in[2] = {{a, on_a}, {b, on_b}};
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_data d;
    assert_int_equal(cpd_kinetics_prepare(w, in, 2, &o, &d), CPD_OK);
    assert_int_equal(d.n_repeats, 2);
    assert_int_equal(d.n_outliers, 1);
    assert_int_equal(d.n_baseline, base_n);
    assert_near(d.baseline_ml_min, base_sum / (double)base_n, 1e-9);
    assert_false(d.fit_on_breaths);
    /* end of exercise: the earlier of the two repeats' last breaths */
    double end_a = -88.1 + 2.37 * (N - 1) + 0.3 * sin(1.3 * (N - 1));
    double end_b = -91.6 + 2.41 * (N - 1) + 0.3 * cos(0.7 * (N - 1));
    assert_near(d.end_s, fmin(end_a, end_b), 1e-9);
    assert_int_equal(d.n_grid, (size_t)floor(d.end_s) + 1);
    for (size_t k = 0; k < d.n_grid; k += 37) {
        double tk = d.grid_t_s[k];
        assert_near(tk, (double)k, 0);
        assert_near(d.grid_vo2_ml_min[k], 1100.0 + 2.5 * tk, 1e-9);
    }
    /* the fit points are the ensemble average; the raw breaths keep every cleaned breath */
    assert_int_equal(d.n, d.n_grid);
    assert_int_equal(d.n_raw, d.n_breaths);
    assert_true(d.n_raw <= 2 * N - 1);

    /* 7-s bins of the 1-s series: bin j holds t = 7j .. 7j+6, mean time 7j + 3 */
    o.bin_s = 7.0;
    assert_int_equal(cpd_kinetics_prepare(w, in, 2, &o, &d), CPD_OK);
    assert_int_equal(d.n, (size_t)floor(d.end_s / 7.0));
    for (size_t j = 0; j < d.n; j++) {
        assert_near(d.t_s[j], 7.0 * j + 3.0, 1e-9);
        assert_near(d.vo2_ml_min[j], 1100.0 + 2.5 * (7.0 * j + 3.0), 1e-9);
    }
    /* one repeat without bins: fitted on its cleaned breaths */
    o.bin_s = 0.0;
    assert_int_equal(cpd_kinetics_prepare(w, in, 1, &o, &d), CPD_OK);
    assert_true(d.fit_on_breaths);
    assert_int_equal(d.n, N - 1);
    assert_near(d.t_s[0], -88.1, 1e-9);
    cpd_kinetics_free(w);
    cpd_gx_free(a);
    cpd_gx_free(b);
}

/* Wild breaths (coughs, swallows) are removed by the 4-SD rule and counted; the analysis is then
 * the same as that of the bout recorded without them. */
static void outliers_are_removed_and_counted(void **state)
{
    (void)state;
    synth_params p = synth_moderate();
    synth_rng r;
    synth_seed(&r, 0x5eed0001u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    const size_t wild[3] = {17, 88, 140}; /* one in the baseline, one in the rise, one late */
    unsigned char drop[512] = {0};
    assert_true(s->n < sizeof drop);
    for (int k = 0; k < 3; k++)
        drop[wild[k]] = 1;
    cpd_gx_series *clean = cpd_gx_filter(s, drop);
    assert_non_null(clean);
    s->ch[CPD_GX_VO2][wild[0]] += 850.0;
    s->ch[CPD_GX_VO2][wild[1]] -= 1100.0;
    s->ch[CPD_GX_VO2][wild[2]] += 780.0;
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    o.power_w = 100.0;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_result r1, r2;
    cpd_kinetics_input in1 = {s, p.onset_s}, in2 = {clean, p.onset_s};
    assert_int_equal(cpd_kinetics_analyse(w, &in1, 1, &o, &r1), CPD_OK);
    assert_int_equal(cpd_kinetics_analyse(w, &in2, 1, &o, &r2), CPD_OK);
    assert_int_equal(r1.n_outliers, 3);
    assert_int_equal(r2.n_outliers, 0);
    assert_int_equal(r1.n_breaths, r2.n_breaths);
    assert_near(r1.primary.tau_s, r2.primary.tau_s, 1e-9);
    assert_near(r1.baseline_ml_min, r2.baseline_ml_min, 1e-9);
    /* a 3-SD rule (some labs) is stricter and removes at least as many */
    o.outlier_sd = 3.0;
    assert_int_equal(cpd_kinetics_analyse(w, &in1, 1, &o, &r2), CPD_OK);
    assert_true(r2.n_outliers >= 3);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
    cpd_gx_free(clean);
}

/* ---- parameter recovery and confidence-interval coverage ---- */

/* 200 synthetic moderate bouts (breath intervals 2-3 s, noise SD 60 mL/min, tau 27.4 s): the true
 * tau lies inside the reported 95 % CI in about 95 % of them. The count is binomial(200, 0.95),
 * SD 3.1: the band 180..198 (90-99 %) is -3.2 to +2.6 SD, so it fails only if the CI is wrong. */
static void tau_ci_covers_in_single_bouts(void **state)
{
    (void)state;
    synth_params p = synth_moderate();
    synth_rng r;
    synth_seed(&r, 20240611u);
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    o.power_w = 100.0;
    cpd_kinetics_ws *w = ws();
    int cover = 0;
    double sum_tau = 0.0, sum_gain = 0.0;
    for (int k = 0; k < 200; k++) {
        cpd_gx_series *s = synth_bout(&p, &r, NULL);
        assert_non_null(s);
        cpd_kinetics_input in = {s, p.onset_s};
        cpd_kinetics_result res;
        assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &res), CPD_OK);
        cover += res.primary.tau_ci95_s[0] <= p.tau1 && p.tau1 <= res.primary.tau_ci95_s[1];
        sum_tau += res.primary.tau_s;
        sum_gain += res.primary.gain_ml_min_w;
        cpd_gx_free(s);
    }
    print_message("single bouts: tau CI covers %d/200, mean tau %.2f s (true %.1f)\n", cover, sum_tau / 200.0, p.tau1);
    assert_in_range(cover, 180, 198);
    /* unbiased within 3 %: the SD of one tau is about 2 s, of the mean of 200 about 0.15 s */
    assert_true(fabs(sum_tau / 200.0 - p.tau1) < 0.03 * p.tau1);
    assert_true(fabs(sum_gain / 200.0 - p.a1 / 100.0) < 0.02 * p.a1 / 100.0);
    cpd_kinetics_free(w);
}

/* Ensembles of 3 repeats averaged at 1 s. With the covariance counting breaths  the
 * CI covers in about 95 % (binomial(100, 0.95), SD 2.2: band 88..99 is -3.2 to +1.8 SD); the same
 * fit treating the 1-s points as independent covers far less (about 70 % in
 * simulation), which is why the honest CI exists. */
static void tau_ci_covers_in_ensembles(void **state)
{
    (void)state;
    synth_params p = synth_moderate();
    synth_rng r;
    synth_seed(&r, 0xE45E3B1Eu);
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    cpd_kinetics_ws *w = ws();
    int honest = 0, naive = 0;
    double width_h = 0.0, width_n = 0.0;
    for (int k = 0; k < 100; k++) {
        cpd_gx_series *s[3];
        cpd_kinetics_input in[3];
        for (int j = 0; j < 3; j++) {
            p.onset_s = 120.0 + 23.7 * j + 0.37 * k;
            s[j] = synth_bout(&p, &r, NULL);
            in[j].gx = s[j];
            in[j].onset_s = p.onset_s;
        }
        cpd_kinetics_data d;
        assert_int_equal(cpd_kinetics_prepare(w, in, 3, &o, &d), CPD_OK);
        cpd_kinetics_spec sp;
        cpd_kinetics_spec_init(&sp, CPD_KIN_MONO);
        sp.fixed = CPD_KIN_BIT(CPD_KIN_BASE);
        sp.b0[CPD_KIN_BASE] = d.baseline_ml_min;
        sp.b0[CPD_KIN_A1] = 1000.0;
        sp.b0[CPD_KIN_TD1] = 10.0;
        sp.b0[CPD_KIN_TAU1] = 30.0;
        sp.from_s = o.phase1_s;
        sp.to_s = d.end_s;
        cpd_kinetics_fitres fn, fh;
        assert_int_equal(cpd_kinetics_fit(w, d.t_s, d.vo2_ml_min, d.n, &sp, &fn), CPD_OK);
        sp.raw_t_s = d.raw_t_s;
        sp.raw_vo2_ml_min = d.raw_vo2_ml_min;
        sp.raw_n = d.n_raw;
        assert_int_equal(cpd_kinetics_fit(w, d.t_s, d.vo2_ml_min, d.n, &sp, &fh), CPD_OK);
        /* same estimate, different honesty */
        assert_near(fh.b[CPD_KIN_TAU1], fn.b[CPD_KIN_TAU1], 0);
        size_t nb = 0;
        for (size_t i = 0; i < d.n_raw; i++)
            nb += d.raw_t_s[i] >= sp.from_s && d.raw_t_s[i] <= sp.to_s;
        assert_int_equal(fh.n_eff, nb);
        assert_int_equal(fn.n_eff, fn.n);
        honest += fh.ci95_lo[CPD_KIN_TAU1] <= p.tau1 && p.tau1 <= fh.ci95_hi[CPD_KIN_TAU1];
        naive += fn.ci95_lo[CPD_KIN_TAU1] <= p.tau1 && p.tau1 <= fn.ci95_hi[CPD_KIN_TAU1];
        width_h += fh.ci95_hi[CPD_KIN_TAU1] - fh.ci95_lo[CPD_KIN_TAU1];
        width_n += fn.ci95_hi[CPD_KIN_TAU1] - fn.ci95_lo[CPD_KIN_TAU1];
        for (int j = 0; j < 3; j++)
            cpd_gx_free(s[j]);
    }
    print_message("ensembles of 3: breath-counted CI covers %d/100 (mean width %.2f s), 1-s points as independent %d/100"
                  " (%.2f s)\n", honest, width_h / 100.0, naive, width_n / 100.0);
    assert_in_range(honest, 88, 99);
    assert_true(naive <= 85);
    assert_true(width_h > 1.5 * width_n);
    cpd_kinetics_free(w);
}

/* ---- the bi-exponential against scipy ---- */

/* scipy.optimize.curve_fit (MINPACK lmder, analytic Jacobian) on the same breaths and start,
 * ftol = xtol = gtol = 1e-12 : estimates and SEs (s^2 (J'J)^-1 by numpy at scipy's
 * optimum) agree at 1e-6 relative. The unit step makes the residual kinked wherever a delay
 * crosses a breath time, and minima often sit on such a kink, where two optimisers may stop on
 * either side; the comparison is well posed only at a smooth optimum, which this seed has (both
 * delays lie more than 0.05 s from every breath, asserted below). */
static void bi_exponential_matches_scipy(void **state)
{
    (void)state;
    synth_params p = synth_heavy();
    synth_rng r;
    synth_seed(&r, 0xB15CA22u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    cpd_kinetics_input in = {s, p.onset_s};
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_data d;
    assert_int_equal(cpd_kinetics_prepare(w, &in, 1, &o, &d), CPD_OK);
    const double start[6] = {2000.0, 10.0, 25.0, 300.0, 100.0, 100.0};
    cpd_kinetics_spec sp;
    cpd_kinetics_spec_init(&sp, CPD_KIN_BI);
    sp.fixed = CPD_KIN_BIT(CPD_KIN_BASE);
    sp.b0[CPD_KIN_BASE] = d.baseline_ml_min;
    memcpy(sp.b0 + 1, start, sizeof start);
    sp.from_s = 20.0;
    sp.to_s = d.end_s;
    cpd_kinetics_fitres f;
    assert_int_equal(cpd_kinetics_fit(w, d.t_s, d.vo2_ml_min, d.n, &sp, &f), CPD_OK);
    assert_true(f.has_se);

    static char text[32768];
    int len = snprintf(text, sizeof text, "%.17g\n%.17g %.17g %.17g %.17g %.17g %.17g\n", d.baseline_ml_min,
                       start[0], start[1], start[2], start[3], start[4], start[5]);
    size_t used = 0;
    for (size_t i = 0; i < d.n; i++)
        if (d.t_s[i] >= sp.from_s && d.t_s[i] <= sp.to_s) {
            len += snprintf(text + len, sizeof text - (size_t)len, "%.17g %.17g\n", d.t_s[i], d.vo2_ml_min[i]);
            used++;
        }
    assert_true((size_t)len < sizeof text);
    assert_int_equal(used, f.n);
    for (size_t i = 0; i < d.n; i++) {
        assert_true(fabs(d.t_s[i] - f.b[CPD_KIN_TD1]) > 0.05);
        assert_true(fabs(d.t_s[i] - f.b[CPD_KIN_TD2]) > 0.05);
    }
    double ref[12];
    assert_int_equal(pyref_run("biexp.py", text, ref, 12, 0), 12);
    for (int j = 0; j < 6; j++) {
        assert_true(fabs(f.b[1 + j] - ref[j]) <= 1e-6 * fabs(ref[j]));
        assert_true(fabs(f.se[1 + j] - ref[6 + j]) <= 1e-6 * fabs(ref[6 + j]));
    }
    /* and the fit recovers the generating slow component (about 2 SE) */
    assert_true(fabs(f.b[CPD_KIN_TD2] - p.td2) < 2.5 * f.se[CPD_KIN_TD2]);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
}

/* ---- domains, SPEC keys and typical values ---- */

static int classify(cpd_kinetics_ws *w, const synth_params *p, uint64_t seed, int n, const cpd_kinetics_opts *o,
                    int want)
{
    synth_rng r;
    synth_seed(&r, seed);
    int right = 0;
    for (int k = 0; k < n; k++) {
        cpd_gx_series *s = synth_bout(p, &r, NULL);
        cpd_kinetics_input in = {s, p->onset_s};
        cpd_kinetics_result res;
        assert_int_equal(cpd_kinetics_analyse(w, &in, 1, o, &res), CPD_OK);
        right += res.domain == want;
        cpd_gx_free(s);
    }
    return right;
}

/* Moderate: no slow component, steady by 3 min; heavy: a slow component that levels off; severe:
 * VO2 still rising at the end (Hill, Poole & Smith 2002; Barstow & Mole 1991). Over 100 seeds the
 * error rates were 0, 3 and 0 % (heavy bouts whose final-2-min slope is noisy), so 20 bouts of
 * each allow at most 1, 2 and 1 misclassifications. */
static void domains_from_the_response(void **state)
{
    (void)state;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    synth_params m = synth_moderate(), h = synth_heavy(), sv = synth_severe();
    assert_true(classify(w, &m, 101, 20, &o, CPD_KIN_MODERATE) >= 19);
    assert_true(classify(w, &h, 202, 20, &o, CPD_KIN_HEAVY) >= 18);
    assert_true(classify(w, &sv, 303, 20, &o, CPD_KIN_SEVERE) >= 19);
    cpd_kinetics_free(w);
}

/* One heavy bout in detail: every SPEC `bout show` key recomputed from its definition. */
static void heavy_bout_spec_keys(void **state)
{
    (void)state;
    synth_params p = synth_heavy();
    synth_rng r;
    synth_seed(&r, 0x4EAF1u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    cpd_kinetics_input in = {s, p.onset_s};
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    o.power_w = 240.0;
    o.vo2peak_ml_min = 4650.0;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_result res;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &res), CPD_OK);
    assert_int_equal(res.domain, CPD_KIN_HEAVY);
    assert_int_equal(res.domain_rule, CPD_KIN_RULE_SLOW);
    assert_true(res.sc_tested && res.sc_supported && res.slow.present);
    assert_string_equal(res.primary.fit, "bi");
    assert_true(res.sc_test.p_value < 1e-6 && res.sc_test.aicc_valid && res.sc_test.delta_aicc < -10);
    const double *b = res.bi.b;
    /* primary: the bi-exponential's; MRT, gain and O2 deficit from their definitions */
    assert_near(res.primary.tau_s, b[CPD_KIN_TAU1], 0);
    assert_near(res.primary.mrt_s, b[CPD_KIN_TD1] + b[CPD_KIN_TAU1], 1e-12);
    assert_near(res.primary.gain_ml_min_w, b[CPD_KIN_A1] / 240.0, 1e-12);
    assert_near(res.primary.o2_deficit_ml, b[CPD_KIN_A1] * res.primary.mrt_s / 60.0, 1e-9);
    assert_true(res.primary.tau_ci95_s[0] <= p.tau1 && p.tau1 <= res.primary.tau_ci95_s[1]);
    /* slow: A2' = A2 (1 - e^(-(end - TD2)/tau2)) */
    double a2e = b[CPD_KIN_A2] * (1 - exp(-(res.end_s - b[CPD_KIN_TD2]) / b[CPD_KIN_TAU2]));
    assert_near(res.slow.amplitude_ml_min, a2e, 1e-9);
    assert_true(res.slow.amplitude_se_ml_min > 0);
    double a2e_true = p.a2 * (1 - exp(-(res.end_s - p.td2) / p.tau2));
    assert_true(fabs(res.slow.amplitude_ml_min - a2e_true) < 2.5 * res.slow.amplitude_se_ml_min);
    assert_near(res.slow.delay_s, b[CPD_KIN_TD2], 0);
    /* 30-s means of the 1-s series */
    cpd_kinetics_data d;
    assert_int_equal(cpd_kinetics_prepare(w, &in, 1, &o, &d), CPD_OK);
    double m6 = 0, m3 = 0, me = 0;
    int c6 = 0, c3 = 0, ce = 0;
    for (size_t k = 0; k < d.n_grid; k++) {
        double t = d.grid_t_s[k];
        if (t > 330 && t <= 360) {
            m6 += d.grid_vo2_ml_min[k];
            c6++;
        }
        if (t > 150 && t <= 180) {
            m3 += d.grid_vo2_ml_min[k];
            c3++;
        }
        if (t > floor(d.end_s) - 30 && t <= floor(d.end_s)) {
            me += d.grid_vo2_ml_min[k];
            ce++;
        }
    }
    assert_int_equal(c3, 30);
    assert_true(c6 >= 25);
    assert_int_equal(ce, 30);
    assert_true(res.delta_valid);
    assert_near(res.delta_6_3_ml_min, m6 / c6 - m3 / c3, 1e-9);
    assert_near(res.end_vo2_ml_min, me / ce, 1e-9);
    assert_near(res.end_minus_primary_ml_min, res.end_vo2_ml_min - (b[CPD_KIN_BASE] + b[CPD_KIN_A1]), 1e-9);
    assert_true(res.end_pct_valid);
    assert_near(res.end_pct_vo2peak, 100.0 * res.end_vo2_ml_min / 4650.0, 1e-9);
    /* Fixed intervals under-estimate the slow component (RBME, Bell 2001) */
    assert_true(res.delta_6_3_ml_min < res.slow.amplitude_ml_min);
    /* the slow component drags the whole-bout mono-exponential's tau far above the truth */
    assert_true(res.mono.b[CPD_KIN_TAU1] > 1.3 * p.tau1);
    /* the bout does not change class when VO2peak is close: 97 % of the given VO2peak is severe */
    o.vo2peak_ml_min = res.end_vo2_ml_min / 0.97;
    cpd_kinetics_result r2;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &r2), CPD_OK);
    assert_int_equal(r2.domain, CPD_KIN_SEVERE);
    assert_int_equal(r2.domain_rule, CPD_KIN_RULE_PEAK);
    /* the other primary choices */
    o.vo2peak_ml_min = 0;
    o.primary = CPD_KIN_PRIMARY_MONO_END;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &r2), CPD_OK);
    assert_string_equal(r2.primary.fit, "mono_end");
    assert_near(r2.primary.tau_s, r2.mono_end.b[CPD_KIN_TAU1], 0);
    assert_near(r2.mono_end.to_s, 180.0, 0);
    o.primary = CPD_KIN_PRIMARY_WINDOW;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &r2), CPD_OK);
    assert_string_equal(r2.primary.fit, "window");
    assert_near(r2.primary.tau_s, r2.window.fit.b[CPD_KIN_TAU1], 0);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
}

/* A moderate bout against the typical values published: phase II tau 20-35 s (Burnley, Doust
 * & Jones 2006 J Appl Physiol 101:1320; moderate cycling 25.7 +- 8.6 s, Roberts et al. 2005 Respir
 * Physiol Neurobiol 146:247) and gain about 10 mL/min/W (Hill, Poole & Smith 2002; 8.7-12.0, Keir
 * et al. 2016 J Appl Physiol 120:503). The generator uses 27.4 s and 10.2; recovery must land there. */
static void moderate_bout_typical_values(void **state)
{
    (void)state;
    synth_params p = synth_moderate();
    synth_rng r;
    synth_seed(&r, 0x30DE7u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    cpd_kinetics_input in = {s, p.onset_s};
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    o.power_w = 100.0;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_result res;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &res), CPD_OK);
    assert_int_equal(res.domain, CPD_KIN_MODERATE);
    assert_int_equal(res.domain_rule, CPD_KIN_RULE_STEADY);
    assert_false(res.slow.present);
    assert_string_equal(res.primary.fit, "mono");
    assert_true(res.primary.tau_s >= 20 && res.primary.tau_s <= 35);
    assert_true(res.primary.gain_ml_min_w >= 8.7 && res.primary.gain_ml_min_w <= 12.0);
    assert_true(res.delta_valid && fabs(res.delta_6_3_ml_min) < o.steady_delta_ml_min);
    assert_true(fabs(res.baseline_ml_min - p.base) < 4 * p.noise_sd / sqrt((double)res.n_baseline));
    /* the mono-exponential fits: residuals without systematic runs; noise like the baseline's */
    assert_true(res.mono.runs_valid && res.mono.runs_p > 0.01);
    assert_true(res.mono.chi2_valid && res.mono.chi2_red > 0.5 && res.mono.chi2_red < 2.0);
    /* the window scan finds tau stable to the end */
    assert_true(res.window.valid);
    assert_false(res.window.stopped);
    assert_int_equal(res.window.chosen, res.window.n - 1);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
}

/* The windowed fit (Rossiter et al. 2001 practice, from memory): in heavy bouts tau rises once the
 * slow component enters the window and the scan stops before the end; in moderate ones it rarely
 * does. Counts over 20 seeds (rates over 40: heavy 100 % stopped, moderate 2.5 %). */
static void windowed_fit_stops_at_the_slow_component(void **state)
{
    (void)state;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    synth_params ps[2] = {synth_moderate(), synth_heavy()};
    int stopped[2] = {0, 0};
    double end_sum = 0.0, tau_sum = 0.0;
    for (int type = 0; type < 2; type++) {
        synth_rng r;
        synth_seed(&r, 0x3140u + (uint64_t)type);
        for (int k = 0; k < 20; k++) {
            cpd_gx_series *s = synth_bout(&ps[type], &r, NULL);
            cpd_kinetics_data d;
            cpd_kinetics_input in = {s, ps[type].onset_s};
            assert_int_equal(cpd_kinetics_prepare(w, &in, 1, &o, &d), CPD_OK);
            cpd_kinetics_spec sp;
            cpd_kinetics_spec_init(&sp, CPD_KIN_MONO);
            sp.fixed = CPD_KIN_BIT(CPD_KIN_BASE);
            sp.b0[CPD_KIN_BASE] = d.baseline_ml_min;
            sp.b0[CPD_KIN_A1] = ps[type].a1;
            sp.b0[CPD_KIN_TD1] = 10.0;
            sp.b0[CPD_KIN_TAU1] = 30.0;
            sp.from_s = 20.0;
            cpd_kinetics_window_res wr;
            assert_int_equal(cpd_kinetics_window(w, d.t_s, d.vo2_ml_min, d.n, &sp, 60.0, 10.0, &wr), CPD_OK);
            assert_true(wr.valid && wr.n >= 1 && wr.chosen < wr.n);
            assert_near(wr.fit.to_s, wr.end_s[wr.chosen], 0);
            assert_near(wr.fit.b[CPD_KIN_TAU1], wr.tau_s[wr.chosen], 0);
            stopped[type] += wr.stopped;
            if (type == 1) {
                end_sum += wr.end_s[wr.chosen];
                tau_sum += wr.tau_s[wr.chosen];
            }
            cpd_gx_free(s);
        }
    }
    assert_true(stopped[0] <= 2);
    assert_true(stopped[1] >= 19);
    /* the slow component starts at 108 s: the accepted window ends before about 200 s, and its tau
     * is within 25 % of the truth (the scan admits some drift before it can see it) */
    assert_true(end_sum / 20.0 > 90.0 && end_sum / 20.0 < 200.0);
    assert_true(fabs(tau_sum / 20.0 - ps[1].tau1) < 0.25 * ps[1].tau1);
    cpd_kinetics_free(w);
}

/* The runs test (Wald & Wolfowitz 1940) sees the systematic misfit of a mono-exponential over a
 * severe bout (too few sign runs) and not over a moderate one. Rates over 40 bouts at p < 0.05:
 * severe 100 %, moderate 7.5 %; over 20: at least 18 and at most 4. */
static void runs_test_sees_misfit(void **state)
{
    (void)state;
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    synth_params ps[2] = {synth_moderate(), synth_severe()};
    int flagged[2] = {0, 0};
    for (int type = 0; type < 2; type++) {
        synth_rng r;
        synth_seed(&r, 0x2B5u + (uint64_t)type);
        for (int k = 0; k < 20; k++) {
            cpd_gx_series *s = synth_bout(&ps[type], &r, NULL);
            cpd_kinetics_input in = {s, ps[type].onset_s};
            cpd_kinetics_result res;
            assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &res), CPD_OK);
            assert_true(res.mono.runs_valid);
            flagged[type] += res.mono.runs_p < 0.05 && res.mono.runs_z < 0;
            cpd_gx_free(s);
        }
    }
    assert_true(flagged[0] <= 4);
    assert_true(flagged[1] >= 18);
    cpd_kinetics_free(w);
}

/* The F statistic and its p value from their definitions (extra sum of squares, Bates & Watts 1988). */
static void model_comparison_by_definition(void **state)
{
    (void)state;
    synth_params p = synth_heavy();
    synth_rng r;
    synth_seed(&r, 0xF7E57u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    cpd_kinetics_input in = {s, p.onset_s};
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_result res;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, &res), CPD_OK);
    const cpd_kinetics_fitres *a = &res.mono, *b = &res.bi;
    assert_int_equal(res.sc_test.df1, 3);
    assert_int_equal(res.sc_test.df2, b->n_eff - 6);
    double F = ((a->rss_eff - b->rss_eff) / 3.0) / (b->rss_eff / (double)(b->n_eff - 6));
    assert_near(res.sc_test.f, F, 1e-9 * F);
    assert_near(res.sc_test.p_value, gsl_cdf_fdist_Q(F, 3.0, (double)(b->n_eff - 6)), 1e-15);
    assert_near(res.sc_test.delta_aicc, b->aicc - a->aicc, 1e-9);
    /* refused: reversed order, different windows */
    cpd_kinetics_cmp c;
    assert_int_equal(cpd_kinetics_compare(b, a, &c), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_compare(&res.mono_end, b, &c), CPD_EUSAGE);
    assert_false(c.valid);
    assert_int_equal(cpd_kinetics_compare(a, b, NULL), CPD_EUSAGE);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
}

/* ---- domain verification ---- */

static void verify_domain_messages(void **state)
{
    (void)state;
    cpd_kinetics_check c;
    /* GET 200 W, CP 280 W */
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_SEVERE, 266.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.predicted, CPD_KIN_HEAVY);
    assert_int_equal(c.agreement, 0);
    assert_string_equal(c.message, "bout at 5.0 % below CP did not stabilise: CP may be overestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 266.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.agreement, 1);
    assert_string_equal(c.message, "bout at 5.0 % below CP: heavy, as the boundaries predict");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_MODERATE, 215.0, 200.0, 280.0, &c), CPD_OK);
    assert_string_equal(c.message, "bout at 7.5 % above GET showed no slow component: GET may be underestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 190.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.predicted, CPD_KIN_MODERATE);
    assert_string_equal(c.message, "bout at 5.0 % below GET showed a slow component: GET may be overestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_SEVERE, 190.0, 200.0, 280.0, &c), CPD_OK);
    assert_string_equal(c.message, "bout at 5.0 % below GET did not stabilise: GET and CP may be overestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 294.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.predicted, CPD_KIN_SEVERE);
    assert_string_equal(c.message, "bout at 5.0 % above CP stabilised: CP may be underestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_MODERATE, 294.0, 200.0, 280.0, &c), CPD_OK);
    assert_string_equal(c.message, "bout at 5.0 % above CP showed no slow component: CP and GET may be underestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_SEVERE, 280.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.agreement, 1); /* at CP is severe (P >= CP) */
    /* one boundary only: the prediction is a pair of domains */
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_SEVERE, 266.0, 0.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.predicted, CPD_KIN_UNDETERMINED);
    assert_int_equal(c.predicted_mask, (1u << CPD_KIN_MODERATE) | (1u << CPD_KIN_HEAVY));
    assert_string_equal(c.message, "bout at 5.0 % below CP did not stabilise: CP may be overestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 266.0, 0.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.agreement, 1);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_MODERATE, 230.0, 200.0, 0.0, &c), CPD_OK);
    assert_int_equal(c.predicted_mask, (1u << CPD_KIN_HEAVY) | (1u << CPD_KIN_SEVERE));
    assert_string_equal(c.message, "bout at 15.0 % above GET showed no slow component: GET may be underestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_SEVERE, 180.0, 200.0, 0.0, &c), CPD_OK);
    assert_string_equal(c.message, "bout at 10.0 % below GET did not stabilise: GET may be overestimated");
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_UNDETERMINED, 266.0, 200.0, 280.0, &c), CPD_OK);
    assert_int_equal(c.agreement, -1);
    /* bad input */
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 266.0, 0.0, 0.0, &c), CPD_ENODATA);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 266.0, 290.0, 280.0, &c), CPD_EDATA);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 0.0, 200.0, 280.0, &c), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, NAN, 200.0, 280.0, &c), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_NDOMAIN, 266.0, 200.0, 280.0, &c), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_verify_domain(CPD_KIN_HEAVY, 266.0, 200.0, 280.0, NULL), CPD_EUSAGE);
}

/* ---- bad input: every error path ---- */

static void fit_refuses_bad_input(void **state)
{
    (void)state;
    cpd_kinetics_ws *w = ws();
    double t[30], y[30];
    for (int i = 0; i < 30; i++) {
        t[i] = 20.0 + 2.6 * i;
        y[i] = 900.0 + 1200.0 * (1 - exp(-(t[i] - 10.0) / 28.0)) + 31.0 * sin(2.1 * i);
    }
    cpd_kinetics_spec sp;
    cpd_kinetics_spec_init(&sp, CPD_KIN_MONO);
    sp.fixed = CPD_KIN_BIT(CPD_KIN_BASE);
    sp.b0[CPD_KIN_BASE] = 900.0;
    sp.b0[CPD_KIN_A1] = 1000.0;
    sp.b0[CPD_KIN_TD1] = 8.0;
    sp.b0[CPD_KIN_TAU1] = 30.0;
    cpd_kinetics_fitres f;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &sp, &f), CPD_OK);
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &sp, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_fit(NULL, t, y, 30, &sp, &f), CPD_EUSAGE);
    assert_int_equal(f.reason, CPD_KIN_R_BAD_ARG);
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, NULL, &f), CPD_EUSAGE);
    cpd_kinetics_spec bad = sp;
    bad.model = 3;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.from_s = 200.0;
    bad.to_s = 100.0;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.b0[CPD_KIN_A1] = INFINITY;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.fixed |= CPD_KIN_BIT(CPD_KIN_TD2); /* not a parameter of the mono-exponential */
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.fixed = 0xFu; /* nothing left to fit */
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.raw_n = 5; /* raw count without arrays */
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    bad = sp;
    bad.noise_sd_ml_min = -1.0;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_EUSAGE);
    /* data */
    double yn[30];
    memcpy(yn, y, sizeof yn);
    yn[12] = NAN;
    assert_int_equal(cpd_kinetics_fit(w, t, yn, 30, &sp, &f), CPD_EDATA);
    assert_int_equal(f.reason, CPD_KIN_R_BAD_SAMPLE);
    bad = sp;
    bad.to_s = 24.0; /* two points for three parameters */
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_ENODATA);
    assert_int_equal(f.reason, CPD_KIN_R_TOO_FEW_POINTS);
    bad = sp;
    bad.b0[CPD_KIN_TAU1] = -4.2;
    assert_int_equal(cpd_kinetics_fit(w, t, y, 30, &bad, &f), CPD_ENODATA);
    assert_int_equal(f.reason, CPD_KIN_R_START_OUTSIDE);
    assert_false(f.valid);
    /* no convergence: a straight line sends tau and A to infinity; that limit is never reported */
    double yl[30];
    for (int i = 0; i < 30; i++)
        yl[i] = 1000.0 + 5.3 * t[i];
    assert_int_equal(cpd_kinetics_fit(w, t, yl, 30, &sp, &f), CPD_ENOCONV);
    assert_int_equal(f.reason, CPD_KIN_R_NO_CONVERGENCE);
    assert_false(f.valid);
    for (int k = 0; k < CPD_KIN_NPAR; k++)
        assert_true(f.b[k] == 0 && f.se[k] == 0);
    /* the window scan */
    cpd_kinetics_window_res wr;
    sp.from_s = 20.0;
    assert_int_equal(cpd_kinetics_window(w, t, y, 30, &sp, 60.0, 10.0, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_window(w, t, y, 30, &sp, 10.0, 10.0, &wr), CPD_EUSAGE); /* end before from */
    assert_int_equal(cpd_kinetics_window(w, t, y, 30, &sp, 60.0, 0.0, &wr), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_window(w, t, y, 30, &sp, 120.0, 10.0, &wr), CPD_ENODATA); /* data end at 95 s */
    assert_int_equal(wr.reason, CPD_KIN_R_TOO_SHORT);
    assert_int_equal(cpd_kinetics_window(w, t, yl, 30, &sp, 60.0, 10.0, &wr), CPD_ENOCONV);
    assert_false(wr.valid);
    bad = sp;
    bad.model = CPD_KIN_BI;
    assert_int_equal(cpd_kinetics_window(w, t, y, 30, &bad, 60.0, 10.0, &wr), CPD_EUSAGE);
    cpd_kinetics_free(w);
    cpd_kinetics_free(NULL);
}

static cpd_gx_series *copy_series(const cpd_gx_series *s)
{
    cpd_gx_series *c = cpd_gx_alloc(s->n, cpd_gx_mask(s));
    assert_non_null(c);
    memcpy(c->t_s, s->t_s, s->n * sizeof(double));
    memcpy(c->ch[CPD_GX_VO2], s->ch[CPD_GX_VO2], s->n * sizeof(double));
    return c;
}

static void expect(cpd_kinetics_ws *w, const cpd_kinetics_input *in, size_t m, const cpd_kinetics_opts *o, int rc,
                   int reason)
{
    cpd_kinetics_result res;
    int got = cpd_kinetics_analyse(w, in, m, o, &res);
    if (got != rc || res.reason != reason)
        print_error("status %d reason %d (%s), expected %d reason %d\n", got, res.reason, res.msg, rc, reason);
    assert_int_equal(got, rc);
    assert_int_equal(res.reason, reason);
    assert_true(res.msg[0] != '\0');
    assert_false(res.mono.valid);
}

static void analyse_refuses_bad_input(void **state)
{
    (void)state;
    synth_params p = synth_moderate();
    synth_rng r;
    synth_seed(&r, 0xBAD1u);
    cpd_gx_series *s = synth_bout(&p, &r, NULL);
    cpd_kinetics_ws *w = ws();
    cpd_kinetics_opts o;
    cpd_kinetics_opts_init(&o);
    cpd_kinetics_input in = {s, p.onset_s};
    cpd_kinetics_result res;

    /* arguments and options */
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &o, NULL), CPD_EUSAGE);
    expect(NULL, &in, 1, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    expect(w, NULL, 1, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    expect(w, &in, 0, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    cpd_kinetics_opts bo = o;
    bo.outlier_sd = 0.0;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bo = o;
    bo.bin_s = 0.5;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bo = o;
    bo.phase1_s = -1.0;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bo = o;
    bo.peak_fraction = 1.5;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bo = o;
    bo.power_w = NAN;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bo = o;
    bo.primary = 7;
    expect(w, &in, 1, &bo, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    cpd_kinetics_input bi = {NULL, p.onset_s};
    expect(w, &bi, 1, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    cpd_gx_series *novo2 = cpd_gx_alloc(10, CPD_GX_BIT(CPD_GX_VCO2));
    bi.gx = novo2;
    expect(w, &bi, 1, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);
    bi.gx = s;
    bi.onset_s = NAN;
    expect(w, &bi, 1, &o, CPD_EUSAGE, CPD_KIN_R_BAD_ARG);

    /* bad samples */
    cpd_gx_series *c = copy_series(s);
    c->t_s[40] = c->t_s[38]; /* time runs backwards */
    bi.gx = c;
    bi.onset_s = p.onset_s;
    expect(w, &bi, 1, &o, CPD_EDATA, CPD_KIN_R_BAD_SAMPLE);
    cpd_gx_free(c);
    c = copy_series(s);
    c->ch[CPD_GX_VO2][55] = -3.0;
    bi.gx = c;
    expect(w, &bi, 1, &o, CPD_EDATA, CPD_KIN_R_BAD_SAMPLE);
    c->ch[CPD_GX_VO2][55] = NAN;
    expect(w, &bi, 1, &o, CPD_EDATA, CPD_KIN_R_BAD_SAMPLE);
    cpd_gx_free(c);
    c = copy_series(s);
    c->n = 1;
    bi.gx = c;
    expect(w, &bi, 1, &o, CPD_ENODATA, CPD_KIN_R_TOO_SHORT);
    cpd_gx_free(c);

    /* onset outside the data, before and after; in the second repeat of an ensemble */
    bi.gx = s;
    bi.onset_s = s->t_s[0] - 0.5;
    expect(w, &bi, 1, &o, CPD_EDATA, CPD_KIN_R_ONSET_OUTSIDE);
    bi.onset_s = s->t_s[s->n - 1];
    expect(w, &bi, 1, &o, CPD_EDATA, CPD_KIN_R_ONSET_OUTSIDE);
    cpd_kinetics_input two[2] = {{s, p.onset_s}, {s, 1e6}};
    expect(w, two, 2, &o, CPD_EDATA, CPD_KIN_R_ONSET_OUTSIDE);
    assert_int_equal(cpd_kinetics_analyse(w, two, 2, &o, &res), CPD_EDATA);
    assert_non_null(strstr(res.msg, "repeat 2"));

    /* no baseline data: onset at the first breath, or a baseline window too short for 3 breaths */
    bi.onset_s = s->t_s[0];
    expect(w, &bi, 1, &o, CPD_ENODATA, CPD_KIN_R_NO_BASELINE);
    bo = o;
    bo.baseline_s = 4.0;
    expect(w, &in, 1, &bo, CPD_ENODATA, CPD_KIN_R_NO_BASELINE);
    /* ... unless the caller gives the baseline */
    bo = o;
    bo.baseline_ml_min = 845.0;
    assert_int_equal(cpd_kinetics_analyse(w, &bi, 1, &bo, &res), CPD_OK);
    assert_near(res.baseline_ml_min, 845.0, 0);

    /* end of exercise beyond the data, or not after the onset */
    bo = o;
    bo.end_s = 400.0;
    expect(w, &in, 1, &bo, CPD_EDATA, CPD_KIN_R_END_OUTSIDE);
    bo.end_s = 0.5;
    expect(w, &in, 1, &bo, CPD_EDATA, CPD_KIN_R_END_OUTSIDE);

    /* too short for any model: 100 s of exercise */
    bo = o;
    bo.end_s = 100.0;
    expect(w, &in, 1, &bo, CPD_ENODATA, CPD_KIN_R_TOO_SHORT);
    /* long enough for the primary, too short for the slow component: domain undetermined */
    bo.end_s = 250.0;
    bo.power_w = 100.0;
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, &bo, &res), CPD_OK);
    assert_true(res.mono.valid);
    assert_false(res.bi.valid);
    assert_int_equal(res.bi.reason, CPD_KIN_R_TOO_SHORT);
    assert_false(res.sc_tested);
    assert_false(res.delta_valid);
    assert_int_equal(res.domain, CPD_KIN_UNDETERMINED);
    assert_int_equal(res.domain_rule, CPD_KIN_RULE_TOO_SHORT);
    assert_true(res.end_s <= 250.0);

    /* no response to the step: nothing to fit */
    synth_params flat = p;
    flat.a1 = 0.0;
    flat.phase1_ml = 0.0;
    cpd_gx_series *fs = synth_bout(&flat, &r, NULL);
    cpd_kinetics_input fin = {fs, flat.onset_s};
    expect(w, &fin, 1, &o, CPD_ENODATA, CPD_KIN_R_NO_RESPONSE);

    /* the primary fit does not converge: VO2 rising linearly with no sign of an asymptote */
    cpd_gx_series *lin = copy_series(s);
    for (size_t i = 0; i < lin->n; i++) {
        double u = lin->t_s[i] - p.onset_s;
        lin->ch[CPD_GX_VO2][i] = 850.0 + (u > 0 ? 6.1 * u : 0.0) + 41.0 * sin(1.9 * (double)i);
    }
    cpd_kinetics_input lin_in = {lin, p.onset_s};
    expect(w, &lin_in, 1, &o, CPD_ENOCONV, CPD_KIN_R_NO_CONVERGENCE);

    /* prepare on its own */
    cpd_kinetics_data d;
    assert_int_equal(cpd_kinetics_prepare(w, &in, 1, &o, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_kinetics_prepare(w, &in, 1, NULL, &d), CPD_EUSAGE);
    assert_int_equal(d.reason, CPD_KIN_R_BAD_ARG);

    /* a NULL options pointer means the defaults */
    assert_int_equal(cpd_kinetics_analyse(w, &in, 1, NULL, &res), CPD_OK);
    assert_false(res.primary.gain_valid); /* no power given */

    cpd_gx_free(lin);
    cpd_gx_free(fs);
    cpd_gx_free(novo2);
    cpd_kinetics_free(w);
    cpd_gx_free(s);
}

static void names_and_reasons(void **state)
{
    (void)state;
    assert_string_equal(cpd_kinetics_domain_name(CPD_KIN_MODERATE), "moderate");
    assert_string_equal(cpd_kinetics_domain_name(CPD_KIN_HEAVY), "heavy");
    assert_string_equal(cpd_kinetics_domain_name(CPD_KIN_SEVERE), "severe");
    assert_string_equal(cpd_kinetics_domain_name(CPD_KIN_UNDETERMINED), "undetermined");
    assert_string_equal(cpd_kinetics_domain_name(-1), "invalid");
    assert_string_equal(cpd_kinetics_reason_text(CPD_KIN_R_NO_BASELINE), "no baseline data");
    for (int k = 0; k < CPD_KIN_R_NREASON; k++)
        assert_non_null(cpd_kinetics_reason_text(k));
    assert_string_equal(cpd_kinetics_reason_text(CPD_KIN_R_NREASON), "unknown reason");
}

/* Issue 12: a 6-min bout 3 % above CP that levelled off does not suggest CP is underestimated; a
 * 12-min one does (the 10-min rule of cpd_kinetics_verify_bout). */
static void short_bouts_do_not_overreach(void **state)
{
    (void)state;
    cpd_kinetics_check c;
    assert_int_equal(cpd_kinetics_verify_bout(CPD_KIN_HEAVY, 358.5, 257.5, 180.0, 250.0, &c), CPD_OK);
    assert_int_equal(c.agreement, -1);
    assert_non_null(strstr(c.message, "nothing to conclude about CP"));
    assert_null(strstr(c.message, "underestimated"));
    assert_int_equal(cpd_kinetics_verify_bout(CPD_KIN_HEAVY, 721.0, 257.5, 180.0, 250.0, &c), CPD_OK);
    assert_int_equal(c.agreement, 0);
    assert_non_null(strstr(c.message, "CP may be underestimated"));
    /* the rule touches only that verdict: a severe response below CP still says so after 6 min */
    assert_int_equal(cpd_kinetics_verify_bout(CPD_KIN_SEVERE, 358.5, 240.0, 180.0, 250.0, &c), CPD_OK);
    assert_int_equal(c.agreement, 0);
    assert_non_null(strstr(c.message, "CP may be overestimated"));
}

int main(void)
{
    gsl_set_error_handler_off();
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(short_bouts_do_not_overreach),
        cmocka_unit_test(nist_misra1a),
        cmocka_unit_test(nist_boxbod),
        cmocka_unit_test(model_values_by_hand),
        cmocka_unit_test(fit_statistics_by_hand),
        cmocka_unit_test(prepare_aligns_averages_and_bins),
        cmocka_unit_test(outliers_are_removed_and_counted),
        cmocka_unit_test(tau_ci_covers_in_single_bouts),
        cmocka_unit_test(tau_ci_covers_in_ensembles),
        cmocka_unit_test(bi_exponential_matches_scipy),
        cmocka_unit_test(domains_from_the_response),
        cmocka_unit_test(heavy_bout_spec_keys),
        cmocka_unit_test(moderate_bout_typical_values),
        cmocka_unit_test(windowed_fit_stops_at_the_slow_component),
        cmocka_unit_test(runs_test_sees_misfit),
        cmocka_unit_test(model_comparison_by_definition),
        cmocka_unit_test(verify_domain_messages),
        cmocka_unit_test(fit_refuses_bad_input),
        cmocka_unit_test(analyse_refuses_bad_input),
        cmocka_unit_test(names_and_reasons),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
