/* csvin.h: reading a CSV file (RFC 4180, via libcsv) into a table that remembers the physical
 * line of every row, so each bad value can be reported as file:line:column. */
#ifndef CPDOMAIN_CSVIN_H
#define CPDOMAIN_CSVIN_H

#include <stddef.h>

typedef struct cpd_csv cpd_csv;

/* Reads the whole file: header row first; a UTF-8 byte-order mark and CRLF line ends are
 * accepted; blanks around unquoted fields are dropped, a quoted field is kept exactly (RFC 4180);
 * blank lines are skipped. A header line without a comma but with semicolons (or tabs) makes ';'
 * (or a tab) the separator. A row with more
 * fields than the header is an error; missing trailing fields read as "". Returns CPD_OK,
 * CPD_EIO when the file cannot be read, CPD_EDATA for malformed CSV (msg says file:line:column,
 * a bad quoted field at the line where it opened), CPD_ENOMEM. msg has CPD_MSG_MAX bytes.
 * The caller frees *out with cpd_csv_free. */
int cpd_csv_read(const char *path, cpd_csv **out, char *msg);
/* The same from len bytes in memory (which may hold anything, NUL bytes too: they are refused);
 * path only names the text in messages. */
int cpd_csv_parse(const char *path, const char *buf, size_t len, cpd_csv **out, char *msg);
/* How many times libcsv's field buffer grew while reading c: the buffer at least doubles each
 * time, so a field of n bytes costs O(log n) growths (a check for tests). */
size_t cpd_csv_parser_grows(const cpd_csv *c);
void cpd_csv_free(cpd_csv *c);

size_t cpd_csv_nrows(const cpd_csv *c); /* data rows, header excluded */
size_t cpd_csv_ncols(const cpd_csv *c); /* header fields */
const char *cpd_csv_path(const cpd_csv *c);
const char *cpd_csv_header(const cpd_csv *c, size_t col);
/* Field col of data row row ("" when the row is short). */
const char *cpd_csv_get(const cpd_csv *c, size_t row, size_t col);
/* Physical line (from 1; the header is line 1 of a file without blank lines) where row begins. */
long cpd_csv_line(const cpd_csv *c, size_t row);

/* Applies a --map option "NAME=HEADER[,NAME=HEADER...]": the column headed HEADER is read as
 * NAME. CPD_EUSAGE (with msg) for bad syntax or a HEADER the file does not have. */
int cpd_csv_map(cpd_csv *c, const char *map, char *msg);

/* Index of the column named name (case-insensitive), or -1. */
int cpd_csv_find(const cpd_csv *c, const char *name);

/* One field for a CSV file we write, as a new string (free with free()): RFC 4180 quoted when it
 * holds a comma, quote or line end; text starting with = + - @ (or tab, CR) would run as a formula
 * in a spreadsheet (the OWASP "CSV injection" advice), so it gets an apostrophe in front and
 * quotes; a plain number ("-3.25", "+4e3") is data, not a formula, and stays a number. NULL reads
 * as "". Returns NULL only when out of memory. */
char *cpd_csv_field(const char *text);

/* Writes "FILE:LINE:COL: column 'NAME'" for field col of row into buf of size n. */
void cpd_csv_where(const cpd_csv *c, size_t row, int col, char *buf, size_t n);

#endif
