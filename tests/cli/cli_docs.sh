# cli_docs.sh: documentation that cannot drift. Builds the demo store with demo/run.sh in a
# temporary folder, then doc_check.py runs every example of every --help text on copies of it
# (exit 0 required) and compares every command output shown in README.md with the real output
# (the rules for abridged output are in doc_check.py and in DEVELOPERS.md).
. "$CPDOMAIN_TESTS/cli/lib.sh"
ROOT=$(cd "$CPDOMAIN_TESTS/.." && pwd)
if sh "$ROOT/demo/run.sh" "$BIN" "$TMP/demo" >"$TMP/demo.log" 2>&1 && [ -f "$TMP/demo/demo.db" ]; then
    pass "demo/run.sh builds the demo store in a temporary folder"
    /usr/bin/python3 "$CPDOMAIN_TESTS/cli/doc_check.py" "$BIN" "$TMP/demo/demo.db" "$ROOT" ||
        { [ $? -eq 1 ] || fail "doc_check.py crashed"; }
else
    fail "demo/run.sh failed" "$(tail -5 "$TMP/demo.log")"
fi
