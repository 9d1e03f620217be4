"""export_check.py: an outside check of an 'export' document against the store it came from.

Usage: /usr/bin/python3 export_check.py DOC.json STORE.db
Reads the document with Python's json module and the store with Python's sqlite3 module (neither
shares code with cpdomain) and prints "ok N" (N values compared) or the first difference. Checks:
the format keys; the user tables of the store, each once, every table after the tables its foreign
keys refer to; the columns in table order; every row in primary-key order with each value of the same
storage class and the same value, reals bit for bit (float.hex), blobs via base64 (RFC 4648).
"""
import base64
import json
import sqlite3
import sys


def decode(v):
    """The document's value as (storage class, Python value)."""
    if v is None:
        return ("null", None)
    if isinstance(v, bool):
        return ("bool?", v)
    if isinstance(v, int):
        return ("integer", v)
    if isinstance(v, float):
        return ("real", v.hex())
    if isinstance(v, str):
        return ("text", v.encode("utf-8"))
    if isinstance(v, dict) and len(v) == 1:
        (k, s), = v.items()
        if k == "base64":
            return ("blob", base64.b64decode(s, validate=True))
        if k == "text_base64":
            return ("text", base64.b64decode(s, validate=True))
        if k == "integer":
            return ("integer", int(s))
        if k == "real":
            return ("real", float(s).hex())
    return ("unknown", v)


def stored(cls, v):
    """SQLite's storage class (typeof) and the value; text arrives as bytes (text_factory)."""
    cls = cls.decode()
    if cls == "real":
        return ("real", v.hex())
    return (cls, v)


def main():
    doc = json.load(open(sys.argv[1], encoding="utf-8"))
    db = sqlite3.connect(sys.argv[2])
    db.text_factory = bytes  # text compared as bytes, exactly
    if doc.get("format") != "cpdomain-store":
        return "format is %r" % doc.get("format")
    version = db.execute("PRAGMA user_version").fetchone()[0]
    if doc.get("schema_version") != version:
        return "schema_version %r, store %r" % (doc.get("schema_version"), version)
    names = [r[0].decode() for r in db.execute(
        "SELECT name FROM sqlite_master WHERE type='table' AND name NOT LIKE 'sqlite\\_%' ESCAPE '\\'")]
    order = list(doc["tables"].keys())
    if sorted(order) != sorted(names):
        return "tables %r, store %r" % (order, names)
    for t in order:
        for fk in db.execute("SELECT \"table\" FROM pragma_foreign_key_list(?)", (t,)):
            parent = fk[0].decode()
            if parent != t and order.index(parent) > order.index(t):
                return "table %s comes before its parent %s" % (t, parent)
    n = 0
    for t in order:
        cols = [r[0].decode() for r in db.execute("SELECT name FROM pragma_table_info(?) ORDER BY cid", (t,))]
        if doc["tables"][t]["columns"] != cols:
            return "%s: columns %r, store %r" % (t, doc["tables"][t]["columns"], cols)
        quoted = ", ".join('typeof("%s"), "%s"' % (c, c) for c in cols)
        pk = [r[0].decode() for r in db.execute("SELECT name FROM pragma_table_info(?) WHERE pk > 0 ORDER BY pk", (t,))]
        order_by = ", ".join('"%s"' % c for c in (pk or cols))
        rows = db.execute('SELECT %s FROM "%s" ORDER BY %s' % (quoted, t, order_by)).fetchall()
        rows = [[stored(r[2 * k], r[2 * k + 1]) for k in range(len(cols))] for r in rows]
        drows = doc["tables"][t]["rows"]
        if len(rows) != len(drows):
            return "%s: %d rows, store %d" % (t, len(drows), len(rows))
        for i, (a, b) in enumerate(zip(drows, rows)):
            for j, (x, y) in enumerate(zip(a, b)):
                if decode(x) != y:
                    return "tables.%s.rows[%d][%d]: document %r, store %r" % (t, i, j, decode(x), y)
                n += 1
    print("ok", n)
    return None


if __name__ == "__main__":
    err = main()
    if err:
        print(err)
        sys.exit(1)
