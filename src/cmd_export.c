/* cmd_export.c: 'export' (the whole store as one JSON document) and 'import' (such a document into
 * a new store). The store reads and writes the rows, the export module renders and parses. */
#include "commands.h"
#include "cpdomain/export.h"
#include "cpdomain/store_dump.h"
#include "cpdomain/version.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sysexits.h>

static const char HELP_EXPORT[] =
    "usage: cpdomain export [-o FILE]\n\n"
    "Writes the whole store as one JSON document: every table and row, each value exactly as stored\n"
    "(reals to the last bit, blobs in base64). The format is described in docs/export-format.md.\n"
    "To standard output, or to FILE with -o (with --json, a summary then goes to standard output).\n"
    "'cpdomain import' reads it back into a new store; exporting that store gives the same document\n"
    "byte for byte.\n\n"
    "examples:\n"
    "  cpdomain --db lab.db export -o lab-2026-12-01.json\n"
    "  cpdomain --db lab.db export | gzip > lab-2026-12-01.json.gz\n";

static const char HELP_IMPORT[] =
    "usage: cpdomain import FILE\n\n"
    "Reads a document written by 'cpdomain export' into a new, empty store: make the store with\n"
    "'init' first; a store that holds anything is refused. All or nothing: the whole document is\n"
    "checked against the store's schema before a row is written, and a bad value is named by its\n"
    "JSON path (e.g. tables.trial.rows[3][5]). The document must be of this cpdomain's store version;\n"
    "an older one is refused with the way to upgrade it. FILE '-' reads standard input.\n\n"
    "examples:\n"
    "  cpdomain --db copy.db init\n"
    "  cpdomain --db copy.db import lab-2026-12-01.json\n"
    "  cpdomain --db from-gz.db init && gunzip -c lab-2026-12-01.json.gz | cpdomain --db from-gz.db import -\n";

typedef struct {
    const char *output;
} export_opts;

static int export_opt(int opt, const char *arg, void *ud)
{
    export_opts *o = ud;
    if (opt != 'o')
        return EX_USAGE;
    o->output = arg;
    return 0;
}

static const struct option export_longopts[] = {
    {"output", required_argument, NULL, 'o'},
    {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0},
};

static const struct option import_longopts[] = {
    {"help", no_argument, NULL, 'h'},
    {NULL, 0, NULL, 0},
};

static size_t total_rows(const cpd_dump *d)
{
    size_t n = 0;
    for (size_t k = 0; k < d->ntables; k++)
        n += d->table[k].nrows;
    return n;
}

static size_t athletes(const cpd_dump *d)
{
    long k = cpd_dump_find_table(d, "athlete");
    return k < 0 ? 0 : d->table[k].nrows;
}

/* {"file", "schema_version", "athletes", "rows": {TABLE: N, ...}} */
static int summary_json(const char *file, const cpd_dump *d)
{
    cli_json *doc = cj_obj();
    cj_str(doc, "file", file);
    cj_int(doc, "schema_version", d->schema_version);
    cj_int(doc, "athletes", (long long)athletes(d));
    cli_json *rows = cj_add_obj(doc, "rows");
    for (size_t k = 0; k < d->ntables; k++)
        cj_int(rows, d->table[k].name, (long long)d->table[k].nrows);
    return cj_print(doc);
}

int cmd_export(cli_ctx *c, int argc, char **argv)
{
    export_opts o = {0};
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "ho:", export_longopts, HELP_EXPORT, export_opt, &o, &first, &done);
    if (rc || done)
        return rc;
    if (first < argc)
        return cli_usage("export", "unexpected argument '%s'", argv[first]);
    if ((rc = cli_open(c, 0)))
        return rc;
    cpd_dump *d = NULL;
    if ((rc = cpd_store_dump(c->store, &d)))
        return cli_store_fail(c, rc);
    char *text = NULL;
    size_t len = 0;
    char msg[CPD_MSG_MAX];
    int ex = 0;
    if ((rc = cpd_export_render(d, CPDOMAIN_VERSION, &text, &len, msg))) {
        ex = cli_fail(c, rc, "%s", rc == CPD_ENOMEM ? "out of memory while writing the document" : msg);
        goto done;
    }
    if (!o.output) {
        if (fwrite(text, 1, len, stdout) != len) {
            perror("cpdomain: writing the output");
            ex = EX_IOERR;
        }
        goto done;
    }
    if ((ex = cli_write_file(c, o.output, text, len)))
        goto done;
    if (c->json)
        ex = summary_json(o.output, d);
    else
        cli_note(c, "exported %zu athletes, %zu rows in %zu tables, to %s", athletes(d), total_rows(d), d->ntables,
                 o.output);
done:
    free(text);
    cpd_dump_free(d);
    return ex;
}

static int no_opt(int opt, const char *arg, void *ud)
{
    (void)opt;
    (void)arg;
    (void)ud;
    return EX_USAGE;
}

int cmd_import(cli_ctx *c, int argc, char **argv)
{
    int first = 0, done = 0;
    int rc = cli_getopt(argc, argv, "h", import_longopts, HELP_IMPORT, no_opt, NULL, &first, &done);
    if (rc || done)
        return rc;
    if (first >= argc)
        return cli_usage("import", "missing argument FILE");
    if (argc - first > 1)
        return cli_usage("import", "unexpected argument '%s'", argv[first + 1]);
    const char *path = argv[first];
    if ((rc = cli_open(c, 0)))
        return rc;
    /* Before reading a possibly large file: a store that holds data is refused whatever the file. */
    if ((rc = cpd_store_check_empty(c->store)))
        return cli_store_fail(c, rc);
    cpd_dump *schema = NULL, *d = NULL;
    if ((rc = cpd_store_dump_schema(c->store, &schema)))
        return cli_store_fail(c, rc);
    char msg[CPD_MSG_MAX];
    rc = cpd_export_read_checked(path, schema, c->today, &d, msg); /* the format, then the record gate */
    cpd_dump_free(schema);
    if (rc)
        return cli_fail(c, rc, "%s", rc == CPD_ENOMEM ? "out of memory while reading the document" : msg);
    int ex = 0;
    size_t bad_table = 0, bad_row = 0;
    if ((rc = cpd_store_begin(c->store)) || (rc = cpd_store_restore(c->store, d, &bad_table, &bad_row)) ||
        (rc = cpd_store_commit(c->store))) {
        if (rc == CPD_EDATA && bad_table < d->ntables) {
            char where[CPD_MSG_MAX / 2];
            cpd_export_row_path(d, bad_table, bad_row, where, sizeof where);
            cpd_store_rollback(c->store);
            ex = cli_fail(c, rc, "%s: %s: the store refuses this row: %s", path, where, cpd_store_errmsg(c->store));
        } else
            ex = cli_store_fail(c, rc);
        goto done;
    }
    if (c->json)
        ex = summary_json(path, d);
    else
        cli_note(c, "imported %zu athletes, %zu rows in %zu tables, from %s", athletes(d), total_rows(d), d->ntables,
                 path);
done:
    cpd_dump_free(d);
    return ex;
}
