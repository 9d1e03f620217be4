#!/bin/sh
# run.sh: runs every libFuzzer harness for SECONDS each and prints one line per harness with the
# executions reached and the rate; exits 1 when any harness found a crash, a leak or a hang.
# Usage: sh tests/fuzz/run.sh SECONDS FUZZ_BUILD_DIR HARNESS...
# The seeds in tests/fuzz/corpus/NAME are read, never written: new inputs go to
# FUZZ_BUILD_DIR/corpus/NAME, findings to FUZZ_BUILD_DIR/crash-NAME-*.
set -u
secs=$1; dir=$2; shift 2
status=0
for name in "$@"; do
    bin="$dir/fuzz_$name"
    work="$dir/corpus/$name"
    mkdir -p "$work"
    log="$dir/fuzz_$name.log"
    "$bin" -max_total_time="$secs" -timeout=25 -max_len=65536 -print_final_stats=1 \
        -artifact_prefix="$dir/crash-$name-" "$work" "tests/fuzz/corpus/$name" >"$log" 2>&1
    rc=$?
    execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -n 1)
    rate=$(sed -n 's/^stat::average_exec_per_sec: *//p' "$log" | tail -n 1)
    cov=$(grep -Eo 'cov: [0-9]+' "$log" | tail -n 1)
    if [ "$rc" -eq 0 ]; then
        printf 'fuzz_%-9s %12s executions in %ss (%s/s), %s, no crash\n' "$name" "${execs:-?}" "$secs" "${rate:-?}" "${cov:-cov: ?}"
    else
        status=1
        printf 'fuzz_%-9s FAILED (exit %d) after %s executions; the input is in %s/crash-%s-*\n' "$name" "$rc" "${execs:-?}" "$dir" "$name"
        grep -E 'ERROR|SUMMARY|invariant|runtime error' "$log" | head -n 8
    fi
done
exit $status
