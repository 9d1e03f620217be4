/* test_protocol.c: the protocol parser: every intensity and duration form, nested repeats,
 * separators and blanks, the unknown, expansion, and every syntax error with its exact position. */
#include "cpdomain/protocol.h"
#include "cpdomain/status.h"

#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

static cpd_protocol *parse_ok(const char *text)
{
    cpd_protocol *p = NULL;
    char msg[CPD_MSG_MAX];
    int rc = cpd_protocol_parse(text, &p, msg);
    if (rc != CPD_OK)
        fail_msg("'%s' was refused: %s", text, msg);
    assert_non_null(p);
    return p;
}

/* The parse fails with CPD_EDATA, *out stays NULL, and the message is exactly
 * "position POS: " followed by text that contains 'what'. */
static void expect_error(const char *text, size_t pos, const char *what)
{
    cpd_protocol *p = (cpd_protocol *)&p; /* must be reset to NULL */
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_protocol_parse(text, &p, msg), CPD_EDATA);
    assert_null(p);
    char head[32];
    snprintf(head, sizeof head, "position %zu: ", pos);
    if (strncmp(msg, head, strlen(head)) != 0 || !strstr(msg, what))
        fail_msg("'%s': got \"%s\", wanted \"%s...%s...\"", text, msg, head, what);
}

static void one_segment(const char *text, size_t dur, cpd_protocol_kind kind, cpd_protocol_unit unit, double value,
                        cpd_protocol_modality mod)
{
    cpd_protocol *p = parse_ok(text);
    assert_int_equal(p->n, 1);
    assert_int_equal(p->total_s, dur);
    assert_int_equal(p->seg[0].duration_s, dur);
    assert_int_equal(p->seg[0].kind, kind);
    assert_int_equal(p->seg[0].unit, unit);
    assert_int_equal(p->seg[0].pos, 1);
    /* exact decimal-to-double conversions and one division: 1e-15 relative is rounding only */
    assert_true(fabs(p->seg[0].value - value) <= 1e-15 * fabs(value));
    assert_int_equal(p->modality, mod);
    assert_int_equal(p->has_pct, kind == CPD_PROTOCOL_PCT_CP);
    assert_int_equal(p->has_unknown, kind == CPD_PROTOCOL_UNKNOWN);
    cpd_protocol_free(p);
}

static void intensity_and_duration_forms(void **state)
{
    (void)state;
    one_segment("10min@150W", 600, CPD_PROTOCOL_ABS_POWER, CPD_PROTOCOL_UNIT_W, 150, CPD_PROTOCOL_POWER);
    one_segment("390@287.35w", 390, CPD_PROTOCOL_ABS_POWER, CPD_PROTOCOL_UNIT_W, 287.35, CPD_PROTOCOL_POWER);
    one_segment("390s@0W", 390, CPD_PROTOCOL_ABS_POWER, CPD_PROTOCOL_UNIT_W, 0, CPD_PROTOCOL_POWER);
    one_segment("6:30@105%CP", 390, CPD_PROTOCOL_PCT_CP, CPD_PROTOCOL_UNIT_PCT_CP, 105, CPD_PROTOCOL_UNSPECIFIED);
    one_segment("6min@97.5%cp", 360, CPD_PROTOCOL_PCT_CP, CPD_PROTOCOL_UNIT_PCT_CP, 97.5, CPD_PROTOCOL_UNSPECIFIED);
    one_segment("6min@102.5%CS", 360, CPD_PROTOCOL_PCT_CP, CPD_PROTOCOL_UNIT_PCT_CS, 102.5, CPD_PROTOCOL_SPEED);
    one_segment("1:02:00@4.6m/s", 3720, CPD_PROTOCOL_ABS_SPEED, CPD_PROTOCOL_UNIT_M_S, 4.6, CPD_PROTOCOL_SPEED);
    one_segment("1.5h@16.2km/h", 5400, CPD_PROTOCOL_ABS_SPEED, CPD_PROTOCOL_UNIT_KM_H, 16.2 / 3.6, CPD_PROTOCOL_SPEED);
    /* 3:35/km = 215 s per 1000 m; 1:20/100m = 80 s per 100 m */
    one_segment("20min@3:35/km", 1200, CPD_PROTOCOL_ABS_SPEED, CPD_PROTOCOL_UNIT_PACE_KM, 1000.0 / 215.0,
                CPD_PROTOCOL_SPEED);
    one_segment("400s@1:20/100m", 400, CPD_PROTOCOL_ABS_SPEED, CPD_PROTOCOL_UNIT_PACE_100M, 1.25, CPD_PROTOCOL_SPEED);
    one_segment("4min@?", 240, CPD_PROTOCOL_UNKNOWN, CPD_PROTOCOL_UNIT_NONE, 0, CPD_PROTOCOL_UNSPECIFIED);
    one_segment("4min@?W", 240, CPD_PROTOCOL_UNKNOWN, CPD_PROTOCOL_UNIT_W, 0, CPD_PROTOCOL_POWER);
    one_segment("4min@? /km", 240, CPD_PROTOCOL_UNKNOWN, CPD_PROTOCOL_UNIT_PACE_KM, 0, CPD_PROTOCOL_SPEED);
    one_segment("4min@?%CP", 240, CPD_PROTOCOL_UNKNOWN, CPD_PROTOCOL_UNIT_PCT_CP, 0, CPD_PROTOCOL_UNSPECIFIED);
}

static void repeats_separators_and_blanks(void **state)
{
    (void)state;
    /* the example of SPEC.md */
    cpd_protocol *p = parse_ok("10min@150W; 5x(4min@?, 3min@120W); 5min@100W");
    assert_int_equal(p->n, 12);
    assert_int_equal(p->total_s, 600 + 5 * 420 + 300);
    assert_int_equal(p->unknown_s, 5 * 240);
    assert_int_equal(p->modality, CPD_PROTOCOL_POWER);
    assert_true(p->has_unknown);
    assert_int_equal(p->unknown_unit, CPD_PROTOCOL_UNIT_NONE);
    for (size_t k = 0; k < 5; k++) {
        assert_int_equal(p->seg[1 + 2 * k].kind, CPD_PROTOCOL_UNKNOWN);
        assert_int_equal(p->seg[1 + 2 * k].pos, 16);
        assert_int_equal(p->seg[2 + 2 * k].duration_s, 180);
        assert_int_equal(p->seg[2 + 2 * k].pos, 24);
    }
    assert_int_equal(p->seg[11].pos, 36);
    cpd_protocol_free(p);

    /* nesting, both separators, the multiplication sign, blanks everywhere, a trailing ';' */
    const char *forms[] = {
        "2x(1min@300W,3x(30s@400W;15@100W));1:00@50W",
        "  2 x ( 1 min @ 300 W , 3X( 30 s @ 400 W ; 15 @ 100 W ) ) ;\t1:00 @ 50W ; ",
        "2\xc3\x97(1min@300W, 3x(30s@400W; 15@100W,),); 1:00@50W;",
    };
    for (size_t f = 0; f < 3; f++) {
        p = parse_ok(forms[f]);
        assert_int_equal(p->n, 15);
        assert_int_equal(p->total_s, 2 * (60 + 3 * 45) + 60);
        const double want[15] = {300, 400, 100, 400, 100, 400, 100, 300, 400, 100, 400, 100, 400, 100, 50};
        for (size_t i = 0; i < 15; i++)
            assert_true(p->seg[i].value == want[i]);
        assert_int_equal(p->seg[14].duration_s, 60);
        cpd_protocol_free(p);
    }
    /* deepest nesting allowed: 1x( eight times */
    char deep[128] = "";
    for (int i = 0; i < CPD_PROTOCOL_MAX_DEPTH; i++)
        strcat(deep, "1x(");
    strcat(deep, "17@333W");
    for (int i = 0; i < CPD_PROTOCOL_MAX_DEPTH; i++)
        strcat(deep, ")");
    p = parse_ok(deep);
    assert_int_equal(p->total_s, 17);
    cpd_protocol_free(p);
    /* exactly 24 h once expanded is allowed */
    p = parse_ok("2x(6h@180W, 6h@90W)");
    assert_int_equal(p->total_s, CPD_PROTOCOL_MAX_S);
    cpd_protocol_free(p);
    /* the same unknown in several segments, one with a unit hint */
    p = parse_ok("3x(2min@?, 1min@80W); 30s@?W");
    assert_int_equal(p->unknown_s, 3 * 120 + 30);
    assert_int_equal(p->unknown_unit, CPD_PROTOCOL_UNIT_W);
    cpd_protocol_free(p);
}

static void expansion(void **state)
{
    (void)state;
    cpd_protocol *p = parse_ok("3@105%CP, 2@?, 2x(1@0W, 2@172.5W)");
    assert_int_equal(p->total_s, 11);
    double x[12];
    x[11] = -1;
    const double cp = 263.7, u = 411.9;
    assert_int_equal(cpd_protocol_expand(p, cp, u, x, 12), CPD_OK);
    const double want[11] = {
        105 / 100.0 * cp, 105 / 100.0 * cp, 105 / 100.0 * cp, u, u, 0, 172.5, 172.5, 0, 172.5, 172.5};
    for (int i = 0; i < 11; i++)
        assert_true(x[i] == want[i]);
    assert_true(x[11] == -1); /* nothing written past total_s */
    assert_int_equal(cpd_protocol_expand(p, cp, u, x, 10), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_expand(p, 0, u, x, 12), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_expand(p, NAN, u, x, 12), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_expand(p, cp, NAN, x, 12), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_expand(p, cp, -3, x, 12), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_expand(NULL, cp, u, x, 12), CPD_EUSAGE);
    cpd_protocol_free(p);
    /* without %CP or '?' neither cp nor the unknown is needed */
    p = parse_ok("2@4.6m/s");
    assert_int_equal(cpd_protocol_expand(p, 0, NAN, x, 2), CPD_OK);
    assert_true(x[0] == 4.6 && x[1] == 4.6);
    cpd_protocol_free(p);
    assert_string_equal(cpd_protocol_modality_name(CPD_PROTOCOL_POWER), "power");
    assert_string_equal(cpd_protocol_modality_name(CPD_PROTOCOL_SPEED), "speed");
    assert_string_equal(cpd_protocol_modality_name(CPD_PROTOCOL_UNSPECIFIED), "unspecified");
    cpd_protocol_free(NULL);
}

static void full_messages(void **state)
{
    (void)state;
    cpd_protocol *p;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_protocol_parse("10min@150W; 4min 300W", &p, msg), CPD_EDATA);
    assert_string_equal(msg, "position 18: expected '@' after the duration, found '3'");
    assert_int_equal(cpd_protocol_parse("10min@150W; 5x(4min@?, 3min@120W", &p, msg), CPD_EDATA);
    assert_string_equal(msg, "position 33: expected ')' to close the '(' at position 15");
    assert_int_equal(cpd_protocol_parse("4min@300W; 3min@4.6m/s", &p, msg), CPD_EDATA);
    assert_string_equal(msg, "position 17: '4.6m/s' is a speed, but the protocol is in power since position 6 "
                             "(power and speed cannot be mixed)");
    assert_int_equal(cpd_protocol_parse(NULL, &p, msg), CPD_EUSAGE);
    assert_int_equal(cpd_protocol_parse("1@1W", NULL, msg), CPD_EUSAGE);
    /* msg may be NULL */
    assert_int_equal(cpd_protocol_parse("1@1", &p, NULL), CPD_EDATA);
    assert_null(p);
}

static void errors_with_positions(void **state)
{
    (void)state;
    /* missing '@' */
    expect_error("10min150W", 6, "expected '@' after the duration, found '1'");
    expect_error("10min", 6, "expected '@' after the duration, found the end of the text");
    expect_error("30s;1min@200W", 4, "expected '@' after the duration, found ';'");
    /* bad durations */
    expect_error("6mn@300W", 1, "bad duration '6mn'");
    expect_error("1min@100W; 6:75@300W", 12, "bad duration '6:75'");
    expect_error("1:2:3:4@300W", 1, "bad duration '1:2:3:4'");
    expect_error("6:30.5@300W", 1, "is not a whole number of seconds");
    expect_error("0@300W", 1, "shorter than 1 s");
    expect_error("0.5min@300W; 0:00@1W", 14, "shorter than 1 s");
    expect_error("25h@100W", 1, "longer than 24 h");
    expect_error("-5min@100W", 1, "expected a duration");
    expect_error("@300W", 1, "expected a duration");
    expect_error("x(1@1W)", 1, "expected a duration");
    /* bad intensities */
    expect_error("10min@abc", 7, "expected an intensity");
    expect_error("10min@ ", 8,
                 "expected an intensity (e.g. 350W, 105%CP, 4.6m/s, 3:35/km, 1:20/100m or ?), found the end");
    expect_error("10min@300", 10, "expected a unit after '300'");
    expect_error("10min@300 kW", 11, "expected a unit after '300' (W, %CP, %CS, m/s, km/h, /km or /100m), found 'k'");
    expect_error("10min@300Wh", 10, "expected a unit");
    expect_error("10min@4,6m/s", 8, "expected a unit after '4'"); /* a decimal comma */
    expect_error("10min@3:35W", 7, "bad number '3:35'");
    expect_error("10min@1.2.3W", 7, "bad number '1.2.3'");
    expect_error("10min@3:75/km", 7, "bad pace '3:75'");
    expect_error("10min@0/km", 7, "bad pace '0'");
    expect_error("10min@4000W", 7, "power must be between 0 and 3000 W (got '4000W')");
    expect_error("10min@-5W", 7, "power must be between 0 and 3000 W");
    expect_error("10min@1:00/km", 7, "speed must be between 0 and 15 m/s (got 16.67 m/s from '1:00/km')");
    expect_error("10min@60km/h", 7, "speed must be between 0 and 15 m/s");
    expect_error("10min@501%CP", 7, "percentage must be between 0 and 500");
    expect_error("4min@?x", 7, "expected ';' or ','");
    /* unbalanced parentheses and repeats */
    expect_error("2x(1min@300W", 13, "expected ')' to close the '(' at position 3");
    expect_error("2x(1x(1min@300W)", 17, "expected ')' to close the '(' at position 3");
    expect_error("1min@300W)", 10, "unmatched ')'");
    expect_error("2x(1min@300W))", 14, "unmatched ')'");
    expect_error("2x 1min@300W", 4, "expected '(' after '2x', found '1'");
    expect_error("0x(1min@300W)", 1, "repeat count must be at least 1 (got '0x')");
    expect_error("1min@1W; 00 x (1min@300W)", 10, "repeat count must be at least 1 (got '00 x')");
    expect_error("99999999999x(1@1W)", 1, "more than 24 h");
    expect_error("2x(13h@100W)", 1, "more than 24 h (86400 s) once repeats are expanded");
    expect_error("13h@100W; 12h@100W", 11, "more than 24 h");
    expect_error("3x()", 4, "expected a segment (DURATION@INTENSITY) or a repeat Nx( ... ), found ')'");
    {
        char deep[128] = "";
        for (int i = 0; i <= CPD_PROTOCOL_MAX_DEPTH; i++)
            strcat(deep, "1x(");
        strcat(deep, "1@1W");
        expect_error(deep, 3 * CPD_PROTOCOL_MAX_DEPTH + 3, "nested more than 8 deep");
    }
    /* unknowns and modalities */
    expect_error("4min@?W; 3min@?%CP", 15, "a second, different unknown '?%CP' (the first is '?W' at position 6)");
    expect_error("4min@?/km; 3min@?, 1min@? m/s", 25, "different unknown '? m/s' (the first is '?/km' at position 6)");
    expect_error("4min@?W; 3min@4.6m/s", 15, "is a speed, but the protocol is in power since position 6");
    expect_error("4min@3:35/km; 3min@?W", 20, "'?W' is a power, but the protocol is in speed since position 6");
    expect_error("4min@105%CS; 3min@300W", 19, "is a power, but the protocol is in speed");
    /* empty input, empty segments, separators */
    expect_error("", 1, "empty protocol");
    expect_error("   ", 4, "empty protocol");
    expect_error(";10min@150W", 1, "expected a segment");
    expect_error("10min@150W;;5min@100W", 12,
                 "expected a segment (DURATION@INTENSITY) or a repeat Nx( ... ), found ';'");
    expect_error("10min@150W; ;", 13, "found ';'");
    expect_error("2x(;1@1W)", 4, "found ';'");
    expect_error("10min@150W 5min@100W", 12, "expected ';' or ',' between segments, found '5'");
    expect_error("2x(1@1W)3@3W", 9, "expected ';' or ','");
    /* positions count characters, not bytes: the multiplication sign is two bytes */
    expect_error("5\xc3\x97(1min@300W", 13, "expected ')' to close the '(' at position 3");
    expect_error("5\xc3\x97(1min@300W\xc3\x97", 13, "expected ';' or ',' between segments, found '\xc3\x97'");
}

/* Distance segments for runners and swimmers: DISTANCE@SPEED lasts distance/speed, rounded to the
 * nearest second (derived by hand: 400/5.2 = 76.92 -> 77 s; 1500 m at 3:20/km = 300 s; 100 m at
 * 1:20/100m = 80 s), inside repeats like any segment; "m" is metres, minutes stay "min". */
static void distance_segments(void **state)
{
    (void)state;
    cpd_protocol *p = parse_ok("4x(400m@5.2m/s, 90s@2m/s)");
    assert_int_equal(p->n, 8);
    assert_int_equal(p->total_s, 4 * (77 + 90));
    assert_int_equal(p->seg[0].duration_s, 77);
    assert_true(fabs(p->seg[0].distance_m - 400) < 1e-12);
    assert_true(p->seg[1].distance_m == 0);
    assert_int_equal(p->seg[6].duration_s, 77);
    assert_int_equal(p->modality, CPD_PROTOCOL_SPEED);
    cpd_protocol_free(p);
    p = parse_ok("1.5km@3:20/km; 2 x (100 m @ 1:20/100m); 6min@10km/h");
    assert_int_equal(p->seg[0].duration_s, 300);
    assert_true(fabs(p->seg[0].distance_m - 1500) < 1e-9);
    assert_int_equal(p->seg[1].duration_s, 80);
    assert_int_equal(p->seg[3].duration_s, 360);
    cpd_protocol_free(p);
    p = parse_ok("1m@10m/s"); /* shorter than a second still lasts one */
    assert_int_equal(p->total_s, 1);
    cpd_protocol_free(p);
    expect_error("400m@?", 6, "a distance is held at a speed");
    expect_error("400m@105%CS", 6, "with %CS its time is not known");
    expect_error("400m@300W", 6, "with a power");
    expect_error("400m@0m/s", 6, "a speed above 0");
    expect_error("0m@4m/s", 1, "bad distance");
    expect_error("400m 5m/s", 6, "expected '@' after the distance");
    expect_error("20000km@1m/s", 1, "bad distance");
    expect_error("300km@3m/s", 1, "more than 24 h");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(intensity_and_duration_forms),
        cmocka_unit_test(repeats_separators_and_blanks),
        cmocka_unit_test(expansion),
        cmocka_unit_test(distance_segments),
        cmocka_unit_test(full_messages),
        cmocka_unit_test(errors_with_positions),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
