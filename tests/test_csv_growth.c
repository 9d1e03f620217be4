/* test_csv_growth.c: a long CSV field costs linear work: libcsv's field buffer grows by doubling
 * (csv_set_blk_size), not by 128 bytes at a time; and the in-memory reader agrees with the file
 * reader. */
#include "cpdomain/csvin.h"
#include "cpdomain/status.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#define BIG (1u << 20) /* a 1 MB field */

/* "h1,h2\n" then one row whose second field is n bytes of 'x' (quoted when quoted is set). */
static char *long_line(size_t n, int quoted, size_t *len)
{
    char *t = malloc(n + 32);
    assert_non_null(t);
    size_t k = (size_t)sprintf(t, "h1,h2\n7,%s", quoted ? "\"" : "");
    memset(t + k, 'x', n);
    k += n;
    k += (size_t)sprintf(t + k, "%s\n", quoted ? "\"" : "");
    *len = k;
    return t;
}

static void a_long_field_grows_the_buffer_by_doubling(void **state)
{
    (void)state;
    for (int quoted = 0; quoted < 2; quoted++) {
        size_t len = 0;
        char *t = long_line(BIG, quoted, &len);
        cpd_csv *c = NULL;
        char msg[CPD_MSG_MAX];
        assert_int_equal(cpd_csv_parse("long.csv", t, len, &c, msg), CPD_OK);
        assert_int_equal(cpd_csv_nrows(c), 1);
        assert_int_equal(strlen(cpd_csv_get(c, 0, 1)), BIG);
        /* doubling from 128 bytes reaches 1 MB in 13 growths; growing by 128 bytes would take 8192 */
        size_t g = cpd_csv_parser_grows(c);
        print_message("      field buffer growths for a %u-byte %s field: %zu\n", BIG, quoted ? "quoted" : "plain", g);
        assert_true(g <= 40);
        cpd_csv_free(c);
        free(t);
    }
}

static void many_short_lines_grow_little(void **state)
{
    (void)state;
    size_t n = 20000, len = 0;
    char *t = malloc(n * 16 + 16);
    assert_non_null(t);
    len += (size_t)sprintf(t, "a,b\n");
    for (size_t i = 0; i < n; i++)
        len += (size_t)sprintf(t + len, "%zu,%zu\n", i, i * 7);
    cpd_csv *c = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_csv_parse("many.csv", t, len, &c, msg), CPD_OK);
    assert_int_equal(cpd_csv_nrows(c), n);
    assert_string_equal(cpd_csv_get(c, n - 1, 1), "139993");
    assert_true(cpd_csv_parser_grows(c) <= 8);
    cpd_csv_free(c);
    free(t);
}

static void memory_and_file_readers_agree(void **state)
{
    (void)state;
    const char *text = "\xEF\xBB\xBF" "A,b\r\n1,\"two\nlines\"\n\n3,\"x \"\"y\"\"\"\n";
    char path[] = "/tmp/cpd_csvmem_XXXXXX";
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    assert_int_equal(write(fd, text, strlen(text)), (ssize_t)strlen(text));
    close(fd);
    cpd_csv *f = NULL, *m = NULL;
    char msg[CPD_MSG_MAX];
    assert_int_equal(cpd_csv_read(path, &f, msg), CPD_OK);
    assert_int_equal(cpd_csv_parse(path, text, strlen(text), &m, msg), CPD_OK);
    unlink(path);
    assert_int_equal(cpd_csv_nrows(f), cpd_csv_nrows(m));
    for (size_t r = 0; r < cpd_csv_nrows(f); r++) {
        assert_int_equal(cpd_csv_line(f, r), cpd_csv_line(m, r));
        for (size_t j = 0; j < 2; j++)
            assert_string_equal(cpd_csv_get(f, r, j), cpd_csv_get(m, r, j));
    }
    assert_string_equal(cpd_csv_get(m, 1, 1), "x \"y\"");
    assert_int_equal(cpd_csv_line(m, 1), 5);
    cpd_csv_free(f);
    cpd_csv_free(m);
    /* NUL bytes and an empty buffer are refused with a message, as from a file */
    assert_int_equal(cpd_csv_parse("nul.csv", "a\0b\n", 4, &m, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "NUL"));
    assert_int_equal(cpd_csv_parse("empty.csv", "", 0, &m, msg), CPD_EDATA);
    assert_non_null(strstr(msg, "empty"));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(a_long_field_grows_the_buffer_by_doubling),
        cmocka_unit_test(many_short_lines_grow_little),
        cmocka_unit_test(memory_and_file_readers_agree),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
