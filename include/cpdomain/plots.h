/* plots.h: the charts of cpdomain (V-slope, ventilatory equivalents, lactate curve, ...) drawn from
 * analysis results through svgplot. Pure: results in, an SVG string out. */
#ifndef CPDOMAIN_PLOTS_H
#define CPDOMAIN_PLOTS_H

#include "cpdomain/domains.h"
#include "cpdomain/kinetics.h"
#include "cpdomain/lactate.h"
#include "cpdomain/pd.h"
#include "cpdomain/ramp.h"

#include <stddef.h>

/* The svgplot palette index of intensity domain `domain` (cpd_domain, moderate .. extreme): the one
 * place that colours the domains, for every plot and sheet. A single-hue ramp, lightest for
 * moderate, darkest for extreme (svgplot.h RAMP1..RAMP4); -1 outside the four domains. */
int cpd_plot_domain_color(int domain);

/* The V-slope plot of the last analysis in w: VCO2 against VO2 (both L/min, equal scales) with the
 * two fitted lines and the GET (and RCP) marked. *svg is malloc'd; the caller frees it with free().
 * Returns CPD_OK, CPD_ENODATA when the V-slope regression did not run, CPD_ENOMEM. */
int cpd_plot_vslope(const cpd_ramp_ws *w, const cpd_ramp_result *r, char **svg);

/* Ventilatory equivalents VE/VO2 and VE/VCO2 (and PETO2, PETCO2 when present) against time from
 * onset, with the GET and RCP times marked. Same ownership and return codes. */
int cpd_plot_veq(const cpd_ramp_ws *w, const cpd_ramp_result *r, char **svg);

/* Lactate against intensity: the stages, the fitted cubic and the thresholds found.
 * Same ownership and return codes (CPD_ENODATA for no stages). */
int cpd_plot_lactate(const double *intensity, const double *lactate, size_t n, int speed,
                     const cpd_lactate_result *r, char **svg);

/* VO2 kinetics of a bout or of an ensemble of repeats (d from cpd_kinetics_prepare with the options
 * of the analysis r): the breaths (and the averaged points the fit used), the fitted model (the
 * bi-exponential when the slow component is supported, else the mono-exponential) with its primary
 * component, the baseline and the end of phase I; stacked below in the same SVG, the residuals
 * (observed - model) of the fitted points. title is copied (NULL: a default). Same ownership; returns
 * CPD_OK, CPD_EUSAGE for NULL arguments, CPD_ENODATA when the model fit is not valid or there are no
 * points, CPD_ENOMEM. */
int cpd_plot_kinetics(const cpd_kinetics_data *d, const cpd_kinetics_result *r, const char *title, char **svg);


/* The power-duration (speed-duration) relationship of fitted model m: the n trials (intensity W or
 * m/s, duration s) as points, the model's curve P = f(t) from 1 min to 20 min (or past the longest
 * trial) with its 95 % band from cpd_pd_predict_intensity (the fit's covariance, delta method), CP
 * as a dashed line, and, when d is not NULL, the four intensity domains as horizontal bands between
 * its valid boundaries, opaque, in cpd_plot_domain_color. Same ownership as
 * above; CPD_EUSAGE for NULL pointers (arrays may be NULL when n is 0), CPD_ENODATA when m has no
 * valid result, CPD_ENOMEM. */
int cpd_plot_pd(const cpd_pd_model_fit *m, const double *intensity, const double *duration_s, size_t n,
                const cpd_domains_result *d, char **svg);

/* W' (D') balance through a protocol: balance[i] (J, or m when speed) at the end of second i + 1 of
 * n, drawn in kJ (m) from the rested w_prime at time 0, over the intensity[i] (W or m/s) of each
 * second as a step line on the right axis with cp marked there. Same ownership; CPD_EUSAGE for NULL
 * pointers, n == 0, or cp or w_prime not finite and > 0; CPD_ENOMEM. */
int cpd_plot_balance(const double *intensity, const double *balance, size_t n, int speed, double cp, double w_prime,
                     char **svg);

/* A mean-maximal curve: value[i] (W or m/s, per speed) for duration_s[i] (s) on a logarithmic time
 * axis (CPD_SVGPLOT_LOG_TIME_S), so seconds and hours read alike. title is copied (NULL: a default).
 * Same ownership; CPD_EUSAGE for NULL pointers, CPD_ENODATA without a positive point, CPD_ENOMEM. */
int cpd_plot_curve(const double *duration_s, const double *value, size_t n, int speed, const char *title, char **svg);

/* A season trend: one value per block at its date (days since 1970-01-01) with its 95 % interval
 * as error bars (lo/hi may be NULL, or a non-finite entry for none), the values joined by a line.
 * title and ylabel are copied. Same ownership; CPD_ENODATA when no value is finite. */
int cpd_plot_trend(const int *day, const double *v, const double *lo, const double *hi, size_t n, const char *title,
                   const char *ylabel, char **svg);

/* Modelled VO2 of a session (energy.h) against time beside the linear prediction base + gain P, with
 * the power on the right axis and the VO2 at the GET and VO2peak marked: t_s, vo2, linear (mL/min)
 * and power_w (W) have n points. title is copied. Same ownership; CPD_EUSAGE for NULL pointers or
 * n < 2; CPD_ENOMEM. */
int cpd_plot_session_vo2(const double *t_s, const double *vo2, const double *linear, const double *power_w, size_t n,
                         double vo2_get, double vo2peak, const char *title, char **svg);

#endif
