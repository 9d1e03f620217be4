#!/bin/sh
# run.sh: run every unit test program and every CLI test script; print one summary line.
# Usage: sh tests/run.sh BUILD_DIR   (VALGRIND="valgrind ..." runs everything under it)
set -u
build=${1:-build}
export CPDOMAIN_BIN="$PWD/$build/cpdomain"
export CPDOMAIN_TESTS="$PWD/tests"
passed=0
failed=0
skipped=0
failures=""
log=$(mktemp)
for t in "$build"/tests/test_*; do
    [ -x "$t" ] || continue
    name=$(basename "$t")
    ${VALGRIND:-} "$t" >"$log" 2>&1
    rc=$?
    p=$(sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -n 1)
    f=$(sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -n 1)
    k=$(sed -n 's/^\[  SKIPPED \] \([0-9]*\) test.*/\1/p' "$log" | tail -n 1)
    p=${p:-0}; f=${f:-0}; k=${k:-0}; p=$((p + k))   # a skipped test counts as passed, and is shown
    if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
    passed=$((passed + p)); failed=$((failed + f)); skipped=$((skipped + k))
    if [ "$f" -ne 0 ]; then
        failures="$failures $name"
        cat "$log"
    fi
    # the reasons of skipped tests (TMPSTORE_SQLITE_ONLY prints them)
    [ "$k" -eq 0 ] || grep '^\[  SKIP    \] ' "$log" | sed 's/^\[  SKIP    \] /    skip: /' | uniq -c
    printf '%-28s %4d passed, %d failed%s\n' "$name" "$p" "$f" "$( [ "$k" -eq 0 ] || echo ", $k skipped")"
done
for t in tests/cli/cli_*.sh; do
    [ -f "$t" ] || continue
    name=$(basename "$t" .sh)
    sh "$t" >"$log" 2>&1
    rc=$?
    p=$(grep -c '^ok ' "$log")
    f=$(grep -c '^not ok ' "$log")
    k=$(grep -c '^ok [0-9]* - # SKIP' "$log")
    if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
    passed=$((passed + p)); failed=$((failed + f)); skipped=$((skipped + k))
    if [ "$f" -ne 0 ]; then
        failures="$failures $name"
        grep -v '^ok ' "$log"
    fi
    # a skipped check counts as passed (TAP) and is shown: what and why
    [ "$k" -eq 0 ] || grep '^ok [0-9]* - # SKIP' "$log" | sed 's/^ok [0-9]* - # SKIP /    skip: /' | uniq -c
    printf '%-28s %4d passed, %d failed%s\n' "$name" "$p" "$f" "$( [ "$k" -eq 0 ] || echo ", $k skipped")"
done
rm -f "$log"
[ -n "$failures" ] && echo "failing:$failures"
[ "$skipped" -eq 0 ] || echo "skipped: $skipped (counted as passed; the reasons are above)"
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
