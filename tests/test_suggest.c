/* test_suggest.c: edit distance and "did you mean". */
#include "cpdomain/suggest.h"

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

/* Distances worked by hand from the definition (optimal string alignment, Damerau 1964): a swap
 * of neighbours costs 1, unlike plain Levenshtein where "ca" -> "ac" costs 2. */
static void distances(void **state)
{
    (void)state;
    assert_int_equal(cpd_edit_distance("kitten", "sitting", 0), 3); /* the textbook pair */
    assert_int_equal(cpd_edit_distance("predict", "predcit", 0), 1);
    assert_int_equal(cpd_edit_distance("ca", "abc", 0), 3);       /* OSA, not full Damerau (2) */
    assert_int_equal(cpd_edit_distance("C01", "c01", 0), 1);
    assert_int_equal(cpd_edit_distance("C01", "c01", 1), 0);
    assert_int_equal(cpd_edit_distance("", "sheet", 0), 5);
    assert_int_equal(cpd_edit_distance(NULL, "ab", 0), 2);
    assert_int_equal(cpd_edit_distance("fit", "fit", 0), 0);
}

static void suggestions(void **state)
{
    (void)state;
    const char *cmds[] = {"init", "athlete", "trial", "predict", "solve", "sheet", NULL, "domains"};
    assert_string_equal(cpd_suggest("predcit", cmds, 8), "predict");
    assert_string_equal(cpd_suggest("SHEET", cmds, 8), "sheet");
    assert_string_equal(cpd_suggest("domians", cmds, 8), "domains");
    assert_string_equal(cpd_suggest("slove", cmds, 8), "solve");
    assert_null(cpd_suggest("zzzzzz", cmds, 8));
    assert_null(cpd_suggest("xy", cmds, 8)); /* short words: at most one edit */
    assert_null(cpd_suggest("", cmds, 8));
    assert_null(cpd_suggest(NULL, cmds, 8));
    assert_null(cpd_suggest("fit", NULL, 3));
    const char *codes[] = {"C01", "C02", "R01"};
    assert_string_equal(cpd_suggest("C0l", codes, 3), "C01"); /* the first of equals */
    assert_string_equal(cpd_suggest("r01", codes, 3), "R01");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(distances),
        cmocka_unit_test(suggestions),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
