/* units.c: parsing and formatting of user-typed numbers, durations, dates and paces.
 * Every conversion goes through strtod/strtol with end-pointer checks. */
#include "cpdomain/units.h"
#include "cpdomain/status.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const cpd_range CPD_RANGE_POWER = {"power", 1.0, 3000.0, "W"};
const cpd_range CPD_RANGE_SPEED = {"speed", 0.1, 15.0, "m/s"};
const cpd_range CPD_RANGE_DISTANCE = {"distance", 1.0, 1.0e6, "m"};
const cpd_range CPD_RANGE_DURATION = {"duration", 1.0, 86400.0, "s"};
const cpd_range CPD_RANGE_MASS = {"body mass", 20.0, 250.0, "kg"};
const cpd_range CPD_RANGE_VO2 = {"VO2", 50.0, 10000.0, "mL/min"};
const cpd_range CPD_RANGE_VE = {"VE", 1.0, 400.0, "L/min"};
const cpd_range CPD_RANGE_HR = {"heart rate", 20.0, 250.0, "beats/min"};
const cpd_range CPD_RANGE_PET = {"end-tidal pressure", 5.0, 200.0, "mmHg"};
const cpd_range CPD_RANGE_LACTATE = {"lactate", 0.1, 35.0, "mmol/L"};

int cpd_in_range(const cpd_range *r, double v)
{
    return isfinite(v) && v >= r->lo && v <= r->hi;
}

void cpd_range_msg(const cpd_range *r, double v, char *buf, size_t n)
{
    snprintf(buf, n, "%s must be between %g and %g %s (got %g)", r->what, r->lo, r->hi, r->unit, v);
}

/* Parses a number that must fill [s, end) exactly; blanks around it are allowed. */
static int number_span(const char *s, const char *end, double *out)
{
    while (s < end && isspace((unsigned char)*s))
        s++;
    while (end > s && isspace((unsigned char)end[-1]))
        end--;
    if (s == end || (size_t)(end - s) > 63)
        return CPD_EDATA;
    char tmp[64];
    memcpy(tmp, s, (size_t)(end - s));
    tmp[end - s] = '\0';
    /* strtod accepts "inf", "nan" and hex floats; users mean none of them */
    for (const char *c = tmp; *c; c++)
        if (!(isdigit((unsigned char)*c) || *c == '.' || *c == '-' || *c == '+' || *c == 'e' || *c == 'E'))
            return CPD_EDATA;
    char *e = NULL;
    errno = 0;
    double v = strtod(tmp, &e);
    if (e == tmp || *e != '\0' || errno == ERANGE || !isfinite(v))
        return CPD_EDATA;
    *out = v;
    return CPD_OK;
}

int cpd_parse_number(const char *s, double *out)
{
    if (!s)
        return CPD_EDATA;
    return number_span(s, s + strlen(s), out);
}

int cpd_parse_duration(const char *s, double *out_s)
{
    if (!s)
        return CPD_EDATA;
    const char *end = s + strlen(s);
    while (s < end && isspace((unsigned char)*s))
        s++;
    while (end > s && isspace((unsigned char)end[-1]))
        end--;
    if (s == end)
        return CPD_EDATA;

    double v = 0.0;
    if (memchr(s, ':', (size_t)(end - s))) {
        /* [h:]m:ss[.f]: at most three fields; minutes and seconds below 60 after the first */
        double part[3];
        int k = 0;
        const char *p = s;
        for (;;) {
            const char *c = memchr(p, ':', (size_t)(end - p));
            const char *stop = c ? c : end;
            if (k == 3 || number_span(p, stop, &part[k]) != CPD_OK || part[k] < 0)
                return CPD_EDATA;
            k++;
            if (!c)
                break;
            p = c + 1;
        }
        if (k < 2)
            return CPD_EDATA;
        for (int i = 1; i < k; i++)
            if (part[i] >= 60.0)
                return CPD_EDATA;
        for (int i = 0; i < k - 1; i++)
            if (part[i] != floor(part[i]))
                return CPD_EDATA;
        v = k == 3 ? part[0] * 3600 + part[1] * 60 + part[2] : part[0] * 60 + part[1];
    } else {
        static const struct {
            const char *suffix;
            double scale;
        } units[] = {{"min", 60.0}, {"h", 3600.0}, {"s", 1.0}};
        double scale = 1.0;
        for (size_t i = 0; i < sizeof units / sizeof units[0]; i++) {
            size_t L = strlen(units[i].suffix);
            if ((size_t)(end - s) > L && strncmp(end - L, units[i].suffix, L) == 0) {
                scale = units[i].scale;
                end -= L;
                break;
            }
        }
        if (number_span(s, end, &v) != CPD_OK)
            return CPD_EDATA;
        v *= scale;
    }
    if (!(v >= 0) || !isfinite(v))
        return CPD_EDATA;
    *out_s = v;
    return CPD_OK;
}

/* Days from 1970-01-01 to a proleptic Gregorian civil date (H. Hinnant's algorithm). */
static int days_from_civil(int y, int m, int d)
{
    y -= m <= 2;
    int era = (y >= 0 ? y : y - 399) / 400;
    int yoe = y - era * 400;
    int doy = (153 * (m + (m > 2 ? -3 : 9)) + 2) / 5 + d - 1;
    int doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    return era * 146097 + doe - 719468;
}

int cpd_parse_date(const char *s, int *out_days)
{
    if (!s)
        return CPD_EDATA;
    while (isspace((unsigned char)*s))
        s++;
    size_t L = strlen(s);
    while (L > 0 && isspace((unsigned char)s[L - 1]))
        L--;
    if (L != 10 || s[4] != '-' || s[7] != '-')
        return CPD_EDATA;
    for (size_t i = 0; i < 10; i++)
        if (i != 4 && i != 7 && !isdigit((unsigned char)s[i]))
            return CPD_EDATA;
    int y = (s[0] - '0') * 1000 + (s[1] - '0') * 100 + (s[2] - '0') * 10 + (s[3] - '0');
    int m = (s[5] - '0') * 10 + (s[6] - '0');
    int d = (s[8] - '0') * 10 + (s[9] - '0');
    static const int mdays[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
    if (y < 1900 || y > 2999 || m < 1 || m > 12 || d < 1)
        return CPD_EDATA;
    int leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    if (d > mdays[m - 1] + (m == 2 && leap))
        return CPD_EDATA;
    *out_days = days_from_civil(y, m, d);
    return CPD_OK;
}

void cpd_format_date(int days, char *buf)
{
    int z = days + 719468;
    int era = (z >= 0 ? z : z - 146096) / 146097;
    int doe = z - era * 146097;
    int yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
    int y = yoe + era * 400;
    int doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    int mp = (5 * doy + 2) / 153;
    int d = doy - (153 * mp + 2) / 5 + 1;
    int m = mp + (mp < 10 ? 3 : -9);
    y += m <= 2;
    unsigned uy = (unsigned)(y < 0 ? 0 : y % 10000), um = (unsigned)m % 13u, ud = (unsigned)d % 32u;
    snprintf(buf, 11, "%04u-%02u-%02u", uy, um, ud);
}

void cpd_format_duration(double s, char *buf, size_t n)
{
    if (!isfinite(s) || s < 0) {
        snprintf(buf, n, "-");
        return;
    }
    long t = lround(s);
    if (t >= 3600)
        snprintf(buf, n, "%ld:%02ld:%02ld", t / 3600, (t / 60) % 60, t % 60);
    else
        snprintf(buf, n, "%ld:%02ld", t / 60, t % 60);
}

void cpd_format_pace(double v_m_s, double per_m, char *buf, size_t n)
{
    if (!isfinite(v_m_s) || v_m_s <= 0 || !isfinite(per_m) || per_m <= 0) {
        snprintf(buf, n, "-");
        return;
    }
    cpd_format_duration(per_m / v_m_s, buf, n);
}
