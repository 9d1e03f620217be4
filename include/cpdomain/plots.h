/* plots.h: the charts of cpdomain (V-slope, ventilatory equivalents, lactate curve, ...) drawn from
 * analysis results through svgplot. Pure: results in, an SVG string out. */
#ifndef CPDOMAIN_PLOTS_H
#define CPDOMAIN_PLOTS_H

#include "cpdomain/kinetics.h"
#include "cpdomain/lactate.h"
#include "cpdomain/ramp.h"

#include <stddef.h>

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

#endif
