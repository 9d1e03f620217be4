#!/bin/sh
# run_pg.sh: tests/run.sh with every store on PostgreSQL (make test-pg). Starts a throw-away
# cluster with tools/pgcluster.sh unless CPDOMAIN_TEST_PG already names a server (a superuser's
# URI), and stops and removes it on exit, whatever happened. Usage: sh tests/run_pg.sh BUILD_DIR
set -u
build=${1:-build}
if [ -n "${CPDOMAIN_TEST_PG:-}" ]; then
    sh tests/run.sh "$build"
    exit $?
fi
dir=$(mktemp -d /tmp/cpd_pg.XXXXXX)
trap 'sh tools/pgcluster.sh stop "$dir"' EXIT
trap 'exit 130' INT TERM HUP
rmdir "$dir"
sh tools/pgcluster.sh start "$dir" >/dev/null || { echo "test-pg: the PostgreSQL cluster did not start"; exit 1; }
. "$dir/env"
export CPDOMAIN_TEST_PG="$PGC_URI" CPDOMAIN_TEST_PGDIR="$PGC_DIR"
echo "PostgreSQL $("$PGC_BIN/postgres" -V | sed 's/^[^0-9]*\([0-9.]*\).*/\1/') on $PGC_DIR (port $PGC_PORT)"
sh tests/run.sh "$build"
