#!/bin/sh
# deps.sh: check the build and test dependencies; install the missing Debian packages when root.
# Usage: tools/deps.sh            (exit 0 when everything is present afterwards)
set -u
missing=""
need() { # need PACKAGE TEST-COMMAND...
    pkg=$1; shift
    if ! "$@" >/dev/null 2>&1; then missing="$missing $pkg"; fi
}
need pkg-config       command -v pkg-config
need libgsl-dev       pkg-config --exists gsl
need libsqlite3-dev   pkg-config --exists sqlite3
need libcjson-dev     pkg-config --exists libcjson
need libcmocka-dev    pkg-config --exists cmocka
need libzstd-dev      pkg-config --exists libzstd
need libpq-dev        pkg-config --exists libpq
# make test-pg and make bench start a throw-away PostgreSQL server (tools/pgcluster.sh)
need postgresql       sh -c 'ls /usr/lib/postgresql/*/bin/initdb'
need libcsv-dev       test -f /usr/include/csv.h
need python3-numpy    /usr/bin/python3 -c 'import numpy'
need python3-scipy    /usr/bin/python3 -c 'import scipy.optimize'
need libxml2-utils    command -v xmllint
need sqlite3          command -v sqlite3
# the man page test renders it with groff
need groff-base       command -v groff
# the sheet's browser test renders a page in headless Chromium (tests only)
need chromium         test -x /usr/bin/chromium
# the clang build of CI and make fuzz: Debian's clang and its libFuzzer and sanitizer runtimes
need clang            command -v clang
need libclang-rt-14-dev sh -c 'ls /usr/lib/llvm-*/lib/clang/*/lib/linux/libclang_rt.fuzzer-x86_64.a'
[ -z "$missing" ] && exit 0
if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
    echo "deps: installing$missing" >&2
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >&2 && apt-get install -y -qq --no-install-recommends $missing >&2 || {
        echo "deps: apt-get failed; install by hand: apt-get install$missing" >&2; exit 1; }
    exit 0
fi
echo "deps: missing$missing" >&2
echo "deps: run as root: apt-get update && apt-get install -y$missing" >&2
exit 1
