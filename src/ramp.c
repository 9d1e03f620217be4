/* ramp.c: ramp incremental test analysis. Breakpoint regressions run on 10-s bin means of the
 * cleaned samples; the 1-s grid serves rolling means and the placing of a VO2 level in time. */
#include "cpdomain/ramp.h"
#include "cpdomain/linfit.h"
#include "cpdomain/nlfit.h"
#include "cpdomain/steps.h"
#include "cpdomain/status.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Rules of this module (documented in ramp.h and the report). */
#define EXCLUDE_FIRST_S 60.0 /* CO2-store kinetics early in the ramp (Beaver et al. 1986) */
#define MIN_SEG 6            /* fewest samples on either side of a breakpoint */
#define Z_MIN 3.0            /* slope change must exceed 3 SE to be a visible threshold */
#define VS_S1_MIN 0.6        /* V-slope acceptance, METHODS 4 (Beaver et al. 1986 [M]) */
#define VS_S2_MIN 1.0
#define VS_DIFF_MIN 0.1
#define RCP_RATIO_MIN 1.15   /* VE-VCO2 slope must rise by 15 % at the RCP (our rule) */
#define ISOCAPNIC_FRAC 0.25  /* VE/VCO2 may rise at most a quarter as fast as VE/VO2 (our rule) */
#define PET_CHANGE_MMHG 1.0  /* a PET change smaller than this is "no change" (our rule) */
#define AGREE_FRAC 0.05      /* V-slope and ventilatory-equivalent GET agree within 5 % of VO2peak */
#define BASE_WIN_S 60.0      /* baseline: the final minute before onset */
#define BASE_MIN_S 30.0
#define BASE_MIN_N 8
#define GAIN_T_LO_S 120.0    /* after the on-transient of the ramp (e.g. tau 40 s: 3 tau) */
#define GAIN_MIN_SPAN_S 60.0
#define GAIN_MIN_N 15
#define GAIN_LO 8.0          /* common practice for cycling; Ozyener et al. 2011 JSSM 10:584: 10.3 +- 0.7 */
#define GAIN_HI 12.0
#define MRT_MAX_S 180.0      /* plausible MRT range (Iannetta et al. 2019: 28 +- 16 s; our bound) */
#define OUTLIER_PASSES 3
#define PLATEAU_WIN_S 90.0
#define PLATEAU_FRAC 0.5
#define MIN_RAMP_SLOPE 0.1 /* mL/min per s: below this VO2 does not follow a ramp */
#define COLUMN_MISMATCH_FRAC 0.05
#define STEPS_RATE_MISMATCH 0.10 /* steps: nominal and recorded rate differ by more than 10 % */
#define DROP_ABS_W 10.0      /* end of exercise: a fall of max(10 W | 0.3 m/s, 10 %) ... */
#define DROP_ABS_M_S 0.3
#define DROP_FRAC 0.10
#define DROP_S 5.0           /* ... that lasts 5 s */
#define GAIN_PEAK_FRAC 0.8   /* no GET: the gain line runs up to 80 % of the peak intensity */
#define STEPS_PLATEAU_ML_MIN 150.0 /* plateau of a step test: last two stages within 150 mL/min (common practice) */
#define MRT_NI_FRAC 0.5      /* MRT without a baseline: not identifiable when SE > half of it ... */
#define MRT_NI_MIN_S 10.0    /* ... and more than 10 s */

struct pt {
    double x, y;             /* regressor, response */
    double a, b, c, d, e;    /* riders: VE/VCO2, VE/VO2, PETO2 (mmHg), PETCO2 (mmHg), VE (L/min) */
    size_t i;                /* sample index: ties in x keep time order */
};

struct cpd_ramp_ws {
    cpd_gx_series *clean; /* outliers removed, times from onset */
    cpd_gx_series *grid;  /* 1 s */
    double *sm_vo2, *sm_vco2, *sm_hr, *trail;
    size_t cap_grid;
    struct pt *pts;
    double *px[3], *py[3];
    double *ra, *rb, *rc, *rd; /* riders of the V-slope points in VO2 order */
    size_t pn[3];
    int pvalid[3];
    unsigned char *drop, *flag;
    size_t cap_samp;
    int col;   /* the modality's intensity channel of the last analysis */
    int valid;
};

/* Shared state of one analysis. */
struct ctx {
    const cpd_ramp_opts *o;
    cpd_ramp_ws *w;
    cpd_ramp_result *res;
    size_t i0, i1;  /* grid indices of onset and end */
    double t_end;   /* s from onset */
    int col;        /* the modality's intensity channel */
    int rec;        /* 1: intensities from the record */
    int steps;      /* 1: a step test */
    double rate, start; /* the ramp line used (record's or nominal) */
};

static void say(char *buf, size_t len, const char *fmt, ...)
{
    if (!buf)
        return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(buf, len, fmt, ap);
    va_end(ap);
}

const char *cpd_ramp_reason_text(int reason)
{
    static const char *const text[CPD_RAMP_NREASONS] = {
        [CPD_RAMP_R_NONE] = "available",
        [CPD_RAMP_R_NO_VCO2] = "no VCO2 in the data",
        [CPD_RAMP_R_NO_VE] = "no VE in the data",
        [CPD_RAMP_R_FEW_POINTS] = "too few samples in the eligible range",
        [CPD_RAMP_R_NO_BREAK] = "no visible threshold",
        [CPD_RAMP_R_SLOPES] = "slopes fail the acceptance criteria",
        [CPD_RAMP_R_OUTSIDE] = "the lines do not cross inside the data",
        [CPD_RAMP_R_NOT_REACHED] = "level not reached during the ramp",
        [CPD_RAMP_R_NOT_ISOCAPNIC] = "VE/VCO2 rises with VE/VO2",
        [CPD_RAMP_R_NO_GET] = "no GET",
        [CPD_RAMP_R_NO_BASELINE] = "no baseline before onset",
        [CPD_RAMP_R_IMPLAUSIBLE] = "implausible estimate",
        [CPD_RAMP_R_FIT_FAILED] = "regression failed",
        [CPD_RAMP_R_STEPS] = "not defined for a step test",
        [CPD_RAMP_R_NOT_IDENTIFIABLE] = "not identifiable from the data",
    };
    if (reason < 0 || reason >= CPD_RAMP_NREASONS)
        return "unknown reason";
    return text[reason];
}

void cpd_ramp_opts_init(cpd_ramp_opts *o)
{
    memset(o, 0, sizeof *o);
    o->modality = CPD_RAMP_POWER;
    o->outlier_k = 4.0;
    o->outlier_half = 10;
    o->peak_window_s = 30.0;
    o->smooth_s = 20.0;
    o->bin_s = 10.0;
}

cpd_ramp_ws *cpd_ramp_alloc(void)
{
    return calloc(1, sizeof(cpd_ramp_ws));
}

static void release_series(cpd_ramp_ws *w)
{
    cpd_gx_free(w->clean);
    cpd_gx_free(w->grid);
    w->clean = w->grid = NULL;
    w->valid = 0;
}

void cpd_ramp_free(cpd_ramp_ws *w)
{
    if (!w)
        return;
    release_series(w);
    free(w->sm_vo2);
    free(w->sm_vco2);
    free(w->sm_hr);
    free(w->trail);
    free(w->pts);
    for (int k = 0; k < 3; k++) {
        free(w->px[k]);
        free(w->py[k]);
    }
    free(w->ra);
    free(w->rb);
    free(w->rc);
    free(w->rd);
    free(w->drop);
    free(w->flag);
    free(w);
}

static int grow(void **p, size_t n, size_t size)
{
    void *q = realloc(*p, (n ? n : 1) * size);
    if (!q)
        return CPD_ENOMEM;
    *p = q;
    return CPD_OK;
}

static int reserve_samples(cpd_ramp_ws *w, size_t n)
{
    if (n <= w->cap_samp)
        return CPD_OK;
    int rc = grow((void **)&w->pts, n, sizeof(struct pt));
    for (int k = 0; k < 3 && !rc; k++) {
        rc = grow((void **)&w->px[k], n, sizeof(double));
        if (!rc)
            rc = grow((void **)&w->py[k], n, sizeof(double));
    }
    if (!rc)
        rc = grow((void **)&w->ra, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->rb, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->rc, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->rd, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->drop, n, 1);
    if (!rc)
        rc = grow((void **)&w->flag, n, 1);
    if (!rc)
        w->cap_samp = n;
    return rc;
}

static int reserve_grid(cpd_ramp_ws *w, size_t n)
{
    if (n <= w->cap_grid)
        return CPD_OK;
    int rc = grow((void **)&w->sm_vo2, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->sm_vco2, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->sm_hr, n, sizeof(double));
    if (!rc)
        rc = grow((void **)&w->trail, n, sizeof(double));
    if (!rc)
        w->cap_grid = n;
    return rc;
}


/* ---- input checks ---- */

static int check_opts(const cpd_ramp_opts *o, char *msg)
{
    if (o->modality != CPD_RAMP_POWER && o->modality != CPD_RAMP_SPEED) {
        say(msg, CPD_MSG_MAX, "unknown modality %d", (int)o->modality);
        return CPD_EUSAGE;
    }
    if (!(o->rate_per_min >= 0) || !isfinite(o->rate_per_min)) {
        say(msg, CPD_MSG_MAX, "the ramp rate must be positive (or 0: read from the recorded intensity)");
        return CPD_EUSAGE;
    }
    if (!(o->start >= 0) || !isfinite(o->start) || !isfinite(o->onset_s) || (o->end_given && !isfinite(o->end_s))) {
        say(msg, CPD_MSG_MAX, "start intensity, onset and end must be finite, start >= 0");
        return CPD_EUSAGE;
    }
    if (!(o->outlier_k > 0) || !isfinite(o->outlier_k) || o->outlier_half == 0) {
        say(msg, CPD_MSG_MAX, "the outlier rule needs k > 0 and at least one neighbour");
        return CPD_EUSAGE;
    }
    if (!(o->peak_window_s >= 5 && o->peak_window_s <= 120) || !(o->smooth_s >= 5 && o->smooth_s <= 120)) {
        say(msg, CPD_MSG_MAX, "the VO2peak and smoothing windows must lie in 5..120 s");
        return CPD_EUSAGE;
    }
    if (!(o->bin_s >= 0 && o->bin_s <= 30)) {
        say(msg, CPD_MSG_MAX, "the bin width must lie in 0..30 s");
        return CPD_EUSAGE;
    }
    if (o->mrt_given && !(o->mrt_s >= 0 && o->mrt_s <= 300)) {
        say(msg, CPD_MSG_MAX, "a given MRT must lie in 0..300 s");
        return CPD_EUSAGE;
    }
    if (o->baseline_given && !(o->baseline_intensity >= 0 && isfinite(o->baseline_intensity))) {
        say(msg, CPD_MSG_MAX, "the baseline intensity must be finite and >= 0");
        return CPD_EUSAGE;
    }
    if (!(o->mass_kg >= 0 && o->mass_kg <= 400) || !(o->manual_get_vo2_ml_min >= 0) ||
        !(o->manual_rcp_vo2_ml_min >= 0) || o->manual_get_vo2_ml_min > CPD_RAMP_VO2_MAX_ML_MIN ||
        o->manual_rcp_vo2_ml_min > CPD_RAMP_VO2_MAX_ML_MIN || !(o->manual_get_intensity >= 0) ||
        !(o->manual_rcp_intensity >= 0) || !isfinite(o->manual_get_intensity) || !isfinite(o->manual_rcp_intensity) ||
        o->protocol < CPD_RAMP_PROTO_AUTO || o->protocol > CPD_RAMP_PROTO_STEPS) {
        say(msg, CPD_MSG_MAX, "mass (0..400 kg), manual VO2 values (0..%.0f mL/min), manual intensities (>= 0) "
            "or protocol out of range", CPD_RAMP_VO2_MAX_ML_MIN);
        return CPD_EUSAGE;
    }
    return CPD_OK;
}

static int check_series(const cpd_gx_series *s, char *msg)
{
    /* lowest and highest plausible value of each channel; lower bounds exclusive where 0 is absurd */
    static const double lo[CPD_GX_NCHAN] = {0, 0, 0, 20, 0, 0, 0, 0};
    static const double hi[CPD_GX_NCHAN] = {CPD_RAMP_VO2_MAX_ML_MIN, CPD_RAMP_VO2_MAX_ML_MIN, CPD_RAMP_VE_MAX_L_MIN,
                                            250, 3000, 15, 200, 200};
    static const int open_lo[CPD_GX_NCHAN] = {1, 1, 1, 0, 0, 0, 1, 1};
    if (!s->t_s || !s->ch[CPD_GX_VO2]) {
        say(msg, CPD_MSG_MAX, "the series has no %s", s->t_s ? "VO2" : "time");
        return CPD_EDATA;
    }
    for (size_t i = 0; i < s->n; i++) {
        if (!isfinite(s->t_s[i])) {
            say(msg, CPD_MSG_MAX, "sample %zu: time is not a number", i + 1);
            return CPD_EDATA;
        }
        if (i > 0 && s->t_s[i] < s->t_s[i - 1]) {
            say(msg, CPD_MSG_MAX, "sample %zu: time runs backwards (%.3f s after %.3f s)", i + 1, s->t_s[i],
                s->t_s[i - 1]);
            return CPD_EDATA;
        }
        for (int c = 0; c < CPD_GX_NCHAN; c++) {
            if (!s->ch[c])
                continue;
            double v = s->ch[c][i];
            int bad = !isfinite(v) || v > hi[c] || (open_lo[c] ? !(v > lo[c]) : !(v >= lo[c]));
            if (bad) {
                say(msg, CPD_MSG_MAX, "sample %zu: %s = %g is outside its plausible range", i + 1,
                    cpd_gx_channel_name(c), v);
                return CPD_EDATA;
            }
        }
    }
    return CPD_OK;
}

/* ---- small helpers on the grid ---- */

/* Centred mean over +-h samples (fewer at the ends). gx's rolling mean is trailing and would place a
 * level in time half a window late. */
static void centred_mean(const double *x, size_t n, size_t h, double *out)
{
    double sum = 0;
    size_t lo = 0, hi = 0; /* window [lo, hi) */
    for (size_t i = 0; i < n; i++) {
        size_t want_hi = i + h + 1 < n ? i + h + 1 : n;
        size_t want_lo = i > h ? i - h : 0;
        while (hi < want_hi)
            sum += x[hi++];
        while (lo < want_lo)
            sum -= x[lo++];
        out[i] = sum / (double)(hi - lo);
    }
}

/* Linear interpolation of v on the 1-s grid at time t (clamped to the grid). */
double cpd_ramp_grid_at(const cpd_gx_series *g, const double *v, double t)
{
    double u = t - g->t_s[0];
    if (u <= 0)
        return v[0];
    size_t k = (size_t)floor(u);
    if (k + 1 >= g->n)
        return v[g->n - 1];
    double f = u - (double)k;
    return v[k] + f * (v[k + 1] - v[k]);
}

/* First time in grid [i0, i1] at which v reaches level, interpolated between seconds. */
static int first_reach(const struct ctx *c, const double *v, double level, double *t_out)
{
    const double *t = c->w->grid->t_s;
    for (size_t i = c->i0; i <= c->i1; i++)
        if (v[i] >= level) {
            if (i == c->i0) {
                *t_out = t[i];
            } else {
                double f = (level - v[i - 1]) / (v[i] - v[i - 1]);
                *t_out = t[i - 1] + f * (t[i] - t[i - 1]);
            }
            return 1;
        }
    return 0;
}

/* The intensity at time t from onset: the record (1-s grid) when it is used, else the nominal line. */
static double intensity_at(const struct ctx *c, double t)
{
    if (c->rec)
        return cpd_ramp_grid_at(c->w->grid, c->w->grid->ch[c->col], t);
    return c->start + c->rate * t / 60.0;
}

static void not_found(cpd_ramp_threshold *th, int reason, const char *fmt, ...)
{
    memset(th, 0, sizeof *th);
    th->status = CPD_THR_NOT_FOUND;
    th->reason = reason;
    th->method = "";
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(th->why, sizeof th->why, fmt, ap);
    va_end(ap);
}

static void place_at(const struct ctx *c, cpd_ramp_threshold *th, double t, double vo2, int status,
                     const char *method)
{
    memset(th, 0, sizeof *th);
    th->status = status;
    th->reason = CPD_RAMP_R_NONE;
    th->method = method;
    th->vo2_ml_min = vo2;
    th->pct_vo2peak = 100.0 * vo2 / c->res->vo2peak_ml_min;
    th->time_s = t;
    th->ramp_intensity = intensity_at(c, t);
    if (c->w->grid->ch[CPD_GX_HR]) {
        th->has_hr = 1;
        th->hr_bpm = cpd_ramp_grid_at(c->w->grid, c->w->sm_hr, t);
    }
}

static void place_vo2(const struct ctx *c, cpd_ramp_threshold *th, double vo2, int status, const char *method)
{
    double t;
    if (!first_reach(c, c->w->sm_vo2, vo2, &t)) {
        not_found(th, CPD_RAMP_R_NOT_REACHED, "smoothed VO2 never reaches %.0f mL/min during the ramp", vo2);
        return;
    }
    place_at(c, th, t, vo2, status, method);
}

/* A reviewer's threshold given as an intensity: its VO2 from the record (a ramp: the smoothed VO2
 * when the intensity first reaches it; steps: the stage steady states, linear between stages). */
static void place_intensity(const struct ctx *c, cpd_ramp_threshold *th, double x)
{
    const char *method = "manual (intensity)";
    if (c->steps) {
        double vo2;
        if (cpd_steps_at(&c->res->steps, x, 1, &vo2) != CPD_OK) {
            not_found(th, CPD_RAMP_R_NOT_REACHED, "%g lies outside the stages (%g to %g)", x, c->res->steps.stage[0].intensity,
                      c->res->steps.stage[c->res->steps.n - 1].intensity);
            return;
        }
        place_vo2(c, th, vo2, CPD_THR_MANUAL, method);
    } else {
        const cpd_gx_series *g = c->w->grid;
        size_t i = c->i0;
        while (i <= c->i1 && intensity_at(c, g->t_s[i]) < x)
            i++;
        if (i > c->i1) {
            not_found(th, CPD_RAMP_R_NOT_REACHED, "the intensity never reaches %g during the test", x);
            return;
        }
        place_at(c, th, g->t_s[i], c->w->sm_vo2[i], CPD_THR_MANUAL, method);
    }
    if (th->status != CPD_THR_NOT_FOUND)
        th->ramp_intensity = x;
}

static int cmp_pt(const void *a, const void *b)
{
    const struct pt *p = a, *q = b;
    if (p->x != q->x)
        return p->x < q->x ? -1 : 1;
    return p->i < q->i ? -1 : (p->i > q->i);
}

/* Collects the clean samples with time in [t_lo, t_hi] as points, one per time bin of bin_s seconds
 * (one per sample when bin_s is 0): x = mean of channel cx, y = mean of cy, riders VE/VCO2, VE/VO2,
 * PETO2, PETCO2 and VE from the bin means; sorted by x. Returns the count. Bin means cut the breath noise
 * in x, which would otherwise flatten both OLS slopes (errors in variables) and smear the split. */
static size_t collect(cpd_ramp_ws *w, double bin_s, int cx, int cy, double t_lo, double t_hi, int kind)
{
    const cpd_gx_series *s = w->clean;
    const double *ve = s->ch[CPD_GX_VE], *vc = s->ch[CPD_GX_VCO2], *o2 = s->ch[CPD_GX_PETO2],
                 *co2 = s->ch[CPD_GX_PETCO2];
    size_t m = 0, i = 0;
    while (i < s->n && s->t_s[i] < t_lo)
        i++;
    while (i < s->n && s->t_s[i] <= t_hi) {
        double bin = bin_s > 0 ? floor((s->t_s[i] - t_lo) / bin_s) : 0;
        double sx = 0, sy = 0, so = 0, sc = 0, se = 0, sp = 0, sq = 0;
        size_t k = 0, first = i;
        while (i < s->n && s->t_s[i] <= t_hi &&
               (bin_s > 0 ? floor((s->t_s[i] - t_lo) / bin_s) == bin : k == 0)) {
            sx += s->ch[cx][i];
            sy += s->ch[cy][i];
            so += s->ch[CPD_GX_VO2][i];
            sc += vc ? vc[i] : 0;
            se += ve ? ve[i] : 0;
            sp += o2 ? o2[i] : 0;
            sq += co2 ? co2[i] : 0;
            k++;
            i++;
        }
        double dk = (double)k;
        struct pt *p = &w->pts[m++];
        p->x = sx / dk;
        p->y = sy / dk;
        p->a = ve && vc ? 1000.0 * se / sc : 0;
        p->b = ve ? 1000.0 * se / so : 0;
        p->c = sp / dk;
        p->d = sq / dk;
        p->e = se / dk;
        p->i = first;
    }
    qsort(w->pts, m, sizeof *w->pts, cmp_pt);
    for (size_t k = 0; k < m; k++) {
        w->px[kind][k] = w->pts[k].x;
        w->py[kind][k] = w->pts[k].y;
        if (kind == CPD_RAMP_PTS_VSLOPE) {
            w->ra[k] = w->pts[k].a;
            w->rb[k] = w->pts[k].b;
            w->px[CPD_RAMP_PTS_VEQ][k] = w->pts[k].x;
            w->py[CPD_RAMP_PTS_VEQ][k] = w->pts[k].e;
            w->rc[k] = w->pts[k].c;
            w->rd[k] = w->pts[k].d;
        }
    }
    return m;
}

/* The common gate of a breakpoint: lines cross inside the data and the slope change is significant. */
static int gate(const cpd_linfit_twoseg *f, cpd_ramp_threshold *th, const char *what)
{
    if (!f->has_cross || f->x_cross < f->x_lo || f->x_cross > f->x_hi) {
        not_found(th, CPD_RAMP_R_OUTSIDE, "%s: the two lines do not cross inside the data", what);
        return 0;
    }
    if (f->has_z && f->z < Z_MIN) {
        not_found(th, CPD_RAMP_R_NO_BREAK, "%s: slope change not significant (z = %.2f < %.0f)", what, f->z, Z_MIN);
        return 0;
    }
    return 1;
}

/* ---- the analyses ---- */

static void find_rcp(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    cpd_ramp_ws *w = c->w;
    cpd_ramp_threshold *th = &r->rcp_auto;
    if (!w->clean->ch[CPD_GX_VCO2]) {
        not_found(th, CPD_RAMP_R_NO_VCO2, "RCP needs VCO2");
        return;
    }
    if (!w->clean->ch[CPD_GX_VE]) {
        not_found(th, CPD_RAMP_R_NO_VE, "RCP needs VE");
        return;
    }
    size_t n = collect(w, c->o->bin_s, CPD_GX_VCO2, CPD_GX_VE, EXCLUDE_FIRST_S, c->t_end, CPD_RAMP_PTS_RCP);
    size_t ms = n / 20 > MIN_SEG ? n / 20 : MIN_SEG;
    if (n < 2 * ms) {
        not_found(th, CPD_RAMP_R_FEW_POINTS, "RCP: %zu samples after the first minute, need %zu", n, 2 * ms);
        return;
    }
    cpd_linfit_twoseg *f = &r->rcp_fit;
    if (cpd_linfit_twoseg_fit(w->px[CPD_RAMP_PTS_RCP], w->py[CPD_RAMP_PTS_RCP], n, ms, f) != CPD_OK) {
        not_found(th, CPD_RAMP_R_FIT_FAILED, "RCP: no two-segment fit of VE on VCO2");
        return;
    }
    r->has_rcp_fit = 1;
    w->pn[CPD_RAMP_PTS_RCP] = n;
    w->pvalid[CPD_RAMP_PTS_RCP] = 1;
    if (!gate(f, th, "RCP"))
        return;
    if (!(f->s1 > 0) || f->s2 < RCP_RATIO_MIN * f->s1) {
        not_found(th, CPD_RAMP_R_SLOPES, "RCP: VE-VCO2 slope rises only from %.4g to %.4g (need x%.2f)", f->s1, f->s2,
                  RCP_RATIO_MIN);
        return;
    }
    double t;
    if (!first_reach(c, w->sm_vco2, f->x_cross, &t)) {
        not_found(th, CPD_RAMP_R_NOT_REACHED, "RCP: smoothed VCO2 never reaches %.0f mL/min", f->x_cross);
        return;
    }
    place_at(c, th, t, cpd_ramp_grid_at(w->grid, w->sm_vo2, t), CPD_THR_FOUND, "VE-VCO2 breakpoint");
}

/* OLS slope of v on x over points [k0, n); 0 when it cannot be fitted. */
static double tail_slope(const double *x, const double *v, size_t k0, size_t n)
{
    cpd_linfit_result f;
    if (n - k0 < 3 || cpd_linfit_line(x + k0, v + k0, n - k0, &f) != CPD_OK)
        return 0;
    return f.b[1];
}

/* The ventilatory-equivalent GET: VE/VO2 starts to rise where VE on VO2 steepens beyond VE/VO2
 * itself, so the breakpoint of VE on VO2 is taken (two segments as for the V-slope); the rise must
 * be real (upper slope > VE/VO2 at the break) and isocapnic (VE/VCO2 rising at most a quarter as
 * fast as VE/VO2 above the break). PETO2 and PETCO2, when present, are reported as support. A
 * two-line fit of the ratio itself is biased low by its early hyperbolic fall. */
static void find_veq(struct ctx *c, size_t n, size_t ms)
{
    cpd_ramp_result *r = c->res;
    cpd_ramp_ws *w = c->w;
    cpd_ramp_veq *q = &r->veq;
    q->peto2_rises = q->petco2_steady = q->agree = -1;
    cpd_ramp_threshold tmp;
    if (!w->clean->ch[CPD_GX_VE]) {
        q->reason = CPD_RAMP_R_NO_VE;
        say(q->why, sizeof q->why, "the ventilatory-equivalent check needs VE");
        return;
    }
    const double *x = w->px[CPD_RAMP_PTS_VEQ];
    if (cpd_linfit_twoseg_fit(x, w->py[CPD_RAMP_PTS_VEQ], n, ms, &q->fit) != CPD_OK) {
        q->reason = CPD_RAMP_R_FIT_FAILED;
        say(q->why, sizeof q->why, "no two-segment fit of VE on VO2");
        return;
    }
    w->pn[CPD_RAMP_PTS_VEQ] = n;
    w->pvalid[CPD_RAMP_PTS_VEQ] = 1;
    const cpd_linfit_twoseg *f = &q->fit;
    if (!gate(f, &tmp, "VE on VO2")) {
        q->reason = tmp.reason;
        memcpy(q->why, tmp.why, sizeof q->why);
        return;
    }
    if (!(f->s2 > f->y_cross / f->x_cross)) {
        q->reason = CPD_RAMP_R_SLOPES;
        say(q->why, sizeof q->why, "VE/VO2 does not rise above the breakpoint (slope %.4g <= ratio %.4g)", f->s2,
            f->y_cross / f->x_cross);
        return;
    }
    size_t k0 = f->split;
    double span = f->x_hi - f->x_cross;
    q->veo2_slope = tail_slope(x, w->rb, k0, n);
    q->vevco2_slope = tail_slope(x, w->ra, k0, n);
    if (w->clean->ch[CPD_GX_PETO2])
        q->peto2_rises = tail_slope(x, w->rc, k0, n) * span > PET_CHANGE_MMHG;
    if (w->clean->ch[CPD_GX_PETCO2])
        q->petco2_steady = tail_slope(x, w->rd, k0, n) * span > -PET_CHANGE_MMHG;
    if (q->vevco2_slope > ISOCAPNIC_FRAC * q->veo2_slope) {
        q->reason = CPD_RAMP_R_NOT_ISOCAPNIC;
        say(q->why, sizeof q->why, "VE/VCO2 rises with VE/VO2 (%.3g vs %.3g per L/min)", 1000 * q->vevco2_slope,
            1000 * q->veo2_slope);
        return;
    }
    q->status = CPD_THR_FOUND;
    q->reason = CPD_RAMP_R_NONE;
    q->vo2_ml_min = f->x_cross;
    if (r->get_auto.status == CPD_THR_FOUND) {
        q->has_diff = 1;
        q->diff_ml_min = q->vo2_ml_min - r->get_auto.vo2_ml_min;
        q->agree = fabs(q->diff_ml_min) <= AGREE_FRAC * r->vo2peak_ml_min;
    }
}

static void find_get(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    cpd_ramp_ws *w = c->w;
    cpd_ramp_threshold *th = &r->get_auto;
    r->veq.peto2_rises = r->veq.petco2_steady = r->veq.agree = -1;
    if (!w->clean->ch[CPD_GX_VCO2]) {
        not_found(th, CPD_RAMP_R_NO_VCO2, "V-slope needs VCO2");
        r->veq.reason = CPD_RAMP_R_NO_VCO2;
        say(r->veq.why, sizeof r->veq.why, "the ventilatory-equivalent check needs VCO2");
        return;
    }
    double t_hi = r->rcp_auto.status == CPD_THR_FOUND ? r->rcp_auto.time_s : c->t_end;
    r->vslope_t_lo_s = EXCLUDE_FIRST_S;
    r->vslope_t_hi_s = t_hi;
    size_t n = collect(w, c->o->bin_s, CPD_GX_VO2, CPD_GX_VCO2, EXCLUDE_FIRST_S, t_hi, CPD_RAMP_PTS_VSLOPE);
    size_t ms = n / 10 > MIN_SEG ? n / 10 : MIN_SEG;
    if (n < 2 * ms) {
        not_found(th, CPD_RAMP_R_FEW_POINTS, "V-slope: %zu samples between %.0f and %.0f s, need %zu", n,
                  EXCLUDE_FIRST_S, t_hi, 2 * ms);
        r->veq.reason = CPD_RAMP_R_FEW_POINTS;
        say(r->veq.why, sizeof r->veq.why, "too few samples");
        return;
    }
    cpd_linfit_twoseg *f = &r->vslope;
    if (cpd_linfit_twoseg_fit(w->px[CPD_RAMP_PTS_VSLOPE], w->py[CPD_RAMP_PTS_VSLOPE], n, ms, f) != CPD_OK) {
        not_found(th, CPD_RAMP_R_FIT_FAILED, "V-slope: no two-segment fit of VCO2 on VO2");
    } else {
        r->has_vslope = 1;
        w->pn[CPD_RAMP_PTS_VSLOPE] = n;
        w->pvalid[CPD_RAMP_PTS_VSLOPE] = 1;
        if (gate(f, th, "V-slope")) {
            if (f->s1 < VS_S1_MIN)
                not_found(th, CPD_RAMP_R_SLOPES, "V-slope: S1 %.3f below %.1f", f->s1, VS_S1_MIN);
            else if (!(f->s2 > VS_S2_MIN))
                not_found(th, CPD_RAMP_R_SLOPES, "V-slope: S2 %.3f not above %.1f", f->s2, VS_S2_MIN);
            else if (!(f->s2 - f->s1 > VS_DIFF_MIN))
                not_found(th, CPD_RAMP_R_SLOPES, "V-slope: S2 - S1 = %.3f not above %.1f", f->s2 - f->s1,
                          VS_DIFF_MIN);
            else
                place_vo2(c, th, f->x_cross, CPD_THR_FOUND, "V-slope (Beaver, Wasserman & Whipp 1986)");
        }
    }
    find_veq(c, n, ms);
}

/* VO2 on time over the clean samples in [t_lo, t_hi]. */
static int vo2_line(const cpd_ramp_ws *w, double t_lo, double t_hi, size_t min_n, cpd_linfit_result *f, size_t *m_out)
{
    const cpd_gx_series *s = w->clean;
    size_t a = 0, m = 0;
    while (a < s->n && s->t_s[a] < t_lo)
        a++;
    while (a + m < s->n && s->t_s[a + m] <= t_hi)
        m++;
    *m_out = m;
    if (m < min_n)
        return CPD_ENODATA;
    return cpd_linfit_line(s->t_s + a, s->ch[CPD_GX_VO2] + a, m, f);
}

static void baseline(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    const cpd_gx_series *s = c->w->clean;
    int col = c->o->modality == CPD_RAMP_POWER ? CPD_GX_POWER : CPD_GX_SPEED;
    double sum = 0, sumc = 0;
    size_t m = 0;
    for (size_t i = 0; i < s->n && s->t_s[i] < 0; i++)
        if (s->t_s[i] >= -BASE_WIN_S) {
            double v = s->ch[CPD_GX_VO2][i];
            sum += v;
            if (s->ch[col])
                sumc += s->ch[col][i];
            m++;
        }
    if (c->o->baseline_given)
        r->baseline_intensity = c->o->baseline_intensity;
    else if (s->ch[col] && m > 0)
        r->baseline_intensity = sumc / (double)m;
    else
        r->baseline_intensity = c->start;
    if (m >= BASE_MIN_N && s->t_s[0] <= -BASE_MIN_S) {
        r->has_baseline = 1;
        r->baseline_vo2_ml_min = sum / (double)m;
    }
}

/* ---- MRT without a baseline: VO2 = a + G P_f(t) over the 1-s grid from onset, P_f the intensity
 * through two first-order stages of time constant tau/2 each (mean response time tau: the lag of a
 * ramp's response, Whipp et al. 1981; two stages give the delayed, S-shaped onset one stage lacks),
 * started at the intensity before onset; the curvature of the early response identifies tau. Unless
 * the baseline intensity is given, the intensity before onset (p0) is a fourth parameter. */
struct mrtfit {
    const double *t, *p, *v; /* grid from onset: time, intensity, VO2 */
    size_t n;
    double p0;               /* intensity before onset (when not fitted) */
    int fit_p0;              /* 1: p0 is the 4th parameter (the intensity before onset is unknown) */
    double *pf;              /* scratch, n */
};

static void mrt_filter(const struct mrtfit *m, double tau, double p0, double *pf)
{
    double y1 = p0, y2 = p0;
    for (size_t i = 0; i < m->n; i++) {
        if (i > 0) {
            double dt = m->t[i] - m->t[i - 1], u = 0.5 * (m->p[i] + m->p[i - 1]);
            double k = 1 - exp(-2 * dt / tau), y1n = y1 + k * (u - y1);
            y2 += k * (0.5 * (y1 + y1n) - y2);
            y1 = y1n;
        }
        pf[i] = y2;
    }
}

static int mrt_resid(const double *b, void *ctx, double *f)
{
    const struct mrtfit *m = ctx;
    if (!(b[2] > 0.1 && b[2] < 1000))
        return 1;
    mrt_filter(m, b[2], m->fit_p0 ? b[3] : m->p0, m->pf);
    for (size_t i = 0; i < m->n; i++)
        f[i] = b[0] + b[1] * m->pf[i] - m->v[i];
    return 0;
}

static void mrt_filtered(struct ctx *c, double t_hi)
{
    cpd_ramp_result *r = c->res;
    const cpd_gx_series *g = c->w->grid;
    size_t n = 0;
    while (c->i0 + n < g->n && g->t_s[c->i0 + n] <= t_hi)
        n++;
    double *buf = n >= GAIN_MIN_N ? malloc(2 * n * sizeof *buf) : NULL;
    if (!buf) {
        r->mrt_reason = CPD_RAMP_R_FEW_POINTS;
        say(r->mrt_why, sizeof r->mrt_why, "no baseline and %zu s from onset to %.0f s", n, t_hi);
        return;
    }
    double *pv = buf + n;
    for (size_t i = 0; i < n; i++)
        pv[i] = intensity_at(c, g->t_s[c->i0 + i]);
    struct mrtfit m = {g->t_s + c->i0, pv, g->ch[CPD_GX_VO2] + c->i0, n,
                       c->o->baseline_given ? c->o->baseline_intensity : pv[0], 0, buf};
    /* start: the best tau of a coarse grid, a and G by OLS for each, p0 at the intensity at onset */
    double b0[4] = {0, 0, 0, m.p0}, best = -1;
    for (double tau = 5; tau <= MRT_MAX_S; tau += 5) {
        cpd_linfit_result f;
        mrt_filter(&m, tau, m.p0, buf);
        if (cpd_linfit_line(buf, m.v, n, &f) == CPD_OK && (best < 0 || f.rss < best)) {
            best = f.rss;
            b0[0] = f.b[0];
            b0[1] = f.b[1];
            b0[2] = tau;
        }
    }
    cpd_nlfit_ws *ws = best >= 0 ? cpd_nlfit_alloc() : NULL;
    cpd_nlfit_result fr;
    cpd_nlfit_problem pr = {n, m.fit_p0 ? 4 : 3, mrt_resid, NULL, &m};
    int rc = ws ? cpd_nlfit_solve(ws, &pr, b0, NULL, &fr) : CPD_ENODATA;
    cpd_nlfit_free(ws);
    free(buf);
    if (rc) {
        r->mrt_reason = CPD_RAMP_R_FIT_FAILED;
        say(r->mrt_why, sizeof r->mrt_why, "no baseline, and the first-order fit of VO2 on the intensity from onset "
            "to %.0f s failed", t_hi);
        return;
    }
    double tau = fr.b[2], se = fr.se[2];
    if (!fr.has_se || !(tau > 1 && tau < MRT_MAX_S) || (se > MRT_NI_FRAC * tau && se > MRT_NI_MIN_S)) {
        r->mrt_reason = CPD_RAMP_R_NOT_IDENTIFIABLE;
        say(r->mrt_why, sizeof r->mrt_why, "no baseline; the early rise does not identify it (%.0f +- %.0f s): "
            "give the intensity before onset as the baseline", tau, fr.has_se ? se : 0.0);
        return;
    }
    r->mrt_reason = CPD_RAMP_R_NONE;
    r->mrt_why[0] = '\0';
    r->has_mrt_est = 1;
    r->mrt_without_baseline = 1;
    r->mrt_est_s = tau;
    r->mrt_est_se_s = se;
}

/* Lagged-linear MRT from the line a + s t (cov: its covariance, row-major 2 x 2) and the baseline.
 * Fills the estimate fields or the reason. */
static void mrt_from_line(struct ctx *c, double a, double s, const double *cov, double t_hi)
{
    cpd_ramp_result *r = c->res;
    r->has_mrt_est = 0;
    r->mrt_est_s = r->mrt_est_se_s = 0;
    if (!r->has_baseline) {
        mrt_filtered(c, t_hi);
        return;
    }
    const cpd_gx_series *cs = c->w->clean;
    double b = r->baseline_vo2_ml_min, ss = 0;
    size_t m = 0;
    for (size_t i = 0; i < cs->n && cs->t_s[i] < 0; i++)
        if (cs->t_s[i] >= -BASE_WIN_S) {
            double d = cs->ch[CPD_GX_VO2][i] - b;
            ss += d * d;
            m++;
        }
    double vb = ss / (double)(m - 1) / (double)m; /* variance of the baseline mean */
    double d = b - a;
    double mrt = d / s + 60.0 * (c->start - r->baseline_intensity) / c->rate;
    /* delta method: dMRT/db = 1/s, dMRT/da = -1/s, dMRT/ds = -(b - a)/s^2 */
    double var = (vb + cov[0]) / (s * s) + d * d / (s * s * s * s) * cov[3] + 2 * d / (s * s * s) * cov[1];
    if (!(mrt >= 0 && mrt <= MRT_MAX_S)) {
        r->mrt_reason = CPD_RAMP_R_IMPLAUSIBLE;
        say(r->mrt_why, sizeof r->mrt_why, "lagged-linear MRT %.0f s outside 0..%.0f s", mrt, MRT_MAX_S);
        return;
    }
    r->mrt_reason = CPD_RAMP_R_NONE;
    r->mrt_why[0] = '\0';
    r->has_mrt_est = 1;
    r->mrt_est_s = mrt;
    r->mrt_est_se_s = var > 0 ? sqrt(var) : 0;
}

/* VO2 on time over [t_lo, t_hi] below the GET: gain and, with a baseline, the MRT. Returns 1 when
 * the line exists. */
static int sub_get_line(struct ctx *c, double t_lo, double t_hi)
{
    cpd_ramp_result *r = c->res;
    const cpd_ramp_opts *o = c->o;
    cpd_linfit_result f;
    size_t m = 0;
    if (t_hi - t_lo < GAIN_MIN_SPAN_S) {
        r->gain_reason = CPD_RAMP_R_FEW_POINTS;
        say(r->gain_why, sizeof r->gain_why, "the range ending at %.0f s leaves less than %.0f s of linear range", t_hi,
            GAIN_MIN_SPAN_S);
        return 0;
    }
    if (vo2_line(c->w, t_lo, t_hi, GAIN_MIN_N, &f, &m) != CPD_OK) {
        r->gain_reason = m < GAIN_MIN_N ? CPD_RAMP_R_FEW_POINTS : CPD_RAMP_R_FIT_FAILED;
        say(r->gain_why, sizeof r->gain_why, "%zu samples between %.0f and %.0f s", m, t_lo, t_hi);
        return 0;
    }
    if (!(f.b[1] > MIN_RAMP_SLOPE)) {
        r->gain_reason = CPD_RAMP_R_IMPLAUSIBLE;
        say(r->gain_why, sizeof r->gain_why, "VO2 does not rise below the GET (%.3g mL/min per s)", f.b[1]);
        return 0;
    }
    r->gain_status = CPD_THR_FOUND;
    r->gain_reason = CPD_RAMP_R_NONE;
    r->gain = 60.0 * f.b[1] / c->rate;
    r->gain_se = 60.0 * f.se[1] / c->rate;
    r->gain_t_lo_s = t_lo;
    r->gain_t_hi_s = t_hi;
    r->slope_ml_min_s = f.b[1];
    r->gain_in_range = o->modality == CPD_RAMP_POWER ? r->gain >= GAIN_LO && r->gain <= GAIN_HI : -1;
    mrt_from_line(c, f.b[0], f.b[1], f.cov, t_hi);
    return 1;
}

/* A step test's gain from the stage steady states (steps.h). */
static void steps_gain(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    double get = r->get.status != CPD_THR_NOT_FOUND ? r->get.vo2_ml_min : 0;
    if (cpd_steps_gain(&r->steps, get, r->peak_intensity) != CPD_OK) {
        r->gain_reason = CPD_RAMP_R_FEW_POINTS;
        say(r->gain_why, sizeof r->gain_why, "fewer than 3 stages below the %s", get > 0 ? "GET or 80 % of peak" : "80 % of peak");
        return;
    }
    r->gain_status = CPD_THR_FOUND;
    r->gain_reason = CPD_RAMP_R_NONE;
    r->gain_basis = r->steps.gain_basis == CPD_STEPS_GAIN_BELOW_GET ? CPD_RAMP_GAIN_BELOW_GET : CPD_RAMP_GAIN_BELOW_80PCT;
    r->gain = r->steps.gain;
    r->gain_se = r->steps.gain_se;
    r->gain_in_range = c->o->modality == CPD_RAMP_POWER ? r->gain >= GAIN_LO && r->gain <= GAIN_HI : -1;
    for (size_t k = 0; k < r->steps.n; k++)
        if (r->steps.stage[k].in_gain) {
            if (r->gain_t_hi_s == 0)
                r->gain_t_lo_s = r->steps.stage[k].t_start_s;
            r->gain_t_hi_s = r->steps.stage[k].t_end_s;
        }
}

/* Gain and MRT by the lagged-linear model (Whipp et al. 1981 J Appl Physiol 50:217): above the
 * on-transient, VO2(t) = b + G (P(t - MRT) - P_base). With P(t) = start + rate t / 60 the data give
 * a line a + s t, so G = 60 s / rate and MRT = (b - a) / s + 60 (start - P_base) / rate. The line
 * starts at 120 s (60 s when the GET comes before 210 s). After a step at onset (larger than half a
 * minute of ramp) the step's exponential may still be present there: when 4 MRT of the first
 * estimate lies later and leaves 90 s below the GET, the line is fitted once more from 4 MRT. */
static void gain_mrt(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    const cpd_ramp_opts *o = c->o;
    r->gain_in_range = -1;
    const cpd_ramp_threshold *get = &r->get;
    if (c->steps) {
        steps_gain(c);
    } else if (get->status == CPD_THR_NOT_FOUND) {
        /* no GET (a VO2-only file, or none visible): the line runs up to 80 % of the peak intensity */
        double t_hi = -1, lim = GAIN_PEAK_FRAC * r->peak_intensity;
        const cpd_gx_series *g = c->w->grid;
        for (size_t i = c->i0; i <= c->i1 && t_hi < 0; i++)
            if (intensity_at(c, g->t_s[i]) >= lim)
                t_hi = g->t_s[i];
        double t_lo = t_hi - GAIN_T_LO_S >= 90.0 ? GAIN_T_LO_S : EXCLUDE_FIRST_S;
        if (t_hi > 0 && sub_get_line(c, t_lo, t_hi))
            r->gain_basis = CPD_RAMP_GAIN_BELOW_80PCT;
        else if (t_hi <= 0) {
            r->gain_reason = CPD_RAMP_R_NO_GET;
            say(r->gain_why, sizeof r->gain_why, "no GET, and the intensity never reaches 80 %% of its peak");
        }
    } else {
        double t_hi = get->time_s;
        double t_lo = t_hi - GAIN_T_LO_S >= 90.0 ? GAIN_T_LO_S : EXCLUDE_FIRST_S;
        int step = fabs(c->start - r->baseline_intensity) > c->rate / 2;
        if (sub_get_line(c, t_lo, t_hi) && step && r->has_mrt_est && 4 * r->mrt_est_s > t_lo &&
            t_hi - 4 * r->mrt_est_s >= 90.0) {
            cpd_ramp_result first = *r;
            if (!sub_get_line(c, 4 * r->mrt_est_s, t_hi))
                *r = first;
        }
        if (r->gain_status == CPD_THR_FOUND)
            r->gain_basis = CPD_RAMP_GAIN_BELOW_GET;
    }
    if (c->steps) {
        r->mrt_reason = CPD_RAMP_R_STEPS;
        say(r->mrt_why, sizeof r->mrt_why, "a step test has no ramp lag: its equivalents come from the stage steady states");
    } else if (r->gain_status != CPD_THR_FOUND) {
        r->mrt_reason = r->gain_reason;
        say(r->mrt_why, sizeof r->mrt_why, "MRT needs the sub-GET VO2 line: %s", r->gain_why);
    }
    if (o->mrt_given) {
        r->mrt_status = CPD_THR_MANUAL;
        r->mrt_s = o->mrt_s;
    } else if (r->has_mrt_est) {
        r->mrt_status = CPD_THR_FOUND;
        r->mrt_s = r->mrt_est_s;
    } else {
        r->mrt_status = CPD_THR_NOT_FOUND;
    }
}

static void equivalents(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    cpd_ramp_threshold *all[4] = {&r->get, &r->get_auto, &r->rcp, &r->rcp_auto};
    if (c->steps) { /* the intensity whose stage steady state has the threshold's VO2 */
        for (int k = 0; k < 4; k++)
            if (all[k]->status != CPD_THR_NOT_FOUND &&
                cpd_steps_at(&r->steps, all[k]->vo2_ml_min, 0, &all[k]->equiv_intensity) == CPD_OK)
                all[k]->has_equiv = 1;
        return;
    }
    if (r->mrt_status == CPD_THR_NOT_FOUND)
        return;
    double shift = c->rate * r->mrt_s / 60.0;
    for (int k = 0; k < 4; k++)
        if (all[k]->status != CPD_THR_NOT_FOUND) {
            all[k]->has_equiv = 1;
            all[k]->equiv_intensity = all[k]->ramp_intensity - shift;
        }
}

static void plateau(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    cpd_linfit_result f;
    size_t m = 0;
    r->plateau = -1;
    if (c->steps) {
        size_t n = r->steps.n;
        if (n < 2) {
            say(r->plateau_why, sizeof r->plateau_why, "fewer than 2 stages");
            return;
        }
        r->plateau = r->steps.stage[n - 1].vo2_ml_min - r->steps.stage[n - 2].vo2_ml_min < STEPS_PLATEAU_ML_MIN;
        return;
    }
    if (vo2_line(c->w, c->t_end - PLATEAU_WIN_S, c->t_end, 10, &f, &m) != CPD_OK) {
        say(r->plateau_why, sizeof r->plateau_why, "%zu samples in the final %.0f s", m, PLATEAU_WIN_S);
        return;
    }
    r->final_slope_ml_min_s = f.b[1];
    if (r->gain_status == CPD_THR_FOUND) {
        r->ref_slope_ml_min_s = r->slope_ml_min_s;
    } else {
        cpd_linfit_result g;
        double hi = c->t_end - PLATEAU_WIN_S;
        if (hi - GAIN_T_LO_S < GAIN_MIN_SPAN_S || vo2_line(c->w, GAIN_T_LO_S, hi, GAIN_MIN_N, &g, &m) != CPD_OK) {
            say(r->plateau_why, sizeof r->plateau_why, "no reference slope before the final %.0f s", PLATEAU_WIN_S);
            return;
        }
        r->ref_slope_ml_min_s = g.b[1];
    }
    if (!(r->ref_slope_ml_min_s > MIN_RAMP_SLOPE)) {
        say(r->plateau_why, sizeof r->plateau_why, "VO2 does not rise during the ramp (%.3g mL/min per s)",
            r->ref_slope_ml_min_s);
        r->ref_slope_ml_min_s = 0;
        return;
    }
    r->plateau = r->final_slope_ml_min_s < PLATEAU_FRAC * r->ref_slope_ml_min_s;
}

static void column_check(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    const cpd_gx_series *g = c->w->grid;
    const cpd_ramp_opts *o = c->o;
    if (!g->ch[c->col])
        return;
    r->has_column = 1;
    if (!(o->rate_per_min > 0))
        return; /* nothing nominal to compare */
    double start = o->start_given || !r->has_record_line ? o->start : r->record_start;
    double sum = 0;
    for (size_t i = c->i0; i <= c->i1; i++)
        sum += fabs(g->ch[c->col][i] - (start + o->rate_per_min * g->t_s[i] / 60.0));
    r->column_mad = sum / (double)(c->i1 - c->i0 + 1);
    r->column_mismatch = r->column_mad > COLUMN_MISMATCH_FRAC * o->rate_per_min * c->t_end / 60.0;
    if (r->intensity_recorded) {
        r->has_nominal = 1;
        r->nominal_rate = o->rate_per_min;
        r->nominal_start = o->start_given ? o->start : 0;
        r->nominal_mismatch = c->steps ? fabs(o->rate_per_min - r->record_rate) > STEPS_RATE_MISMATCH * r->record_rate
                                       : r->column_mismatch;
    }
}

/* The end of exercise in the record: the last sample before the intensity falls below its running
 * highest value (of 3-sample medians, so one spike does not count) by more than max(abs, 10 %) for
 * DROP_S seconds; the last sample when it never does. Samples from onset (t >= 0). */
static double record_end(const cpd_gx_series *s, int col, double drop_abs)
{
    const double *t = s->t_s, *v = s->ch[col];
    size_t i = 0, n = s->n;
    while (i < n && t[i] < 0)
        i++;
    if (i >= n)
        return t[n - 1];
    size_t last = i;
    double M = v[i];
    for (; i < n; i++) {
        if (i > 0 && i + 1 < n) {
            double a = v[i - 1], b = v[i], d = v[i + 1];
            double med = fmax(fmin(a, b), fmin(fmax(a, b), d));
            if (med > M)
                M = med;
        }
        double lim = M - fmax(drop_abs, DROP_FRAC * M);
        if (v[i] >= lim) {
            last = i;
            continue;
        }
        int held = 1;
        for (size_t j = i; j < n && t[j] <= t[i] + DROP_S; j++)
            if (v[j] >= lim) {
                held = 0;
                break;
            }
        if (held)
            return t[last];
    }
    return t[last];
}

/* The record's line over the exercise, the stages and the protocol; the intensities used. */
static int read_record(struct ctx *c, int has_col, char *msg)
{
    cpd_ramp_result *r = c->res;
    const cpd_ramp_opts *o = c->o;
    const cpd_gx_series *cl = c->w->clean;
    int proto = o->protocol;
    if (has_col) {
        size_t a = 0, m = 0;
        while (a < cl->n && cl->t_s[a] < 0)
            a++;
        while (a + m < cl->n && cl->t_s[a + m] <= c->t_end)
            m++;
        cpd_linfit_result f;
        if (m >= 3 && cpd_linfit_line(cl->t_s + a, cl->ch[c->col] + a, m, &f) == CPD_OK) {
            r->has_record_line = 1;
            r->record_rate = 60.0 * f.b[1];
            r->record_start = f.b[0];
        }
        double tol = o->modality == CPD_RAMP_POWER ? CPD_STEPS_TOL_W : CPD_STEPS_TOL_M_S;
        cpd_steps_find(cl->t_s, cl->ch[c->col], cl->n, c->t_end, tol, &r->steps);
        if (!proto)
            proto = cpd_steps_is_steps(&r->steps) ? CPD_RAMP_PROTO_STEPS : CPD_RAMP_PROTO_RAMP;
        r->protocol_from_record = !o->protocol;
    } else if (proto == CPD_RAMP_PROTO_STEPS) {
        say(msg, CPD_MSG_MAX, "a step test is read from the recorded intensity (%s): the file has no usable column",
            cpd_gx_channel_name(c->col));
        return CPD_EUSAGE;
    } else {
        proto = CPD_RAMP_PROTO_RAMP;
    }
    r->protocol = proto;
    c->steps = proto == CPD_RAMP_PROTO_STEPS;
    if (c->steps && r->steps.n < 2) {
        say(msg, CPD_MSG_MAX, "no stages in the recorded intensity (each held >= %.0f s and higher than the one before)",
            CPD_STEPS_MIN_STAGE_S);
        return CPD_ENODATA;
    }
    if (!c->steps)
        memset(&r->steps, 0, sizeof r->steps);
    if (has_col && (c->steps || r->record_rate > 0)) {
        c->rec = 1;
        c->rate = r->record_rate;
        c->start = r->record_start;
    } else if (o->rate_per_min > 0) {
        c->rec = 0;
        c->rate = o->rate_per_min;
        c->start = o->start;
    } else {
        say(msg, CPD_MSG_MAX, "the recorded %s does not rise during the exercise: give the ramp rate and start",
            cpd_gx_channel_name(c->col));
        return CPD_EUSAGE;
    }
    r->intensity_recorded = c->rec;
    c->w->col = c->col;
    r->rate_used = c->rate;
    r->start_used = c->start;
    return CPD_OK;
}

/* Flags outliers in VO2, VCO2 and VE (cpd_gx_outliers) and drops the samples; repeats on what
 * remains, up to OUTLIER_PASSES times, because one wild breath inflates its neighbours' SD and hides
 * a second one close by. w->clean receives the result; *count the samples dropped. */
static int remove_outliers(cpd_ramp_ws *w, const cpd_gx_series *s, const cpd_ramp_opts *o, size_t *count)
{
    static const int chk[3] = {CPD_GX_VO2, CPD_GX_VCO2, CPD_GX_VE};
    const cpd_gx_series *cur = s;
    cpd_gx_series *own = NULL;
    int rc = CPD_OK;
    for (int pass = 0; pass < OUTLIER_PASSES; pass++) {
        memset(w->drop, 0, cur->n);
        for (int k = 0; k < 3; k++) {
            size_t nf = 0;
            if (!cur->ch[chk[k]])
                continue;
            rc = cpd_gx_outliers(cur, chk[k], o->outlier_half, o->outlier_k, w->flag, &nf);
            if (rc)
                goto done;
            for (size_t i = 0; i < cur->n; i++)
                w->drop[i] |= w->flag[i];
        }
        size_t m = 0;
        for (size_t i = 0; i < cur->n; i++)
            m += w->drop[i];
        if (own && m == 0)
            break;
        cpd_gx_series *next = cpd_gx_filter(cur, w->drop);
        if (!next) {
            rc = CPD_ENOMEM;
            goto done;
        }
        cpd_gx_free(own);
        own = next;
        cur = own;
        *count += m;
        if (m == 0)
            break;
    }
done:
    if (rc)
        cpd_gx_free(own);
    else
        w->clean = own;
    return rc;
}

/* Outlier removal, shift to onset, 1-s grid; finds the end of the ramp. */
static int prepare(struct ctx *c, const cpd_gx_series *s, char *msg)
{
    cpd_ramp_ws *w = c->w;
    const cpd_ramp_opts *o = c->o;
    int rc = reserve_samples(w, s->n);
    if (rc)
        return rc;
    rc = remove_outliers(w, s, o, &c->res->n_outliers);
    if (rc)
        return rc;
    cpd_gx_shift(w->clean, -o->onset_s);
    const cpd_gx_series *cl = w->clean;
    if (cl->n < 2 || !(cl->t_s[cl->n - 1] > 0)) {
        say(msg, CPD_MSG_MAX, "no samples after the onset at %.1f s", o->onset_s);
        return CPD_ENODATA;
    }
    rc = cpd_gx_interp(cl, 1.0, &w->grid);
    if (rc) {
        say(msg, CPD_MSG_MAX, "the series spans less than 2 s");
        return rc;
    }
    const cpd_gx_series *g = w->grid;
    rc = reserve_grid(w, g->n);
    if (rc)
        return rc;
    size_t i0 = 0;
    while (i0 < g->n && g->t_s[i0] < 0)
        i0++;
    if (i0 >= g->n) {
        say(msg, CPD_MSG_MAX, "no samples after the onset");
        return CPD_ENODATA;
    }
    int col = c->col;
    /* a column that does not vary over the exercise (an unused channel exported as 0) is no record */
    int has_col = cl->ch[col] != NULL;
    double drop_abs = o->modality == CPD_RAMP_POWER ? DROP_ABS_W : DROP_ABS_M_S;
    if (has_col) {
        double lo = INFINITY, hi = -INFINITY;
        for (size_t i = 0; i < cl->n; i++)
            if (cl->t_s[i] >= 0) {
                lo = fmin(lo, cl->ch[col][i]);
                hi = fmax(hi, cl->ch[col][i]);
            }
        has_col = hi - lo >= drop_abs;
    }
    if (!has_col && !(o->rate_per_min > 0)) {
        say(msg, CPD_MSG_MAX, "no usable recorded intensity (%s)%s: give the ramp rate and start", cpd_gx_channel_name(col),
            cl->ch[col] ? " (the column does not vary)" : "");
        return CPD_EUSAGE;
    }
    double t_end;
    if (o->end_given) {
        t_end = o->end_s - o->onset_s;
        if (!(t_end > 0) || t_end > s->t_s[s->n - 1] - o->onset_s) {
            say(msg, CPD_MSG_MAX, "the ramp end %.1f s lies outside the samples after onset", o->end_s);
            return CPD_EUSAGE;
        }
        if (t_end > g->t_s[g->n - 1])
            t_end = g->t_s[g->n - 1];
    } else if (has_col) {
        /* the record's end of exercise: the recovery after it does not count */
        t_end = record_end(cl, col, drop_abs);
        c->res->end_from_record = 1;
    } else {
        t_end = g->t_s[g->n - 1];
    }
    size_t i1 = i0;
    while (i1 + 1 < g->n && g->t_s[i1 + 1] <= t_end)
        i1++;
    size_t m = 0;
    for (size_t i = 0; i < cl->n; i++)
        m += cl->t_s[i] >= 0 && cl->t_s[i] <= t_end;
    if (t_end < CPD_RAMP_MIN_DURATION_S || m < CPD_RAMP_MIN_SAMPLES) {
        say(msg, CPD_MSG_MAX, "the ramp lasts %.0f s with %zu samples; need %.0f s and %d", t_end, m,
            CPD_RAMP_MIN_DURATION_S, CPD_RAMP_MIN_SAMPLES);
        return CPD_ENODATA;
    }
    c->i0 = i0;
    c->i1 = i1;
    c->t_end = t_end;
    return read_record(c, has_col, msg);
}

static void peak(struct ctx *c)
{
    cpd_ramp_result *r = c->res;
    const cpd_ramp_opts *o = c->o;
    const cpd_gx_series *g = c->w->grid;
    size_t win = (size_t)lround(o->peak_window_s);
    size_t h = (size_t)lround(o->smooth_s / 2);
    cpd_gx_rolling_mean(g->ch[CPD_GX_VO2], g->n, win, c->w->trail);
    centred_mean(g->ch[CPD_GX_VO2], g->n, h, c->w->sm_vo2);
    if (g->ch[CPD_GX_VCO2])
        centred_mean(g->ch[CPD_GX_VCO2], g->n, h, c->w->sm_vco2);
    if (g->ch[CPD_GX_HR])
        centred_mean(g->ch[CPD_GX_HR], g->n, h, c->w->sm_hr);
    size_t ib = c->i0 + win - 1;
    for (size_t i = ib; i <= c->i1; i++)
        if (c->w->trail[i] > c->w->trail[ib])
            ib = i;
    r->vo2peak_ml_min = c->w->trail[ib];
    r->vo2peak_time_s = g->t_s[ib];
    r->vo2peak_intensity = intensity_at(c, g->t_s[ib]);
    r->duration_s = c->t_end;
    r->peak_intensity = c->start + c->rate * c->t_end / 60.0;
    if (c->rec) { /* the highest recorded intensity of the exercise */
        const cpd_gx_series *cl = c->w->clean;
        r->peak_intensity = 0;
        for (size_t i = 0; i < cl->n && cl->t_s[i] <= c->t_end; i++)
            if (cl->t_s[i] >= 0 && cl->ch[c->col][i] > r->peak_intensity)
                r->peak_intensity = cl->ch[c->col][i];
    }
    if (o->mass_kg > 0) {
        r->has_relative = 1;
        r->vo2peak_ml_kg_min = r->vo2peak_ml_min / o->mass_kg;
    }
}

int cpd_ramp_analyse(cpd_ramp_ws *w, const cpd_gx_series *s, const cpd_ramp_opts *o, cpd_ramp_result *res,
                     char *msg)
{
    if (msg)
        msg[0] = '\0';
    if (!w || !s || !o || !res) {
        say(msg, CPD_MSG_MAX, "missing argument");
        return CPD_EUSAGE;
    }
    memset(res, 0, sizeof *res);
    release_series(w);
    for (int k = 0; k < 3; k++)
        w->pvalid[k] = 0;
    int rc = check_opts(o, msg);
    if (!rc)
        rc = check_series(s, msg);
    if (rc)
        goto done;
    res->modality = o->modality;
    res->n_samples = s->n;
    struct ctx c = {.o = o, .w = w, .res = res, .col = o->modality == CPD_RAMP_POWER ? CPD_GX_POWER : CPD_GX_SPEED};
    rc = prepare(&c, s, msg);
    if (rc)
        goto done;
    if (c.i1 < c.i0 + (size_t)lround(o->peak_window_s) - 1) {
        say(msg, CPD_MSG_MAX, "the ramp is shorter than the VO2peak window");
        rc = CPD_ENODATA;
        goto done;
    }
    peak(&c);
    if (c.steps && (rc = cpd_steps_means(&res->steps, w->grid)) != CPD_OK) {
        say(msg, CPD_MSG_MAX, "a stage has no samples for its steady state");
        goto done;
    }
    find_rcp(&c);
    find_get(&c);
    if (o->manual_get_vo2_ml_min > 0)
        place_vo2(&c, &res->get, o->manual_get_vo2_ml_min, CPD_THR_MANUAL, "manual");
    else if (o->manual_get_intensity > 0)
        place_intensity(&c, &res->get, o->manual_get_intensity);
    else
        res->get = res->get_auto;
    if (o->manual_rcp_vo2_ml_min > 0)
        place_vo2(&c, &res->rcp, o->manual_rcp_vo2_ml_min, CPD_THR_MANUAL, "manual");
    else if (o->manual_rcp_intensity > 0)
        place_intensity(&c, &res->rcp, o->manual_rcp_intensity);
    else
        res->rcp = res->rcp_auto;
    baseline(&c);
    gain_mrt(&c);
    equivalents(&c);
    plateau(&c);
    column_check(&c);
    w->valid = 1;
done:
    if (rc) {
        release_series(w);
        for (int k = 0; k < 3; k++)
            w->pvalid[k] = 0;
        memset(res, 0, sizeof *res);
    }
    return rc;
}

int cpd_ramp_points(const cpd_ramp_ws *w, int which, const double **x, const double **y, size_t *n)
{
    if (!w || !x || !y || !n || which < CPD_RAMP_PTS_VSLOPE || which > CPD_RAMP_PTS_VEQ)
        return CPD_EUSAGE;
    if (!w->valid || !w->pvalid[which])
        return CPD_ENODATA;
    *x = w->px[which];
    *y = w->py[which];
    *n = w->pn[which];
    return CPD_OK;
}

const cpd_gx_series *cpd_ramp_grid(const cpd_ramp_ws *w, const double **smoothed_vo2)
{
    if (!w || !w->valid)
        return NULL;
    if (smoothed_vo2)
        *smoothed_vo2 = w->sm_vo2;
    return w->grid;
}

double cpd_ramp_intensity_at(const cpd_ramp_ws *w, const cpd_ramp_result *r, double t_s)
{
    if (!w || !w->valid || !r)
        return NAN;
    if (r->intensity_recorded)
        return cpd_ramp_grid_at(w->grid, w->grid->ch[w->col], t_s);
    return r->start_used + r->rate_used * t_s / 60.0;
}

const double *cpd_ramp_smoothed(const cpd_ramp_ws *w, int channel)
{
    if (!w || !w->valid || !w->grid->ch[channel])
        return NULL;
    return channel == CPD_GX_VO2 ? w->sm_vo2 : channel == CPD_GX_VCO2 ? w->sm_vco2 : channel == CPD_GX_HR ? w->sm_hr : NULL;
}

const cpd_gx_series *cpd_ramp_samples(const cpd_ramp_ws *w)
{
    return w && w->valid ? w->clean : NULL;
}
