/* export.h: the whole store as one JSON document (format "cpdomain-store", docs/export-format.md)
 * and back. Rendering and parsing only: the store reads and writes the rows (store_dump.h). The
 * round trip is exact: every value comes back with its storage class and its bits. */
#ifndef CPDOMAIN_EXPORT_H
#define CPDOMAIN_EXPORT_H

#include "cpdomain/store_dump.h"

#include <stddef.h>

#define CPD_EXPORT_FORMAT "cpdomain-store" /* the document's "format" */

/* Renders d as the document: {"format", "schema_version", "tool_version", "tables": {NAME:
 * {"columns": [...], "rows": [[...], ...]}}}, tables in d's order, one row per line. Integers as
 * JSON integers (beyond +-2^53 as {"integer": "DIGITS"}); reals in the fewest of 15-17 significant
 * digits that read back to the same double, always with a '.' or an exponent (non-finite ones as
 * {"real": "inf"}); text as strings (not UTF-8 or with NUL bytes: {"text_base64": ...}); blobs as
 * {"base64": ...} (RFC 4648). *out receives the text (NUL-terminated, *len bytes, ending in a
 * newline); the caller frees it with free(). CPD_EDATA when a value could not be imported again
 * (text or a blob in a numeric column, anything but text in a TEXT column, anything but a blob in
 * a BLOB column), msg naming its JSON path; CPD_ENOMEM. */
int cpd_export_render(const cpd_dump *d, const char *tool_version, char **out, size_t *len, char *msg);

/* Parses a document (text of len bytes) for a store with the given schema (cpd_store_dump_schema):
 * the format name, schema_version equal to schema->schema_version, every table of the schema
 * present with exactly its columns (in any order), each row with one value per column, each value
 * fitting its column (docs/export-format.md). *out receives the rows with the schema's tables and
 * column order; the caller frees it with cpd_dump_free. CPD_EDATA with msg naming the place: the
 * line and column of a JSON syntax error, or the JSON path ("tables.trial.rows[3][5]: expected a
 * number ..."); CPD_ENOMEM. Unknown top-level keys are ignored. */
int cpd_export_parse(const char *text, size_t len, const cpd_dump *schema, cpd_dump **out, char *msg);

/* Reads path ("-": standard input) whole and parses it as cpd_export_parse; messages start with
 * "path: ". CPD_EIO when the file cannot be opened or read; otherwise as cpd_export_parse. */
int cpd_export_read(const char *path, const cpd_dump *schema, cpd_dump **out, char *msg);

/* The same, then every row through the record gate (cpd_validate_dump, dates not after
 * today_days): the first bad value is CPD_EDATA with its JSON path in the document's own column
 * order ("tables.athlete.rows[3][1]: column 'code': ..."). What import uses. */
int cpd_export_parse_checked(const char *text, size_t len, const cpd_dump *schema, int today_days, cpd_dump **out,
                             char *msg);
int cpd_export_read_checked(const char *path, const cpd_dump *schema, int today_days, cpd_dump **out, char *msg);

/* The JSON path of row `row` of table `table` of d ("tables.trial.rows[3]"; "tables.trial" for row
 * SIZE_MAX), for messages about a row the store refused (cpd_store_restore). */
void cpd_export_row_path(const cpd_dump *d, size_t table, size_t row, char *buf, size_t n);

/* ---- base64 (RFC 4648 section 4: the standard alphabet, '=' padding, no line breaks) ---- */

/* Characters that n bytes take, without the NUL: 4 * ceil(n / 3). */
size_t cpd_export_b64_len(size_t n);
/* Writes the encoding of n bytes of in to out: cpd_export_b64_len(n) characters and a NUL. */
void cpd_export_b64_encode(const unsigned char *in, size_t n, char *out);
/* Decodes len characters of in into out (room for len / 4 * 3 bytes); *n receives the bytes.
 * Canonical input only (as cpd_export_b64_encode writes it), so every byte string has one text:
 * CPD_EDATA when the length is not a multiple of 4 (*bad = len), or at the first character that is
 * outside the alphabet, misplaced padding, or padding over non-zero bits (*bad = its 0-based offset). */
int cpd_export_b64_decode(const char *in, size_t len, unsigned char *out, size_t *n, size_t *bad);

#endif
