# lib.sh: helpers for CLI tests that run the real binary on temporary stores.
# Each check prints "ok N - what" or "not ok N - what" (tests/run.sh counts them).
# PostgreSQL mode: when CPDOMAIN_TEST_PG holds the URI of a server's superuser (make test-pg sets
# it, from tools/pgcluster.sh), every store is a fresh database on that server instead of a file:
# $DB is its URI, `newdb VAR NAME` makes another one, and all are dropped when the script exits.
set -u
BIN=${CPDOMAIN_BIN:?set CPDOMAIN_BIN to the cpdomain binary}
TESTS=${CPDOMAIN_TESTS:-tests}
TMP=$(mktemp -d /tmp/cpd_cli.XXXXXX)
PGBASE=${CPDOMAIN_TEST_PG:-}
PSQL="env PGOPTIONS=-cclient_min_messages=warning psql -X -q -v ON_ERROR_STOP=1"
# the databases this script made: dropped on exit (WITH (FORCE): a killed writer may linger)
lib_cleanup() {
    if [ -n "$PGBASE" ] && [ -f "$TMP/pgdbs" ]; then
        while read -r _ld; do
            $PSQL "$PGBASE" -c "DROP DATABASE IF EXISTS \"$_ld\" WITH (FORCE)" >/dev/null 2>&1
        done <"$TMP/pgdbs"
    fi
    rm -rf "$TMP"
}
trap lib_cleanup EXIT
export CPDOMAIN_TODAY=2026-12-01   # "today" for date checks, so the tests never age
unset CPDOMAIN_DB
N=0
RC=0

pass() { N=$((N + 1)); echo "ok $N - $1"; }
fail() { N=$((N + 1)); echo "not ok $N - $1"; shift; for l in "$@"; do echo "#   $l"; done; }
# skip WHY [COUNT]: COUNT (default 1) checks that do not apply here, counted and visible (TAP SKIP)
skip() { _lk=${2:-1}; while [ "$_lk" -gt 0 ]; do N=$((N + 1)); echo "ok $N - # SKIP $1"; _lk=$((_lk - 1)); done; }

# pg_uri NAME: the server's URI with the database NAME (the path part of the base URI replaced)
pg_uri() {
    case $PGBASE in
    *://*/*) printf '%s\n' "$PGBASE" | sed "s#^\([a-z]*://[^/]*\)/[^?]*#\1/$1#" ;;
    *\?*) printf '%s\n' "$PGBASE" | sed "s#?#/$1?#" ;;
    *) printf '%s/%s\n' "$PGBASE" "$1" ;;
    esac
}
# newdb VAR NAME: VAR becomes a new, empty store: the file $TMP/NAME.db (not created), or in
# PostgreSQL mode a new empty database (no schema: 'init' makes it) and its URI.
newdb() {
    if [ -z "$PGBASE" ]; then eval "$1=\"\$TMP/$2.db\""; return 0; fi
    _ld=$(printf 'cpdt_%s_%s_%s' "$(basename "$0" .sh)" "$$" "$2" | tr -c 'a-zA-Z0-9_\n' _ | tr A-Z a-z | cut -c1-63)
    $PSQL "$PGBASE" -c "DROP DATABASE IF EXISTS \"$_ld\" WITH (FORCE)" -c "CREATE DATABASE \"$_ld\"" >/dev/null ||
        { echo "Bail out! cannot create the database $_ld on $PGBASE"; exit 1; }
    echo "$_ld" >>"$TMP/pgdbs"
    eval "$1=\"\$(pg_uri \"\$_ld\")\""
}
# freshdb VAR NAME: newdb made again and again: the file removed (with its WAL), or another
# new database each time
FRESH=0
freshdb() {
    if [ -z "$PGBASE" ]; then eval "$1=\"\$TMP/$2.db\""; rm -f "$TMP/$2.db" "$TMP/$2.db-wal" "$TMP/$2.db-shm"; return 0; fi
    FRESH=$((FRESH + 1)); newdb "$1" "$2$FRESH"
}
# dbcopy SRC VAR NAME: VAR becomes a copy of the store SRC (a file copy; CREATE DATABASE ... TEMPLATE)
dbcopy() {
    if [ -z "$PGBASE" ]; then cp "$1" "$TMP/$3.db" && eval "$2=\"\$TMP/$3.db\""; return; fi
    newdb "$2" "$3"
    _ls=$(printf '%s\n' "$1" | sed 's#^[a-z]*://[^/]*/\([^?]*\).*#\1#')
    $PSQL "$PGBASE" -c "DROP DATABASE \"$_ld\"" -c "CREATE DATABASE \"$_ld\" TEMPLATE \"$_ls\"" >/dev/null
}
# sql STORE QUERY: the rows of QUERY on a store, one per line, fields joined by '|'
# (sqlite3's default output; psql -At in PostgreSQL mode). Write queries both engines read alike.
sql() {
    if [ -z "$PGBASE" ]; then sqlite3 "$1" "$2"; else $PSQL -At "$1" -c "$2"; fi
}
# dump STORE: the store's content as text, the same for the same data: sqlite3 .dump, or every
# table of the database in key order (COPY), in name order, with the table's name before it
dump() {
    if [ -z "$PGBASE" ]; then sqlite3 "$1" .dump; return; fi
    $PSQL -At "$1" -c "SELECT table_schema || '.' || table_name FROM information_schema.tables
        WHERE table_type = 'BASE TABLE' AND table_schema NOT IN ('pg_catalog', 'information_schema')
        ORDER BY 1" | while read -r _lt; do
        echo "== $_lt"
        $PSQL "$1" -c "COPY (SELECT * FROM $_lt x ORDER BY x::text COLLATE \"C\") TO STDOUT"
    done
}
# no_store STORE: true when nothing was made: no file, or a database without any table
no_store() {
    if [ -z "$PGBASE" ]; then [ ! -e "$1" ]; return; fi
    [ "$($PSQL -At "$1" -c "SELECT count(*) FROM information_schema.tables WHERE table_schema NOT IN ('pg_catalog', 'information_schema')")" = 0 ]
}
# sqlite_only WHY [COUNT]: true in SQLite mode; in PostgreSQL mode prints COUNT skips (checks of
# the SQLite file itself: its bytes, WAL, corruption, old file versions) and is false.
# Usage: if sqlite_only "why" 3; then ...three checks...; fi
sqlite_only() {
    [ -z "$PGBASE" ] && return 0
    skip "SQLite file only: $1" "${2:-1}"
    return 1
}
newdb DB store

# cpd ARGS...: runs the binary on $DB; stdout in $TMP/out, stderr in $TMP/err, status in RC.
cpd() { ${VALGRIND:-} "$BIN" --db "$DB" "$@" >"$TMP/out" 2>"$TMP/err"; RC=$?; }

# expect RC WHAT ARGS...: runs cpd ARGS and checks the exit status.
expect() {
    want=$1; what=$2; shift 2
    cpd "$@"
    if [ "$RC" -eq "$want" ]; then pass "$what (exit $want)"
    else fail "$what: exit $RC, wanted $want" "stderr: $(head -c 400 "$TMP/err")"; fi
}
# err_has TEXT WHAT: stderr of the last run contains TEXT (fixed string).
err_has() {
    if grep -qF -- "$1" "$TMP/err"; then pass "$2"; else fail "$2: stderr lacks '$1'" "stderr: $(head -c 400 "$TMP/err")"; fi
}
out_has() {
    if grep -qF -- "$1" "$TMP/out"; then pass "$2"; else fail "$2: stdout lacks '$1'" "stdout: $(head -c 400 "$TMP/out")"; fi
}
# json EXPR: evaluates a Python expression on the last stdout parsed as JSON (d), prints it.
json() { /usr/bin/python3 -c "import json,sys; d=json.load(open('$TMP/out')); print(($1))"; }
# json_is EXPR VALUE WHAT
json_is() {
    got=$(json "$1" 2>&1)
    if [ "$got" = "$2" ]; then pass "$3"; else fail "$3: $1 is '$got', wanted '$2'"; fi
}
# snapshot / unchanged: the store file is byte-for-byte what it was, and so is its SQL dump.
# The dump comes first: sqlite3, the last connection, checkpoints the WAL that cpdomain leaves.
# PostgreSQL mode: every row of every table is what it was (dump; sequences may move: a rolled-back
# insert still takes its id).
snapshot() {
    dump "$DB" >"$TMP/db.dump"
    if [ -z "$PGBASE" ]; then sha256sum "$DB" | cut -d' ' -f1 >"$TMP/db.sha"; fi
}
unchanged() {
    if [ -n "$PGBASE" ]; then
        if dump "$DB" | cmp -s - "$TMP/db.dump"; then pass "$1: every row of the store unchanged"
        else fail "$1: the store changed"; fi
        return
    fi
    if [ "$(sha256sum "$DB" | cut -d' ' -f1)" = "$(cat "$TMP/db.sha")" ] && sqlite3 "$DB" .dump | cmp -s - "$TMP/db.dump"
    then pass "$1: store unchanged byte for byte"
    else fail "$1: the store changed"; fi
}
