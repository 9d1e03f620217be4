/* near.h: a double-precision tolerance assertion for the cmocka tests. cmocka's own
 * assert_float_equal converts to float, so tolerances below about 1e-7 relative could not fail. */
#ifndef CPD_TEST_NEAR_H
#define CPD_TEST_NEAR_H

#include <math.h>

/* Passes when |a - b| <= tol; on failure prints both values to 17 digits. Include after cmocka.h. */
#define assert_near(a, b, tol) near_((double)(a), (double)(b), (double)(tol), #a, __FILE__, __LINE__)
static inline void near_(double a, double b, double tol, const char *what, const char *file, int line)
{
    if (!(fabs(a - b) <= tol)) {
        print_error("%s = %.17g, expected %.17g +- %.3g\n", what, a, b, tol);
        _fail(file, line);
    }
}

#endif
