/* test_svgplot.c: nice ticks and labels, text escaping, non-finite data, every layer type and the
 * sheet's plots rendered and checked by two real XML parsers (xmllint, Python's xml.etree). */
#include "cpdomain/status.h"
#include "cpdomain/plots.h"
#include "cpdomain/svgplot.h"
#include "pyref.h"

#include <ctype.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

/* ---- helpers ------------------------------------------------------------------------------ */

/* splitmix64 (Steele, Lea & Flood 2014, OOPSLA) for deterministic test data */
static uint64_t rng_state = 0x9e3779b97f4a7c15ull;
static uint64_t rng_next(void)
{
    uint64_t z = (rng_state += 0x9e3779b97f4a7c15ull);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
}
static double rng_unif(void)
{
    return (double)(rng_next() >> 11) * 0x1.0p-53;
}

/* What tests/ref/svgcheck.py prints, in its order. */
enum {
    K_ROOT_OK, K_WIDTH, K_HEIGHT, K_VIEWBOX_OK, K_ROLE_OK, K_TITLE_FIRST, K_AREA_X, K_AREA_Y, K_AREA_W,
    K_AREA_H, K_N_CIRCLE, K_N_RECT, K_N_PATH, K_N_PAIRS, K_N_MOVES, K_PX_MIN, K_PX_MAX, K_PY_MIN, K_PY_MAX,
    K_CX_MIN, K_CX_MAX, K_CY_MIN, K_CY_MAX, K_N_TEXT, K_N_LEGEND_TEXT, K_BAD_ATTR, K_COUNT
};
#define ABSENT (-1e300)

/* 1 when xmllint (libxml2) finds svg well-formed; its complaints are printed otherwise. */
static int xmllint_ok(const char *svg, size_t len)
{
    char path[] = "/tmp/cpd_svgplot_XXXXXX";
    int fd = mkstemp(path);
    if (fd < 0)
        return 0;
    int ok = write(fd, svg, len) == (ssize_t)len;
    close(fd);
    char cmd[256];
    snprintf(cmd, sizeof cmd, "xmllint --noout %s 2>&1", path);
    FILE *f = ok ? popen(cmd, "r") : NULL;
    if (f) {
        char line[512];
        while (fgets(line, sizeof line, f))
            fputs(line, stderr);
        ok = pclose(f) == 0;
    } else {
        ok = 0;
    }
    unlink(path);
    return ok;
}

/* Keeps a copy of a rendered plot in build/ for a person to look at (not part of any check). */
static void keep_sample(const char *name, const char *svg, size_t len)
{
    char path[128];
    snprintf(path, sizeof path, "build/svgplot_%s.svg", name);
    FILE *f = fopen(path, "w");
    if (!f)
        return;
    fwrite(svg, 1, len, f);
    fclose(f);
}

/* Renders p, checks it with both parsers and the basic shape every plot must have, and returns
 * the SVG (caller frees) with the parsed facts in k. */
static char *render_checked(const cpd_svgplot *p, const char *name, int width, int height, double k[K_COUNT])
{
    char *svg = NULL;
    size_t len = 0;
    assert_int_equal(cpd_svgplot_render(p, &svg, &len), CPD_OK);
    assert_non_null(svg);
    assert_int_equal(strlen(svg), len);
    assert_true(xmllint_ok(svg, len));
    assert_int_equal(pyref_run("svgcheck.py", svg, k, K_COUNT, ABSENT), K_COUNT);
    assert_true(k[K_ROOT_OK] == 1 && k[K_VIEWBOX_OK] == 1 && k[K_ROLE_OK] == 1 && k[K_TITLE_FIRST] == 1);
    assert_true(k[K_WIDTH] == width && k[K_HEIGHT] == height);
    assert_true(k[K_BAD_ATTR] == 0);
    assert_null(strstr(svg, "nan"));
    assert_null(strstr(svg, "inf"));
    keep_sample(name, svg, len);
    return svg;
}

static size_t count(const char *hay, const char *needle)
{
    size_t n = 0;
    for (const char *s = strstr(hay, needle); s; s = strstr(s + 1, needle))
        n++;
    return n;
}

/* Data pixel of value v on an axis drawn from a0 (at lo) over length len (to hi); y axes grow up. */
static double px_of(double v, double lo, double hi, double a0, double len, int up)
{
    double f = (v - lo) / (hi - lo);
    return up ? a0 + len - f * len : a0 + f * len;
}

/* Coordinates are printed with two decimals, and the plot area itself too: 0.01 px covers both. */
#define PX_TOL 0.011

/* ---- ticks -------------------------------------------------------------------------------- */

static void check_ticks(double lo, double hi, size_t max, const double *want, size_t nwant, double want_step)
{
    double t[CPD_SVGPLOT_TICKS_MAX], step = 0;
    size_t n = 0;
    assert_int_equal(cpd_svgplot_ticks(lo, hi, max, t, &n, &step), CPD_OK);
    assert_int_equal(n, nwant);
    /* exact: k m 10^e is formed with one rounding, the same as the decimal literal */
    assert_true(step == want_step);
    for (size_t i = 0; i < n; i++)
        assert_true(t[i] == want[i]);
}

static void ticks_examples(void **state)
{
    (void)state;
    /* Heckbert 1990's loose labelling: range 0-97 -> 0, 20, ..., 100 */
    const double a[] = {0, 20, 40, 60, 80, 100};
    check_ticks(0, 97, 6, a, 6, 20);
    check_ticks(0, 97, 10, a, 6, 20); /* step 10 would need 11 ticks */
    const double b[] = {0, 0.02, 0.04, 0.06, 0.08, 0.1};
    check_ticks(0.013, 0.087, 6, b, 6, 0.02);
    const double c[] = {-40, -30, -20, -10, 0};
    check_ticks(-37.2, -3.1, 6, c, 5, 10);
    const double d[] = {1.0001, 1.0002, 1.0003, 1.0004, 1.0005};
    check_ticks(1.00012, 1.00047, 5, d, 5, 1e-4);
    /* Heckbert's step 1 gives 12 ticks; raised to 2 for at most 8 */
    const double e[] = {-4, -2, 0, 2, 4, 6, 8};
    check_ticks(-2.385, 7.142, 8, e, 7, 2);
    const double f[] = {0, 5e5, 1e6, 1.5e6, 2e6};
    check_ticks(0, 1.7e6, 5, f, 5, 5e5);
    /* 0.3 / 0.1 = 2.9999999999999996: no spurious tick at 0.2 */
    const double g[] = {0.3, 0.4, 0.5, 0.6, 0.7};
    check_ticks(0.3, 0.7, 5, g, 5, 0.1);
    /* a range across zero needs three ticks even when a single step would span it */
    const double h[] = {-1, 0, 1};
    check_ticks(-0.13, 0.52, 3, h, 3, 1);
    const double h2[] = {-0.1, 0, 0.1}; /* ends on ticks: no extra tick beyond them */
    check_ticks(-0.1, 0.1, 3, h2, 3, 0.1);
    const double s[] = {-2e-7, -1e-7, 0, 1e-7, 2e-7, 3e-7};
    check_ticks(-1.5e-7, 2.6e-7, 6, s, 6, 1e-7);
}

static void ticks_properties(void **state)
{
    (void)state;
    for (int it = 0; it < 5000; it++) {
        double mag = pow(10.0, floor(rng_unif() * 17) - 8);
        double lo = (rng_unif() * 2 - 1) * mag * 10;
        double span = mag * pow(10.0, rng_unif() * 4 - 2);
        double hi = lo + span;
        size_t max = 3 + (size_t)(rng_unif() * 10);
        double t[CPD_SVGPLOT_TICKS_MAX], step;
        size_t n;
        int rc = cpd_svgplot_ticks(lo, hi, max, t, &n, &step);
        if (!(hi - lo > 1e-12 * fmax(fabs(lo), fabs(hi)))) {
            assert_int_equal(rc, CPD_EUSAGE);
            continue;
        }
        assert_int_equal(rc, CPD_OK);
        assert_true(n >= 2 && n <= max);
        /* covering, within the 1e-7 step the algorithm allows for rounding */
        assert_true(t[0] <= lo + 1e-7 * step && t[n - 1] >= hi - 1e-7 * step);
        /* the step is 1, 2 or 5 x 10^k */
        double m = step / pow(10.0, floor(log10(step) + 1e-9));
        assert_true(fabs(m - 1) < 1e-9 || fabs(m - 2) < 1e-9 || fabs(m - 5) < 1e-9);
        /* and never coarser than the first 1-2-5 step at least the span (which always fits) */
        assert_true(step < 2.5 * (hi - lo) * (1 + 1e-12));
        for (size_t i = 1; i < n; i++)
            assert_true(fabs(t[i] - t[i - 1] - step) <= 1e-9 * fmax(step, fabs(t[i])));
    }
}

static void ticks_errors(void **state)
{
    (void)state;
    double t[CPD_SVGPLOT_TICKS_MAX], step;
    size_t n;
    assert_int_equal(cpd_svgplot_ticks(1, 1, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(2, 1, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(NAN, 1, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, INFINITY, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(-1.7e308, 1.7e308, 5, t, &n, &step), CPD_EUSAGE); /* span overflows */
    assert_int_equal(cpd_svgplot_ticks(1, 1 + 1e-13, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1e-300, 5, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1, 2, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1, CPD_SVGPLOT_TICKS_MAX + 1, t, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1, 5, NULL, &n, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1, 5, t, NULL, &step), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_ticks(0, 1, 5, t, &n, NULL), CPD_EUSAGE);
}

static void check_label(int fmt, double v, double step, const char *want)
{
    char buf[64];
    cpd_svgplot_tick_label(fmt, v, step, buf, sizeof buf);
    if (strcmp(buf, want) != 0)
        fail_msg("label of %.17g (step %g, format %d): got \"%s\", want \"%s\"", v, step, fmt, buf, want);
}

static void tick_labels(void **state)
{
    (void)state;
    check_label(CPD_SVGPLOT_NUMBER, 0.1 * 3, 0.1, "0.3");
    check_label(CPD_SVGPLOT_NUMBER, 2.0000001, 1, "2");
    /* one number of decimals per axis, so labels line up: 0.0, 0.5, 1.0 */
    check_label(CPD_SVGPLOT_NUMBER, -1e-17, 0.1, "0.0");
    check_label(CPD_SVGPLOT_NUMBER, 1, 0.5, "1.0");
    check_label(CPD_SVGPLOT_NUMBER, -0.0, 1, "0");
    check_label(CPD_SVGPLOT_NUMBER, -0.004, 0.01, "0.00");
    check_label(CPD_SVGPLOT_NUMBER, 0.25, 0.25, "0.25");
    check_label(CPD_SVGPLOT_NUMBER, 1500, 500, "1500");
    check_label(CPD_SVGPLOT_NUMBER, -40, 10, "-40");
    check_label(CPD_SVGPLOT_NUMBER, 1.0005, 1e-4, "1.0005");
    check_label(CPD_SVGPLOT_NUMBER, 3e7, 1e7, "3e7");
    check_label(CPD_SVGPLOT_NUMBER, 2.5e7, 5e6, "2.5e7");
    check_label(CPD_SVGPLOT_NUMBER, 0, 1e7, "0");
    check_label(CPD_SVGPLOT_NUMBER, 1.5e-5, 5e-6, "1.5e-5");
    check_label(CPD_SVGPLOT_NUMBER, -2e-5, 1e-5, "-2e-5");
    check_label(CPD_SVGPLOT_NUMBER, 1e299, 5e297, "1e299");
    check_label(CPD_SVGPLOT_NUMBER, 1.05e299, 5e297, "1.05e299");
    check_label(CPD_SVGPLOT_NUMBER, 3e7, 5e6, "3e7");
    check_label(CPD_SVGPLOT_NUMBER, 1e-300 * 1e-10, 1e-5, "0");
    check_label(CPD_SVGPLOT_TIME_S, 390, 30, "6:30");
    check_label(CPD_SVGPLOT_TIME_S, 3720, 60, "1:02:00");
    check_label(CPD_SVGPLOT_TIME_S, -30, 15, "-0:30");
    check_label(CPD_SVGPLOT_TIME_S, 0, 60, "0:00");
    check_label(CPD_SVGPLOT_TIME_S, -0.2, 1, "0:00");
    check_label(CPD_SVGPLOT_DATE, 19723, 7, "2024-01-01"); /* 54 years of 365 days + 13 leap days */
    check_label(CPD_SVGPLOT_DATE, 19797.4, 1, "2024-03-15");
    check_label(CPD_SVGPLOT_DATE, 19723, 30, "Jan 2024");
    check_label(CPD_SVGPLOT_DATE, 19723, 365, "2024");
    check_label(CPD_SVGPLOT_DATE, 1e6, 1e5, "1000000"); /* after 2999: a number */
    check_label(CPD_SVGPLOT_NUMBER, NAN, 1, "-");
    check_label(CPD_SVGPLOT_TIME_S, INFINITY, 1, "-");
    check_label(99, 1, 1, "-");
    char small[4];
    cpd_svgplot_tick_label(CPD_SVGPLOT_DATE, 19723, 7, small, sizeof small);
    assert_string_equal(small, "202");
    cpd_svgplot_tick_label(CPD_SVGPLOT_DATE, 19723, 7, NULL, 10); /* must not crash */
}

/* ---- palette ------------------------------------------------------------------------------ */

static void hex_rgb(const char *hex, double rgb[3])
{
    for (int k = 0; k < 3; k++) {
        char two[3] = {hex[1 + 2 * k], hex[2 + 2 * k], 0};
        double c = (double)strtol(two, NULL, 16) / 255.0;
        /* sRGB decoding, IEC 61966-2-1:1999 */
        rgb[k] = c <= 0.04045 ? c / 12.92 : pow((c + 0.055) / 1.055, 2.4);
    }
}

static void lab_of(const double lin[3], double lab[3])
{
    /* sRGB (D65) to XYZ to CIELAB, CIE 15:2004 */
    const double M[3][3] = {{0.4124, 0.3576, 0.1805}, {0.2126, 0.7152, 0.0722}, {0.0193, 0.1192, 0.9505}};
    const double wn[3] = {0.95047, 1.0, 1.08883};
    double f[3];
    for (int i = 0; i < 3; i++) {
        double v = 0;
        for (int j = 0; j < 3; j++)
            v += M[i][j] * fmin(1, fmax(0, lin[j]));
        double t = v / wn[i];
        f[i] = t > 216.0 / 24389.0 ? cbrt(t) : t * 24389.0 / 27.0 / 116.0 + 16.0 / 116.0;
    }
    lab[0] = 116 * f[1] - 16;
    lab[1] = 500 * (f[0] - f[1]);
    lab[2] = 200 * (f[1] - f[2]);
}

static void palette_colour_blind_safe(void **state)
{
    (void)state;
    /* Machado, Oliveira & Fernandes 2009 (IEEE Trans Vis Comput Graph 15:1291), simulation matrices
     * for protanopia, deuteranopia and tritanopia at severity 1.0, applied to linear RGB (values from
     * memory of the paper's table; each row sums to 1, checked below, as the paper's do) */
    const double sim[3][3][3] = {
        {{0.152286, 1.052583, -0.204868}, {0.114503, 0.786281, 0.099216}, {-0.003882, -0.048116, 1.051998}},
        {{0.367322, 0.860646, -0.227968}, {0.280085, 0.672501, 0.047413}, {-0.011820, 0.042940, 0.968881}},
        {{1.255528, -0.076749, -0.178779}, {-0.078411, 0.930809, 0.147602}, {0.004733, 0.691367, 0.303900}},
    };
    for (int s = 0; s < 3; s++)
        for (int i = 0; i < 3; i++)
            assert_true(fabs(sim[s][i][0] + sim[s][i][1] + sim[s][i][2] - 1) < 2e-4);
    /* the categorical colours; the domain ramp (RAMP1..RAMP4) is checked by domain_ramp_readable */
    enum { NCAT = CPD_SVGPLOT_RAMP1 };
    double lin[NCAT][3];
    for (int c = 0; c < NCAT; c++) {
        const char *hex = cpd_svgplot_color_hex(c);
        assert_non_null(hex);
        assert_int_equal(strlen(hex), 7);
        hex_rgb(hex, lin[c]);
    }
    /* line colours: contrast ratio against white at least 3:1 (W3C WCAG 2.1 SC 1.4.11, 2018) */
    for (int c = 0; c < 6; c++) {
        double L = 0.2126 * lin[c][0] + 0.7152 * lin[c][1] + 0.0722 * lin[c][2];
        assert_true(1.05 / (L + 0.05) >= 3.0);
    }
    /* any two colours at least 15 CIELAB units apart for normal vision and each simulated dichromacy;
     * 15 is our own margin (about 7 just-noticeable differences of 2.3, Mahy et al. 1994) */
    double worst = 1e9;
    for (int s = -1; s < 3; s++)
        for (int a = 0; a < NCAT; a++)
            for (int b = a + 1; b < NCAT; b++) {
                double la[3], lb[3], sa[3], sb[3];
                for (int i = 0; i < 3; i++) {
                    sa[i] = s < 0 ? lin[a][i] : 0;
                    sb[i] = s < 0 ? lin[b][i] : 0;
                    for (int j = 0; s >= 0 && j < 3; j++) {
                        sa[i] += sim[s][i][j] * lin[a][j];
                        sb[i] += sim[s][i][j] * lin[b][j];
                    }
                }
                lab_of(sa, la);
                lab_of(sb, lb);
                double d = sqrt(pow(la[0] - lb[0], 2) + pow(la[1] - lb[1], 2) + pow(la[2] - lb[2], 2));
                worst = fmin(worst, d);
            }
    assert_true(worst >= 15);
    assert_null(cpd_svgplot_color_hex(-1));
    assert_null(cpd_svgplot_color_hex(CPD_SVGPLOT_NCOLORS));
}

/* The intensity-domain colours, the one set every plot and sheet uses (cpd_plot_domain_color), read in
 * order by lightness alone for normal vision and simulated protanopia, deuteranopia and tritanopia, in
 * greyscale print, and under the plot's ink (#222): numpy in tests/ref/palette_cvd.py. */
static void domain_ramp_readable(void **state)
{
    (void)state;
    char text[256] = "";
    for (int k = 0; k < 4; k++) {
        const char *hex = cpd_svgplot_color_hex(cpd_plot_domain_color(k));
        assert_non_null(hex);
        strcat(text, hex);
        strcat(text, "\n");
    }
    strcat(text, "ink #222222\n");
    assert_int_equal(cpd_plot_domain_color(-1), -1);
    assert_int_equal(cpd_plot_domain_color(4), -1);
    double v[4];
    assert_int_equal(pyref_run("palette_cvd.py", text, v, 4, NAN), 4);
    /* 10 L* units between neighbours: our own margin, about 4 just-noticeable differences of 2.3
     * (Mahy et al. 1994) in every view */
    assert_true(v[0] >= 10);
    assert_true(v[1] == 1);   /* moderate lightest, extreme darkest, for every colour-vision type */
    assert_true(v[2] >= 1.3); /* neighbours stay apart on a greyscale printout (our own margin) */
    assert_true(v[3] >= 4.5); /* labels on any band: WCAG 2.1 SC 1.4.3 text contrast (W3C 2018) */
}

/* Two plots stacked in ONE <svg>: a consumer that ends an SVG at its first </svg> (as a page
 * scraper does) must still get the whole picture, so nothing nests. */
static void stacked_plots_one_root(void **state)
{
    (void)state;
    const double x[4] = {1.25, 2.5, 3.75, 5.125}, y[4] = {3.5, 1.75, 4.25, 2.125};
    cpd_svgplot *a = cpd_svgplot_alloc(400, 260), *b = cpd_svgplot_alloc(380, 170);
    assert_int_equal(cpd_svgplot_line(a, x, y, 4, NULL, "upper"), CPD_OK);
    assert_int_equal(cpd_svgplot_points(b, x, y, 4, NULL, NULL, "lower"), CPD_OK);
    cpd_svgplot *const two[2] = {a, b};
    char *svg = NULL;
    size_t len = 0;
    assert_int_equal(cpd_svgplot_render_stack(two, 2, "A & B", &svg, &len), CPD_OK);
    assert_int_equal(strlen(svg), len);
    const char *first = strstr(svg, "<svg"), *close = strstr(svg, "</svg>");
    assert_ptr_equal(first, svg);
    assert_null(strstr(svg + 4, "<svg"));
    assert_ptr_equal(close + strlen("</svg>\n"), svg + len);
    assert_non_null(strstr(svg, "width=\"400\" height=\"430\""));
    assert_non_null(strstr(svg, "<title>A &amp; B</title>"));
    assert_non_null(strstr(svg, "<g transform=\"translate(0,260)\">"));
    double k[K_COUNT];
    assert_int_equal(pyref_run("svgcheck.py", svg, k, K_COUNT, ABSENT), K_COUNT);
    assert_true(k[K_ROOT_OK] == 1);
    free(svg);
    assert_int_equal(cpd_svgplot_render_stack(two, 0, NULL, &svg, NULL), CPD_EUSAGE);
    assert_null(svg);
    cpd_svgplot *const holed[2] = {a, NULL};
    assert_int_equal(cpd_svgplot_render_stack(holed, 2, NULL, &svg, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_render_stack(NULL, 1, NULL, &svg, NULL), CPD_EUSAGE);
    cpd_svgplot_free(a);
    cpd_svgplot_free(b);
}

/* A logarithmic time axis: equal ratios take equal lengths (1 s to 10 s as long as 1 min to
 * 10 min), ticks on round clock times, nothing at or below zero drawn. */
static void log_time_axis(void **state)
{
    (void)state;
    const double x[5] = {1, 10, 60, 600, -5}, y[5] = {900.5, 600.25, 420.75, 300.125, 100};
    cpd_svgplot *p = cpd_svgplot_alloc(640, 360);
    assert_int_equal(cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_LOG_TIME_S), CPD_OK);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 1, 600), CPD_OK);
    assert_int_equal(cpd_svgplot_points(p, x, y, 5, NULL, NULL, "pts"), CPD_OK);
    char *svg = NULL;
    assert_int_equal(cpd_svgplot_render(p, &svg, NULL), CPD_OK);
    /* the circles' x positions */
    double cx[5];
    int n = 0;
    const char *g = strstr(svg, "class=\"cpd-data\""), *end = g ? strstr(g, "</g>") : NULL;
    for (const char *q = g; q && (q = strstr(q, "<circle cx=\"")) && q < end && n < 5; q++)
        cx[n++] = strtod(q + strlen("<circle cx=\""), NULL);
    assert_int_equal(n, 4); /* -5 s is off a logarithmic axis */
    double a = cx[1] - cx[0], b = cx[3] - cx[2];
    assert_true(fabs(a - b) < 0.05); /* log10(10/1) = log10(600/60) */
    assert_true(fabs((cx[2] - cx[1]) / a - log10(6.0)) < 1e-3);
    assert_non_null(strstr(svg, ">0:01<"));
    assert_non_null(strstr(svg, ">10:00<"));
    char lab[16];
    cpd_svgplot_tick_label(CPD_SVGPLOT_LOG_TIME_S, 3600, 60, lab, sizeof lab);
    assert_string_equal(lab, "1:00:00");
    free(svg);
    cpd_svgplot_free(p);
}

/* ---- plots -------------------------------------------------------------------------------- */

static void escaping_hostile_text(void **state)
{
    (void)state;
    const char *evil = "<script>alert(1)</script> & \"q\" 'a'";
    const char *escaped = "&lt;script&gt;alert(1)&lt;/script&gt; &amp; &quot;q&quot; &#39;a&#39;";
    /* control bytes, a stray continuation byte, an overlong '/', a UTF-16 surrogate, U+FFFF, then
     * a valid prime (U+2032) that must pass unchanged */
    const char *junk = "a\x01\x1f\tb \x80 \xc0\xaf \xed\xa0\x80 \xef\xbf\xbf W\xe2\x80\xb2 \xf0\x9f";
    cpd_svgplot *p = cpd_svgplot_alloc(480, 320);
    assert_non_null(p);
    assert_int_equal(cpd_svgplot_set_title(p, evil), CPD_OK);
    assert_int_equal(cpd_svgplot_set_label(p, CPD_SVGPLOT_X, evil), CPD_OK);
    assert_int_equal(cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, junk), CPD_OK);
    assert_int_equal(cpd_svgplot_set_label(p, CPD_SVGPLOT_Y2, evil), CPD_OK);
    const double x[3] = {1.2, 2.7, 3.9}, y[3] = {4.1, 3.3, 5.8};
    assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, evil), CPD_OK);
    assert_int_equal(cpd_svgplot_points(p, x, y, 3, NULL, NULL, junk), CPD_OK);
    assert_int_equal(cpd_svgplot_hregion(p, 3.5, 4.5, NULL, evil), CPD_OK);
    assert_int_equal(cpd_svgplot_vline(p, 2, NULL, evil), CPD_OK);
    assert_int_equal(cpd_svgplot_hline(p, 5, NULL, evil), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "escaping", 480, 320, k);
    assert_null(strstr(svg, "<script"));
    assert_null(strstr(svg, "'a'"));
    /* title element, title text, x label, y2 label, legend, region, two reference lines */
    assert_int_equal(count(svg, escaped), 8);
    assert_int_equal(count(svg, "a   b \xef\xbf\xbd \xef\xbf\xbd\xef\xbf\xbd \xef\xbf\xbd\xef\xbf\xbd\xef\xbf\xbd "
                                "\xef\xbf\xbd\xef\xbf\xbd\xef\xbf\xbd W\xe2\x80\xb2 \xef\xbf\xbd\xef\xbf\xbd"),
                     2); /* y label and legend */
    free(svg);
    cpd_svgplot_free(p);
}

static void nonfinite_skipped(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(500, 300);
    const double x[9] = {1.1, 2.3, NAN, 3.7, 4.2, INFINITY, 5.9, 6.4, 7.8};
    const double y[9] = {2.2, NAN, 3.1, -INFINITY, 4.4, 5.0, 1e305, 3.3, 2.9};
    const double ey[9] = {0.3, 0.2, 0.1, NAN, INFINITY, 0.2, 0.1, NAN, 0.25};
    cpd_svgplot_errors err = {ey, NULL, NULL, NULL};
    /* usable points: 0, 4, 7, 8 */
    assert_int_equal(cpd_svgplot_points(p, x, y, 9, &err, NULL, "points"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, x, y, 9, NULL, "line"), CPD_OK);
    const double lo[9] = {1, 1, 1, NAN, 1, 1, 1, 1, 1}, hi[9] = {3, 3, 3, 3, 3, 3, -INFINITY, 3, 3};
    assert_int_equal(cpd_svgplot_band(p, x, lo, hi, 9, NULL, "band"), CPD_OK);
    assert_int_equal(cpd_svgplot_step(p, x, y, 9, NULL, "step"), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "nonfinite", 500, 300, k);
    assert_true(k[K_N_CIRCLE] == 4);
    /* the x range is the usable x (1.1..7.8) plus 4 %, unstretched by 1e305 or infinity */
    double span = 7.8 - 1.1, lo_x = 1.1 - 0.04 * span, hi_x = 7.8 + 0.04 * span;
    assert_true(fabs(k[K_CX_MIN] - px_of(1.1, lo_x, hi_x, k[K_AREA_X], k[K_AREA_W], 0)) < PX_TOL);
    assert_true(fabs(k[K_CX_MAX] - px_of(7.8, lo_x, hi_x, k[K_AREA_X], k[K_AREA_W], 0)) < PX_TOL);
    free(svg);
    cpd_svgplot_free(p);
}

static void empty_plot_says_no_data(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(300, 200);
    double k[K_COUNT];
    char *svg = render_checked(p, "empty", 300, 200, k);
    assert_non_null(strstr(svg, ">no data</text>"));
    free(svg);
    /* layers whose every point is unusable, annotations and a title: still no data */
    const double nan3[3] = {NAN, NAN, NAN}, x3[3] = {1, 2, 3};
    assert_int_equal(cpd_svgplot_line(p, x3, nan3, 3, NULL, "nothing"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, NULL, NULL, 0, NULL, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_hregion(p, 1, 2, NULL, "region"), CPD_OK);
    assert_int_equal(cpd_svgplot_set_title(p, "Lactate"), CPD_OK);
    svg = render_checked(p, "empty2", 300, 200, k);
    assert_non_null(strstr(svg, ">no data</text>"));
    assert_non_null(strstr(svg, "<title>Lactate</title>"));
    free(svg);
    cpd_svgplot_free(p);
}

static void all_equal_data(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(480, 360);
    const double x[4] = {2.5, 2.5, 2.5, 2.5}, y[4] = {3.7, 3.7, 3.7, 3.7};
    assert_int_equal(cpd_svgplot_points(p, x, y, 4, NULL, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "equal", 480, 360, k);
    /* one value widened by 10 % each way: the point sits in the middle of the area */
    assert_true(k[K_N_CIRCLE] == 4);
    assert_true(fabs(k[K_CX_MIN] - (k[K_AREA_X] + 0.5 * k[K_AREA_W])) < PX_TOL);
    assert_true(fabs(k[K_CY_MAX] - (k[K_AREA_Y] + 0.5 * k[K_AREA_H])) < PX_TOL);
    assert_non_null(strstr(svg, ">3.7</text>")); /* 3.7 +- 0.4 is labelled in steps of 0.1 */
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(480, 360);
    const double z[4] = {0, 0, 0, 0}, t[4] = {1, 2, 3, 4};
    assert_int_equal(cpd_svgplot_line(p, t, z, 4, NULL, NULL), CPD_OK);
    svg = render_checked(p, "zero", 480, 360, k);
    assert_true(fabs(k[K_PY_MIN] - (k[K_AREA_Y] + 0.5 * k[K_AREA_H])) < PX_TOL);
    assert_non_null(strstr(svg, ">0.0</text>"));
    assert_non_null(strstr(svg, ">-1.0</text>"));
    assert_null(strstr(svg, ">-0.0</text>"));
    free(svg);
    cpd_svgplot_free(p);
}

static void data_to_pixels(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(600, 400);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, 10), CPD_OK);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, 100), CPD_OK);
    const double x[2] = {2.5, 7.35}, y[2] = {75, 12.6};
    assert_int_equal(cpd_svgplot_points(p, x, y, 2, NULL, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "pixels", 600, 400, k);
    assert_true(fabs(k[K_CX_MIN] - px_of(2.5, 0, 10, k[K_AREA_X], k[K_AREA_W], 0)) < PX_TOL);
    assert_true(fabs(k[K_CX_MAX] - px_of(7.35, 0, 10, k[K_AREA_X], k[K_AREA_W], 0)) < PX_TOL);
    assert_true(fabs(k[K_CY_MIN] - px_of(75, 0, 100, k[K_AREA_Y], k[K_AREA_H], 1)) < PX_TOL);
    assert_true(fabs(k[K_CY_MAX] - px_of(12.6, 0, 100, k[K_AREA_Y], k[K_AREA_H], 1)) < PX_TOL);
    /* a fixed range shows its own ends as ticks */
    assert_non_null(strstr(svg, ">0</text>"));
    assert_non_null(strstr(svg, ">10</text>"));
    assert_non_null(strstr(svg, ">100</text>"));
    free(svg);
    cpd_svgplot_free(p);
}

static void clipped_to_area(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(520, 340);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, 10), CPD_OK);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, 10), CPD_OK);
    const double x[2] = {-5, 15}, y[2] = {-5, 15};
    assert_int_equal(cpd_svgplot_line(p, x, y, 2, NULL, NULL), CPD_OK);
    const double bx[3] = {-3, 5, 13}, blo[3] = {-2, 4, 6}, bhi[3] = {12, 7, 1e300};
    assert_int_equal(cpd_svgplot_band(p, bx, blo, bhi, 3, NULL, NULL), CPD_OK);
    const double px[3] = {5, 12, 5}, py[3] = {5, 5, -1}; /* two markers outside */
    const double e[3] = {20, 1, 1};
    cpd_svgplot_errors err = {e, NULL, NULL, NULL};
    assert_int_equal(cpd_svgplot_points(p, px, py, 3, &err, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "clipped", 520, 340, k);
    /* the diagonal is cut exactly at the corners; nothing leaves the area */
    assert_true(fabs(k[K_PX_MIN] - k[K_AREA_X]) < PX_TOL);
    assert_true(fabs(k[K_PX_MAX] - (k[K_AREA_X] + k[K_AREA_W])) < PX_TOL);
    assert_true(fabs(k[K_PY_MIN] - k[K_AREA_Y]) < PX_TOL);
    assert_true(fabs(k[K_PY_MAX] - (k[K_AREA_Y] + k[K_AREA_H])) < PX_TOL);
    assert_true(k[K_N_CIRCLE] == 1);
    assert_true(k[K_N_PATH] == 3); /* line, band, error bars */
    free(svg);
    cpd_svgplot_free(p);
}

static void long_series_decimated(void **state)
{
    (void)state;
    enum { N = 20000 };
    static double x[N], y[N], xr[N];
    for (int i = 0; i < N; i++) {
        x[i] = i * 0.25;
        xr[i] = (N - 1 - i) * 0.25;
        y[i] = 3 * sin(i * 0.013) + 0.8 * (rng_unif() - 0.5);
    }
    y[7777] = 9.5;   /* one-sample spikes that decimation must keep */
    y[12345] = -9.7;
    cpd_svgplot *p = cpd_svgplot_alloc(640, 360);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, -10, 10), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, x, y, N, NULL, "1 Hz"), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "long", 640, 360, k);
    /* M4 keeps at most four points per pixel column (plus a column at the right edge) */
    assert_true(k[K_N_PAIRS] <= 4 * (k[K_AREA_W] + 1));
    assert_true(k[K_N_PAIRS] >= 2 * k[K_AREA_W]);
    assert_true(fabs(k[K_PY_MIN] - px_of(9.5, -10, 10, k[K_AREA_Y], k[K_AREA_H], 1)) < PX_TOL);
    assert_true(fabs(k[K_PY_MAX] - px_of(-9.7, -10, 10, k[K_AREA_Y], k[K_AREA_H], 1)) < PX_TOL);
    size_t len_line = strlen(svg);
    assert_true(len_line < 100000);
    free(svg);
    cpd_svgplot_free(p);

    /* x running backwards is not a time series: drawn in full */
    p = cpd_svgplot_alloc(640, 360);
    assert_int_equal(cpd_svgplot_line(p, xr, y, N, NULL, NULL), CPD_OK);
    svg = render_checked(p, "long_reversed", 640, 360, k);
    assert_true(k[K_N_PAIRS] > 0.9 * N);
    free(svg);
    cpd_svgplot_free(p);

    /* points are never decimated; a step line is */
    p = cpd_svgplot_alloc(640, 360);
    assert_int_equal(cpd_svgplot_points(p, x, y, N, NULL, NULL, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_step(p, x, y, N, NULL, NULL), CPD_OK);
    svg = render_checked(p, "long_points", 640, 360, k);
    assert_true(k[K_N_CIRCLE] == N);
    assert_true(k[K_N_PAIRS] <= 4 * (k[K_AREA_W] + 1));
    free(svg);
    cpd_svgplot_free(p);
}

/* One plot per layer type, each with every option of that type. */
static void each_layer_type(void **state)
{
    (void)state;
    const double x[6] = {1.2, 2.9, 4.1, 5.6, 7.3, 8.8}, y[6] = {3.1, 4.7, 4.2, 6.9, 5.5, 7.4};
    const double lo[6] = {2.1, 3.9, 3.6, 5.8, 4.1, 6.2}, hi[6] = {4.0, 5.5, 4.9, 7.7, 6.8, 8.9};
    double k[K_COUNT];
    cpd_svgplot_style st;
    char *svg;

    cpd_svgplot *p = cpd_svgplot_alloc(400, 260);
    for (int d = 0; d < CPD_SVGPLOT_NDASH; d++) {
        double yd[6];
        for (int i = 0; i < 6; i++)
            yd[i] = y[i] + d;
        cpd_svgplot_style_init(&st, d);
        st.dash = d;
        assert_int_equal(cpd_svgplot_line(p, x, yd, 6, &st, "line"), CPD_OK);
    }
    svg = render_checked(p, "line", 400, 260, k);
    assert_true(k[K_N_PATH] == CPD_SVGPLOT_NDASH);
    assert_int_equal(count(svg, "stroke-dasharray"), 2 * (CPD_SVGPLOT_NDASH - 1)); /* plot and legend */
    assert_true(k[K_N_LEGEND_TEXT] == CPD_SVGPLOT_NDASH);
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    const double em[6] = {0.3, 0.5, 0.2, 0.6, 0.4, 0.35}, ep[6] = {0.6, 0.9, 0.4, 1.1, 0.8, 0.7};
    cpd_svgplot_errors asym = {em, ep, em, NULL};
    for (int m = 0; m < CPD_SVGPLOT_NMARKER; m++) {
        double ym[6];
        for (int i = 0; i < 6; i++)
            ym[i] = y[i] + 2 * m;
        cpd_svgplot_style_init(&st, m);
        st.marker = m;
        assert_int_equal(cpd_svgplot_points(p, x, ym, 6, m == 0 ? &asym : NULL, &st, "pts"), CPD_OK);
    }
    svg = render_checked(p, "points", 400, 260, k);
    assert_true(k[K_N_CIRCLE] == 6);
    assert_true(k[K_N_RECT] == 6);
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_band(p, x, lo, hi, 6, NULL, "band"), CPD_OK);
    svg = render_checked(p, "band", 400, 260, k);
    assert_true(k[K_N_PATH] == 1 && k[K_N_PAIRS] == 12 && k[K_N_MOVES] == 1);
    assert_non_null(strstr(svg, "Z\""));
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_step(p, x, y, 6, NULL, "step"), CPD_OK);
    svg = render_checked(p, "step", 400, 260, k);
    assert_true(k[K_N_PAIRS] == 11); /* six values, five risers */
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, 10), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_SKY);
    assert_int_equal(cpd_svgplot_hregion(p, -INFINITY, 2.5, &st, "moderate"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_YELLOW);
    assert_int_equal(cpd_svgplot_hregion(p, 4, 2.5, &st, "heavy"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_RED);
    assert_int_equal(cpd_svgplot_hregion(p, 12, 14, &st, "outside"), CPD_OK);
    assert_int_equal(cpd_svgplot_hregion(p, 8, INFINITY, NULL, "extreme"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, x, y, 6, NULL, NULL), CPD_OK);
    svg = render_checked(p, "hregion", 400, 260, k);
    assert_true(k[K_N_RECT] == 3);
    assert_non_null(strstr(svg, ">heavy</text>"));
    assert_null(strstr(svg, ">outside</text>"));
    assert_true(k[K_N_LEGEND_TEXT] == 0);
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_vline(p, 3.3, NULL, "GET"), CPD_OK);
    assert_int_equal(cpd_svgplot_vline(p, 8.1, NULL, "RCP"), CPD_OK);
    assert_int_equal(cpd_svgplot_hline(p, 5, NULL, "CP"), CPD_OK);
    assert_int_equal(cpd_svgplot_points(p, x, y, 6, NULL, NULL, NULL), CPD_OK);
    svg = render_checked(p, "reflines", 400, 260, k);
    assert_true(k[K_N_PATH] == 3 && k[K_N_PAIRS] == 6);
    assert_non_null(strstr(svg, ">GET</text>"));
    /* the RCP line sits in the right part: its label ends at the line, in the line's colour */
    assert_non_null(strstr(svg, "text-anchor=\"end\" font-size=\"10\" fill=\"#"));
    assert_non_null(strstr(svg, "stroke-linejoin=\"round\" paint-order=\"stroke\">RCP"));
    free(svg);
    cpd_svgplot_free(p);
}

/* The plots of the domain sheet, drawn with invented but typical values. */
static void sheet_plots(void **state)
{
    (void)state;
    double k[K_COUNT];
    cpd_svgplot_style st;
    char *svg;

    /* power-duration: trials, fit P = CP + W'/t with a band, domains, CP line */
    cpd_svgplot *p = cpd_svgplot_alloc(640, 400);
    cpd_svgplot_set_title(p, "Power\xe2\x80\x93" "duration, A07");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Duration (min)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "Power (W)");
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, NAN), CPD_OK);
    const double cp = 262.4, wp = 18350;
    const int dom[4] = {cpd_plot_domain_color(0), cpd_plot_domain_color(1), cpd_plot_domain_color(2),
                        cpd_plot_domain_color(3)};
    const double edge[5] = {-INFINITY, 198.5, cp, 433.0, INFINITY};
    const char *name[4] = {"moderate", "heavy", "severe", "extreme"};
    for (int d = 0; d < 4; d++) {
        cpd_svgplot_style_init(&st, dom[d]);
        st.fill_opacity = 0.16;
        assert_int_equal(cpd_svgplot_hregion(p, edge[d], edge[d + 1], &st, name[d]), CPD_OK);
    }
    double fx[120], fy[120], flo[120], fhi[120];
    for (int i = 0; i < 120; i++) {
        fx[i] = 1.5 + i * (21.0 - 1.5) / 119;
        fy[i] = cp + wp / (fx[i] * 60);
        double se = 3.1 + 1100 / (fx[i] * 60);
        flo[i] = fy[i] - 1.96 * se;
        fhi[i] = fy[i] + 1.96 * se;
    }
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    st.fill_opacity = 0.2;
    assert_int_equal(cpd_svgplot_band(p, fx, flo, fhi, 120, &st, "95 % band"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, fx, fy, 120, &st, "CP + W\xe2\x80\xb2/t"), CPD_OK);
    const double tx[5] = {2.13, 3.92, 7.05, 12.4, 19.7}, ty[5] = {405.1, 339.6, 306.2, 287.9, 277.3};
    const double tse[5] = {6.2, 5.1, 4.3, 3.8, 3.3};
    cpd_svgplot_errors err = {tse, NULL, NULL, NULL};
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_GREY);
    assert_int_equal(cpd_svgplot_points(p, tx, ty, 5, &err, &st, "trials"), CPD_OK);
    st.dash = CPD_SVGPLOT_DASHED;
    st.stroke_px = 1;
    assert_int_equal(cpd_svgplot_hline(p, cp, &st, "CP 262 W"), CPD_OK);
    svg = render_checked(p, "combined", 640, 400, k);
    assert_true(k[K_N_CIRCLE] == 5 && k[K_N_RECT] == 4 && k[K_N_LEGEND_TEXT] == 3);
    assert_non_null(strstr(svg, ">0</text>")); /* y fixed at 0 from below */
    free(svg);
    cpd_svgplot_free(p);

    /* V-slope: VCO2 against VO2 with two fitted lines and the breakpoint */
    p = cpd_svgplot_alloc(420, 360);
    cpd_svgplot_set_title(p, "V-slope");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "VO2 (mL/min)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VCO2 (mL/min)");
    double vo2[150], vco2[150];
    for (int i = 0; i < 150; i++) {
        vo2[i] = 900 + i * 22.3 + 40 * (rng_unif() - 0.5);
        vco2[i] = vo2[i] < 2400 ? 0.93 * vo2[i] - 20 : 2212 + 1.42 * (vo2[i] - 2400);
        vco2[i] += 50 * (rng_unif() - 0.5);
    }
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_GREY);
    st.marker_px = 2;
    st.stroke_px = 0.8;
    assert_int_equal(cpd_svgplot_points(p, vo2, vco2, 150, NULL, &st, "breaths"), CPD_OK);
    const double l1x[2] = {900, 2400}, l1y[2] = {817, 2212}, l2x[2] = {2400, 4250}, l2y[2] = {2212, 4839};
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    assert_int_equal(cpd_svgplot_line(p, l1x, l1y, 2, &st, "S1"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_ORANGE);
    assert_int_equal(cpd_svgplot_line(p, l2x, l2y, 2, &st, "S2"), CPD_OK);
    st.dash = CPD_SVGPLOT_DOTTED;
    assert_int_equal(cpd_svgplot_vline(p, 2400, &st, "GET 2.40 L/min"), CPD_OK);
    svg = render_checked(p, "vslope", 420, 360, k);
    assert_true(k[K_N_CIRCLE] == 150);
    free(svg);
    cpd_svgplot_free(p);

    /* ventilatory equivalents over a ramp, time axis */
    p = cpd_svgplot_alloc(640, 320);
    cpd_svgplot_set_title(p, "Ventilatory equivalents");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Time (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VE/VO2, VE/VCO2");
    double tt[720], eo2[720], eco2[720];
    for (int i = 0; i < 720; i++) {
        tt[i] = i;
        eo2[i] = 24 + (i > 380 ? 0.03 * (i - 380) : 0) + 1.2 * (rng_unif() - 0.5);
        eco2[i] = 28.5 - 0.004 * i + (i > 560 ? 0.05 * (i - 560) : 0) + 1.2 * (rng_unif() - 0.5);
    }
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    assert_int_equal(cpd_svgplot_line(p, tt, eo2, 720, &st, "VE/VO2"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_ORANGE);
    st.dash = CPD_SVGPLOT_DASHED;
    assert_int_equal(cpd_svgplot_line(p, tt, eco2, 720, &st, "VE/VCO2"), CPD_OK);
    svg = render_checked(p, "ventequiv", 640, 320, k);
    assert_non_null(strstr(svg, ">10:00</text>"));
    assert_null(strstr(svg, ">600</text>"));
    free(svg);
    cpd_svgplot_free(p);

    /* lactate: samples and a cubic */
    p = cpd_svgplot_alloc(420, 320);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Power (W)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "Lactate (mmol/L)");
    const double lp[7] = {100, 140, 180, 220, 260, 300, 340}, ll[7] = {1.12, 1.08, 1.31, 1.77, 2.64, 4.21, 7.03};
    double cx[60], cy[60];
    for (int i = 0; i < 60; i++) {
        cx[i] = 100 + i * 240.0 / 59;
        double u = (cx[i] - 220) / 100;
        cy[i] = 1.83 + 2.47 * u + 1.62 * u * u + 0.55 * u * u * u;
    }
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_RED);
    st.marker = CPD_SVGPLOT_DIAMOND;
    assert_int_equal(cpd_svgplot_points(p, lp, ll, 7, NULL, &st, "samples"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, cx, cy, 60, &st, "cubic"), CPD_OK);
    svg = render_checked(p, "lactate", 420, 320, k);
    assert_non_null(strstr(svg, "<title>Lactate (mmol/L)</title>")); /* y label stands in for a title */
    free(svg);
    cpd_svgplot_free(p);

    /* VO2 kinetics: data from -2 min, the fit, then residuals in a small second plot */
    double kt[420], kv[420], kf[420], kr[420];
    for (int i = 0; i < 420; i++) {
        kt[i] = -120 + i;
        double on = kt[i] > 15 ? 1 - exp(-(kt[i] - 15) / 27.5) : 0;
        kf[i] = 850 + 2150 * on;
        kv[i] = kf[i] + 90 * (rng_unif() - 0.5);
        kr[i] = kv[i] - kf[i];
    }
    p = cpd_svgplot_alloc(640, 300);
    cpd_svgplot_set_title(p, "VO2 kinetics, 6-min bout");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Time from onset (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VO2 (mL/min)");
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_GREY);
    st.marker_px = 1.8;
    st.stroke_px = 0.7;
    assert_int_equal(cpd_svgplot_points(p, kt, kv, 420, NULL, &st, "1-s data"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    st.stroke_px = 2;
    assert_int_equal(cpd_svgplot_line(p, kt, kf, 420, &st, "primary component"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_GREEN);
    st.dash = CPD_SVGPLOT_DASHDOT;
    assert_int_equal(cpd_svgplot_vline(p, 15, &st, "TD 15 s"), CPD_OK);
    svg = render_checked(p, "kinetics", 640, 300, k);
    assert_non_null(strstr(svg, ">-1:00</text>"));
    assert_non_null(strstr(svg, ">0:00</text>"));
    free(svg);
    cpd_svgplot_free(p);
    p = cpd_svgplot_alloc(640, 160);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Time from onset (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "Residual");
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_GREY);
    st.marker_px = 1.5;
    assert_int_equal(cpd_svgplot_points(p, kt, kr, 420, NULL, &st, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_hline(p, 0, NULL, NULL), CPD_OK);
    svg = render_checked(p, "residuals", 640, 160, k);
    free(svg);
    cpd_svgplot_free(p);

    /* W' balance with the work rate as a step line on the right axis */
    enum { NW = 3600 };
    static double wt[NW], wb[NW], wpow[NW];
    for (int i = 0; i < NW; i++) {
        wt[i] = i;
        int hard = (i / 180) % 2 == 1;
        wpow[i] = hard ? 385 : 140;
        wb[i] = 18.35 - (hard ? 0.041 * (i % 180) : 0.03 * (180 - i % 180) * 0.1);
    }
    p = cpd_svgplot_alloc(640, 300);
    cpd_svgplot_set_title(p, "W\xe2\x80\xb2 balance");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Time (h:mm:ss)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "W\xe2\x80\xb2 balance (kJ)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y2, "Power (W)");
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_Y2, 0, NAN), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_ORANGE);
    st.y_axis = CPD_SVGPLOT_Y2;
    st.stroke_px = 1;
    assert_int_equal(cpd_svgplot_step(p, wt, wpow, NW, &st, "power"), CPD_OK);
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    assert_int_equal(cpd_svgplot_line(p, wt, wb, NW, &st, "W\xe2\x80\xb2 balance"), CPD_OK);
    svg = render_checked(p, "wbal", 640, 300, k);
    assert_non_null(strstr(svg, ">Power (W)</text>"));
    assert_non_null(strstr(svg, "rotate(90 "));
    free(svg);
    cpd_svgplot_free(p);

    /* season trend: CP with SE over dates */
    p = cpd_svgplot_alloc(640, 300);
    cpd_svgplot_set_title(p, "CP over the season");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "Date");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_DATE);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "CP (W)");
    const double day[6] = {19641, 19688, 19735, 19791, 19840, 19902}; /* 2023-10-11 .. 2024-06-28 */
    const double cps[6] = {251.3, 255.8, 262.1, 258.7, 266.4, 270.2}, cse[6] = {4.1, 3.2, 5.3, 3.6, 4.0, 2.6};
    const double dx[6] = {1, 1, 2, 1, 3, 1};
    cpd_svgplot_errors e2 = {cse, NULL, dx, NULL};
    cpd_svgplot_style_init(&st, CPD_SVGPLOT_BLUE);
    st.marker = CPD_SVGPLOT_SQUARE;
    assert_int_equal(cpd_svgplot_points(p, day, cps, 6, &e2, &st, "CP \xc2\xb1 SE"), CPD_OK);
    svg = render_checked(p, "trend", 640, 300, k);
    assert_true(k[K_N_RECT] == 6);
    free(svg);
    cpd_svgplot_free(p);
}

static char *render_dates(double d0, double d1)
{
    cpd_svgplot *p = cpd_svgplot_alloc(640, 260);
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_DATE);
    const double x[2] = {d0, d1}, y[2] = {1.5, 2.5};
    assert_int_equal(cpd_svgplot_line(p, x, y, 2, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "dates", 640, 260, k);
    cpd_svgplot_free(p);
    return svg;
}

static void date_and_time_axes(void **state)
{
    (void)state;
    /* 2024-01-18 .. 2024-07-16: month starts, the year only on the first */
    char *svg = render_dates(19740, 19920);
    assert_non_null(strstr(svg, ">Feb 2024</text>"));
    assert_non_null(strstr(svg, ">Mar</text>"));
    assert_non_null(strstr(svg, ">Jul</text>"));
    assert_null(strstr(svg, ">Mar 2024</text>"));
    free(svg);
    /* across New Year (2023-11-10 .. 2024-03-20): January carries its year */
    svg = render_dates(19671, 19802);
    assert_non_null(strstr(svg, ">Dec 2023</text>"));
    assert_non_null(strstr(svg, ">Jan 2024</text>"));
    assert_non_null(strstr(svg, ">Feb</text>"));
    free(svg);
    /* ten days: ISO dates */
    svg = render_dates(19793, 19803);
    assert_true(count(svg, ">2024-03-") >= 3);
    assert_null(strstr(svg, ">Mar"));
    free(svg);
    /* ten years: years every other year */
    svg = render_dates(16436, 20088); /* 2015-01-01 .. 2024-12-31 */
    assert_non_null(strstr(svg, ">2016</text>"));
    assert_non_null(strstr(svg, ">2024</text>"));
    assert_null(strstr(svg, ">2017</text>"));
    free(svg);
    /* one date only: a fortnight around it */
    svg = render_dates(19797, 19797);
    assert_non_null(strstr(svg, ">2024-03-"));
    free(svg);

    /* 20 minutes: five-minute ticks */
    cpd_svgplot *p = cpd_svgplot_alloc(640, 260);
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    const double x[2] = {0, 1200}, y[2] = {1, 2};
    assert_int_equal(cpd_svgplot_line(p, x, y, 2, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    svg = render_checked(p, "time", 640, 260, k);
    assert_non_null(strstr(svg, ">5:00</text>"));
    assert_non_null(strstr(svg, ">20:00</text>"));
    assert_null(strstr(svg, ">2:00</text>"));
    free(svg);
    cpd_svgplot_free(p);
}

static void legend_and_default_colours(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(480, 300);
    const double x[3] = {1, 2, 3}, y[3] = {2.2, 1.4, 3.3};
    assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, "first"), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, ""), CPD_OK);
    assert_int_equal(cpd_svgplot_vline(p, 2, NULL, "marker"), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "legend", 480, 300, k);
    assert_true(k[K_N_LEGEND_TEXT] == 1);
    /* series without a style take the line colours in order; the reference line is grey */
    const char *a = strstr(svg, "stroke=\"#1b5e9e\""), *b = strstr(svg, "stroke=\"#cf6a0e\"");
    const char *c = strstr(svg, "stroke=\"#1a9477\""), *g = strstr(svg, "stroke=\"#3d3d3d\"");
    assert_true(a && b && c && g && a < b && b < c && c < g);
    free(svg);

    /* a legend too long for the plot keeps only the rows that fit */
    for (int i = 0; i < 60; i++)
        assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, "a rather long legend entry"), CPD_OK);
    svg = render_checked(p, "legend_long", 480, 300, k);
    assert_true(k[K_N_LEGEND_TEXT] >= 4 && k[K_N_LEGEND_TEXT] < 61);
    assert_true(k[K_AREA_H] >= 40);
    free(svg);
    cpd_svgplot_free(p);
}

static void api_errors(void **state)
{
    (void)state;
    assert_null(cpd_svgplot_alloc(159, 300));
    assert_null(cpd_svgplot_alloc(300, 8193));
    cpd_svgplot_free(NULL);
    cpd_svgplot *p = cpd_svgplot_alloc(300, 200);
    assert_non_null(p);

    assert_int_equal(cpd_svgplot_set_title(NULL, "t"), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_label(NULL, CPD_SVGPLOT_X, "x"), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_label(p, -1, "x"), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_label(p, CPD_SVGPLOT_NAXES, "x"), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(NULL, CPD_SVGPLOT_X, 0, 1), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, 3, 0, 1), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 1, 1), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 5, 2), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, NAN, INFINITY), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, -INFINITY, NAN), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, 2e300), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 1, 1 + 1e-12), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, NAN, NAN), CPD_OK);
    assert_int_equal(cpd_svgplot_set_format(NULL, CPD_SVGPLOT_X, CPD_SVGPLOT_DATE), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_format(p, 7, CPD_SVGPLOT_DATE), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_NFORMAT), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_set_format(p, CPD_SVGPLOT_X, -1), CPD_EUSAGE);

    const double x[2] = {1, 2}, y[2] = {3, 4};
    assert_int_equal(cpd_svgplot_line(NULL, x, y, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_line(p, NULL, y, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_step(p, x, NULL, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_points(NULL, x, y, 2, NULL, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_points(p, x, NULL, 2, NULL, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_band(p, x, y, NULL, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_band(NULL, x, y, y, 2, NULL, NULL), CPD_EUSAGE);
    /* n is checked before anything is copied, so a huge n with short arrays is safe here */
    assert_int_equal(cpd_svgplot_line(p, x, y, (size_t)100000001, NULL, NULL), CPD_EUSAGE);
    cpd_svgplot_errors huge = {x, NULL, NULL, NULL};
    assert_int_equal(cpd_svgplot_points(p, x, y, (size_t)100000001, &huge, NULL, NULL), CPD_EUSAGE);

    const double neg[2] = {0.5, -0.01}, nan2[2] = {NAN, 0.2};
    cpd_svgplot_errors e = {neg, NULL, NULL, NULL};
    assert_int_equal(cpd_svgplot_points(p, x, y, 2, &e, NULL, NULL), CPD_EDATA);
    e.y_minus = NULL;
    e.x_plus = neg;
    assert_int_equal(cpd_svgplot_points(p, x, y, 2, &e, NULL, NULL), CPD_EDATA);
    e.x_plus = nan2;
    assert_int_equal(cpd_svgplot_points(p, x, y, 2, &e, NULL, NULL), CPD_OK);

    cpd_svgplot_style good, bad;
    cpd_svgplot_style_init(&good, 99);
    assert_int_equal(good.color, CPD_SVGPLOT_BLUE);
    cpd_svgplot_style_init(NULL, 0);
    struct {
        int field;
        double v;
    } cases[] = {{0, -1}, {0, CPD_SVGPLOT_NCOLORS}, {1, -0.1}, {1, 20.5}, {1, NAN}, {2, CPD_SVGPLOT_NDASH},
                 {3, 1.01}, {3, NAN}, {3, -0.2}, {4, CPD_SVGPLOT_NMARKER}, {5, 31}, {5, -1}, {6, CPD_SVGPLOT_X}};
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        bad = good;
        switch (cases[i].field) {
        case 0: bad.color = (int)cases[i].v; break;
        case 1: bad.stroke_px = cases[i].v; break;
        case 2: bad.dash = (int)cases[i].v; break;
        case 3: bad.fill_opacity = cases[i].v; break;
        case 4: bad.marker = (int)cases[i].v; break;
        case 5: bad.marker_px = cases[i].v; break;
        default: bad.y_axis = (int)cases[i].v; break;
        }
        assert_int_equal(cpd_svgplot_line(p, x, y, 2, &bad, NULL), CPD_EUSAGE);
        assert_int_equal(cpd_svgplot_hregion(p, 1, 2, &bad, NULL), CPD_EUSAGE);
        assert_int_equal(cpd_svgplot_vline(p, 1, &bad, NULL), CPD_EUSAGE);
    }

    assert_int_equal(cpd_svgplot_hregion(NULL, 1, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hregion(p, NAN, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hregion(p, 2, 2, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hregion(p, INFINITY, INFINITY, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hregion(p, 1, 2e300, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hregion(p, -INFINITY, INFINITY, NULL, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_vline(NULL, 1, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_vline(p, INFINITY, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_vline(p, NAN, NULL, NULL), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_hline(p, -2e300, NULL, NULL), CPD_EUSAGE);

    char *out = (char *)"sentinel";
    size_t len = 7;
    assert_int_equal(cpd_svgplot_render(NULL, &out, &len), CPD_EUSAGE);
    assert_null(out);
    assert_int_equal(len, 0);
    assert_int_equal(cpd_svgplot_render(p, NULL, &len), CPD_EUSAGE);
    assert_int_equal(cpd_svgplot_render(p, &out, NULL), CPD_OK); /* len is optional */
    assert_true(xmllint_ok(out, strlen(out)));
    free(out);
    cpd_svgplot_free(p);
}

/* Fixed ranges far from the data and huge magnitudes must still give short, finite output. */
static void extreme_ranges(void **state)
{
    (void)state;
    cpd_svgplot *p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, 1e-6), CPD_OK);
    const double x[3] = {-1e300, 5e-7, 1e300}, y[3] = {1e300, -3e-200, -1e300};
    assert_int_equal(cpd_svgplot_line(p, x, y, 3, NULL, NULL), CPD_OK);
    assert_int_equal(cpd_svgplot_points(p, x, y, 3, NULL, NULL, NULL), CPD_OK);
    double k[K_COUNT];
    char *svg = render_checked(p, "extreme", 400, 260, k);
    assert_true(k[K_N_CIRCLE] == 1);
    assert_true(strlen(svg) < 20000);
    free(svg);
    cpd_svgplot_free(p);

    p = cpd_svgplot_alloc(400, 260);
    const double tiny[2] = {1e-310, 2e-310}, big[2] = {1e299, 1e299};
    assert_int_equal(cpd_svgplot_points(p, tiny, big, 2, NULL, NULL, NULL), CPD_OK);
    svg = render_checked(p, "extreme2", 400, 260, k);
    assert_true(k[K_N_CIRCLE] == 2);
    assert_non_null(strstr(svg, "e299</text>"));
    free(svg);
    cpd_svgplot_free(p);
}

/* Vertical-line labels close together drop to separate rows instead of overlapping (a lactate
 * plot's Dmax and modified Dmax are often a few watts apart). */
static void close_vline_labels_do_not_overlap(void **state)
{
    (void)state;
    const double x[6] = {1.1, 2.2, 3.3, 4.4, 5.5, 6.6}, y[6] = {2, 3, 5, 4, 6, 7};
    double k[K_COUNT];
    cpd_svgplot *p = cpd_svgplot_alloc(400, 260);
    assert_int_equal(cpd_svgplot_vline(p, 3.0, NULL, "modified Dmax"), CPD_OK);
    assert_int_equal(cpd_svgplot_vline(p, 3.2, NULL, "Dmax"), CPD_OK);
    assert_int_equal(cpd_svgplot_points(p, x, y, 6, NULL, NULL, NULL), CPD_OK);
    char *svg = render_checked(p, "reflines_close", 400, 260, k);
    const char *a = strstr(svg, ">modified Dmax</text>"), *b = strstr(svg, ">Dmax</text>");
    assert_non_null(a);
    assert_non_null(b);
    const char *ya = a, *yb = b; /* the y attribute of each label's <text> */
    while (ya > svg && strncmp(ya, " y=\"", 4) != 0)
        ya--;
    while (yb > svg && strncmp(yb, " y=\"", 4) != 0)
        yb--;
    assert_true(strtod(ya + 4, NULL) != strtod(yb + 4, NULL));
    free(svg);
    cpd_svgplot_free(p);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(ticks_examples),
        cmocka_unit_test(ticks_properties),
        cmocka_unit_test(ticks_errors),
        cmocka_unit_test(tick_labels),
        cmocka_unit_test(palette_colour_blind_safe),
        cmocka_unit_test(domain_ramp_readable),
        cmocka_unit_test(stacked_plots_one_root),
        cmocka_unit_test(log_time_axis),
        cmocka_unit_test(escaping_hostile_text),
        cmocka_unit_test(nonfinite_skipped),
        cmocka_unit_test(empty_plot_says_no_data),
        cmocka_unit_test(all_equal_data),
        cmocka_unit_test(data_to_pixels),
        cmocka_unit_test(clipped_to_area),
        cmocka_unit_test(long_series_decimated),
        cmocka_unit_test(each_layer_type),
        cmocka_unit_test(close_vline_labels_do_not_overlap),
        cmocka_unit_test(sheet_plots),
        cmocka_unit_test(date_and_time_axes),
        cmocka_unit_test(legend_and_default_colours),
        cmocka_unit_test(api_errors),
        cmocka_unit_test(extreme_ranges),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
