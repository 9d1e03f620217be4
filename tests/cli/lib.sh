# lib.sh: helpers for CLI tests that run the real binary on temporary stores.
# Each check prints "ok N - what" or "not ok N - what" (tests/run.sh counts them).
set -u
BIN=${CPDOMAIN_BIN:?set CPDOMAIN_BIN to the cpdomain binary}
TESTS=${CPDOMAIN_TESTS:-tests}
TMP=$(mktemp -d /tmp/cpd_cli.XXXXXX)
trap 'rm -rf "$TMP"' EXIT
export CPDOMAIN_TODAY=2026-12-01   # "today" for date checks, so the tests never age
unset CPDOMAIN_DB
DB="$TMP/store.db"
N=0
RC=0

pass() { N=$((N + 1)); echo "ok $N - $1"; }
fail() { N=$((N + 1)); echo "not ok $N - $1"; shift; for l in "$@"; do echo "#   $l"; done; }

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
snapshot() { sqlite3 "$DB" .dump >"$TMP/db.dump"; sha256sum "$DB" | cut -d' ' -f1 >"$TMP/db.sha"; }
unchanged() {
    if [ "$(sha256sum "$DB" | cut -d' ' -f1)" = "$(cat "$TMP/db.sha")" ] && sqlite3 "$DB" .dump | cmp -s - "$TMP/db.dump"
    then pass "$1: store unchanged byte for byte"
    else fail "$1: the store changed"; fi
}
