# cli_docs.sh: documentation that cannot drift. Builds the demo store with demo/run.sh in a
# temporary folder, then doc_check.py runs every example of every --help text on copies of it
# (exit 0 required) and compares every command output shown in README.md with the real output
# (the rules for abridged output are in doc_check.py and in DEVELOPERS.md).
. "$CPDOMAIN_TESTS/cli/lib.sh"
ROOT=$(cd "$CPDOMAIN_TESTS/.." && pwd)
if sh "$ROOT/demo/run.sh" "$BIN" "$TMP/demo" >"$TMP/demo.log" 2>&1 && [ -f "$TMP/demo/demo.db" ]; then
    pass "demo/run.sh builds the demo store in a temporary folder"
    # the bug the README check revealed: C01's severe-extreme boundary rested on the supra-maximal
    # 340 W bout (bout 20), whose primary runs into VO2max and fits tau 23 s (generated 33 s), and
    # its interval 354-408 W missed the generating value: CP 232 W + W' 16.5 kJ / (14 s + 4 x 33 s)
    # = 345 W (demo/TRUTH.md). The newest severe bout at or below the ramp's peak equivalent counts.
    DB="$TMP/demo/demo.db"
    CPDOMAIN_TODAY=2026-11-30 cpd --json domains C01
    b=$(json "[x for x in d['boundaries'] if x['name'] == 'severe-extreme'][0]")
    src=$(json "[x for x in d['boundaries'] if x['name'] == 'severe-extreme'][0]['source'].split(':')[0]")
    cover=$(json "(lambda x: x['ci95'][0] <= 232 + 16500 / (14 + 4 * 33) <= x['ci95'][1])([x for x in d['boundaries'] if x['name'] == 'severe-extreme'][0])")
    [ "$src" = "bout 14 (275 W)" ] && pass "C01's severe-extreme boundary rests on the severe 275 W bout, not the supra-maximal one" ||
        fail "severe-extreme rests on '$src'" "$b"
    [ "$cover" = "True" ] && pass "its 95 % interval covers the generating 345 W" || fail "interval misses 345 W" "$b"
    DOC_CHECK_FIRST=$((N + 1)) /usr/bin/python3 "$CPDOMAIN_TESTS/cli/doc_check.py" "$BIN" "$TMP/demo/demo.db" "$ROOT" ||
        { [ $? -eq 1 ] || fail "doc_check.py crashed"; }
else
    fail "demo/run.sh failed" "$(tail -5 "$TMP/demo.log")"
fi
