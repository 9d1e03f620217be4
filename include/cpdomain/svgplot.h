/* svgplot.h: small generic plots as one standalone <svg> element for the domain sheets.
 * A plot holds layers drawn in the order added; every user text is XML-escaped; non-finite data
 * are skipped. Pure: no I/O, no globals. */
#ifndef CPDOMAIN_SVGPLOT_H
#define CPDOMAIN_SVGPLOT_H

#include <stddef.h>

typedef struct cpd_svgplot cpd_svgplot;

/* Palette (our own; see cpd_svgplot_color_hex). The first six are line colours, each with at least
 * 3:1 contrast against white (W3C 2018, WCAG 2.1 SC 1.4.11 non-text contrast), so they print well;
 * any two of the eight stay at least 15 CIELAB units apart for normal vision and under simulated
 * protanopia, deuteranopia and tritanopia (Machado, Oliveira & Fernandes 2009, IEEE Trans Vis Comput
 * Graph 15:1291, severity 1). Some pairs share a lightness (BLUE/RED, ORANGE/GREEN): in greyscale,
 * tell series apart by dash and marker. SKY and YELLOW are light: meant for fills.
 * RAMP1..RAMP4 are the intensity-domain ramp (cpd_plot_domain_color picks them; nothing else should):
 * one hue (CIELAB h = 300 degrees, a heather violet) at L* 95, 84, 72, 60, lightest for the moderate
 * domain, so the order of the domains reads as lightness alone: in greyscale print and for every
 * colour-vision type, since a dichromat simulation keeps lightness steps (tests/ref/palette_cvd.py). */
enum {
    CPD_SVGPLOT_BLUE,   /* #1b5e9e */
    CPD_SVGPLOT_ORANGE, /* #cf6a0e */
    CPD_SVGPLOT_GREEN,  /* #1a9477, bluish green */
    CPD_SVGPLOT_RED,    /* #a8281c, brick red */
    CPD_SVGPLOT_PURPLE, /* #c76fb8, light reddish purple */
    CPD_SVGPLOT_GREY,   /* #3d3d3d, near black */
    CPD_SVGPLOT_SKY,    /* #5fb3e3, fills only */
    CPD_SVGPLOT_YELLOW, /* #e5c440, fills only */
    CPD_SVGPLOT_RAMP1,  /* #f2effe, domain ramp, lightest: fills only */
    CPD_SVGPLOT_RAMP2,  /* #d4ceec */
    CPD_SVGPLOT_RAMP3,  /* #b4abd6 */
    CPD_SVGPLOT_RAMP4,  /* #9489c1, domain ramp, darkest */
    CPD_SVGPLOT_NCOLORS
};

/* Dash patterns. */
enum { CPD_SVGPLOT_SOLID, CPD_SVGPLOT_DASHED, CPD_SVGPLOT_DOTTED, CPD_SVGPLOT_DASHDOT, CPD_SVGPLOT_NDASH };

/* Marker shapes of point series. */
enum {
    CPD_SVGPLOT_MARKER_NONE, /* error bars only */
    CPD_SVGPLOT_CIRCLE,
    CPD_SVGPLOT_SQUARE,
    CPD_SVGPLOT_TRIANGLE,
    CPD_SVGPLOT_DIAMOND,
    CPD_SVGPLOT_CROSS,
    CPD_SVGPLOT_NMARKER
};

/* Axes: the bottom x axis, the left y axis and an optional right y axis (drawn when a layer uses it). */
enum { CPD_SVGPLOT_X, CPD_SVGPLOT_Y, CPD_SVGPLOT_Y2, CPD_SVGPLOT_NAXES };

/* Tick label formats of an axis. */
enum {
    CPD_SVGPLOT_NUMBER, /* plain decimals with as many digits as the tick step needs */
    CPD_SVGPLOT_TIME_S, /* values in seconds, labelled m:ss (h:mm:ss from one hour); ticks at 1, 2, 5,
                           10, 15, 20, 30 s, 1, 2, 5, 10, 15, 20, 30 min, 1, 2, 3, 6, 12, 24 h */
    CPD_SVGPLOT_DATE,   /* values in days since 1970-01-01; ticks on days or Mondays labelled YYYY-MM-DD,
                           on month starts labelled "Mar" ("Mar 2024" first and in January), or on years */
    CPD_SVGPLOT_LOG_TIME_S, /* values in seconds (> 0) on a logarithmic axis, labelled as TIME_S at
                               1, 5, 15, 30 s, 1, 2, 5, 10, 20 min, 1, 2, 6 h ...; automatic ends pad
                               by a factor of 1.1; points at or below 0 fall off the axis */
    CPD_SVGPLOT_NFORMAT
};

/* How a layer is drawn. Fill it with cpd_svgplot_style_init, then change what you need (a zeroed
 * struct is rejected: y_axis 0 is the x axis). */
typedef struct {
    int color;           /* palette index, CPD_SVGPLOT_BLUE .. CPD_SVGPLOT_RAMP4 */
    double stroke_px;    /* line, marker outline and error-bar width, px, 0..20 */
    int dash;            /* CPD_SVGPLOT_SOLID .. CPD_SVGPLOT_DASHDOT (lines, steps, reference lines) */
    double fill_opacity; /* 0..1: bands, regions and marker interiors */
    int marker;          /* CPD_SVGPLOT_MARKER_NONE .. CPD_SVGPLOT_CROSS (point series only) */
    double marker_px;    /* marker radius, px, 0..30 */
    int y_axis;          /* CPD_SVGPLOT_Y (left) or CPD_SVGPLOT_Y2 (right) */
} cpd_svgplot_style;

/* Optional error bars of a point series, as non-negative offsets from the point in data units.
 * Any pointer may be NULL: no bar on that side; a NULL plus array mirrors its minus array. A
 * non-finite offset hides that one bar. */
typedef struct {
    const double *y_minus; /* downward lengths, y units, n values */
    const double *y_plus;  /* upward lengths, y units; NULL = y_minus (symmetric) */
    const double *x_minus; /* leftward lengths, x units */
    const double *x_plus;  /* rightward lengths, x units; NULL = x_minus */
} cpd_svgplot_errors;

/* Most tick values cpd_svgplot_ticks accepts to return. */
#define CPD_SVGPLOT_TICKS_MAX 50

/* A plot of width_px x height_px (each 160..8192) with no layers, automatic ranges, number axes.
 * Returns NULL when a size is out of range or memory runs out. The caller frees it with
 * cpd_svgplot_free, which accepts NULL. */
cpd_svgplot *cpd_svgplot_alloc(int width_px, int height_px);
void cpd_svgplot_free(cpd_svgplot *p);

/* Default style of colour `color`: 1.6 px solid line, fill opacity 0.25, circle marker of radius
 * 3.2 px, left y axis. A colour outside the palette gives CPD_SVGPLOT_BLUE. */
void cpd_svgplot_style_init(cpd_svgplot_style *st, int color);

/* "#rrggbb" of palette colour `color` (static string), or NULL outside the palette. */
const char *cpd_svgplot_color_hex(int color);

/* Sets (copies) the title, or clears it for NULL or "". The title also becomes the accessible
 * <title> of the SVG. Returns CPD_OK, CPD_EUSAGE for a NULL plot, CPD_ENOMEM. */
int cpd_svgplot_set_title(cpd_svgplot *p, const char *text);

/* Sets (copies) the label of axis CPD_SVGPLOT_X, _Y or _Y2, with its unit, e.g. "Duration (min)";
 * NULL or "" clears it. Returns CPD_OK, CPD_EUSAGE for a NULL plot or a bad axis, CPD_ENOMEM. */
int cpd_svgplot_set_label(cpd_svgplot *p, int axis, const char *text);

/* Fixes the range of an axis in data units. NAN for lo or hi leaves that end automatic (the data
 * extent plus 4 % padding); NAN for both restores the fully automatic range. Returns CPD_OK, or
 * CPD_EUSAGE for a NULL plot, a bad axis, an infinite end, |end| > 1e300, or lo >= hi. */
int cpd_svgplot_set_range(cpd_svgplot *p, int axis, double lo, double hi);

/* Sets the tick label format of an axis (CPD_SVGPLOT_NUMBER, _TIME_S, _DATE). Returns CPD_OK, or
 * CPD_EUSAGE for a NULL plot, a bad axis or a bad format. */
int cpd_svgplot_set_format(cpd_svgplot *p, int axis, int format);

/* Series layers. Each copies its n values (x, y in data units), so the caller may free them at once.
 * st NULL takes the default style of the next line colour. label (copied; NULL or "" for none)
 * makes a legend entry. Points with a non-finite or |value| > 1e300 coordinate are skipped; lines,
 * steps and bands break there. n may be 0 (arrays then may be NULL). Return CPD_OK, CPD_EUSAGE for
 * a NULL plot, NULL arrays with n > 0, n > 1e8 or a style field out of its range, CPD_ENOMEM. */

/* A polyline through (x[i], y[i]). A run longer than four points per pixel column whose x never
 * decreases is reduced to the first, lowest, highest and last point of each column (the M4
 * aggregation of Jugel et al. 2014, Proc VLDB Endow 7:797), which draws the same pixels. */
int cpd_svgplot_line(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_style *st,
                     const char *label);

/* Markers at (x[i], y[i]) with optional error bars (err may be NULL); every finite point is drawn,
 * none decimated. Also CPD_EDATA for a negative error offset. */
int cpd_svgplot_points(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_errors *err,
                       const cpd_svgplot_style *st, const char *label);

/* A filled band between lo[i] and hi[i] over x[i] (e.g. a 95 % confidence band), no outline.
 * Decimated like a line when long. */
int cpd_svgplot_band(cpd_svgplot *p, const double *x, const double *lo, const double *hi, size_t n,
                     const cpd_svgplot_style *st, const char *label);

/* A step line: y[i] holds from x[i] to x[i+1] and the last value ends at x[n-1] (e.g. work rate
 * of an interval session). Decimated like a line when long. */
int cpd_svgplot_step(cpd_svgplot *p, const double *x, const double *y, size_t n, const cpd_svgplot_style *st,
                     const char *label);

/* Annotation layers: drawn in their style, not in the legend; label (copied, may be NULL) is written
 * in the plot. Their finite positions count towards automatic ranges. */

/* A full-width shaded region y0..y1 (either order) on the style's y axis, label inside at the left,
 * e.g. an intensity domain. -INFINITY/INFINITY reach the edge of the plot. Returns CPD_OK,
 * CPD_EUSAGE for a NULL plot, a bad style, a NAN bound, y0 == y1 or |bound| > 1e300, CPD_ENOMEM. */
int cpd_svgplot_hregion(cpd_svgplot *p, double y0, double y1, const cpd_svgplot_style *st, const char *label);

/* A vertical line at x (label at its top), or a horizontal line at y on the style's y axis (label
 * below its right end). Returns CPD_OK, CPD_EUSAGE for a NULL plot, a bad style, a non-finite or
 * |position| > 1e300, CPD_ENOMEM. */
int cpd_svgplot_vline(cpd_svgplot *p, double x, const cpd_svgplot_style *st, const char *label);
int cpd_svgplot_hline(cpd_svgplot *p, double y, const cpd_svgplot_style *st, const char *label);

/* Renders the plot as one standalone <svg> (xmlns, width, height, viewBox, role="img", <title> first;
 * no ids or CSS, so many fit in one HTML page) into a new string *out of *len bytes (len may be NULL).
 * Nice ticks thinned until labels do not touch; two decimals at most; data clipped to the plot area;
 * legend rows above it (dropped below a 60 px area); "no data" without any finite series point.
 * Returns CPD_OK, CPD_EUSAGE for NULL arguments, CPD_ENOMEM (*out NULL). The caller frees *out. */
int cpd_svgplot_render(const cpd_svgplot *p, char **out, size_t *len);

/* Renders n plots (1..16) stacked top to bottom as ONE <svg> (no nested <svg>: each plot becomes a
 * <g> moved down by the heights above it), as wide as the widest, with title (NULL: the first
 * plot's) as its <title>. Same output rules and ownership as cpd_svgplot_render; CPD_EUSAGE for NULL
 * arguments or a bad n. */
int cpd_svgplot_render_stack(cpd_svgplot *const *plots, size_t n, const char *title, char **out, size_t *len);

/* Nice tick values covering [lo, hi]: a step of 1, 2 or 5 x 10^k chosen as in Heckbert 1990
 * ("Nice numbers for graph labels", Graphics Gems, Academic Press, p 61-63), raised along 1-2-5
 * until the ticks from floor(lo/step) to ceil(hi/step) steps number at most max_ticks (3 to
 * CPD_SVGPLOT_TICKS_MAX; a range across zero always needs three). out (max_ticks values) receives
 * *n ticks, *step the step. Returns CPD_OK, or CPD_EUSAGE for NULL pointers, non-finite bounds,
 * lo >= hi, a span below 1e-12 of the magnitude or 1e-280, or a bad max_ticks. */
int cpd_svgplot_ticks(double lo, double hi, size_t max_ticks, double *out, size_t *n, double *step);

/* Writes the tick label of value v on an axis of format `format` whose ticks are `step` apart into
 * buf of size n: NUMBER gives the decimals step needs ("0.3", never "-0" or "2.0000001"), and
 * "2.5e7"-style labels for steps from 1e6 or below 1e-4; TIME_S gives "6:30", "-0:30", "1:02:00";
 * DATE gives "2024-03-15" for steps under 28 days, "Mar 2024" under 365 days, else "2024" (and a
 * number outside the years 1900-2999). An unknown format or non-finite v gives "-". */
void cpd_svgplot_tick_label(int format, double v, double step, char *buf, size_t n);

#endif
