# cli_library.sh: the library layer (include/cpdomain/athlete.h) changes no output. The demo store is
# built with demo/run.sh; the --json outputs of fit, domains, predict (--power/--speed and --protocol),
# history and sheet of every demo athlete are compared byte for byte with the copies saved before
# the layer existed (tests/data/library/, regenerate with CPDOMAIN_GOLDEN_WRITE=1), and the example
# program that links only libcpdomain.a (tests/example_domains.c) prints the same domains JSON as
# 'cpdomain --json domains'.
. "${CPDOMAIN_TESTS:-tests}/cli/lib.sh"
GOLD="$TESTS/data/library"
EXAMPLE=${CPDOMAIN_EXAMPLE:-$(dirname "$BIN")/example_domains}
demo="$TMP/demo"
ddb="$demo/demo.db"; [ -n "$PGBASE" ] && newdb ddb demo
CPDOMAIN_DEMO_DB=$ddb sh "$TESTS/../demo/run.sh" "$BIN" "$demo" >"$TMP/demo.log" 2>&1 || { fail "demo/run.sh builds the store" "$(tail -5 "$TMP/demo.log")"; exit 1; }
export CPDOMAIN_TODAY=2026-11-30   # as demo/run.sh pins it
codes=$("$BIN" --db "$ddb" athlete list | awk 'NR > 1 { print $1 }')
[ -n "$codes" ] && pass "the demo store lists its athletes" || fail "the demo store lists no athlete"

# one output: NAME ARGS... -> $TMP/got/CODE.NAME.json (stdout, then the exit status)
run() {
    name=$1; shift
    "$BIN" --db "$ddb" --json "$@" >"$TMP/got/$code.$name.json" 2>/dev/null
    echo "exit $?" >>"$TMP/got/$code.$name.json"
}
mkdir -p "$TMP/got"
for code in $codes; do
    case "$code" in
    R*) pw="--speed 5" ;;
    S*) pw="--speed 1.6" ;;
    *) pw="--power 350" ;;
    esac
    run fit fit "$code"
    run domains domains "$code"
    run predict_power predict "$code" $pw
    run predict_protocol predict "$code" --protocol "5min@60%CP; 3x(3min@105%CP, 2min@50%CP)"
    run history history "$code"
    run sheet sheet "$code" --format json
done
if [ "${CPDOMAIN_GOLDEN_WRITE:-0}" = 1 ]; then
    mkdir -p "$GOLD"
    cp "$TMP"/got/*.json "$GOLD"/
    pass "golden outputs written to $GOLD"
fi
for g in "$TMP"/got/*.json; do
    b=$(basename "$g")
    if [ ! -f "$GOLD/$b" ]; then fail "$b: no saved copy in $GOLD"
    elif cmp -s "$g" "$GOLD/$b"; then pass "$b unchanged byte for byte"
    else fail "$b differs from the saved copy" "$(diff "$GOLD/$b" "$g" | head -8)"; fi
done
n_gold=$(ls "$GOLD"/*.json | wc -l)
n_got=$(ls "$TMP"/got/*.json | wc -l)
[ "$n_gold" -eq "$n_got" ] && pass "every saved output is produced ($n_got)" || fail "saved $n_gold outputs, produced $n_got"

# the example program: the same domains through the library alone
if [ -x "$EXAMPLE" ]; then
    for code in $codes; do
        "$BIN" --db "$ddb" --json domains "$code" >"$TMP/cli.json" 2>/dev/null; a=$?
        "$EXAMPLE" "$ddb" "$code" >"$TMP/lib.json" 2>"$TMP/lib.err"; b=$?
        if [ "$a" -ne 0 ]; then
            [ "$b" -ne 0 ] && pass "$code: no domains from the CLI (exit $a), none from the library (exit $b)" \
                || fail "$code: the CLI fails (exit $a), the library answers"
        elif cmp -s "$TMP/cli.json" "$TMP/lib.json"; then pass "$code: example_domains prints the CLI's domains JSON byte for byte"
        else fail "$code: example_domains differs from 'cpdomain --json domains'" "$(diff "$TMP/cli.json" "$TMP/lib.json" | head -8)" "$(head -c 300 "$TMP/lib.err")"; fi
    done
else
    fail "the example program $EXAMPLE is built (make builds it beside the binary)"
fi
exit 0
