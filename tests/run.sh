#!/bin/sh
# run.sh: run every unit test program and every CLI test script; print one summary line.
# Usage: sh tests/run.sh BUILD_DIR   (VALGRIND="valgrind ..." runs everything under it)
set -u
build=${1:-build}
export CPDOMAIN_BIN="$PWD/$build/cpdomain"
export CPDOMAIN_TESTS="$PWD/tests"
passed=0
failed=0
failures=""
log=$(mktemp)
for t in "$build"/tests/test_*; do
    [ -x "$t" ] || continue
    name=$(basename "$t")
    ${VALGRIND:-} "$t" >"$log" 2>&1
    rc=$?
    p=$(sed -n 's/^\[  PASSED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -n 1)
    f=$(sed -n 's/^\[  FAILED  \] \([0-9]*\) test.*/\1/p' "$log" | tail -n 1)
    p=${p:-0}; f=${f:-0}
    if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
    passed=$((passed + p)); failed=$((failed + f))
    if [ "$f" -ne 0 ]; then
        failures="$failures $name"
        cat "$log"
    fi
    printf '%-28s %4d passed, %d failed\n' "$name" "$p" "$f"
done
for t in tests/cli/cli_*.sh; do
    [ -f "$t" ] || continue
    name=$(basename "$t" .sh)
    sh "$t" >"$log" 2>&1
    rc=$?
    p=$(grep -c '^ok ' "$log")
    f=$(grep -c '^not ok ' "$log")
    if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; fi
    passed=$((passed + p)); failed=$((failed + f))
    if [ "$f" -ne 0 ]; then
        failures="$failures $name"
        grep -v '^ok ' "$log"
    fi
    printf '%-28s %4d passed, %d failed\n' "$name" "$p" "$f"
done
rm -f "$log"
[ -n "$failures" ] && echo "failing:$failures"
echo "$passed passed, $failed failed"
[ "$failed" -eq 0 ]
