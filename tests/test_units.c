/* test_units.c: parsing of numbers, durations and dates; formatting; ranges. */
#include "cpdomain/status.h"
#include "cpdomain/units.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <string.h>

static void durations_in_every_spec_form(void **state)
{
    (void)state;
    /* SPEC.md: times accept 390, 390s, 6:30, 6min, 1:02:00 */
    static const struct {
        const char *in;
        double s;
    } ok[] = {{"390", 390}, {"390s", 390}, {"6:30", 390}, {"6min", 360}, {"1:02:00", 3720},
              {" 12.5 ", 12.5}, {"1.5h", 5400}, {"6:30.5", 390.5}, {"0:07", 7}, {"2.385min", 143.1}};
    for (size_t i = 0; i < sizeof ok / sizeof ok[0]; i++) {
        double v = -1;
        assert_int_equal(cpd_parse_duration(ok[i].in, &v), CPD_OK);
        assert_near(v, ok[i].s, 1e-9);
    }
    static const char *const bad[] = {"", "abc", "6:60", "1:2:3:4", "-5", "6:-1", "1.5:30", "inf", "nan",
                                      "0x10", "6 min 3", ":30", "30:", "5m"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        double v = -1;
        assert_int_equal(cpd_parse_duration(bad[i], &v), CPD_EDATA);
        assert_near(v, -1, 0);
    }
}

static void numbers_reject_garbage(void **state)
{
    (void)state;
    double v = 0;
    assert_int_equal(cpd_parse_number(" 287.5 ", &v), CPD_OK);
    assert_near(v, 287.5, 0);
    assert_int_equal(cpd_parse_number("-1.25e2", &v), CPD_OK);
    assert_near(v, -125, 0);
    assert_int_equal(cpd_parse_number("287W", &v), CPD_EDATA);
    assert_int_equal(cpd_parse_number("", &v), CPD_EDATA);
    assert_int_equal(cpd_parse_number("1e999", &v), CPD_EDATA);
    assert_int_equal(cpd_parse_number("infinity", &v), CPD_EDATA);
    assert_int_equal(cpd_parse_number(NULL, &v), CPD_EDATA);
}

static void dates_round_trip_and_reject_invalid(void **state)
{
    (void)state;
    int d = 0;
    assert_int_equal(cpd_parse_date("1970-01-01", &d), CPD_OK);
    assert_int_equal(d, 0);
    assert_int_equal(cpd_parse_date("2026-12-01", &d), CPD_OK);
    assert_int_equal(d, 20788); /* days from 1970-01-01, checked with Python's date.toordinal difference */
    assert_int_equal(cpd_parse_date("2024-02-29", &d), CPD_OK);
    char buf[11];
    cpd_format_date(d, buf);
    assert_string_equal(buf, "2024-02-29");
    for (int k = -20000; k < 40000; k += 37) {
        int back = 0;
        cpd_format_date(k, buf);
        assert_int_equal(cpd_parse_date(buf, &back), CPD_OK);
        assert_int_equal(back, k);
    }
    static const char *const bad[] = {"2023-02-29", "2026-13-01", "2026-00-10", "2026-1-1", "26-01-01",
                                      "2026/01/01", "2026-04-31", "1899-12-31", "tomorrow", ""};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(cpd_parse_date(bad[i], &d), CPD_EDATA);
}

static void formats(void **state)
{
    (void)state;
    char b[32];
    cpd_format_duration(390.4, b, sizeof b);
    assert_string_equal(b, "6:30");
    cpd_format_duration(3725, b, sizeof b);
    assert_string_equal(b, "1:02:05");
    cpd_format_duration(-1, b, sizeof b);
    assert_string_equal(b, "-");
    cpd_format_pace(4.0, 1000, b, sizeof b); /* 1000 m / 4 m/s = 250 s = 4:10 per km */
    assert_string_equal(b, "4:10");
    cpd_format_pace(1.25, 100, b, sizeof b); /* 80 s per 100 m */
    assert_string_equal(b, "1:20");
    cpd_format_pace(0, 1000, b, sizeof b);
    assert_string_equal(b, "-");
}

static void ranges(void **state)
{
    (void)state;
    assert_true(cpd_in_range(&CPD_RANGE_POWER, 287.5));
    assert_false(cpd_in_range(&CPD_RANGE_POWER, 3000.5));
    assert_false(cpd_in_range(&CPD_RANGE_POWER, 0.5));
    char b[128];
    cpd_range_msg(&CPD_RANGE_MASS, 300, b, sizeof b);
    assert_string_equal(b, "body mass must be between 20 and 250 kg (got 300)");
    assert_string_equal(cpd_strerror(CPD_EDATA), "invalid input data");
    assert_string_equal(cpd_strerror(999), "unknown status");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(durations_in_every_spec_form), cmocka_unit_test(numbers_reject_garbage),
        cmocka_unit_test(dates_round_trip_and_reject_invalid), cmocka_unit_test(formats),
        cmocka_unit_test(ranges),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
