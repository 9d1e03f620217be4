/* test_csvin.c: the CSV reader (RFC 4180 via libcsv): physical line numbers, quoting, BOM, CRLF,
 * blanks, --map, and every malformed case with its location. */
#include "cpdomain/csvin.h"
#include "cpdomain/import.h"
#include "cpdomain/status.h"
#include "cpdomain/units.h"
#include "cpdomain/validate.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include "near.h"
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

static char path[64];

static void write_file(const char *text)
{
    snprintf(path, sizeof path, "/tmp/cpd_csv_XXXXXX");
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    assert_int_equal(write(fd, text, strlen(text)), (ssize_t)strlen(text));
    close(fd);
}

static void lines_follow_quoted_line_breaks(void **state)
{
    (void)state;
    write_file("\xEF\xBB\xBF" "A, b ,C\r\n1,\"two\r\nlines\",3\r\n\r\n  4 ,\"x \"\"y\"\"\",\r\n7\r\n");
    cpd_csv *c = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_csv_read(path, &c, msg), CPD_OK);
    assert_int_equal(cpd_csv_ncols(c), 3);
    assert_int_equal(cpd_csv_nrows(c), 3);
    assert_string_equal(cpd_csv_header(c, 1), "b");
    assert_int_equal(cpd_csv_find(c, "B"), 1);
    assert_int_equal(cpd_csv_find(c, "a"), 0); /* the BOM is not part of the name */
    assert_int_equal(cpd_csv_find(c, "d"), -1);
    assert_string_equal(cpd_csv_get(c, 0, 1), "two\r\nlines");
    assert_int_equal(cpd_csv_line(c, 0), 2);
    assert_int_equal(cpd_csv_line(c, 1), 5); /* after the two-line field and a blank line */
    assert_string_equal(cpd_csv_get(c, 1, 0), "4");
    assert_string_equal(cpd_csv_get(c, 1, 1), "x \"y\"");
    assert_string_equal(cpd_csv_get(c, 2, 2), ""); /* short row */
    assert_int_equal(cpd_csv_line(c, 2), 6);
    char where[128];
    cpd_csv_where(c, 1, 2, where, sizeof where);
    assert_non_null(strstr(where, ":5:3: column 'C'"));
    assert_int_equal(cpd_csv_map(c, "alpha=A,cc=c", msg), CPD_OK);
    assert_int_equal(cpd_csv_find(c, "alpha"), 0);
    assert_int_equal(cpd_csv_find(c, "cc"), 2);
    assert_int_equal(cpd_csv_map(c, "x=nothere", msg), CPD_EUSAGE);
    assert_non_null(strstr(msg, "no column 'nothere'"));
    assert_int_equal(cpd_csv_map(c, "broken", msg), CPD_EUSAGE);
    assert_int_equal(cpd_csv_map(c, "b=alpha", msg), CPD_EUSAGE); /* would duplicate a name */
    cpd_csv_free(c);
    unlink(path);
}

/* RFC 4180: what a quoted field holds is kept exactly, blanks included; blanks around an unquoted
 * field are dropped. A header without commas but with semicolons or tabs sets the separator. Blanks
 * around the names of a --map do not count. */
static void quoted_blanks_and_separators(void **state)
{
    (void)state;
    cpd_csv *c = NULL;
    char msg[CPD_MSG_MAX];
    write_file("a,b\n\"  a, b  \", \t x \t\n");
    assert_int_equal(cpd_csv_read(path, &c, msg), CPD_OK);
    assert_string_equal(cpd_csv_get(c, 0, 0), "  a, b  ");
    assert_string_equal(cpd_csv_get(c, 0, 1), "x");
    cpd_csv_free(c);
    unlink(path);
    write_file("ID;name\nA1;\"Ann; B\"\n");
    assert_int_equal(cpd_csv_read(path, &c, msg), CPD_OK);
    assert_int_equal(cpd_csv_ncols(c), 2);
    assert_string_equal(cpd_csv_get(c, 0, 1), "Ann; B");
    assert_int_equal(cpd_csv_map(c, " code = ID ", msg), CPD_OK);
    assert_int_equal(cpd_csv_find(c, "code"), 0);
    cpd_csv_free(c);
    unlink(path);
    write_file("time_s\tvo2_ml_min\n1\t 2000 \n");
    assert_int_equal(cpd_csv_read(path, &c, msg), CPD_OK);
    assert_int_equal(cpd_csv_ncols(c), 2);
    assert_string_equal(cpd_csv_get(c, 0, 1), "2000");
    cpd_csv_free(c);
    unlink(path);
}

static void malformed_files_are_located(void **state)
{
    (void)state;
    static const struct {
        const char *text, *where;
    } bad[] = {
        {"", ":1:1: the file is empty"},
        {"a,b\n1,\"open\n2,3\n", ":2:2: malformed CSV: a quoted field is never closed"},
        {"a,b\n1,2\n3,x\"y\n", ":3:2: malformed CSV"},
        {"a,b\n1,2,3\n", ":2:3: this row has 3 fields"},
        {"a,,c\n1,2,3\n", ":1:2: empty column name"},
        {"a,A\n1,2\n", ":1:2: column 'A' appears twice"},
        {"a,b\n1,\0", "NUL"},
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        if (i == 6) { /* a binary file */
            snprintf(path, sizeof path, "/tmp/cpd_csv_XXXXXX");
            int fd = mkstemp(path);
            assert_int_equal(write(fd, "a,b\n1,\0\n", 8), 8);
            close(fd);
        } else
            write_file(bad[i].text);
        cpd_csv *c = NULL;
        char msg[CPD_MSG_MAX];
        assert_int_equal(cpd_csv_read(path, &c, msg), CPD_EDATA);
        assert_null(c);
        if (!strstr(msg, bad[i].where))
            fail_msg("case %zu: '%s' lacks '%s'", i, msg, bad[i].where);
        unlink(path);
    }
    cpd_csv *c = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_csv_read("/tmp/cpd_no_such_file.csv", &c, msg), CPD_EIO);
}

static void trial_rows_are_validated(void **state)
{
    (void)state;
    int today = 0;
    assert_int_equal(cpd_parse_date("2026-12-01", &today), CPD_OK);
    write_file("athlete,date,speed_m_s,distance_m,duration_s\nR1,2026-11-02,4.62,,5:31\nR1,2026-11-04,,2400,7:58.5\n");
    cpd_trial_batch b;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_import_trials(path, NULL, today, &b, msg), CPD_OK);
    assert_int_equal(b.n, 2);
    assert_int_equal(b.trial[0].kind, CPD_TRIAL_SPEED);
    assert_near(b.trial[0].value, 4.62, 0);
    assert_near(b.trial[0].duration_s, 331, 0);
    assert_int_equal(b.trial[1].kind, CPD_TRIAL_DISTANCE);
    assert_near(b.trial[1].duration_s, 478.5, 0);
    assert_int_equal(b.line[1], 3);
    assert_int_equal(b.athlete_col, 1);
    cpd_trial_batch_free(&b);
    cpd_trial_batch_free(&b); /* idempotent */
    unlink(path);
    write_file("athlete,date,speed_m_s,duration_s\nR1,2026-11-02,16.2,331\n");
    assert_int_equal(cpd_import_trials(path, NULL, today, &b, msg), CPD_EDATA);
    assert_non_null(strstr(msg, ":2:3: column 'speed_m_s': speed must be between 0.1 and 15 m/s (got 16.2)"));
    assert_int_equal(b.n, 0);
    unlink(path);
    char m2[CPD_MSG_MAX];
    assert_int_equal(cpd_validate_code("ok-Code_1.2", m2), CPD_OK);
    assert_int_equal(cpd_validate_code("", m2), CPD_EDATA);
    assert_int_equal(cpd_validate_code("has space", m2), CPD_EDATA);
    assert_int_equal(cpd_validate_code("ABCDEFGHIJKLMNOPQRSTUVWXYZ0123456", m2), CPD_EDATA); /* 33 characters */
    assert_int_equal(cpd_validate_date("2026-12-02", today, m2), CPD_EDATA);
    assert_int_equal(cpd_validate_date("2026-12-01", today, m2), CPD_OK);
}

/* Fields we write: RFC 4180 quoting, and the OWASP "CSV injection" guard for text a spreadsheet
 * would run as a formula, while plain numbers stay numbers. */
static void fields_written_safely(void **state)
{
    (void)state;
    static const struct {
        const char *in, *out;
    } cases[] = {
        {"C01", "C01"},
        {"a, b", "\"a, b\""},
        {"say \"hi\"", "\"say \"\"hi\"\"\""},
        {"=SUM(A1:A9)", "\"'=SUM(A1:A9)\""},
        {"+1+2", "\"'+1+2\""},
        {"-2+3", "\"'-2+3\""},
        {"@cmd", "\"'@cmd\""},
        {"\tx", "\"'\tx\""},
        {"-1600.685", "-1600.685"},
        {"+4e3", "+4e3"},
        {"-inf", "\"'-inf\""},
        {"line\nbreak", "\"line\nbreak\""},
        {"", ""},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char *q = cpd_csv_field(cases[i].in);
        assert_non_null(q);
        assert_string_equal(q, cases[i].out);
        free(q);
    }
    char *q = cpd_csv_field(NULL);
    assert_string_equal(q, "");
    free(q);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(lines_follow_quoted_line_breaks),
        cmocka_unit_test(quoted_blanks_and_separators),
        cmocka_unit_test(malformed_files_are_located),
        cmocka_unit_test(trial_rows_are_validated),
        cmocka_unit_test(fields_written_safely),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
