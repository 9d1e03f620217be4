"""export_check_pg.py: export_check.py for a store on PostgreSQL (the tests' PostgreSQL mode).

Usage: /usr/bin/python3 export_check_pg.py DOC.json URI
Reads the document with Python's json module and the database through psql (each table as JSON,
made by the server: doubles in their shortest exact text, bytea as \\x hex; no code shared with
cpdomain) and prints "ok N" (N values compared) or the first difference. Checks: the format keys;
every table of the document is in the database; every table after the tables its foreign keys
refer to; the columns in table order; the same rows (as multisets: the server has no rowid), each
value of the class its column's type holds and the same value, reals bit for bit (float.hex),
blobs via base64 (RFC 4648). Tables of the database that the document leaves out are named.
"""
import base64
import json
import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from export_check import decode  # noqa: E402  (the document side is read the same way)


def psql(uri, query):
    env = dict(os.environ, PGOPTIONS="-c extra_float_digits=1")
    r = subprocess.run(["psql", "-X", "-q", "-At", "-v", "ON_ERROR_STOP=1", uri, "-c", query],
                       capture_output=True, text=True, env=env, check=False)
    if r.returncode != 0:
        raise SystemExit("psql: " + r.stderr.strip())
    return r.stdout


def lit(s):
    return "'" + s.replace("'", "''") + "'"


INTS = {"integer", "bigint", "smallint"}
REALS = {"double precision", "real", "numeric"}


def stored(typ, v):
    """The server's value as (class, Python value) by its column's type."""
    if v is None:
        return ("null", None)
    if typ in INTS:
        return ("integer", int(v))
    if typ in REALS:
        return ("real", float(v).hex())
    if typ == "bytea":
        return ("blob", bytes.fromhex(v[2:]))
    if typ == "boolean":
        return ("integer", int(v))
    return ("text", str(v).encode("utf-8"))


def main():
    doc = json.load(open(sys.argv[1], encoding="utf-8"))
    uri = sys.argv[2]
    if doc.get("format") != "cpdomain-store":
        return "format is %r" % doc.get("format")
    names = psql(uri, "SELECT table_name FROM information_schema.tables WHERE table_schema = current_schema()"
                      " AND table_type = 'BASE TABLE' ORDER BY 1").split()
    order = list(doc["tables"].keys())
    missing = [t for t in order if t not in names]
    if missing:
        return "tables %r are not in the database" % missing
    extra = [t for t in names if t not in order]
    fks = psql(uri, "SELECT conrelid::regclass::text || ' ' || confrelid::regclass::text FROM pg_constraint"
                    " WHERE contype = 'f'").splitlines()
    for line in fks:
        child, parent = (x.strip('"') for x in line.split())
        if child in order and parent != child and parent in order and order.index(parent) > order.index(child):
            return "table %s comes before its parent %s" % (child, parent)
    n = 0
    for t in order:
        cols = json.loads(psql(uri, "SELECT coalesce(json_agg(json_build_array(column_name, data_type)"
                                    " ORDER BY ordinal_position), '[]') FROM information_schema.columns"
                                    " WHERE table_schema = current_schema() AND table_name = " + lit(t)))
        if doc["tables"][t]["columns"] != [c[0] for c in cols]:
            return "%s: columns %r, store %r" % (t, doc["tables"][t]["columns"], [c[0] for c in cols])
        sel = ", ".join('"%s"' % c[0].replace('"', '""') for c in cols)
        rows = json.loads(psql(uri, 'SELECT coalesce(json_agg(json_build_array(%s)), \'[]\') FROM "%s"'
                                    % (sel, t.replace('"', '""'))))
        rows = sorted([[stored(c[1], v) for c, v in zip(cols, r)] for r in rows], key=repr)
        drows = sorted([[decode(x) for x in r] for r in doc["tables"][t]["rows"]], key=repr)
        if len(rows) != len(drows):
            return "%s: %d rows, store %d" % (t, len(drows), len(rows))
        for i, (a, b) in enumerate(zip(drows, rows)):
            for j, (x, y) in enumerate(zip(a, b)):
                if x != y:
                    return "tables.%s: row %d (sorted) column %d: document %r, store %r" % (t, i, j, x, y)
                n += 1
    print("ok", n, "(tables not exported: %s)" % ", ".join(extra) if extra else "")
    return None


if __name__ == "__main__":
    err = main()
    if err:
        print(err)
        sys.exit(1)
