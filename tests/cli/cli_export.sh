# cli_export.sh: 'export' and 'import' through the real binary: the round trip is exact (the same
# document byte for byte, the same SQL dump, every value checked by Python against the store), on a
# store with every kind of data and on the demo store; every bad document is refused, located, and
# leaves the store as it was.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md)
D="$CPDOMAIN_TESTS/data/csv"
# outside check: Python's json and sqlite3 modules compare the document with the store, value by value
# (PostgreSQL mode: export_check_pg.py reads the database through psql's JSON)
check() {
    if [ -z "$PGBASE" ]; then got=$(/usr/bin/python3 "$CPDOMAIN_TESTS/ref/export_check.py" "$1" "$2" 2>&1)
    else got=$(/usr/bin/python3 "$CPDOMAIN_TESTS/ref/export_check_pg.py" "$1" "$2" 2>&1); fi
    case "$got" in ok*) pass "$3 ($got values)" ;; *) fail "$3" "$got" ;; esac
}
same() { # same FILE1 FILE2 WHAT
    if cmp -s "$1" "$2"; then pass "$3"; else fail "$3" "$(diff "$1" "$2" | head -c 600)"; fi
}
newdb A a
newdb B b
# the store's schema version: SQLite's user_version, or what init reports on PostgreSQL
schema_version() {
    if [ -z "$PGBASE" ]; then sqlite3 "$1" 'PRAGMA user_version'
    else "$BIN" --db "$1" --json init | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["version"])'; fi
}

for sub in export import; do
    expect 0 "$sub --help" $sub --help
    out_has "example" "$sub --help has an example"
done

# ---- a store with every kind of data ----
DB=$A
expect 0 "init" init
NOTE=$(printf 'ergometer "B", seat 4,\nsecond line; café Ålesund – W′ ≥ 5 😀')
expect 0 "athlete with UTF-8 and quotes" athlete add C03 --name "Tomasz \"Tom\" Ekberg, jr" --mass 71.4 --notes "$NOTE"
expect 0 "athlete without a mass" athlete add R07 --name "Ines Varga" --sport running
expect 0 "ramp athlete" athlete add C01 --name "Ramp Rider" --mass 61
expect 0 "trial with an awkward note" trial add C03 --date 2026-10-14 --power 312.7 --duration 7:05 --note "$NOTE"
expect 0 "trials from a file (quotes, commas, line breaks)" trial import "$D/trials_ok.csv"
expect 0 "exclude one" trial exclude 3 --reason "wind, \"gusty\""
expect 0 "fit (saved with its models and trials)" fit C03
expect 0 "ramp with sample blobs" ramp add C01 "$DEMO/ramp_C01.csv" --date 2026-09-29 --rate 25 --start 30 --onset 3:00
expect 0 "a reviewer's GET" ramp set 1 --get-vo2 2403.7
expect 0 "lactate test" lactate add C01 "$DEMO/lactate_C01.csv" --date 2026-10-01
n=$(sql "$A" "SELECT (SELECT count(*) FROM fit_model) || ',' || (SELECT count(*) FROM gx_channel) || ',' || (SELECT count(*) FROM lactate_stage)")
case "$n" in 0,*|*,0,*|*,0) fail "the store lacks fits, channels or stages: $n" ;; *) pass "fits, channels and stages stored ($n)" ;; esac

expect 0 "export to stdout" export
cp "$TMP/out" "$TMP/a.json"
/usr/bin/python3 -c "import json; json.load(open('$TMP/a.json', encoding='utf-8'))" 2>"$TMP/err" \
    && pass "the document is JSON to Python's parser" || fail "Python cannot parse the document" "$(cat "$TMP/err")"
json_is 'd["format"], d["schema_version"], list(d["tables"])[:2]' "('cpdomain-store', $(schema_version "$A"), ['squad', 'athlete'])" \
    "format, store version, parents first: squads, then athletes"
json_is 'd["tool_version"] == "'"$("$BIN" --version | cut -d' ' -f2)"'"' True "tool_version is this cpdomain's"
json_is '[r[5] for r in d["tables"]["athlete"]["rows"] if r[1] == "C03"][0] == """'"$NOTE"'"""' True "the UTF-8 note is a plain string"
json_is 'd["tables"]["gx_channel"]["rows"][0][2]["base64"][:4] != ""' True "samples are base64"
check "$TMP/a.json" "$A" "every value of the document equals the store's (Python sqlite3, reals bit for bit)"
expect 0 "export -o" export -o "$TMP/a2.json"
same "$TMP/a.json" "$TMP/a2.json" "-o writes the same document as stdout"
err_has "exported 3 athletes" "export says what it wrote"
expect 0 "export -o with --json" --json export -o "$TMP/a3.json"
json_is 'd["athletes"], d["rows"]["trial"], d["file"].endswith("a3.json")' "(3, 6, True)" "--json summary of the export"

DB=$B
expect 0 "init a new store" init
expect 0 "import" --json import "$TMP/a.json"
json_is 'd["athletes"], d["rows"]["trial"], d["rows"]["lactate_stage"] > 3' "(3, 6, True)" "--json summary of the import"
expect 0 "export the imported store" export -o "$TMP/b.json"
same "$TMP/a.json" "$TMP/b.json" "export, import, export: the two documents are byte-identical"
# the same schema and the same rows; a table without an INTEGER PRIMARY KEY is renumbered in key order
dump "$A" | LC_ALL=C sort >"$TMP/a.dump"
dump "$B" | LC_ALL=C sort >"$TMP/b.dump"
same "$TMP/a.dump" "$TMP/b.dump" "the SQL dump of both stores has the same lines"
check "$TMP/a.json" "$B" "every value of the imported store equals the document's"
for q in "trial list C03" "athlete show C03" "ramp show 1" "lactate show 1"; do
    DB=$A; cpd --json $q; cp "$TMP/out" "$TMP/q_a"
    DB=$B; cpd --json $q
    same "$TMP/q_a" "$TMP/out" "'$q' gives the same answer on both stores"
done
newdb C c
"$BIN" --db "$C" --quiet init && "$BIN" --db "$C" --quiet import - <"$TMP/a.json" && "$BIN" --db "$C" export >"$TMP/c.json" \
    && same "$TMP/a.json" "$TMP/c.json" "import - reads standard input" || fail "import from standard input"

# ---- the demo store (demo/run.sh, in a copy of demo/ so the tree stays clean) ----
mkdir -p "$TMP/demo" && cp -r "$CPDOMAIN_TESTS/../demo/run.sh" "$DEMO" "$TMP/demo/"
DEMODB="$TMP/demo/demo.db"; [ -n "$PGBASE" ] && newdb DEMODB demo
if CPDOMAIN_DEMO_DB=$DEMODB sh "$TMP/demo/run.sh" "$BIN" >"$TMP/demo.log" 2>&1 && ! no_store "$DEMODB"; then
    pass "demo store built"
    DB=$DEMODB
    expect 0 "export the demo store" export -o "$TMP/demo_a.json"
    check "$TMP/demo_a.json" "$DB" "demo document equals the demo store"
    newdb DB demo_b
    expect 0 "init" init
    expect 0 "import the demo document" import "$TMP/demo_a.json"
    expect 0 "export again" export -o "$TMP/demo_b.json"
    same "$TMP/demo_a.json" "$TMP/demo_b.json" "demo: the two documents are byte-identical"
    dump "$DEMODB" | LC_ALL=C sort >"$TMP/a.dump"
    dump "$DB" | LC_ALL=C sort >"$TMP/b.dump"
    same "$TMP/a.dump" "$TMP/b.dump" "demo: the SQL dump of both stores has the same lines"
else
    fail "demo/run.sh failed" "$(tail -5 "$TMP/demo.log")"
fi

# ---- bad documents: exit 65, the place named, an empty store left byte for byte as it was ----
newdb DB empty
expect 0 "init an empty store" init
snapshot
# edit OUT PYTHON: a copy of a.json changed by a Python statement on d
edit() { /usr/bin/python3 -c "import json; d = json.load(open('$TMP/a.json', encoding='utf-8')); $2; json.dump(d, open('$1', 'w'))"; }
bad() { # bad FILE RC MESSAGE WHAT
    expect "$2" "$4" import "$1"
    err_has "$3" "$4: message"
    unchanged "$4"
}
printf '{\n  "format": "cpdomain-store",\n  "tables": [1, 2,, 3]\n}\n' >"$TMP/notjson.json"
bad "$TMP/notjson.json" 65 "notjson.json: not JSON: syntax error near line 3, column" "not JSON"
head -c 2000 "$TMP/a.json" >"$TMP/cut.json"
bad "$TMP/cut.json" 65 "cut.json: not JSON: syntax error near line" "a truncated document"
: >"$TMP/empty.json"
bad "$TMP/empty.json" 65 "empty.json: not JSON: the document is empty" "an empty file"
sed 's/"cpdomain-store"/"cpdomain-backup"/' "$TMP/a.json" >"$TMP/fmt.json"
bad "$TMP/fmt.json" 65 "format: expected \"cpdomain-store\", got \"cpdomain-backup\"" "a wrong format name"
edit "$TMP/old.json" 'd["schema_version"] -= 1'
bad "$TMP/old.json" 65 "schema_version: the document is of store version" "an older schema version"
err_has "import does not upgrade: import it with cpdomain" "an older version: how to proceed"
edit "$TMP/new.json" 'd["schema_version"] += 1'
bad "$TMP/new.json" 65 "use a newer cpdomain" "a newer schema version"
edit "$TMP/nocol.json" 't = d["tables"]["trial"]; j = t["columns"].index("note"); t["columns"].pop(j); [r.pop(j) for r in t["rows"]]'
bad "$TMP/nocol.json" 65 "tables.trial.columns: missing column 'note'" "a missing column"
edit "$TMP/str.json" 'd["tables"]["trial"]["rows"][3][5] = "7:05"'
bad "$TMP/str.json" 65 "tables.trial.rows[3][5]: expected a number (column 'duration_s', REAL), got a string" "a string where a number belongs"
edit "$TMP/table.json" 'd["tables"]["team_roster"] = {"columns": [], "rows": []}'
bad "$TMP/table.json" 65 "tables.team_roster: unknown table" "an unknown table"
edit "$TMP/b64.json" 'd["tables"]["gx_channel"]["rows"][1][2]["base64"] = "AA*A"'
bad "$TMP/b64.json" 65 "tables.gx_channel.rows[1][2].base64: not base64 (character 3, '*')" "bad base64"
edit "$TMP/check.json" 'd["tables"]["athlete"]["rows"][1][3] = "hockey"'
bad "$TMP/check.json" 65 "tables.athlete.rows[1][3]: column 'sport': sport must be cycling" "a sport the validators refuse"
edit "$TMP/check.json" 'd["tables"]["trial"]["rows"][1][6] = 2'
bad "$TMP/check.json" 65 "tables.trial.rows[1]: the store refuses this row: CHECK constraint failed" "a row the schema's CHECK refuses"
edit "$TMP/fk.json" 'd["tables"]["trial"]["rows"][4][1] = 999'
bad "$TMP/fk.json" 65 "tables.trial.rows[4]: the store refuses this row: FOREIGN KEY constraint failed" "a trial of no athlete"
edit "$TMP/dup.json" 'r = d["tables"]["athlete"]["rows"]; r[2][1] = r[0][1]'
bad "$TMP/dup.json" 65 "tables.athlete.rows[2]: the store refuses this row: UNIQUE constraint failed: athlete.code" "a duplicate athlete code"
bad "$TMP/nope.json" 66 "nope.json: cannot open" "a missing file"
bad "$TMP" 66 "cannot read" "a directory"

# ---- a store that holds data is refused, whatever the document ----
DB=$A
snapshot
expect 65 "import into a store with data" import "$TMP/a.json"
err_has "the store is not empty (table 'athlete' has 3 rows): import into a new store, made with init" "non-empty store explained"
unchanged "import into a non-empty store"
expect 65 "even with a bad document" import "$TMP/notjson.json"
err_has "the store is not empty" "the store is named first"
unchanged "import of a bad document into a non-empty store"

# ---- missing stores, outputs, usage ----
newdb DB none
expect 66 "export without a store" export
err_has "init" "export: run init"
expect 66 "import without a store" import "$TMP/a.json"
no_store "$DB" && pass "no store was created" || fail "import created a store"
DB=$A
expect 73 "export to an impossible path" export -o "$TMP/no/dir/a.json"
err_has "cannot create '$TMP/no/dir/a.json'" "impossible path named"
expect 73 "export to a full disk" export -o /dev/full
err_has "writing '/dev/full' failed" "full disk named"
[ -c /dev/full ] && pass "a device given to -o is never removed" || fail "/dev/full is gone"
"$BIN" --db "$A" export >/dev/full 2>"$TMP/err"; RC=$?
[ "$RC" = 74 ] && pass "a full stdout is reported (exit 74)" || fail "export to a full stdout: exit $RC"
expect 64 "export with an argument" export a.json
expect 64 "export -o without a file" export -o
expect 64 "import without a file" import
expect 64 "import of two files" import "$TMP/a.json" "$TMP/b.json"
expect 64 "an unknown option" import --force "$TMP/a.json"
