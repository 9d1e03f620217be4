/* csvfast.h (internal to the import modules): the fast path for the plain numeric CSV that
 * devices write (a header of names, then rows of numbers separated by commas), parsed straight
 * from the file's bytes into the caller's arrays. Anything else is left to the full parser
 * (csvin.h), which also words every error: this path never reports one. */
#ifndef CPDOMAIN_CSVFAST_H
#define CPDOMAIN_CSVFAST_H

#include <stddef.h>

/* An upper bound on the data rows of the len bytes at buf (its line ends, plus one). */
size_t cpd_csvfast_rows_bound(const char *buf, size_t len);

/* Finds the nwant column names want[k] in the header of buf (case-insensitive, blanks around
 * the header's fields dropped, the first match; col[k] receives the column or -1) and parses
 * every data row's field of each found column into dst[k][row] (dst[k] has room for cap rows).
 * Plain means: an optional UTF-8 byte-order mark; no quote and no NUL anywhere; LF or CRLF line
 * ends; no blank line but a last line end; every row with exactly the header's number of fields;
 * every wanted field a decimal number [+-]digits[.digits] with blanks around it at most. Returns
 * the number of data rows (0 with a header only), or -1 when buf is not plain or has more than
 * cap rows. Every number is the double strtod gives for its text. */
long cpd_csvfast_numbers(const char *buf, size_t len, size_t nwant, const char *const *want, int *col,
                         double *const *dst, size_t cap);

#endif
