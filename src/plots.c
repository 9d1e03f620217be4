/* plots.c: the charts of cpdomain, all through svgplot so that no chart repeats plotting code. */
#include "cpdomain/plots.h"
#include "cpdomain/status.h"
#include "cpdomain/svgplot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int finish(cpd_svgplot *p, char **svg)
{
    size_t len = 0;
    int rc = cpd_svgplot_render(p, svg, &len);
    cpd_svgplot_free(p);
    return rc;
}

static void style(cpd_svgplot_style *st, int color, int marker, double stroke, int dash)
{
    cpd_svgplot_style_init(st, color);
    st->marker = marker;
    st->stroke_px = stroke;
    st->dash = dash;
}

int cpd_plot_vslope(const cpd_ramp_ws *w, const cpd_ramp_result *r, char **svg)
{
    *svg = NULL;
    const double *x = NULL, *y = NULL;
    size_t n = 0;
    int rc = cpd_ramp_points(w, CPD_RAMP_PTS_VSLOPE, &x, &y, &n);
    if (rc)
        return rc;
    cpd_svgplot *p = cpd_svgplot_alloc(640, 480);
    double *xl = malloc(n * sizeof *xl), *yl = malloc(n * sizeof *yl);
    if (!p || !xl || !yl) {
        cpd_svgplot_free(p);
        free(xl);
        free(yl);
        return CPD_ENOMEM;
    }
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        xl[i] = x[i] / 1000;
        yl[i] = y[i] / 1000;
        lo = fmin(lo, fmin(xl[i], yl[i]));
        hi = fmax(hi, fmax(xl[i], yl[i]));
    }
    /* the thresholds inside the range, so their lines and labels are never cut off at an edge */
    const cpd_ramp_threshold *thr[2] = {&r->get, &r->rcp};
    for (int k = 0; k < 2; k++)
        if (thr[k]->status != CPD_THR_NOT_FOUND && isfinite(thr[k]->vo2_ml_min)) {
            lo = fmin(lo, thr[k]->vo2_ml_min / 1000);
            hi = fmax(hi, thr[k]->vo2_ml_min / 1000 + 0.02 * (hi - lo));
        }
    cpd_svgplot_set_title(p, "V-slope: VCO2 against VO2");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "VO2 (L/min)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VCO2 (L/min)");
    /* equal scales on both axes, as the method asks (Beaver, Wasserman & Whipp 1986) */
    cpd_svgplot_set_range(p, CPD_SVGPLOT_X, lo, hi);
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, lo, hi);
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_CIRCLE, 0, CPD_SVGPLOT_SOLID);
    st.marker_px = 2.5;
    cpd_svgplot_points(p, xl, yl, n, NULL, &st, "samples (10-s means)");
    if (r->has_vslope) {
        const cpd_linfit_twoseg *f = &r->vslope;
        double split = f->has_cross ? f->x_cross / 1000 : xl[f->split ? f->split - 1 : 0];
        double ax[2] = {xl[0], split}, bx[2] = {split, xl[n - 1]};
        double ay[2], by[2];
        for (int k = 0; k < 2; k++) {
            ay[k] = (f->b1 / 1000) + f->s1 * ax[k];
            by[k] = (f->b2 / 1000) + f->s2 * bx[k];
        }
        style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2.5, CPD_SVGPLOT_SOLID);
        cpd_svgplot_line(p, ax, ay, 2, &st, "lower line S1");
        style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 2.5, CPD_SVGPLOT_SOLID);
        cpd_svgplot_line(p, bx, by, 2, &st, "upper line S2");
    }
    if (r->get.status != CPD_THR_NOT_FOUND) {
        style(&st, CPD_SVGPLOT_GREEN, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_DASHED);
        cpd_svgplot_vline(p, r->get.vo2_ml_min / 1000, &st, r->get.status == CPD_THR_MANUAL ? "GET (manual)" : "GET");
    }
    if (r->rcp.status != CPD_THR_NOT_FOUND) {
        style(&st, CPD_SVGPLOT_RED, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_DOTTED);
        cpd_svgplot_vline(p, r->rcp.vo2_ml_min / 1000, &st, r->rcp.status == CPD_THR_MANUAL ? "RCP (manual)" : "RCP");
    }
    free(xl);
    free(yl);
    return finish(p, svg);
}

int cpd_plot_veq(const cpd_ramp_ws *w, const cpd_ramp_result *r, char **svg)
{
    *svg = NULL;
    const cpd_gx_series *g = cpd_ramp_grid(w, NULL);
    if (!g || !g->ch[CPD_GX_VE] || !g->ch[CPD_GX_VCO2])
        return CPD_ENODATA;
    size_t n = g->n;
    double *a = malloc(n * sizeof *a), *b = malloc(n * sizeof *b), *sa = malloc(n * sizeof *sa),
           *sb = malloc(n * sizeof *sb);
    cpd_svgplot *p = cpd_svgplot_alloc(640, 400);
    if (!a || !b || !sa || !sb || !p) {
        free(a);
        free(b);
        free(sa);
        free(sb);
        cpd_svgplot_free(p);
        return CPD_ENOMEM;
    }
    for (size_t i = 0; i < n; i++) {
        a[i] = g->ch[CPD_GX_VO2][i] > 0 ? 1000 * g->ch[CPD_GX_VE][i] / g->ch[CPD_GX_VO2][i] : NAN;
        b[i] = g->ch[CPD_GX_VCO2][i] > 0 ? 1000 * g->ch[CPD_GX_VE][i] / g->ch[CPD_GX_VCO2][i] : NAN;
    }
    /* 15-s trailing means: breath noise hides the isocapnic buffering otherwise */
    cpd_gx_rolling_mean(a, n, 15, sa);
    cpd_gx_rolling_mean(b, n, 15, sb);
    cpd_svgplot_set_title(p, "Ventilatory equivalents");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "time from ramp onset (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VE/VO2 and VE/VCO2");
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, g->t_s, sa, n, &st, "VE/VO2");
    style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 2, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, g->t_s, sb, n, &st, "VE/VCO2");
    if (r->get.status != CPD_THR_NOT_FOUND) {
        style(&st, CPD_SVGPLOT_GREEN, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_DASHED);
        cpd_svgplot_vline(p, r->get.time_s, &st, "GET");
    }
    if (r->rcp.status != CPD_THR_NOT_FOUND) {
        style(&st, CPD_SVGPLOT_RED, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_DOTTED);
        cpd_svgplot_vline(p, r->rcp.time_s, &st, "RCP");
    }
    free(a);
    free(b);
    free(sa);
    free(sb);
    return finish(p, svg);
}

int cpd_plot_lactate(const double *intensity, const double *lactate, size_t n, int speed,
                     const cpd_lactate_result *r, char **svg)
{
    *svg = NULL;
    if (n == 0)
        return CPD_ENODATA;
    cpd_svgplot *p = cpd_svgplot_alloc(640, 400);
    if (!p)
        return CPD_ENOMEM;
    cpd_svgplot_set_title(p, "Blood lactate");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, speed ? "speed (m/s)" : "power (W)");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "lactate (mmol/L)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, NAN);
    cpd_svgplot_style st;
    if (r->has_cubic) {
        enum { M = 60 };
        double cx[M], cy[M];
        for (int i = 0; i < M; i++) {
            double x = intensity[0] + (intensity[n - 1] - intensity[0]) * i / (M - 1);
            cx[i] = x;
            cy[i] = r->cubic[0] + x * (r->cubic[1] + x * (r->cubic[2] + x * r->cubic[3]));
        }
        style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2, CPD_SVGPLOT_SOLID);
        cpd_svgplot_line(p, cx, cy, M, &st, "cubic fit");
    }
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_CIRCLE, 0, CPD_SVGPLOT_SOLID);
    st.marker_px = 4;
    cpd_svgplot_points(p, intensity, lactate, n, NULL, &st, "stages");
    const struct {
        const cpd_lactate_value *v;
        const char *name;
        int color, dash;
    } thr[] = {{&r->lt1, "LT1", CPD_SVGPLOT_GREEN, CPD_SVGPLOT_DASHED},
               {&r->dmax, "Dmax", CPD_SVGPLOT_PURPLE, CPD_SVGPLOT_DOTTED},
               {&r->dmax_mod, "modified Dmax", CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_DASHDOT},
               {&r->obla, "4 mmol/L", CPD_SVGPLOT_RED, CPD_SVGPLOT_DASHED}};
    for (size_t k = 0; k < sizeof thr / sizeof thr[0]; k++)
        if (thr[k].v->status == CPD_LACTATE_FOUND) {
            style(&st, thr[k].color, CPD_SVGPLOT_MARKER_NONE, 1.5, thr[k].dash);
            cpd_svgplot_vline(p, thr[k].v->intensity, &st, thr[k].name);
        }
    return finish(p, svg);
}

/* The kinetics chart is two svgplot panels, the data with the model above and the residuals below,
 * placed one above the other in one outer <svg> over the same time range, so that a systematic misfit
 * (a slow component left unmodelled, a wrong delay) shows as a run of residuals under the data. */
int cpd_plot_kinetics(const cpd_kinetics_data *d, const cpd_kinetics_result *r, const char *title, char **svg)
{
    if (!svg)
        return CPD_EUSAGE;
    *svg = NULL;
    if (!d || !r)
        return CPD_EUSAGE;
    const cpd_kinetics_fitres *f = r->sc_supported && r->bi.valid ? &r->bi : &r->mono;
    if (!f->valid || d->n == 0 || d->n_raw == 0 || !(f->to_s > f->from_s))
        return CPD_ENODATA;
    enum { W = 720, H_MAIN = 440, H_RES = 230 };
    int rc = CPD_OK;
    size_t nm = (size_t)ceil(f->to_s - f->from_s) + 1;
    cpd_svgplot *p = cpd_svgplot_alloc(W, H_MAIN), *q = cpd_svgplot_alloc(W, H_RES);
    double *mt = malloc(nm * sizeof *mt), *my = malloc(nm * sizeof *my), *py = malloc(nm * sizeof *py);
    double *rt = malloc(d->n * sizeof *rt), *ry = malloc(d->n * sizeof *ry);
    if (!p || !q || !mt || !my || !py || !rt || !ry) {
        rc = CPD_ENOMEM;
        goto done;
    }
    double prim[CPD_KIN_NPAR];
    memcpy(prim, f->b, sizeof prim);
    prim[CPD_KIN_A2] = 0.0;
    for (size_t i = 0; i < nm; i++) {
        mt[i] = fmin(f->from_s + (double)i, f->to_s);
        my[i] = cpd_kinetics_eval(f->model, f->b, mt[i]);
        py[i] = cpd_kinetics_eval(CPD_KIN_BI, prim, mt[i]);
    }
    size_t nr = 0;
    for (size_t i = 0; i < d->n; i++)
        if (d->t_s[i] >= f->from_s && d->t_s[i] <= f->to_s) {
            rt[nr] = d->t_s[i];
            ry[nr] = d->vo2_ml_min[i] - cpd_kinetics_eval(f->model, f->b, d->t_s[i]);
            nr++;
        }
    double lo = 0.0;
    for (size_t i = 0; i < d->n_raw; i++)
        lo = fmin(lo, d->raw_t_s[i]);
    for (size_t i = 0; i < d->n; i++)
        lo = fmin(lo, d->t_s[i]);
    double hi = fmax(d->end_s, f->to_s);
    if (!(hi > lo))
        hi = lo + 1.0;

    cpd_svgplot_set_title(p, title && *title ? title : "VO2 kinetics");
    cpd_svgplot_set_title(q, "Residuals of the model (observed - model)");
    cpd_svgplot *both[2] = {p, q};
    for (int k = 0; k < 2; k++) {
        cpd_svgplot_set_label(both[k], CPD_SVGPLOT_X, "time from onset (min:s)");
        cpd_svgplot_set_format(both[k], CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
        /* one time range for both panels, so a residual sits under its breath */
        cpd_svgplot_set_range(both[k], CPD_SVGPLOT_X, lo, hi);
    }
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VO2 (mL/min)");
    cpd_svgplot_set_label(q, CPD_SVGPLOT_Y, "residual (mL/min)");
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_CIRCLE, 0, CPD_SVGPLOT_SOLID);
    st.marker_px = d->fit_on_breaths ? 2.2 : 1.6;
    st.fill_opacity = d->fit_on_breaths ? 0.4 : 0.15;
    cpd_svgplot_points(p, d->raw_t_s, d->raw_vo2_ml_min, d->n_raw, NULL, &st,
                       d->n_repeats > 1 ? "breaths (all repeats)" : "breaths");
    if (!d->fit_on_breaths) {
        style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_CIRCLE, 0, CPD_SVGPLOT_SOLID);
        st.marker_px = d->t_s == d->grid_t_s ? 1.8 : 3.0;
        st.fill_opacity = 0.85;
        cpd_svgplot_points(p, d->t_s, d->vo2_ml_min, d->n, NULL, &st,
                           d->t_s == d->grid_t_s ? (d->n_repeats > 1 ? "1-s ensemble mean" : "1-s means") : "bin means");
    }
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 1.2, CPD_SVGPLOT_DOTTED);
    cpd_svgplot_hline(p, f->b[CPD_KIN_BASE], &st, "baseline");
    cpd_svgplot_vline(p, 0.0, &st, "onset");
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 1.2, CPD_SVGPLOT_DASHDOT);
    cpd_svgplot_vline(p, f->from_s, &st, "end of phase I");
    if (f->model == CPD_KIN_BI) {
        style(&st, CPD_SVGPLOT_GREEN, CPD_SVGPLOT_MARKER_NONE, 2, CPD_SVGPLOT_DASHED);
        cpd_svgplot_line(p, mt, py, nm, &st, "primary component");
    }
    style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 2.5, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, mt, my, nm, &st,
                     f->model == CPD_KIN_BI ? "model: primary + slow component" : "model: mono-exponential");

    style(&st, d->fit_on_breaths ? CPD_SVGPLOT_GREY : CPD_SVGPLOT_BLUE, CPD_SVGPLOT_CIRCLE, 0, CPD_SVGPLOT_SOLID);
    st.marker_px = 2.0;
    st.fill_opacity = 0.6;
    cpd_svgplot_points(q, rt, ry, nr, NULL, &st, NULL);
    style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_SOLID);
    cpd_svgplot_hline(q, 0.0, &st, NULL);

    cpd_svgplot *const stack[2] = {p, q};
    rc = cpd_svgplot_render_stack(stack, 2, "VO2 kinetics and residuals", svg, NULL);

done:
    cpd_svgplot_free(p);
    cpd_svgplot_free(q);
    free(mt);
    free(my);
    free(py);
    free(rt);
    free(ry);
    return rc;
}

/* ---- the domain sheet's plots (power-duration relationship, W' balance) ---- */
int cpd_plot_domain_color(int domain)
{
    static const int ramp[CPD_DOM_N] = {CPD_SVGPLOT_RAMP1, CPD_SVGPLOT_RAMP2, CPD_SVGPLOT_RAMP3, CPD_SVGPLOT_RAMP4};
    return domain >= 0 && domain < CPD_DOM_N ? ramp[domain] : -1;
}

int cpd_plot_pd(const cpd_pd_model_fit *m, const double *intensity, const double *duration_s, size_t n,
                const cpd_domains_result *d, char **svg)
{
    if (!svg)
        return CPD_EUSAGE;
    *svg = NULL;
    if (!m || (n && (!intensity || !duration_s)))
        return CPD_EUSAGE;
    if (!m->ok || !(m->cp > 0) || !(m->w_prime > 0) || !isfinite(m->cp) || !isfinite(m->w_prime))
        return CPD_ENODATA;
    int spd = m->modality == CPD_PD_SPEED;
    double tmin = 60, tmax = 1200;
    for (size_t i = 0; i < n; i++)
        if (isfinite(duration_s[i])) {
            tmax = fmax(tmax, 1.1 * duration_s[i]);
            tmin = fmin(tmin, 0.9 * duration_s[i]);
        }
    tmin = fmax(tmin, 10);
    enum { M = 160 };
    double x[M], y[M], lo[M], hi[M];
    for (int i = 0; i < M; i++) {
        /* log-spaced: the curve bends hardest at short durations */
        x[i] = tmin * pow(tmax / tmin, (double)i / (M - 1));
        cpd_pd_pred p;
        if (cpd_pd_predict_intensity(m, x[i], &p) == CPD_OK && p.valid) {
            y[i] = p.value;
            lo[i] = p.ci_valid ? p.ci95[0] : NAN;
            hi[i] = p.ci_valid ? p.ci95[1] : NAN;
        } else
            y[i] = lo[i] = hi[i] = NAN;
    }
    cpd_svgplot *p = cpd_svgplot_alloc(720, 450);
    if (!p)
        return CPD_ENOMEM;
    cpd_svgplot_set_title(p, spd ? "Speed-duration relationship" : "Power-duration relationship");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "time to task failure (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, tmax);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, spd ? "speed (m/s)" : "power (W)");
    /* room below the lowest boundary, so that the moderate band shows and is not a sliver */
    double ytop = -INFINITY, ylow = m->cp;
    for (int i = 0; i < M; i++)
        ytop = fmax(ytop, isfinite(hi[i]) ? fmax(hi[i], y[i]) : y[i]);
    for (size_t i = 0; i < n; i++)
        if (isfinite(intensity[i])) {
            ytop = fmax(ytop, intensity[i]);
            ylow = fmin(ylow, intensity[i]);
        }
    if (d && d->b[CPD_BND_MOD_HEAVY].valid)
        ylow = fmin(ylow, d->b[CPD_BND_MOD_HEAVY].value);
    if (isfinite(ytop) && ytop > ylow)
        cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, fmax(0, ylow - 0.12 * (ytop - ylow)), NAN);
    cpd_svgplot_style st;
    if (d) {
        const cpd_boundary *b = d->b;
        double e[4] = {-INFINITY, b[CPD_BND_MOD_HEAVY].valid ? b[CPD_BND_MOD_HEAVY].value : NAN,
                       b[CPD_BND_HEAVY_SEVERE].valid ? b[CPD_BND_HEAVY_SEVERE].value : NAN,
                       b[CPD_BND_SEVERE_EXTREME].valid ? b[CPD_BND_SEVERE_EXTREME].value : NAN};
        for (int k = 0; k < CPD_DOM_N; k++) {
            double y0 = k == 0 ? -INFINITY : e[k], y1 = k == CPD_DOM_N - 1 ? INFINITY : e[k + 1];
            const char *label = cpd_domain_name((cpd_domain)k);
            /* without a GET the band below CP holds both lower domains */
            if (k == CPD_DOM_MODERATE && isnan(y1))
                continue;
            if (k == CPD_DOM_HEAVY && isnan(y0)) {
                y0 = -INFINITY;
                label = "moderate or heavy (no GET)";
            }
            if (isnan(y0) || isnan(y1) || !(y1 > y0))
                continue;
            cpd_svgplot_style_init(&st, cpd_plot_domain_color(k));
            st.stroke_px = 0;
            st.fill_opacity = 1; /* opaque: the band is exactly the sheet's swatch of the domain */
            cpd_svgplot_hregion(p, y0, y1, &st, label);
        }
    }
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 0, CPD_SVGPLOT_SOLID);
    st.fill_opacity = 0.22;
    cpd_svgplot_band(p, x, lo, hi, M, &st, "95 % band");
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2.4, CPD_SVGPLOT_SOLID);
    char label[64];
    snprintf(label, sizeof label, "%s model", cpd_pd_model_name(m->model));
    cpd_svgplot_line(p, x, y, M, &st, label);
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 1.2, CPD_SVGPLOT_DASHED);
    snprintf(label, sizeof label, spd ? "CS %.2f m/s" : "CP %.0f W", m->cp);
    cpd_svgplot_hline(p, m->cp, &st, label);
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_CIRCLE, 1.4, CPD_SVGPLOT_SOLID);
    st.marker_px = 4.5;
    st.fill_opacity = 0.85;
    cpd_svgplot_points(p, duration_s, intensity, n, NULL, &st, "trials");
    return finish(p, svg);
}

int cpd_plot_balance(const double *intensity, const double *balance, size_t n, int speed, double cp, double w_prime,
                     char **svg)
{
    if (!svg)
        return CPD_EUSAGE;
    *svg = NULL;
    if (!intensity || !balance || n == 0 || !isfinite(cp) || !isfinite(w_prime) || !(cp > 0) || !(w_prime > 0))
        return CPD_EUSAGE;
    double scale = speed ? 1 : 1e-3; /* kJ for power, m for speed */
    double *t = malloc((n + 1) * sizeof *t), *b = malloc((n + 1) * sizeof *b), *zero = calloc(n + 1, sizeof *zero);
    double *sx = malloc((n + 1) * sizeof *sx), *sy = malloc((n + 1) * sizeof *sy);
    cpd_svgplot *p = cpd_svgplot_alloc(720, 380);
    if (!t || !b || !zero || !sx || !sy || !p) {
        free(t);
        free(b);
        free(zero);
        free(sx);
        free(sy);
        cpd_svgplot_free(p);
        return CPD_ENOMEM;
    }
    t[0] = 0;
    b[0] = w_prime * scale;
    double bmin = 0, imax = cp;
    for (size_t i = 0; i < n; i++) {
        t[i + 1] = (double)(i + 1);
        b[i + 1] = balance[i] * scale;
        if (isfinite(b[i + 1]))
            bmin = fmin(bmin, b[i + 1]);
        if (isfinite(intensity[i]))
            imax = fmax(imax, intensity[i]);
    }
    /* the step line needs only the seconds where the intensity changes, and the end */
    size_t k = 0;
    for (size_t i = 0; i < n; i++)
        if (i == 0 || intensity[i] != intensity[i - 1]) {
            sx[k] = (double)i;
            sy[k++] = intensity[i];
        }
    sx[k] = (double)n;
    sy[k++] = intensity[n - 1];
    cpd_svgplot_set_title(p, speed ? "D\xe2\x80\xb2 balance of the session" : "W\xe2\x80\xb2 balance of the session");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "time (min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_range(p, CPD_SVGPLOT_X, 0, (double)n);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, speed ? "D\xe2\x80\xb2 balance (m)" : "W\xe2\x80\xb2 balance (kJ)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, bmin, w_prime * scale * 1.05);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y2, speed ? "speed (m/s)" : "power (W)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y2, 0, imax * 1.12);
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 0, CPD_SVGPLOT_SOLID);
    st.fill_opacity = 0.14;
    cpd_svgplot_band(p, t, zero, b, n + 1, &st, NULL);
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2.4, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, t, b, n + 1, &st, speed ? "D\xe2\x80\xb2 balance" : "W\xe2\x80\xb2 balance");
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 1.3, CPD_SVGPLOT_SOLID);
    st.y_axis = CPD_SVGPLOT_Y2;
    cpd_svgplot_step(p, sx, sy, k, &st, speed ? "speed (right axis)" : "power (right axis)");
    style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 1.3, CPD_SVGPLOT_DASHED);
    st.y_axis = CPD_SVGPLOT_Y2;
    cpd_svgplot_hline(p, cp, &st, speed ? "CS" : "CP");
    free(t);
    free(b);
    free(zero);
    free(sx);
    free(sy);
    return finish(p, svg);
}

int cpd_plot_trend(const int *day, const double *v, const double *lo, const double *hi, size_t n, const char *title,
                   const char *ylabel, char **svg)
{
    if (!svg || !day || !v)
        return CPD_EUSAGE;
    *svg = NULL;
    size_t good = 0;
    for (size_t i = 0; i < n; i++)
        good += isfinite(v[i]) != 0;
    if (!good)
        return CPD_ENODATA;
    cpd_svgplot *p = cpd_svgplot_alloc(640, 320);
    double *x = malloc(n * sizeof *x), *em = malloc(n * sizeof *em), *ep = malloc(n * sizeof *ep);
    if (!p || !x || !em || !ep) {
        cpd_svgplot_free(p);
        free(x);
        free(em);
        free(ep);
        return CPD_ENOMEM;
    }
    for (size_t i = 0; i < n; i++) {
        x[i] = day[i];
        int ci = lo && hi && isfinite(lo[i]) && isfinite(hi[i]) && isfinite(v[i]);
        em[i] = ci ? fmax(v[i] - lo[i], 0) : 0;
        ep[i] = ci ? fmax(hi[i] - v[i], 0) : 0;
    }
    cpd_svgplot_set_title(p, title ? title : "Season");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "date");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_DATE);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, ylabel ? ylabel : "");
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 1.5, CPD_SVGPLOT_DASHED);
    cpd_svgplot_line(p, x, v, n, &st, NULL);
    cpd_svgplot_errors err;
    memset(&err, 0, sizeof err);
    err.y_minus = em;
    err.y_plus = ep;
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_CIRCLE, 1.5, CPD_SVGPLOT_SOLID);
    st.marker_px = 4;
    cpd_svgplot_points(p, x, v, n, &err, &st, "estimate with 95 % interval");
    free(x);
    free(em);
    free(ep);
    return finish(p, svg);
}

int cpd_plot_session_vo2(const double *t_s, const double *vo2, const double *linear, const double *power_w, size_t n,
                         double vo2_get, double vo2peak, const char *title, char **svg)
{
    if (!svg)
        return CPD_EUSAGE;
    *svg = NULL;
    if (!t_s || !vo2 || !linear || !power_w || n < 2)
        return CPD_EUSAGE;
    cpd_svgplot *p = cpd_svgplot_alloc(720, 380);
    if (!p)
        return CPD_ENOMEM;
    double vmax = vo2peak, pmax = 0;
    for (size_t i = 0; i < n; i++) {
        vmax = fmax(vmax, fmax(vo2[i], linear[i]));
        pmax = fmax(pmax, power_w[i]);
    }
    cpd_svgplot_set_title(p, title ? title : "Modelled VO2 of the session");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "time (h:min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_TIME_S);
    cpd_svgplot_set_range(p, CPD_SVGPLOT_X, t_s[0], t_s[n - 1]);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, "VO2 (mL/min)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, vmax * 1.08);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y2, "power (W)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y2, 0, (pmax > 0 ? pmax : 1) * 1.6);
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_GREY, CPD_SVGPLOT_MARKER_NONE, 0.8, CPD_SVGPLOT_SOLID);
    st.y_axis = CPD_SVGPLOT_Y2;
    cpd_svgplot_line(p, t_s, power_w, n, &st, "power (right axis)");
    style(&st, CPD_SVGPLOT_ORANGE, CPD_SVGPLOT_MARKER_NONE, 1.4, CPD_SVGPLOT_DASHED);
    cpd_svgplot_line(p, t_s, linear, n, &st, "linear rule: base + gain x power");
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2.2, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, t_s, vo2, n, &st, "modelled VO2 (kinetics, slow component)");
    style(&st, CPD_SVGPLOT_GREEN, CPD_SVGPLOT_MARKER_NONE, 1.1, CPD_SVGPLOT_DOTTED);
    if (vo2_get > 0)
        cpd_svgplot_hline(p, vo2_get, &st, "VO2 at the GET");
    style(&st, CPD_SVGPLOT_RED, CPD_SVGPLOT_MARKER_NONE, 1.1, CPD_SVGPLOT_DOTTED);
    if (vo2peak > 0)
        cpd_svgplot_hline(p, vo2peak, &st, "VO2peak");
    return finish(p, svg);
}

int cpd_plot_curve(const double *duration_s, const double *value, size_t n, int speed, const char *title, char **svg)
{
    if (!svg)
        return CPD_EUSAGE;
    *svg = NULL;
    if (!duration_s || !value)
        return CPD_EUSAGE;
    size_t ok = 0;
    for (size_t i = 0; i < n; i++)
        ok += duration_s[i] > 0 && value[i] > 0 && isfinite(value[i]);
    if (ok == 0)
        return CPD_ENODATA;
    cpd_svgplot *p = cpd_svgplot_alloc(720, 440);
    if (!p)
        return CPD_ENOMEM;
    cpd_svgplot_set_title(p, title && *title ? title : speed ? "Mean-maximal speed" : "Mean-maximal power");
    cpd_svgplot_set_label(p, CPD_SVGPLOT_X, "duration (logarithmic, min:s)");
    cpd_svgplot_set_format(p, CPD_SVGPLOT_X, CPD_SVGPLOT_LOG_TIME_S);
    cpd_svgplot_set_label(p, CPD_SVGPLOT_Y, speed ? "best mean speed (m/s)" : "best mean power (W)");
    cpd_svgplot_set_range(p, CPD_SVGPLOT_Y, 0, NAN);
    cpd_svgplot_style st;
    style(&st, CPD_SVGPLOT_BLUE, CPD_SVGPLOT_MARKER_NONE, 2.2, CPD_SVGPLOT_SOLID);
    cpd_svgplot_line(p, duration_s, value, n, &st, "best mean of any session");
    return finish(p, svg);
}
