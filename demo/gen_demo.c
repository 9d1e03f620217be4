/* gen_demo.c: writes the cpdomain demo data set, the invented Tarnbridge Endurance Centre, from stated
 * "true" parameters plus realistic noise. Standalone C17 + libm, own RNG, fixed seed: the output is
 * byte-identical from run to run. Every person, place and number here is invented.
 *
 * Build and run (from the repository root):
 *   cc -std=c17 -O2 -Wall -Wextra -Wpedantic -Werror demo/gen_demo.c -lm -o build/gen_demo
 *   build/gen_demo demo/data
 *
 * Output (in the directory given, created if missing): athletes.csv, trials.csv, ramp_<CODE>.csv,
 * bout_<CODE>_<n>.csv, lactate_<CODE>.csv, session_<CODE>_<date>.csv, allout_<CODE>.csv, plus
 * manifest.csv (one row per file with the arguments the CLI needs: date, ramp rate, start, onset, bout
 * power ...) and truth.csv (file,key,value,unit: every generating parameter and the noise-free derived
 * values, for tests). demo/TRUTH.md explains the scenario.
 *
 * True parameters (intensity: W, or m/s for R01/R02/S01; VO2 in mL/min):
 *
 *  code  CP/CS   W'/D'   VO2max  GET    RCP*   MRT  gain  gain>GET  GET power**  ramp
 *  C01   232 W   16500 J  3300   2250   2934   38   10.0  11.5      172.6 W      30 W + 25 W/min
 *  C02a  268 W   19500 J  4250   2650   3357   35   10.0  11.5      206.5 W      50 W + 30 W/min (Sep)
 *  C02b  288 W   18800 J  4400   2850   3557   33   10.0  11.5      226.5 W      50 W + 30 W/min (Nov)
 *  C03   245 W   21000 J  3600   2300   3176   45   10.0  11.6      169.5 W      50 W + 25 W/min
 *  C04   205 W   14000 J  3050   2050   2640   32   10.0  11.5      153.7 W      30 W + 25 W/min
 *  C05   310 W   24000 J  4900   3100   3812   30   10.0  11.5      248.1 W      50 W + 35 W/min
 *  W01   228 W   17000 J  3900   2600   3417   40   12.0  13.8      168.8 W      50 W + 25 W/min
 *  R01   4.55    210 m    3380   2380   2954   30   592.8 681.8     3.708 m/s    2.2 m/s + 0.3 m/s/min
 *  R02   4.75    150 m    4760   3300   4125   28   795.6 914.9     3.849 m/s    2.5 m/s + 0.3 m/s/min
 *  S01   1.32    16 m     (no gas exchange)
 *  * RCP is placed at the steady-state VO2 at CP (Keir et al. 2015 MSSE: VO2 at CP not different from VO2 at RCP).
 *  ** constant-power equivalent; the GET appears on the ramp at GET power + rate x MRT.
 *  C02's CP rises from 268 W (to 2026-09-27) linearly to 288 W (from 2026-11-08); W' 19.5 -> 18.8 kJ.
 *
 * Models (all "truth" is what these formulas produce before noise):
 *  - trials: time to exhaustion (tlim) t = W'/(P - CP) times a log-normal day-to-day factor (CV 7 % cycling/rowing, 8 % running
 *    tlim, common practice); track/pool time trials t = (D - D')/CS with CV 1.5 % / 1 %.
 *  - ramp: steady-state VO2 u(P) = a0 + gain P + gain_x max(0, P - P_GET); VO2 = u(P(t - 8 s)) through a
 *    first-order lag (tau = MRT - 8 s), softly capped at VO2max (plateau); VCO2 = piecewise linear in VO2
 *    (slope S1 below GET, S2 above: Beaver, Wasserman & Whipp 1986 JAP 60:2020); PETCO2 rises to GET,
 *    is flat (isocapnic buffering) to RCP, then falls; VE from alveolar ventilation 863 VCO2/PaCO2 plus
 *    dead space; PETO2 from the alveolar gas equation. Breath intervals 1.5-3 s, breath noise 55-85 mL/min
 *    (VCO2 and VE correlated), a few cough/swallow outlier breaths (times listed in truth.csv).
 *  - bouts: phase I (cardiodynamic, 15 % of A1, tau 4 s) then VO2 = base + A1 (1 - e^-(t-TD)/tau) [+ slow
 *    component A2 (1 - e^-(t-TD2)/tau2)] (Barstow & Mole 1991 JAP 71:2099); from 20 s on the signal is
 *    exactly the phase II model. VCO2 lags VO2 by a further 12-s first-order lag.
 *  - lactate: La = L0 below LT1 (= the GET intensity), L0 + c (e^((x - LT1)/s) - 1) above.
 *  - sessions: 1-Hz intensity built from blocks (warm-up, steady riding with terrain and coasting zeros,
 *    intervals, near-maximal efforts of 3, 5, 12 and 20 min at 98.5 % (cycling) or 99.5 % (running) of the
 *    hyperbola, race); the race is scaled so that the W'-balance minimum (differential form, Skiba et al.
 *    2015 EJAP 115:703) is 6 % (cycling) / 8 % (running) of W' (D').
 *  - 3-min all-out: peak at 4 s, exponential decay to an end power near CP, decay constant chosen so the
 *    noise-free work above end power is the stated fraction of W' (Vanhatalo, Doust & Burnley 2007 MSSE
 *    39:548; Burnley, Doust & Vanhatalo 2006 MSSE 38:1995).
 */
#define _POSIX_C_SOURCE 200809L
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/types.h>

#define SEED 0x7A9B1D2026113Full
#define PI 3.14159265358979323846
#define PIO2_MMHG 149.2 /* inspired PO2, (760 - 47) x 0.2093 */
#define FIO2 0.2093

/* ------------------------------------------------------------------ RNG: xoshiro256** seeded by splitmix64 */

typedef struct {
    uint64_t s[4];
} rng;

static uint64_t splitmix(uint64_t *x)
{
    uint64_t z = (*x += 0x9E3779B97F4A7C15ull);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

/* Each file has its own stream, keyed by its name, so changing one file leaves the others unchanged. */
static void rng_seed(rng *r, const char *name)
{
    uint64_t h = 1469598103934665603ull ^ SEED;
    for (const unsigned char *p = (const unsigned char *)name; *p; p++) {
        h ^= *p;
        h *= 1099511628211ull;
    }
    for (int i = 0; i < 4; i++)
        r->s[i] = splitmix(&h);
}

static uint64_t rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

static uint64_t rng_next(rng *r)
{
    uint64_t *s = r->s;
    uint64_t out = rotl(s[1] * 5, 7) * 9, t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rotl(s[3], 45);
    return out;
}

static double u01(rng *r) { return ((double)(rng_next(r) >> 11) + 0.5) * 0x1.0p-53; }

static double gauss(rng *r)
{
    double a = u01(r), b = u01(r);
    return sqrt(-2.0 * log(a)) * cos(2.0 * PI * b);
}

static double unif(rng *r, double lo, double hi) { return lo + (hi - lo) * u01(r); }

/* ------------------------------------------------------------------ small helpers */

static double clamp(double x, double lo, double hi) { return x < lo ? lo : x > hi ? hi : x; }

static double softplus(double z) { return z > 30.0 ? z : log1p(exp(z)); }

/* Smooth minimum of x and the ceiling m, width s: the VO2 plateau. */
static double smin(double x, double m, double s) { return m - s * softplus((m - x) / s); }

static void die(const char *what, const char *name)
{
    fprintf(stderr, "gen_demo: %s %s: %s\n", what, name, strerror(errno));
    exit(1);
}

/* Days since 1970-01-01 of a civil date, and back (proleptic Gregorian). */
static long days_from_civil(int y, int m, int d)
{
    y -= m <= 2;
    long era = (y >= 0 ? y : y - 399) / 400;
    long yoe = y - era * 400;
    long doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
    long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + doe - 719468;
}

static long day_of(const char *iso)
{
    int y = 0, m = 0, d = 0;
    if (sscanf(iso, "%4d-%2d-%2d", &y, &m, &d) != 3) {
        fprintf(stderr, "gen_demo: bad date %s\n", iso);
        exit(1);
    }
    return days_from_civil(y, m, d);
}

/* ------------------------------------------------------------------ output context */

typedef struct {
    const char *dir;
    FILE *manifest; /* kind,athlete,file,date,unit,rate_per_min,start,onset_s,power,baseline,note */
    FILE *truth;    /* file,key,value,unit */
    int nfiles;
    double t_shift; /* written times are trace time minus this (a baseline at negative times) */
    int vo2_only;   /* 1: breaths without VCO2, VE and end-tidal pressures (an older cart's export) */
} gen;

static FILE *xopen(gen *g, const char *name)
{
    char path[1024];
    snprintf(path, sizeof path, "%s/%s", g->dir, name);
    FILE *f = fopen(path, "w");
    if (!f)
        die("cannot create", path);
    g->nfiles++;
    return f;
}

static void xclose(FILE *f, const char *name)
{
    int bad = ferror(f);
    if (fclose(f) != 0)
        bad = 1;
    if (bad)
        die("cannot write", name);
}

static void truth(gen *g, const char *file, const char *key, double v, const char *unit)
{
    fprintf(g->truth, "%s,%s,%.6g,%s\n", file, key, v, unit);
}

static void truth_s(gen *g, const char *file, const char *key, const char *v)
{
    fprintf(g->truth, "%s,%s,%s,\n", file, key, v);
}

/* A CSV field: quoted when it holds a comma, quote or line end (RFC 4180). */
static void csv_field(FILE *f, const char *s)
{
    if (!strpbrk(s, ",\"\r\n")) {
        fputs(s, f);
        return;
    }
    fputc('"', f);
    for (; *s; s++) {
        if (*s == '"')
            fputc('"', f);
        fputc(*s, f);
    }
    fputc('"', f);
}

static void manifest(gen *g, const char *kind, const char *code, const char *file, const char *date,
                     const char *unit, const char *rate, const char *start, const char *onset,
                     const char *power, const char *baseline, const char *note)
{
    FILE *f = g->manifest;
    fprintf(f, "%s,%s,%s,%s,%s,%s,%s,%s,%s,%s,", kind, code, file, date, unit, rate, start, onset, power,
            baseline);
    csv_field(f, note);
    fputc('\n', f);
}

/* ------------------------------------------------------------------ physiology */

typedef struct {
    double cp, wp;                 /* CP W (CS m/s); W' J (D' m) */
    double vo2max, get;            /* mL/min */
    double a0, gain, gain_x;       /* u(x) = a0 + gain x + gain_x max(0, x - x_GET), mL/min per W (m/s) */
    double mrt_s;                  /* ramp mean response time, s */
    double ref;                    /* intensity anchoring the VCO2 line (20 W, 50 W rowing, 2 m/s) */
    double rer0, s1, s2;           /* RER at ref; VCO2-VO2 slopes below and above GET */
    double pco2_lo, pco2_hi, pco2_drop; /* PETCO2 at ref, at GET..RCP, fall from RCP to VO2max, mmHg */
    double hr_base, hr_max;        /* HR at ref and at VO2max, beats/min */
} phys;

static double x_get(const phys *p) { return (p->get - p->a0) / p->gain; }

static double u_ss(const phys *p, double x)
{
    double xg = x_get(p);
    return p->a0 + p->gain * x + (x > xg ? p->gain_x * (x - xg) : 0.0);
}

static double rcp_of(const phys *p) { return u_ss(p, p->cp); }

static double x_vo2max(const phys *p) { return x_get(p) + (p->vo2max - p->get) / (p->gain + p->gain_x); }

static double vref(const phys *p) { return u_ss(p, p->ref); }

static double vco2_of(const phys *p, double v)
{
    double r = vref(p);
    return p->rer0 * r + p->s1 * (v - r) + (v > p->get ? (p->s2 - p->s1) * (v - p->get) : 0.0);
}

static double pco2_of(const phys *p, double v)
{
    double r = vref(p), rcp = rcp_of(p);
    if (v < p->get)
        return p->pco2_lo + (p->pco2_hi - p->pco2_lo) * clamp((v - r) / (p->get - r), 0.0, 1.0);
    if (v <= rcp)
        return p->pco2_hi;
    return p->pco2_hi - p->pco2_drop * (v - rcp) / (p->vo2max - rcp);
}

static double frac_of(const phys *p, double v) { return clamp((v - vref(p)) / (p->vo2max - vref(p)), 0.0, 1.0); }

static double hr_of(const phys *p, double v) { return p->hr_base + (p->hr_max - p->hr_base) * frac_of(p, v); }

/* The athletes' physiology (see the table at the top). a0 = 4.5 x mass + 250 for cycling and rowing;
 * running: a0 = 3.5 mL/kg/min x mass, gain = cost 0.19-0.195 mL/kg/m x 60 x mass (ACSM-like, from memory). */
static const phys PH_C01 = {232, 16500, 3300, 2250, 524.5, 10.0, 1.5, 38, 20, 0.84, 0.97, 1.35, 37, 41, 8, 92, 188};
static const phys PH_C02A = {268, 19500, 4250, 2650, 585.0, 10.0, 1.5, 35, 20, 0.85, 0.96, 1.32, 38, 42, 9, 90, 192};
static const phys PH_C02B = {288, 18800, 4400, 2850, 585.0, 10.0, 1.5, 33, 20, 0.85, 0.96, 1.32, 38, 42, 9, 90, 192};
static const phys PH_C03 = {245, 21000, 3600, 2300, 605.0, 10.0, 1.6, 45, 20, 0.86, 0.98, 1.30, 37, 40, 7, 88, 168};
static const phys PH_C04 = {205, 14000, 3050, 2050, 513.0, 10.0, 1.5, 32, 20, 0.84, 0.95, 1.38, 36, 40, 8, 95, 185};
static const phys PH_C05 = {310, 24000, 4900, 3100, 619.0, 10.0, 1.5, 30, 20, 0.85, 0.97, 1.33, 38, 42, 9, 86, 194};
static const phys PH_W01 = {228, 17000, 3900, 2600, 574.0, 12.0, 1.8, 40, 50, 0.85, 0.97, 1.34, 37, 41, 8, 92, 190};
static const phys PH_R01 = {4.55, 210, 3380, 2380, 182.0, 592.8, 89.0, 30, 2.0, 0.86, 0.96, 1.36, 37, 41, 8, 118, 198};
static const phys PH_R02 = {4.75, 150, 4760, 3300, 238.0, 795.6, 119.3, 28, 2.0, 0.86, 0.97, 1.33, 38, 41, 8, 112, 189};
static const phys PH_S01 = {1.32, 16, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0};

/* C02's CP and W' on a given day: flat, a 6-week linear rise, flat. */
static void c02_state(long day, double *cp, double *wp)
{
    long d0 = day_of("2026-09-27"), d1 = day_of("2026-11-08");
    double f = clamp((double)(day - d0) / (double)(d1 - d0), 0.0, 1.0);
    *cp = PH_C02A.cp + f * (PH_C02B.cp - PH_C02A.cp);
    *wp = PH_C02A.wp + f * (PH_C02B.wp - PH_C02A.wp);
}

/* ------------------------------------------------------------------ gas exchange: noise-free trace, then breaths */

typedef struct {
    double dt;      /* s */
    size_t n;
    double *vo2;    /* VO2 with the plateau, mL/min */
    double *co2drv; /* uncapped (and for bouts further lagged) VO2 that drives VCO2, PETCO2, VE */
    double *inten;  /* ergometer power W or treadmill speed m/s */
    double *hr;     /* beats/min */
} trace;

static trace trace_alloc(double duration_s, double dt)
{
    trace t = {dt, (size_t)(duration_s / dt) + 1, NULL, NULL, NULL, NULL};
    t.vo2 = calloc(t.n, sizeof(double));
    t.co2drv = calloc(t.n, sizeof(double));
    t.inten = calloc(t.n, sizeof(double));
    t.hr = calloc(t.n, sizeof(double));
    if (!t.vo2 || !t.co2drv || !t.inten || !t.hr) {
        fprintf(stderr, "gen_demo: out of memory\n");
        exit(1);
    }
    return t;
}

static void trace_free(trace *t)
{
    free(t->vo2);
    free(t->co2drv);
    free(t->inten);
    free(t->hr);
}

static double tr_at(const trace *t, const double *a, double time)
{
    double k = time / t->dt;
    if (k <= 0)
        return a[0];
    size_t i = (size_t)k;
    if (i + 1 >= t->n)
        return a[t->n - 1];
    double f = k - (double)i;
    return a[i] * (1.0 - f) + a[i + 1] * f;
}

/* Mean of a trace array over [t0, t1] (noise-free reference values for truth.csv). */
static double tr_mean(const trace *t, const double *a, double t0, double t1)
{
    double s = 0;
    int n = 0;
    for (size_t i = 0; i < t->n; i++) {
        double ti = (double)i * t->dt;
        if (ti >= t0 && ti <= t1) {
            s += a[i];
            n++;
        }
    }
    return n ? s / n : 0.0;
}

/* Breath-by-breath file from a noise-free trace: irregular breath intervals that shorten with intensity,
 * correlated VO2/VCO2/VE noise (tidal-volume fluctuation is the common factor) and n_out outlier breaths. */
static void write_breaths(gen *g, const char *fname, const phys *p, const trace *tr, int speed, int n_out,
                          double out_from_s)
{
    rng r;
    rng_seed(&r, fname);
    FILE *f = xopen(g, fname);
    if (g->vo2_only)
        fprintf(f, "time_s,vo2_ml_min,hr_bpm,%s\n", speed ? "speed_m_s" : "power_w");
    else
        fprintf(f, "time_s,vo2_ml_min,vco2_ml_min,ve_l_min,hr_bpm,%s,peto2_mmhg,petco2_mmhg\n",
                speed ? "speed_m_s" : "power_w");
    double T = (double)(tr->n - 1) * tr->dt;
    double out_t[8];
    if (n_out > 8)
        n_out = 8;
    for (int k = 0; k < n_out; k++) /* spread over the test, none in the last 40 s (the VO2peak window) */
        out_t[k] = out_from_s + (T - 40.0 - out_from_s) * ((double)k + unif(&r, 0.15, 0.85)) / n_out;
    int k_out = 0;
    double t = unif(&r, 0.8, 2.2), hr_e = 0;
    while (t <= T) {
        double vo2 = tr_at(tr, tr->vo2, t), drv = tr_at(tr, tr->co2drv, t), x = frac_of(p, vo2);
        double vco2 = vco2_of(p, drv), pco2 = pco2_of(p, drv);
        double bi = 3.0 - 1.5 * x;
        double va = 0.863 * vco2 / (pco2 - 3.0); /* 863 VCO2/PaCO2, PaCO2 ~ PETCO2 - 3 mmHg in exercise */
        double ve = va + (60.0 / bi) * (0.15 + 0.10 * x);
        double po2 = PIO2_MMHG - pco2 * (FIO2 + (1.0 - FIO2) * vo2 / vco2);
        double sd = 55.0 + 30.0 * x;
        double zc = gauss(&r), z1 = gauss(&r), z2 = gauss(&r), z3 = gauss(&r);
        double o_vo2 = vo2 + sd * (0.9 * zc + 0.436 * z1);
        double o_vco2 = vco2 + sd * (vco2 / vo2) * (0.9 * zc + 0.436 * z2);
        double o_ve = ve * (1.0 + (sd / vo2) * 0.9 * zc + 0.015 * z3);
        double o_pco2 = pco2 + 0.8 * gauss(&r);
        double o_po2 = po2 + 1.2 * gauss(&r);
        hr_e = 0.7 * hr_e + 0.7 * gauss(&r);
        double o_hr = tr_at(tr, tr->hr, t) + hr_e;
        if (k_out < n_out && t >= out_t[k_out]) {
            double m;
            const char *kind;
            if (k_out % 2 == 0) { /* cough or sigh: one big breath */
                m = unif(&r, 1.6, 1.9);
                o_vo2 *= m;
                o_vco2 *= m * 1.05;
                o_ve *= m * 1.05;
                o_pco2 -= 4.0;
                o_po2 += 5.0;
                kind = "outlier_breath_high_time_s";
            } else { /* swallow or interrupted breath */
                m = unif(&r, 0.30, 0.45);
                o_vo2 *= m;
                o_vco2 *= m;
                o_ve *= m;
                o_pco2 -= 6.0;
                o_po2 += 8.0;
                kind = "outlier_breath_low_time_s";
            }
            char ts[32];
            snprintf(ts, sizeof ts, "%.2f", t - g->t_shift);
            truth(g, fname, kind, atof(ts), "s");
            k_out++;
        }
        if (g->vo2_only) {
            fprintf(f, "%.2f,%.0f,%.0f,", t - g->t_shift, o_vo2, o_hr);
            fprintf(f, speed ? "%.3f\n" : "%.1f\n", tr_at(tr, tr->inten, t));
        } else {
            fprintf(f, "%.2f,%.0f,%.0f,%.1f,%.0f,", t - g->t_shift, o_vo2, o_vco2, o_ve, o_hr);
            fprintf(f, speed ? "%.3f," : "%.1f,", tr_at(tr, tr->inten, t));
            fprintf(f, "%.1f,%.1f\n", o_po2, o_pco2);
        }
        t += clamp(bi * exp(0.18 * gauss(&r) - 0.0162), 1.0, 5.0);
    }
    xclose(f, fname);
}

typedef struct {
    double base;       /* baseline intensity, W or m/s */
    double rate;       /* per minute */
    double baseline_s; /* ramp onset in the file */
    double plateau_s;  /* time spent at the VO2 plateau before exhaustion */
} ramp_proto;

static void gen_ramp(gen *g, const char *code, const char *fname, const char *date, const phys *p,
                     const ramp_proto *rp, int speed)
{
    const double delay = 8.0, dt = 0.1;
    double peak = x_vo2max(p) + rp->rate * (p->mrt_s + rp->plateau_s) / 60.0;
    double T = rp->baseline_s + 60.0 * (peak - rp->base) / rp->rate;
    trace tr = trace_alloc(T, dt);
    double tau = p->mrt_s - delay, a = 1.0 - exp(-dt / tau), y = u_ss(p, rp->base);
    for (size_t i = 0; i < tr.n; i++) {
        double t = (double)i * dt, td = t - delay;
        double x = t < rp->baseline_s ? rp->base : rp->base + rp->rate * (t - rp->baseline_s) / 60.0;
        double xd = td < rp->baseline_s ? rp->base : rp->base + rp->rate * (td - rp->baseline_s) / 60.0;
        y += (u_ss(p, xd) - y) * a;
        tr.co2drv[i] = y;
        tr.vo2[i] = smin(y, p->vo2max, 90.0);
        tr.inten[i] = x;
        tr.hr[i] = hr_of(p, tr.vo2[i]);
    }
    const char *u = speed ? "m/s" : "W";
    const char *ur = speed ? "m/s/min" : "W/min";
    truth_s(g, fname, "athlete", code);
    truth(g, fname, "onset_s", rp->baseline_s, "s");
    truth(g, fname, "baseline_intensity", rp->base, u);
    truth(g, fname, "ramp_rate_per_min", rp->rate, ur);
    truth(g, fname, "vo2max_ml_min", p->vo2max, "mL/min");
    truth(g, fname, "vo2peak_final15s_noise_free_ml_min", tr_mean(&tr, tr.vo2, T - 15.0, T), "mL/min");
    truth(g, fname, "get_vo2_ml_min", p->get, "mL/min");
    truth(g, fname, "get_pct_vo2max", 100.0 * p->get / p->vo2max, "%");
    truth(g, fname, "get_intensity_constant", x_get(p), u);
    truth(g, fname, "get_intensity_on_ramp", x_get(p) + rp->rate * p->mrt_s / 60.0, u);
    truth(g, fname, "get_time_from_onset_s", 60.0 * (x_get(p) - rp->base) / rp->rate + p->mrt_s, "s");
    truth(g, fname, "rcp_vo2_ml_min", rcp_of(p), "mL/min");
    truth(g, fname, "rcp_pct_vo2max", 100.0 * rcp_of(p) / p->vo2max, "%");
    truth(g, fname, "rcp_intensity_constant", p->cp, u);
    truth(g, fname, "rcp_intensity_on_ramp", p->cp + rp->rate * p->mrt_s / 60.0, u);
    truth(g, fname, "mrt_s", p->mrt_s, "s");
    truth(g, fname, "delay_s", delay, "s");
    truth(g, fname, "gain_below_get", p->gain, speed ? "mL/min per m/s" : "mL/min/W");
    truth(g, fname, "gain_above_get", p->gain + p->gain_x, speed ? "mL/min per m/s" : "mL/min/W");
    truth(g, fname, "vslope_s1", p->s1, "");
    truth(g, fname, "vslope_s2", p->s2, "");
    truth(g, fname, "peak_intensity", peak, u);
    truth(g, fname, "ramp_duration_s", T - rp->baseline_s, "s");
    write_breaths(g, fname, p, &tr, speed, 5, rp->baseline_s - 60.0);
    char rate[32], start[32], onset[32];
    snprintf(rate, sizeof rate, "%g", rp->rate);
    snprintf(start, sizeof start, "%g", rp->base);
    snprintf(onset, sizeof onset, "%g", rp->baseline_s);
    manifest(g, "ramp", code, fname, date, u, rate, start, onset, "", "",
             speed ? "treadmill ramp; rate in m/s per min" : "ramp starts at the baseline power");
    trace_free(&tr);
}

/* A step test (power held for step_s, then raised by inc) exported with its baseline at negative times
 * (exercise starts at t = 0) and the recovery after exhaustion, half-way into the first stage above
 * the power at VO2max. */
typedef struct {
    double base;      /* W before the onset */
    double first;     /* W of the first stage */
    double inc;       /* W added each stage */
    double step_s;    /* s per stage */
    double pre_s;     /* s of baseline before the onset */
    double rec_w;     /* W during the recovery */
    double rec_s;     /* s of recovery recorded */
} steps_proto;

static void gen_steps(gen *g, const char *code, const char *fname, const char *date, const phys *p,
                      const steps_proto *sp)
{
    const double delay = 8.0, dt = 0.1;
    int n_full = 0;
    while (sp->first + sp->inc * n_full < x_vo2max(p))
        n_full++;
    double ex = sp->step_s * (n_full + 0.5); /* exhaustion half-way into stage n_full + 1 */
    double T = sp->pre_s + ex + sp->rec_s;
    trace tr = trace_alloc(T, dt);
    double tau = p->mrt_s - delay, a = 1.0 - exp(-dt / tau), y = u_ss(p, sp->base);
    for (size_t i = 0; i < tr.n; i++) {
        double t = (double)i * dt;
        double x = t < sp->pre_s ? sp->base : t > sp->pre_s + ex ? sp->rec_w
                   : sp->first + sp->inc * floor((t - sp->pre_s) / sp->step_s);
        double td = t - delay;
        double xd = td < sp->pre_s ? sp->base : td > sp->pre_s + ex ? sp->rec_w
                    : sp->first + sp->inc * floor((td - sp->pre_s) / sp->step_s);
        y += (u_ss(p, xd) - y) * a;
        tr.co2drv[i] = y;
        tr.vo2[i] = smin(y, p->vo2max, 90.0);
        tr.inten[i] = x;
        tr.hr[i] = hr_of(p, tr.vo2[i]);
    }
    truth_s(g, fname, "athlete", code);
    truth(g, fname, "onset_s", 0.0, "s");
    truth(g, fname, "baseline_from_s", -sp->pre_s, "s");
    truth(g, fname, "first_stage_w", sp->first, "W");
    truth(g, fname, "increment_w", sp->inc, "W");
    truth(g, fname, "step_s", sp->step_s, "s");
    truth(g, fname, "end_of_exercise_s", ex, "s");
    truth(g, fname, "peak_power_w", sp->first + sp->inc * n_full, "W");
    truth(g, fname, "recovery_w", sp->rec_w, "W");
    truth(g, fname, "vo2max_ml_min", p->vo2max, "mL/min");
    truth(g, fname, "get_vo2_ml_min", p->get, "mL/min");
    truth(g, fname, "get_intensity_constant", x_get(p), "W");
    truth(g, fname, "gain_below_get", p->gain, "mL/min/W");
    truth(g, fname, "rer_at_ref", p->rer0, "");
    truth(g, fname, "vco2_vo2_slope_below_get", p->s1, "");
    truth(g, fname, "vco2_vo2_slope_above_get", p->s2, "");
    g->t_shift = sp->pre_s;
    write_breaths(g, fname, p, &tr, 0, 3, sp->pre_s);
    g->t_shift = 0;
    manifest(g, "steps", code, fname, date, "W", "", "", "", "", "",
             "step test; baseline at negative times and a recovery after the end");
    trace_free(&tr);
}

typedef struct {
    const char *domain;   /* moderate, heavy, severe */
    double power_w, baseline_w, baseline_s;
    double tau1_s, td1_s, gain1; /* primary: time constant, delay, gain mL/min/W */
    double a2, td2_s, tau2_s;    /* slow component mL/min, s, s (a2 = 0: none) */
    double sc_to_max;            /* > 0: a2 = sc_to_max x (VO2max - baseline - A1) (severe) */
    int to_exhaustion;           /* 1: ends at the time to exhaustion from CP and W' (CV 5 %) */
} bout_def;

static void gen_bout(gen *g, const char *code, const char *fname, const char *date, const phys *p,
                     const bout_def *b)
{
    const double dt = 0.1;
    rng r;
    char key[64];
    snprintf(key, sizeof key, "%s:tlim", fname);
    rng_seed(&r, key);
    double vb = u_ss(p, b->baseline_w), a1 = b->gain1 * (b->power_w - b->baseline_w);
    double a2 = b->sc_to_max > 0 ? b->sc_to_max * (p->vo2max - vb - a1) : b->a2;
    double tlim = 360.0;
    if (b->to_exhaustion)
        tlim = floor(p->wp / (b->power_w - p->cp) * exp(0.05 * gauss(&r)));
    double T = b->baseline_s + tlim;
    trace tr = trace_alloc(T, dt);
    double c = 0, h = vb, ac = 1.0 - exp(-dt / 12.0), ah = 1.0 - exp(-dt / 15.0);
    for (size_t i = 0; i < tr.n; i++) {
        double t = (double)i * dt, s = t - b->baseline_s, v = vb;
        if (s >= 0) {
            double ph1 = 0.15 * a1 * (1.0 - exp(-s / 4.0));
            double ph2 = s >= b->td1_s ? a1 * (1.0 - exp(-(s - b->td1_s) / b->tau1_s)) : 0.0;
            double sc = a2 > 0 && s >= b->td2_s ? a2 * (1.0 - exp(-(s - b->td2_s) / b->tau2_s)) : 0.0;
            v = vb + (ph1 > ph2 ? ph1 : ph2) + sc;
        }
        if (i == 0)
            c = v;
        c += (v - c) * ac;
        tr.vo2[i] = smin(v, p->vo2max, 60.0);
        tr.co2drv[i] = c;
        h += (tr.vo2[i] - h) * ah;
        tr.hr[i] = hr_of(p, h);
        tr.inten[i] = s < 0 ? b->baseline_w : b->power_w;
    }
    double on = b->baseline_s;
    truth_s(g, fname, "athlete", code);
    truth_s(g, fname, "domain", b->domain);
    truth(g, fname, "power_w", b->power_w, "W");
    truth(g, fname, "baseline_w", b->baseline_w, "W");
    truth(g, fname, "onset_s", on, "s");
    truth(g, fname, "baseline_vo2_ml_min", vb, "mL/min");
    truth(g, fname, "primary_amplitude_ml_min", a1, "mL/min");
    truth(g, fname, "primary_tau_s", b->tau1_s, "s");
    truth(g, fname, "primary_delay_s", b->td1_s, "s");
    truth(g, fname, "primary_gain_ml_min_w", b->gain1, "mL/min/W");
    truth(g, fname, "phase1_amplitude_ml_min", 0.15 * a1, "mL/min");
    if (a2 > 0) {
        truth(g, fname, "slow_amplitude_asymptote_ml_min", a2, "mL/min");
        truth(g, fname, "slow_delay_s", b->td2_s, "s");
        truth(g, fname, "slow_tau_s", b->tau2_s, "s");
        truth(g, fname, "slow_amplitude_at_end_ml_min", a2 * (1.0 - exp(-(tlim - b->td2_s) / b->tau2_s)), "mL/min");
    } else {
        truth(g, fname, "slow_amplitude_at_end_ml_min", 0.0, "mL/min");
    }
    truth(g, fname, "exercise_duration_s", tlim, "s");
    if (b->to_exhaustion)
        truth(g, fname, "tlim_from_cp_w_prime_s", p->wp / (b->power_w - p->cp), "s");
    truth(g, fname, "end_vo2_last30s_noise_free_ml_min", tr_mean(&tr, tr.vo2, T - 30.0, T), "mL/min");
    if (tlim >= 360.0)
        truth(g, fname, "delta_6_3_noise_free_ml_min",
              tr_mean(&tr, tr.vo2, on + 330.0, on + 360.0) - tr_mean(&tr, tr.vo2, on + 150.0, on + 180.0), "mL/min");
    write_breaths(g, fname, p, &tr, 0, 3, 30.0);
    char pw[32], bw[32], os[32];
    snprintf(pw, sizeof pw, "%g", b->power_w);
    snprintf(bw, sizeof bw, "%g", b->baseline_w);
    snprintf(os, sizeof os, "%g", on);
    char note[128];
    snprintf(note, sizeof note, "%s domain%s", b->domain, b->to_exhaustion ? ", to exhaustion" : ", 6 min");
    manifest(g, "bout", code, fname, date, "W", "", "", os, pw, bw, note);
    trace_free(&tr);
}

/* ------------------------------------------------------------------ lactate step test */

typedef struct {
    double first, step; /* stage intensities */
    int nstages;
    double stage_s;
    double l0, la_cp, top_above_cp, la_top; /* baseline; La at CP; La at CP + top_above_cp */
} lactate_def;

static void gen_lactate(gen *g, const char *code, const char *fname, const char *date, const phys *p,
                        const lactate_def *d, int speed)
{
    double lt1 = x_get(p), d1 = p->cp - lt1, d2 = p->cp + d->top_above_cp - lt1;
    double want = (d->la_top - d->l0) / (d->la_cp - d->l0), lo = 1e-3 * d2, hi = 1e3 * d2;
    for (int it = 0; it < 200; it++) { /* ratio (e^(d2/s)-1)/(e^(d1/s)-1) falls as s grows */
        double s = sqrt(lo * hi), q = expm1(d2 / s) / expm1(d1 / s);
        if (q > want)
            lo = s;
        else
            hi = s;
    }
    double s = sqrt(lo * hi), c = (d->la_cp - d->l0) / expm1(d1 / s);
    rng r;
    rng_seed(&r, fname);
    FILE *f = xopen(g, fname);
    fprintf(f, "stage,%s,lactate_mmol_l,hr_bpm,stage_s\n", speed ? "speed_m_s" : "power_w");
    for (int k = 0; k < d->nstages; k++) {
        double x = d->first + d->step * k;
        double la = d->l0 + (x > lt1 ? c * expm1((x - lt1) / s) : 0.0);
        double obs = la * (1.0 + 0.04 * gauss(&r)) + 0.06 * gauss(&r);
        double hr = hr_of(p, smin(u_ss(p, x), p->vo2max, 60.0)) + 2.0 + 1.5 * gauss(&r);
        fprintf(f, "%d,", k + 1);
        fprintf(f, speed ? "%.3f," : "%.0f,", x);
        fprintf(f, "%.1f,%.0f,%.0f\n", obs < 0.3 ? 0.3 : obs, hr, d->stage_s);
    }
    xclose(f, fname);
    const char *u = speed ? "m/s" : "W";
    truth_s(g, fname, "athlete", code);
    truth(g, fname, "baseline_mmol_l", d->l0, "mmol/L");
    truth(g, fname, "lt1_intensity", lt1, u);
    truth(g, fname, "rise_scale", s, u);
    truth(g, fname, "rise_coefficient_mmol_l", c, "mmol/L");
    truth(g, fname, "lactate_at_cp_mmol_l", d->la_cp, "mmol/L");
    truth(g, fname, "obla_4mmol_intensity", lt1 + s * log1p((4.0 - d->l0) / c), u);
    truth(g, fname, "stage_s", d->stage_s, "s");
    manifest(g, "lactate", code, fname, date, u, "", "", "", "", "", "stage_s is the length of each stage");
}

/* ------------------------------------------------------------------ trials */

typedef struct {
    const char *code, *date;
    char kind;      /* 'P' power tlim, 'S' speed tlim, 'D' distance time trial */
    double value;   /* W, m/s or m */
    double cv;      /* day-to-day coefficient of variation of the recorded time */
    double cut;     /* > 0: the trial stopped early at this fraction of the true time (excluded) */
    const char *note;
} trial_def;

static void gen_trials(gen *g, const trial_def *t, size_t n, const phys *const *ph)
{
    const char *fname = "trials.csv";
    rng r;
    rng_seed(&r, fname);
    FILE *f = xopen(g, fname);
    fprintf(f, "athlete,date,duration_s,power_w,speed_m_s,distance_m,note\n");
    for (size_t i = 0; i < n; i++) {
        const phys *p = ph[i];
        double z = gauss(&r), tt;
        if (t[i].kind == 'D')
            tt = (t[i].value - p->wp) / p->cp;
        else
            tt = p->wp / (t[i].value - p->cp);
        double rec = tt * exp(t[i].cv * z - 0.5 * t[i].cv * t[i].cv);
        if (t[i].cut > 0)
            rec = tt * t[i].cut;
        fprintf(f, "%s,%s,", t[i].code, t[i].date);
        fprintf(f, t[i].kind == 'D' ? "%.1f," : "%.0f,", t[i].kind == 'D' ? rec : floor(rec));
        if (t[i].kind == 'P')
            fprintf(f, "%.0f,,,", t[i].value);
        else if (t[i].kind == 'S')
            fprintf(f, ",%.3f,,", t[i].value);
        else
            fprintf(f, ",,%.0f,", t[i].value);
        csv_field(f, t[i].note);
        fputc('\n', f);
        char key[96];
        snprintf(key, sizeof key, "%s:%s:%c%g:true_duration_s", t[i].code, t[i].date, t[i].kind, t[i].value);
        truth(g, fname, key, tt, "s");
        if (t[i].cut > 0)
            manifest(g, "trial_exclude", t[i].code, fname, t[i].date, "", "", "", "", "", "", t[i].note);
    }
    xclose(f, fname);
    manifest(g, "trials", "", fname, "", "", "", "", "", "", "", "all athletes; import with trial import");
}

/* ------------------------------------------------------------------ sessions (1 Hz) */

#define SB_MAXEV 16

typedef struct {
    double *x; /* intended intensity per second, W or m/s */
    int n, cap;
    int npause, pause_at[SB_MAXEV], pause_s[SB_MAXEV]; /* recording stopped pause_s s before sample pause_at */
    int ndrop, drop_at[SB_MAXEV], drop_len[SB_MAXEV];  /* samples lost (athlete kept moving) */
    int neff, eff_at[SB_MAXEV], eff_len[SB_MAXEV];     /* near-maximal efforts */
    double eff_target[SB_MAXEV];
    double slow, fast; /* terrain and pedal/stride noise states */
    int coast;         /* seconds of coasting left */
    int kick;          /* seconds of a short acceleration left */
    double kick_f;     /* its intensity relative to the block level */
    int run;           /* 1: running speed, 0: cycling power */
} sbuf;

static void sb_push(sbuf *b, double v)
{
    if (b->n == b->cap) {
        b->cap = b->cap ? 2 * b->cap : 8192;
        double *nx = realloc(b->x, (size_t)b->cap * sizeof(double));
        if (!nx) {
            fprintf(stderr, "gen_demo: out of memory\n");
            exit(1);
        }
        b->x = nx;
    }
    b->x[b->n++] = v < 0 ? 0 : v;
}

static void sb_reset(sbuf *b, int run)
{
    double *x = b->x;
    int cap = b->cap;
    memset(b, 0, sizeof *b);
    b->x = x;
    b->cap = cap;
    b->run = run;
}

/* Steady riding/running: slow terrain wander and fast fluctuation. Open-road cycling (coast_p >= 0.05)
 * also has coasting runs of zeros and short accelerations (a rise, a gap to close) of 4-15 s. */
static void blk_steady(sbuf *b, rng *r, int dur, double level, double coast_p)
{
    double ss = b->run ? 0.03 : 0.10, fs = b->run ? 0.015 : 0.14, ps = 0.995, pf = b->run ? 0.7 : 0.55;
    for (int i = 0; i < dur; i++) {
        b->slow = ps * b->slow + ss * sqrt(1 - ps * ps) * gauss(r);
        b->fast = pf * b->fast + fs * sqrt(1 - pf * pf) * gauss(r);
        double u = u01(r), uk = u01(r), len = unif(r, 0, 20), kf = unif(r, 1.8, 3.4);
        if (b->coast > 0) {
            b->coast--;
            sb_push(b, 0.0);
            continue;
        }
        if (b->kick > 0) {
            b->kick--;
            sb_push(b, level * b->kick_f * (1.0 + 0.5 * b->fast));
            continue;
        }
        if (!b->run && u < coast_p / 12.0)
            b->coast = 2 + (int)len;
        else if (!b->run && coast_p >= 0.05 && uk < 1.0 / 420.0) {
            b->kick = 4 + (int)(len / 2);
            b->kick_f = kf;
        }
        sb_push(b, level * (1.0 + b->slow + b->fast));
    }
}

static void blk_ramp(sbuf *b, rng *r, int dur, double from, double to)
{
    double fs = b->run ? 0.015 : 0.10;
    for (int i = 0; i < dur; i++) {
        b->fast = 0.55 * b->fast + fs * 0.835 * gauss(r);
        sb_push(b, (from + (to - from) * i / (double)dur) * (1.0 + b->fast));
    }
}

/* An effort of dur s whose mean is exactly `mean`: a faster start and a finishing kick. */
static void blk_effort(sbuf *b, rng *r, int dur, double mean, int record)
{
    int i0 = b->n, kick = dur / 25 > 5 ? dur / 25 : 5;
    double e = 0, sd = b->run ? 0.015 : 0.05, sum = 0;
    for (int i = 0; i < dur; i++) {
        e = 0.8 * e + sd * 0.6 * gauss(r);
        double shape = i < dur * 0.08 ? 1.05 : i >= dur - kick ? 1.06 : 1.0;
        sb_push(b, mean * shape * (1.0 + e));
    }
    for (int i = i0; i < b->n; i++)
        sum += b->x[i];
    for (int i = i0; i < b->n; i++)
        b->x[i] *= mean * dur / sum;
    if (record && b->neff < SB_MAXEV) {
        b->eff_at[b->neff] = i0;
        b->eff_len[b->neff] = dur;
        b->eff_target[b->neff] = mean;
        b->neff++;
    }
}

static void blk_sprint(sbuf *b, rng *r, int dur, double peak)
{
    for (int i = 0; i < dur; i++) {
        double shape = i < 3 ? 0.75 + 0.083 * i : exp(-(i - 3) / 25.0);
        sb_push(b, peak * shape * (1.0 + 0.04 * gauss(r)));
    }
}

static void blk_zero(sbuf *b, int dur)
{
    for (int i = 0; i < dur; i++)
        sb_push(b, 0.0);
    b->coast = 0;
}

static void sb_pause(sbuf *b, int seconds)
{
    if (b->npause < SB_MAXEV) {
        b->pause_at[b->npause] = b->n;
        b->pause_s[b->npause++] = seconds;
    }
}

static void sb_drop(sbuf *b, int at, int len)
{
    if (b->ndrop < SB_MAXEV && at + len < b->n) {
        b->drop_at[b->ndrop] = at;
        b->drop_len[b->ndrop++] = len;
    }
}

static int is_dropped(const sbuf *b, int i)
{
    for (int k = 0; k < b->ndrop; k++)
        if (i >= b->drop_at[k] && i < b->drop_at[k] + b->drop_len[k])
            return 1;
    return 0;
}

/* The value as written: power rounded to 1 W; speed with GPS noise, rounded to 0.01 m/s. */
static void sb_written(const sbuf *b, rng *r, double *w)
{
    double gps = 0;
    for (int i = 0; i < b->n; i++) {
        if (b->run) {
            gps = 0.5 * gps + 0.10 * 0.866 * gauss(r);
            double v = b->x[i] + gps;
            w[i] = round((v < 0.3 ? 0.3 : v) * 100.0) / 100.0;
        } else {
            w[i] = round(b->x[i]);
        }
    }
}

/* The written values come from their own stream so that they are the same in the race bisection and in
 * the final file, and independent of the noise that built the intended intensity. */
static double *written_of(const sbuf *b, const char *fname, double *w)
{
    char key[128];
    rng r;
    snprintf(key, sizeof key, "%s:measurement", fname);
    rng_seed(&r, key);
    w = realloc(w, (size_t)b->n * sizeof(double));
    if (!w) {
        fprintf(stderr, "gen_demo: out of memory\n");
        exit(1);
    }
    sb_written(b, &r, w);
    return w;
}

/* W' (D') balance, differential form (Skiba et al. 2015 EJAP 115:703), 1-s steps; minimum and its index. */
static double wbal_min(const double *w, int n, double cp, double wp, int *at)
{
    double bal = wp, mn = wp;
    *at = 0;
    for (int i = 0; i < n; i++) {
        if (w[i] > cp)
            bal -= w[i] - cp;
        else
            bal = wp - (wp - bal) * exp(-(cp - w[i]) / wp);
        if (bal < mn) {
            mn = bal;
            *at = i;
        }
    }
    return mn;
}

typedef struct {
    const char *date;
    char type[6]; /* see build_ride / build_run */
    int minutes;
    int flags;
} sess_def;

#define F_PAUSE 1   /* a long stop with the recording paused */
#define F_DROP 2    /* power meter / GPS dropouts */
#define F_TRAFFIC 4 /* standing at lights: recorded zeros (cycling) or short auto-pauses (running) */

static void build_ride(sbuf *b, rng *r, const sess_def *s, double cp, double wp, double k)
{
    int total = s->minutes * 60, cd = 600;
    const char *t = s->type;
    sb_reset(b, 0);
    blk_ramp(b, r, 300, 0.40 * cp, 0.55 * cp);
    blk_steady(b, r, 600, 0.62 * cp, 0.02);
    if (!strcmp(t, "RE")) {
        blk_steady(b, r, total - b->n - 300, 0.50 * cp, 0.05);
        cd = 300;
    } else if (!strcmp(t, "E") || !strcmp(t, "L")) {
        double lv = t[0] == 'L' ? 0.63 : 0.68;
        int main_s = total - b->n - cd, half = main_s / 2;
        blk_steady(b, r, half, lv * cp, 0.07);
        if (s->flags & F_TRAFFIC) {
            blk_zero(b, 20 + (int)unif(r, 0, 30));
            blk_steady(b, r, 600, lv * cp, 0.07);
            blk_zero(b, 25 + (int)unif(r, 0, 30));
        }
        if (s->flags & F_PAUSE)
            sb_pause(b, 900 + (int)unif(r, 0, 600));
        blk_steady(b, r, total - b->n - cd, lv * cp, 0.07);
    } else if (!strcmp(t, "V")) {
        for (int i = 0; i < 5; i++) {
            blk_effort(b, r, 240, 1.10 * cp, 0);
            blk_steady(b, r, 240, 0.50 * cp, 0.01);
        }
        blk_steady(b, r, total - b->n - cd, 0.62 * cp, 0.05);
    } else if (!strcmp(t, "T")) {
        for (int i = 0; i < 3; i++) {
            blk_effort(b, r, 720, 0.95 * cp, 0);
            blk_steady(b, r, 300, 0.50 * cp, 0.01);
        }
        blk_steady(b, r, total - b->n - cd, 0.62 * cp, 0.05);
    } else if (!strcmp(t, "X")) {
        for (int i = 0; i < 2; i++) {
            blk_effort(b, r, 1200, 0.90 * cp, 0);
            blk_steady(b, r, 360, 0.50 * cp, 0.01);
        }
        blk_steady(b, r, total - b->n - cd, 0.62 * cp, 0.05);
    } else if (!strcmp(t, "S")) {
        for (int i = 0; i < 8; i++) {
            blk_sprint(b, r, 12, unif(r, 3.3, 3.8) * cp);
            blk_steady(b, r, 290, 0.62 * cp, 0.04);
        }
        blk_steady(b, r, total - b->n - cd, 0.65 * cp, 0.06);
    } else if (!strcmp(t, "TA") || !strcmp(t, "TB")) {
        int d1 = t[1] == 'A' ? 180 : 300, d2 = t[1] == 'A' ? 720 : 1200;
        for (int i = 0; i < 3; i++) {
            blk_effort(b, r, 20, 1.3 * cp, 0);
            blk_steady(b, r, 100, 0.55 * cp, 0.0);
        }
        blk_steady(b, r, 240, 0.55 * cp, 0.0);
        blk_effort(b, r, d1, 0.985 * (cp + wp / d1), 1);
        blk_steady(b, r, 1800, 0.50 * cp, 0.02);
        blk_effort(b, r, d2, 0.985 * (cp + wp / d2), 1);
        cd = total - b->n > 300 ? total - b->n : 300;
    } else if (!strcmp(t, "RACE")) {
        /* a 75-min road race: pack riding with attacks and climbs, a hard last 3 min and the sprint.
         * k scales every excursion above CP so that the W' balance minimum can be tuned. */
        int race_end = b->n + 75 * 60 - 260, ev = 0;
        while (b->n < race_end) {
            blk_steady(b, r, 120 + (int)unif(r, 0, 180), 0.66 * cp, 0.10);
            double d_climb = unif(r, 120, 240), d_att = unif(r, 8, 30), f_climb = unif(r, 0.05, 0.15),
                   f_att = unif(r, 0.8, 2.0);
            if (ev++ % 4 == 3)
                blk_effort(b, r, (int)d_climb, cp * (1.0 + k * f_climb), 0);
            else
                blk_effort(b, r, (int)d_att, cp * (1.0 + k * f_att), 0);
        }
        blk_effort(b, r, 180, cp * (1.0 + 0.10 * k), 0);
        blk_steady(b, r, 60, 0.90 * cp, 0.0);
        blk_sprint(b, r, 16, cp * (1.0 + 2.6 * k));
        cd = total - b->n > 300 ? total - b->n : 300;
    }
    blk_ramp(b, r, cd, 0.50 * cp, 0.35 * cp);
    if (s->flags & F_DROP) {
        sb_drop(b, b->n / 5, 3);
        sb_drop(b, b->n / 3, 2);
        sb_drop(b, b->n / 2 + 37, 40);
    }
}

static void build_run(sbuf *b, rng *r, const sess_def *s, double cs, double dp, double vrace)
{
    int total = s->minutes * 60, cd = 600;
    const char *t = s->type;
    sb_reset(b, 1);
    blk_ramp(b, r, 600, 0.55 * cs, 0.68 * cs);
    if (!strcmp(t, "EZ") || !strcmp(t, "LR")) {
        double lv = t[0] == 'L' ? 0.74 : 0.72;
        int seg = (total - b->n - cd) / 4;
        for (int q = 0; q < 4; q++) {
            blk_steady(b, r, seg, lv * cs, 0);
            if ((s->flags & F_TRAFFIC) && q < 3)
                sb_pause(b, 12 + (int)unif(r, 0, 40));
        }
    } else if (!strcmp(t, "INT")) {
        for (int i = 0; i < 6; i++) {
            blk_effort(b, r, (int)(1000.0 / (1.05 * cs)), 1.05 * cs, 0);
            blk_steady(b, r, 90, 0.55 * cs, 0);
        }
        blk_steady(b, r, total - b->n - cd, 0.70 * cs, 0);
    } else if (!strcmp(t, "TMP")) {
        blk_effort(b, r, 1500, 0.93 * cs, 0);
        blk_steady(b, r, total - b->n - cd, 0.70 * cs, 0);
    } else if (!strcmp(t, "FART")) {
        for (int i = 0; i < 10; i++) {
            blk_effort(b, r, 60, 1.12 * cs, 0);
            blk_steady(b, r, 60, 0.65 * cs, 0);
        }
        blk_steady(b, r, total - b->n - cd, 0.70 * cs, 0);
    } else if (!strcmp(t, "TA") || !strcmp(t, "TB")) {
        int d1 = t[1] == 'A' ? 180 : 300, d2 = t[1] == 'A' ? 720 : 1200;
        for (int i = 0; i < 4; i++) {
            blk_effort(b, r, 20, 1.15 * cs, 0);
            blk_steady(b, r, 60, 0.60 * cs, 0);
        }
        blk_effort(b, r, d1, 0.995 * (cs + dp / d1), 1);
        blk_steady(b, r, 1200, 0.60 * cs, 0);
        blk_effort(b, r, d2, 0.995 * (cs + dp / d2), 1);
        cd = total - b->n > 480 ? total - b->n : 480;
    } else if (!strcmp(t, "RACE")) {
        for (int i = 0; i < 4; i++) {
            blk_effort(b, r, 20, 1.15 * cs, 0);
            blk_steady(b, r, 60, 0.60 * cs, 0);
        }
        blk_steady(b, r, 240, 0.50 * cs, 0); /* on the start line */
        int dur = (int)round(10000.0 / vrace), i0 = b->n, split = dur / 10;
        for (int km = 0; km < 10; km++) { /* a faster first km, a small mid-race fade, a kick */
            double f = km == 0 ? 1.025 : km == 9 ? 1.03 : 1.0 - 0.004 * (km % 3);
            blk_effort(b, r, km == 9 ? dur - 9 * split : split, vrace * f, 0);
        }
        double sum = 0;
        for (int i = i0; i < b->n; i++)
            sum += b->x[i];
        for (int i = i0; i < b->n; i++)
            b->x[i] *= 10000.0 / sum;
        cd = total - b->n > 480 ? total - b->n : 480;
    }
    blk_ramp(b, r, cd, 0.62 * cs, 0.50 * cs);
    if (s->flags & F_DROP) {
        sb_drop(b, b->n / 4, 3);
        sb_drop(b, b->n / 2 + 11, 25);
        sb_drop(b, (3 * b->n) / 4, 2);
    }
}

static void write_session(gen *g, const char *code, const char *fname, const char *date, const sbuf *b,
                          const double *w, double cp, double hr_max, const char *type)
{
    rng r;
    char key[96];
    snprintf(key, sizeof key, "%s:write", fname);
    rng_seed(&r, key);
    FILE *f = xopen(g, fname);
    fputs(b->run ? "time_s,speed_m_s,distance_m,hr_bpm\n" : "time_s,power_w,hr_bpm,cadence_rpm\n", f);
    double hr0 = b->run ? 60.0 : 80.0, hr_cp = 0.92 * hr_max, hr = hr0 + 10, ema = 0, dist = 0;
    int off = 0, kp = 0;
    for (int i = 0; i < b->n; i++) {
        while (kp < b->npause && b->pause_at[kp] == i) { /* recording stopped: the athlete stands still */
            off += b->pause_s[kp];
            hr = hr0 + (hr - hr0) * exp(-b->pause_s[kp] / 60.0);
            ema *= exp(-b->pause_s[kp] / 25.0);
            kp++;
        }
        double x = b->x[i];
        ema += (x - ema) * (1.0 - exp(-1.0 / 25.0));
        double target = hr0 + (hr_cp - hr0) * ema / cp + 0.06 * i / 60.0;
        target = target > hr_max - 1 ? hr_max - 1 : target;
        hr += (target - hr) * (1.0 - exp(-1.0 / 20.0));
        double hro = round(hr + 0.8 * gauss(&r));
        double cad = x <= 0 ? 0 : x > 1.8 * cp ? 105 + 6 * gauss(&r) : 86 + 10 * (x / cp - 0.7) + 3 * gauss(&r);
        if (b->run)
            dist += w[i];
        if (is_dropped(b, i))
            continue;
        if (b->run)
            fprintf(f, "%d,%.2f,%.1f,%.0f\n", i + off, w[i], dist, hro);
        else
            fprintf(f, "%d,%.0f,%.0f,%.0f\n", i + off, w[i], hro, cad <= 0 ? 0 : clamp(round(cad), 55, 125));
    }
    xclose(f, fname);
    truth_s(g, fname, "athlete", code);
    truth_s(g, fname, "type", type);
    truth(g, fname, b->run ? "cs_that_day_m_s" : "cp_that_day_w", cp, b->run ? "m/s" : "W");
    for (int k = 0; k < b->neff; k++) {
        double s = 0;
        for (int i = b->eff_at[k]; i < b->eff_at[k] + b->eff_len[k]; i++)
            s += w[i];
        char kk[64];
        snprintf(kk, sizeof kk, "effort_%ds_start_s", b->eff_len[k]);
        truth(g, fname, kk, b->eff_at[k], "s");
        snprintf(kk, sizeof kk, "effort_%ds_mean", b->eff_len[k]);
        truth(g, fname, kk, s / b->eff_len[k], b->run ? "m/s" : "W");
    }
    for (int k = 0; k < b->npause; k++) {
        truth(g, fname, "pause_after_exercise_s", b->pause_at[k], "s");
        truth(g, fname, "pause_len_s", b->pause_s[k], "s");
    }
    for (int k = 0; k < b->ndrop; k++)
        truth(g, fname, "dropout_len_s", b->drop_len[k], "s");
    manifest(g, "session", code, fname, date, b->run ? "m/s" : "W", "", "", "", "", "", type);
}

static const sess_def RIDES_C02[] = {
    {"2026-08-30", "L", 110, F_TRAFFIC},  {"2026-09-02", "E", 75, F_DROP},    {"2026-09-05", "TA", 85, 0},
    {"2026-09-12", "TB", 95, 0},          {"2026-09-13", "L", 120, F_PAUSE},  {"2026-09-20", "E", 90, F_TRAFFIC},
    {"2026-09-26", "V", 80, 0},           {"2026-09-27", "L", 115, 0},        {"2026-09-30", "T", 85, 0},
    {"2026-10-03", "S", 75, 0},           {"2026-10-04", "L", 120, F_TRAFFIC}, {"2026-10-07", "V", 80, 0},
    {"2026-10-10", "X", 90, 0},           {"2026-10-11", "E", 95, 0},         {"2026-10-14", "RE", 50, 0},
    {"2026-10-17", "RACE", 100, 0},       {"2026-10-21", "T", 85, 0},         {"2026-10-24", "L", 120, F_PAUSE},
    {"2026-10-28", "V", 80, 0},           {"2026-10-31", "X", 90, 0},         {"2026-11-01", "E", 95, F_TRAFFIC},
    {"2026-11-04", "S", 70, 0},           {"2026-11-07", "TA", 85, 0},        {"2026-11-09", "RE", 45, 0},
    {"2026-11-14", "TB", 95, 0},          {"2026-11-22", "E", 80, 0},         {"2026-11-28", "L", 105, F_TRAFFIC},
};

static const sess_def RUNS_R02[] = {
    {"2026-09-01", "EZ", 50, F_TRAFFIC},  {"2026-09-03", "INT", 70, 0},       {"2026-09-06", "LR", 100, F_TRAFFIC},
    {"2026-09-12", "TA", 65, 0},          {"2026-09-19", "TB", 75, 0},        {"2026-09-23", "EZ", 45, F_DROP},
    {"2026-09-28", "LR", 110, 0},         {"2026-10-01", "TMP", 65, 0},       {"2026-10-04", "EZ", 55, F_TRAFFIC},
    {"2026-10-07", "INT", 70, 0},         {"2026-10-11", "LR", 115, F_DROP},  {"2026-10-14", "FART", 55, 0},
    {"2026-10-18", "RACE", 70, 0},        {"2026-10-22", "EZ", 45, 0},        {"2026-10-25", "LR", 100, F_TRAFFIC},
    {"2026-10-29", "TMP", 65, 0},         {"2026-11-01", "EZ", 60, 0},        {"2026-11-04", "INT", 75, 0},
    {"2026-11-08", "LR", 120, F_TRAFFIC}, {"2026-11-11", "FART", 55, 0},      {"2026-11-14", "TA", 65, 0},
    {"2026-11-18", "EZ", 50, 0},          {"2026-11-21", "TB", 75, 0},        {"2026-11-25", "LR", 105, 0},
};

static void gen_sessions(gen *g)
{
    sbuf b = {0};
    double *w = NULL;
    char fname[96];
    for (size_t i = 0; i < sizeof RIDES_C02 / sizeof RIDES_C02[0]; i++) {
        const sess_def *s = &RIDES_C02[i];
        double cp, wp, k = 1.0;
        c02_state(day_of(s->date), &cp, &wp);
        snprintf(fname, sizeof fname, "session_C02_%s.csv", s->date);
        rng r;
        if (!strcmp(s->type, "RACE")) { /* bisection on k: W' balance minimum at 6 % of W' */
            double lo = 0.0, hi = 2.0;
            for (int it = 0; it < 40; it++) {
                k = 0.5 * (lo + hi);
                rng_seed(&r, fname);
                build_ride(&b, &r, s, cp, wp, k);
                w = written_of(&b, fname, w);
                int at;
                if (wbal_min(w, b.n, cp, wp, &at) > 0.06 * wp)
                    lo = k;
                else
                    hi = k;
            }
        }
        rng_seed(&r, fname);
        build_ride(&b, &r, s, cp, wp, k);
        w = written_of(&b, fname, w);
        write_session(g, "C02", fname, s->date, &b, w, cp, PH_C02A.hr_max, s->type);
        truth(g, fname, "w_prime_that_day_j", wp, "J");
        if (!strcmp(s->type, "RACE")) {
            int at;
            truth(g, fname, "w_prime_balance_min_j", wbal_min(w, b.n, cp, wp, &at), "J");
            truth(g, fname, "w_prime_balance_min_at_s", at + 1, "s");
            truth(g, fname, "race_excursion_scale", k, "");
        }
    }
    const phys *p = &PH_R02;
    for (size_t i = 0; i < sizeof RUNS_R02 / sizeof RUNS_R02[0]; i++) {
        const sess_def *s = &RUNS_R02[i];
        snprintf(fname, sizeof fname, "session_R02_%s.csv", s->date);
        rng r;
        double v = p->cp * 1.01;
        if (!strcmp(s->type, "RACE")) { /* bisection on race speed: D' balance minimum at 8 % of D' */
            double lo = p->cp, hi = p->cp * 1.06;
            for (int it = 0; it < 40; it++) {
                v = 0.5 * (lo + hi);
                rng_seed(&r, fname);
                build_run(&b, &r, s, p->cp, p->wp, v);
                w = written_of(&b, fname, w);
                int at;
                if (wbal_min(w, b.n, p->cp, p->wp, &at) > 0.08 * p->wp)
                    lo = v;
                else
                    hi = v;
            }
        }
        rng_seed(&r, fname);
        build_run(&b, &r, s, p->cp, p->wp, v);
        w = written_of(&b, fname, w);
        write_session(g, "R02", fname, s->date, &b, w, p->cp, p->hr_max, s->type);
        truth(g, fname, "d_prime_that_day_m", p->wp, "m");
        if (!strcmp(s->type, "RACE")) {
            int at;
            truth(g, fname, "race_mean_speed_m_s", v, "m/s");
            truth(g, fname, "d_prime_balance_min_m", wbal_min(w, b.n, p->cp, p->wp, &at), "m");
            truth(g, fname, "d_prime_balance_min_at_s", at + 1, "s");
        }
    }
    free(b.x);
    free(w);
}

/* C01's heavy interval ride, the energy demo: warm-up, 5 x 8 min at 88 % of CP (above the GET, in the
 * heavy domain) with 3 min easy between, cool-down. 'energy' costs it from C01's own bouts and ramp. */
static void gen_session_c01(gen *g)
{
    sbuf b = {0};
    rng r;
    const char *fname = "session_C01_2026-11-06.csv";
    rng_seed(&r, fname);
    sb_reset(&b, 0);
    blk_ramp(&b, &r, 600, 0.40 * PH_C01.cp, 0.60 * PH_C01.cp);
    for (int i = 0; i < 5; i++) {
        blk_effort(&b, &r, 480, 0.88 * PH_C01.cp, 0);
        blk_steady(&b, &r, 180, 0.45 * PH_C01.cp, 0.0);
    }
    blk_ramp(&b, &r, 600, 0.55 * PH_C01.cp, 0.40 * PH_C01.cp);
    double *w = written_of(&b, fname, NULL);
    write_session(g, "C01", fname, "2026-11-06", &b, w, PH_C01.cp, PH_C01.hr_max, "H");
    free(b.x);
    free(w);
}

/* ------------------------------------------------------------------ 3-minute all-out test */

typedef struct {
    double ep, wep, peak; /* end power target W, work above it J, peak power W */
    double cad_peak, cad_end;
} allout_def;

static double allout_clean(double t, const allout_def *d, double tau)
{
    const double tp = 4.0;
    if (t < tp)
        return d->peak * (0.55 + 0.45 * t / tp);
    return d->ep + (d->peak - d->ep) * exp(-(t - tp) / tau);
}

static void gen_allout(gen *g, const char *code, const char *fname, const char *date, const phys *p,
                       const allout_def *d)
{
    double lo = 1.0, hi = 200.0, tau = 30.0;
    for (int it = 0; it < 100; it++) {
        tau = 0.5 * (lo + hi);
        double wsum = 0;
        for (int s = 1; s <= 180; s++) {
            double x = allout_clean(s - 0.5, d, tau) - d->ep;
            wsum += x > 0 ? x : 0;
        }
        if (wsum < d->wep)
            lo = tau;
        else
            hi = tau;
    }
    rng r;
    rng_seed(&r, fname);
    FILE *f = xopen(g, fname);
    fprintf(f, "time_s,power_w,cadence_rpm\n");
    double e = 0, pw[180];
    for (int s = 1; s <= 180; s++) {
        double c = allout_clean(s - 0.5, d, tau);
        e = 0.5 * e + 0.866 * gauss(&r);
        pw[s - 1] = round(c * (1.0 + 0.035 * e));
        double frac = clamp((c - d->ep) / (d->peak - d->ep), 0.0, 1.0);
        double cad = d->cad_end + (d->cad_peak - d->cad_end) * pow(frac, 0.6) + 2.0 * gauss(&r);
        fprintf(f, "%d,%.0f,%.0f\n", s, pw[s - 1], cad);
    }
    xclose(f, fname);
    double end = 0, wep = 0;
    for (int s = 150; s < 180; s++)
        end += pw[s] / 30.0;
    for (int s = 0; s < 180; s++)
        wep += pw[s] > end ? pw[s] - end : 0;
    truth_s(g, fname, "athlete", code);
    truth(g, fname, "cp_w", p->cp, "W");
    truth(g, fname, "w_prime_j", p->wp, "J");
    truth(g, fname, "end_power_target_w", d->ep, "W");
    truth(g, fname, "work_above_end_target_j", d->wep, "J");
    truth(g, fname, "decay_tau_s", tau, "s");
    truth(g, fname, "end_power_in_file_w", end, "W");
    truth(g, fname, "work_above_end_in_file_j", wep, "J");
    manifest(g, "allout", code, fname, date, "W", "", "", "", "", "", "180 rows of 1-s means, time_s 1..180");
}

/* ------------------------------------------------------------------ athletes and the whole data set */

typedef struct {
    const char *code, *name, *sport;
    double mass_kg;
    const char *notes;
} athlete;

static const athlete ATHLETES[] = {
    {"C01", "Amara Nwachukwu", "cycling", 61.0,
     "road cyclist, 29; full lab profile: trials, ramp, lactate, five bouts (three moderate repeats), 3-min all-out"},
    {"C02", "Tomasz Wierzbicki", "cycling", 74.5,
     "road racer, 33; a training block between September and November raised CP by about 7 %; season of sessions"},
    {"C03", "Hiroshi Tanabe", "cycling", 79.0, "masters rider, 54; only two trials so far (3 and 12 min)"},
    {"C04", "Lucía Ferreyra", "cycling", 58.5,
     "triathlete (bike tests), 26; one trial ended early by a dropped chain"},
    {"C05", "Kwame Asante-Boateng", "cycling", 82.0,
     "track endurance rider, 24; ramp, three bouts, 3-min all-out"},
    {"R01", "Devika Ranganathan", "running", 52.0,
     "1500 m runner, 22; single-visit track test 1200/2400/3600 m plus two treadmill trials"},
    {"R02", "Mateo Álvarez Ruiz", "running", 68.0,
     "10 km road runner, 31; treadmill ramp and lactate, season of GPS runs with a 10 km race"},
    {"W01", "Ingrid Solbakken", "rowing", 72.0, "rower, 27; ergometer trials, ramp and lactate step test"},
    {"S01", "Leilani Kahananui", "swimming", 63.0, "distance swimmer, 19; pool time trials only, no gas exchange"},
};

static const trial_def TRIALS[] = {
    {"C01", "2026-10-05", 'P', 250, 0.07, 0, "tlim, cycle ergometer"},
    {"C01", "2026-10-08", 'P', 260, 0.07, 0, "tlim"},
    {"C01", "2026-10-12", 'P', 275, 0.07, 0, "tlim"},
    {"C01", "2026-10-15", 'P', 300, 0.07, 0, "tlim"},
    {"C01", "2026-10-19", 'P', 330, 0.07, 0, "tlim"},
    {"C02", "2026-09-07", 'P', 290, 0.07, 0, "tlim, block 1"},
    {"C02", "2026-09-10", 'P', 300, 0.07, 0, "tlim, block 1"},
    {"C02", "2026-09-15", 'P', 320, 0.07, 0, "tlim, block 1"},
    {"C02", "2026-09-18", 'P', 350, 0.07, 0, "tlim, block 1"},
    {"C02", "2026-09-23", 'P', 380, 0.07, 0, "tlim, block 1"},
    {"C02", "2026-11-16", 'P', 310, 0.07, 0, "tlim, block 2 after the training block"},
    {"C02", "2026-11-18", 'P', 325, 0.07, 0, "tlim, block 2"},
    {"C02", "2026-11-21", 'P', 345, 0.07, 0, "tlim, block 2"},
    {"C02", "2026-11-24", 'P', 370, 0.07, 0, "tlim, block 2"},
    {"C02", "2026-11-27", 'P', 400, 0.07, 0, "tlim, block 2"},
    {"C03", "2026-10-13", 'P', 360, 0.07, 0, "tlim"},
    {"C03", "2026-10-20", 'P', 275, 0.07, 0, "tlim"},
    {"C04", "2026-10-09", 'P', 220, 0.07, 0, "tlim"},
    {"C04", "2026-10-13", 'P', 245, 0.07, 0, "tlim"},
    {"C04", "2026-10-16", 'P', 235, 0.07, 0.42,
     "stopped at 3:16 when the chain dropped, not exhaustion: exclude"},
    {"C04", "2026-10-20", 'P', 262, 0.07, 0, "tlim"},
    {"C04", "2026-10-23", 'P', 285, 0.07, 0, "tlim"},
    {"C05", "2026-09-28", 'P', 340, 0.07, 0, "tlim"},
    {"C05", "2026-10-01", 'P', 360, 0.07, 0, "tlim"},
    {"C05", "2026-10-05", 'P', 390, 0.07, 0, "tlim"},
    {"C05", "2026-10-08", 'P', 430, 0.07, 0, "tlim"},
    {"R01", "2026-09-25", 'S', 5.000, 0.08, 0, "treadmill tlim at 18.0 km/h, 1 % grade"},
    {"R01", "2026-09-29", 'S', 5.278, 0.08, 0, "treadmill tlim at 19.0 km/h, 1 % grade"},
    {"R01", "2026-10-03", 'D', 3600, 0.015, 0, "track time trial, single visit, 30 min rest between trials"},
    {"R01", "2026-10-03", 'D', 2400, 0.015, 0, "track time trial, single visit"},
    {"R01", "2026-10-03", 'D', 1200, 0.015, 0, "track time trial, single visit"},
    {"R02", "2026-09-14", 'S', 5.000, 0.08, 0, "treadmill tlim at 18.0 km/h, 1 % grade"},
    {"R02", "2026-09-17", 'S', 5.278, 0.08, 0, "treadmill tlim at 19.0 km/h, 1 % grade"},
    {"R02", "2026-09-21", 'S', 5.556, 0.08, 0, "treadmill tlim at 20.0 km/h, 1 % grade"},
    {"R02", "2026-09-26", 'D', 3600, 0.015, 0, "track time trial"},
    {"W01", "2026-10-12", 'P', 250, 0.07, 0, "tlim, rowing ergometer"},
    {"W01", "2026-10-14", 'P', 260, 0.07, 0, "tlim, rowing ergometer"},
    {"W01", "2026-10-19", 'P', 280, 0.07, 0, "tlim, rowing ergometer"},
    {"W01", "2026-10-21", 'P', 305, 0.07, 0, "tlim, rowing ergometer"},
    {"W01", "2026-10-26", 'P', 335, 0.07, 0, "tlim, rowing ergometer"},
    {"S01", "2026-10-06", 'D', 200, 0.01, 0, "50 m pool, time trial"},
    {"S01", "2026-10-08", 'D', 400, 0.01, 0, "50 m pool, time trial"},
    {"S01", "2026-10-13", 'D', 800, 0.01, 0, "50 m pool, time trial"},
    {"S01", "2026-10-15", 'D', 1500, 0.01, 0, "50 m pool, time trial"},
};

static const phys *trial_phys(const trial_def *t)
{
    static const struct {
        const char *code;
        const phys *p;
    } map[] = {{"C01", &PH_C01}, {"C03", &PH_C03}, {"C04", &PH_C04}, {"C05", &PH_C05},
               {"R01", &PH_R01}, {"R02", &PH_R02}, {"W01", &PH_W01}, {"S01", &PH_S01}};
    if (!strcmp(t->code, "C02"))
        return day_of(t->date) < day_of("2026-10-15") ? &PH_C02A : &PH_C02B;
    for (size_t i = 0; i < sizeof map / sizeof map[0]; i++)
        if (!strcmp(map[i].code, t->code))
            return map[i].p;
    fprintf(stderr, "gen_demo: no physiology for %s\n", t->code);
    exit(1);
}

static void gen_athletes(gen *g)
{
    const char *fname = "athletes.csv";
    FILE *f = xopen(g, fname);
    fprintf(f, "code,name,sport,mass_kg,notes\n");
    for (size_t i = 0; i < sizeof ATHLETES / sizeof ATHLETES[0]; i++) {
        const athlete *a = &ATHLETES[i];
        fprintf(f, "%s,", a->code);
        csv_field(f, a->name);
        fprintf(f, ",%s,%.1f,", a->sport, a->mass_kg);
        csv_field(f, a->notes);
        fputc('\n', f);
    }
    xclose(f, fname);
    manifest(g, "athletes", "", fname, "", "", "", "", "", "", "", "add each with athlete add");
}

static void truth_athlete(gen *g, const char *code, const phys *p, int speed)
{
    const char *u = speed ? "m/s" : "W";
    truth(g, code, speed ? "cs_m_s" : "cp_w", p->cp, u);
    truth(g, code, speed ? "d_prime_m" : "w_prime_j", p->wp, speed ? "m" : "J");
    if (p->vo2max > 0) {
        truth(g, code, "vo2max_ml_min", p->vo2max, "mL/min");
        truth(g, code, "get_vo2_ml_min", p->get, "mL/min");
        truth(g, code, "get_intensity_constant", x_get(p), u);
        truth(g, code, "rcp_vo2_ml_min", rcp_of(p), "mL/min");
        truth(g, code, "mrt_s", p->mrt_s, "s");
        truth(g, code, "gain_below_get", p->gain, speed ? "mL/min per m/s" : "mL/min/W");
        truth(g, code, "gain_above_get", p->gain + p->gain_x, speed ? "mL/min per m/s" : "mL/min/W");
        truth(g, code, "hr_max_bpm", p->hr_max, "beats/min");
    }
}

int main(int argc, char **argv)
{
    if (argc != 2) {
        fprintf(stderr, "usage: %s OUTPUT_DIR   (e.g. build/gen_demo demo/data)\n", argv[0]);
        return 64;
    }
    gen g = {argv[1], NULL, NULL, 0, 0, 0};
    if (mkdir(g.dir, 0777) != 0 && errno != EEXIST)
        die("cannot create directory", g.dir);
    g.manifest = xopen(&g, "manifest.csv");
    g.truth = xopen(&g, "truth.csv");
    fprintf(g.manifest, "kind,athlete,file,date,unit,rate_per_min,start,onset_s,power,baseline,note\n");
    fprintf(g.truth, "file,key,value,unit\n");

    gen_athletes(&g);
    truth_athlete(&g, "C01", &PH_C01, 0);
    truth_athlete(&g, "C02:block1", &PH_C02A, 0);
    truth_athlete(&g, "C02:block2", &PH_C02B, 0);
    truth_athlete(&g, "C03", &PH_C03, 0);
    truth_athlete(&g, "C04", &PH_C04, 0);
    truth_athlete(&g, "C05", &PH_C05, 0);
    truth_athlete(&g, "R01", &PH_R01, 1);
    truth_athlete(&g, "R02", &PH_R02, 1);
    truth_athlete(&g, "W01", &PH_W01, 0);
    truth_athlete(&g, "S01", &PH_S01, 1);

    size_t nt = sizeof TRIALS / sizeof TRIALS[0];
    const phys *tp[sizeof TRIALS / sizeof TRIALS[0]];
    for (size_t i = 0; i < nt; i++)
        tp[i] = trial_phys(&TRIALS[i]);
    gen_trials(&g, TRIALS, nt, tp);

    gen_ramp(&g, "C01", "ramp_C01.csv", "2026-09-29", &PH_C01, &(ramp_proto){30, 25, 180, 40}, 0);
    gen_ramp(&g, "C02", "ramp_C02.csv", "2026-09-01", &PH_C02A, &(ramp_proto){50, 30, 180, 40}, 0);
    gen_ramp(&g, "C02", "ramp_C02_2.csv", "2026-11-12", &PH_C02B, &(ramp_proto){50, 30, 180, 40}, 0);
    gen_ramp(&g, "C03", "ramp_C03.csv", "2026-10-06", &PH_C03, &(ramp_proto){50, 25, 180, 30}, 0);
    gen_ramp(&g, "C04", "ramp_C04.csv", "2026-10-02", &PH_C04, &(ramp_proto){30, 25, 180, 40}, 0);
    gen_ramp(&g, "C05", "ramp_C05.csv", "2026-09-24", &PH_C05, &(ramp_proto){50, 35, 180, 40}, 0);
    gen_ramp(&g, "W01", "ramp_W01.csv", "2026-10-07", &PH_W01, &(ramp_proto){50, 25, 180, 40}, 0);
    gen_ramp(&g, "R01", "ramp_R01.csv", "2026-09-22", &PH_R01, &(ramp_proto){2.2, 0.3, 180, 40}, 1);
    gen_ramp(&g, "R02", "ramp_R02.csv", "2026-09-08", &PH_R02, &(ramp_proto){2.5, 0.3, 180, 40}, 1);
    /* exports as labs make them: a step test with a baseline at negative times and a recovery, and a
     * VO2-only ramp from an older cart; both older than the athletes' full ramps */
    gen_steps(&g, "C03", "steps_C03.csv", "2026-09-15", &PH_C03, &(steps_proto){20, 100, 25, 180, 180, 40, 120});
    g.vo2_only = 1;
    gen_ramp(&g, "C04", "ramp_C04_vo2.csv", "2026-09-12", &PH_C04, &(ramp_proto){30, 25, 180, 40}, 0);
    g.vo2_only = 0;

    const bout_def c01_mod = {"moderate", 150, 20, 180, 27, 15, 10.0, 0, 0, 0, 0, 0};
    gen_bout(&g, "C01", "bout_C01_1.csv", "2026-10-22", &PH_C01, &c01_mod);
    gen_bout(&g, "C01", "bout_C01_2.csv", "2026-10-26", &PH_C01,
             &(bout_def){"heavy", 205, 20, 180, 30, 15, 9.3, 300, 100, 110, 0, 0});
    gen_bout(&g, "C01", "bout_C01_3.csv", "2026-10-29", &PH_C01,
             &(bout_def){"severe", 275, 20, 180, 33, 14, 9.3, 0, 85, 110, 1.6, 1});
    gen_bout(&g, "C01", "bout_C01_4.csv", "2026-11-02", &PH_C01, &c01_mod);
    gen_bout(&g, "C01", "bout_C01_5.csv", "2026-11-03", &PH_C01, &c01_mod);
    gen_bout(&g, "C05", "bout_C05_1.csv", "2026-10-13", &PH_C05,
             &(bout_def){"moderate", 220, 20, 120, 24, 14, 10.0, 0, 0, 0, 0, 0});
    gen_bout(&g, "C05", "bout_C05_2.csv", "2026-10-15", &PH_C05,
             &(bout_def){"heavy", 280, 20, 120, 28, 14, 9.3, 250, 110, 120, 0, 0});
    gen_bout(&g, "C05", "bout_C05_3.csv", "2026-10-19", &PH_C05,
             &(bout_def){"severe", 375, 20, 120, 31, 13, 9.3, 0, 80, 110, 1.3, 1});
    /* supra-maximal: demand ~120 % of VO2max, to exhaustion (~150 s): the accumulated O2 deficit */
    gen_bout(&g, "C01", "bout_C01_6.csv", "2026-11-05", &PH_C01,
             &(bout_def){"severe", 340, 20, 180, 33, 14, 9.3, 0, 85, 110, 1.6, 1});

    gen_lactate(&g, "C01", "lactate_C01.csv", "2026-10-01", &PH_C01,
                &(lactate_def){90, 25, 8, 240, 0.9, 3.8, 45, 8.5}, 0);
    gen_lactate(&g, "R02", "lactate_R02.csv", "2026-09-10", &PH_R02,
                &(lactate_def){12.0 / 3.6, 1.0 / 3.6, 8, 180, 1.0, 3.6, 0.55, 8.5}, 1);
    gen_lactate(&g, "W01", "lactate_W01.csv", "2026-10-09", &PH_W01,
                &(lactate_def){100, 25, 7, 240, 0.8, 3.5, 40, 8.0}, 0);

    gen_allout(&g, "C01", "allout_C01.csv", "2026-11-09", &PH_C01, &(allout_def){235, 0.97 * 16500, 760, 128, 86});
    gen_allout(&g, "C05", "allout_C05.csv", "2026-10-22", &PH_C05, &(allout_def){312, 0.95 * 24000, 1150, 132, 88});

    gen_sessions(&g);
    gen_session_c01(&g);
    /* step tests with VCO2 for substrate use and peak fat oxidation: generated last so every file and
     * store id above stays as it was, and dated before the athletes' ramps, which stay the newest */
    /* morning tests after an overnight fast: more fat, so a lower RER below the GET (VCO2 anchored at
     * RER 0.80-0.81 at 20 W and a shallower VCO2-VO2 slope, 0.92) that rises steeply above it (1.45),
     * crossing 1.00 between the GET and CP: fat oxidation peaks near the GET and falls to 0 */
    phys c01f = PH_C01, c05f = PH_C05;
    c01f.rer0 = 0.80, c01f.s1 = 0.92, c01f.s2 = 1.45;
    c05f.rer0 = 0.81, c05f.s1 = 0.92, c05f.s2 = 1.45;
    gen_steps(&g, "C01", "steps_C01.csv", "2026-09-22", &c01f, &(steps_proto){20, 60, 25, 180, 180, 40, 120});
    gen_steps(&g, "C05", "steps_C05.csv", "2026-09-17", &c05f, &(steps_proto){20, 95, 35, 180, 180, 50, 120});

    xclose(g.manifest, "manifest.csv");
    xclose(g.truth, "truth.csv");
    printf("gen_demo: wrote %d files to %s\n", g.nfiles, g.dir);
    return 0;
}
