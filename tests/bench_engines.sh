#!/bin/sh
# bench_engines.sh: the two store engines side by side (make bench). Wall times, for SQLite (a file)
# and for PostgreSQL (a throw-away cluster on a Unix socket, tools/pgcluster.sh, started and stopped
# here), of (i) the season import: 'session add' of a folder of RIDES two-hour 1-Hz rides, then the
# season curve; (ii) 1,000 athletes with 5 trials each: 'athlete import' and 'trial import' of one
# file each, then 'fit' of every athlete (one process each, as a script would), and 'sheet --all'
# (every athlete's fit and domains in one process). Prints figures; never fails on speed.
# Usage: sh tests/bench_engines.sh [BINARY]   (BENCH_RIDES=N, BENCH_ATHLETES=N to change the sizes)
set -u
BIN=${1:-build/cpdomain}
case $BIN in /*) ;; *) BIN="$PWD/$BIN" ;; esac
ROOT=$(cd "$(dirname "$0")/.." && pwd)
RIDES=${BENCH_RIDES:-200}
ATHLETES=${BENCH_ATHLETES:-1000}
export CPDOMAIN_TODAY=2026-12-01
unset CPDOMAIN_DB
T=$(mktemp -d /tmp/cpd_bench_engines.XXXXXX)
PGD="$T/pg"
trap 'sh "$ROOT/tools/pgcluster.sh" stop "$PGD" >/dev/null 2>&1; rm -rf "$T"' EXIT
trap 'exit 130' INT TERM HUP

# secs CMD...: runs CMD, prints its wall time in seconds (3 decimals); its status goes to $T/st
secs() {
    s0=$(date +%s%N); "$@" >"$T/last.out" 2>"$T/last.err"; echo $? >"$T/st"; s1=$(date +%s%N)
    awk -v a="$s0" -v b="$s1" 'BEGIN { printf "%.3f", (b - a) / 1e9 }'
}

# ---- the data, written once, the same for both engines ----
mkdir -p "$T/season"
awk -v n="$RIDES" -v dir="$T/season" 'BEGIN { srand(20261017);
    for (f = 0; f < n; f++) {
        name = sprintf("%s/ride_%03d_2025-%02d-%02d.csv", dir, f, 1 + int(f / 28) % 12, 1 + f % 28);
        print "time_s,power_w,hr_bpm,cadence_rpm" >name;
        base = 150 + 60 * rand(); hr = 120;
        for (k = 0; k < 7200; k++) {
            w = base + 40 * (rand() - 0.5) + ((k % 900) < 60 + f % 30) * (150 + 100 * rand());
            if (k % 2400 > 2380) w = 0;
            hr += (100 + w / 3 - hr) / 30;
            printf "%d,%.0f,%.0f,%.0f\n", k, w, hr, (w > 0 ? 85 + 5 * (rand() - 0.5) : 0) >>name }
        close(name) } }'
# 1,000 athletes: CP 180-380 W, W' 10-30 kJ; five trials each from P = CP + W'/t (2 % noise)
awk -v n="$ATHLETES" -v a="$T/athletes.csv" -v t="$T/trials.csv" 'BEGIN { srand(7);
    print "code,name,sport,mass_kg,notes" >a;
    print "athlete,date,duration_s,power_w,speed_m_s,distance_m,note" >t;
    split("150 240 420 720 1200", d, " ");
    for (i = 1; i <= n; i++) {
        code = sprintf("B%04d", i); cp = 180 + 200 * rand(); wp = 10000 + 20000 * rand();
        printf "%s,Bench Athlete %d,cycling,%.1f,\n", code, i, 55 + 35 * rand() >>a;
        for (k = 1; k <= 5; k++)
            printf "%s,2026-10-%02d,%d,%.0f,,,\n", code, 2 + 3 * k, d[k], (cp + wp / d[k]) * (1 + 0.02 * (rand() - 0.5)) >>t } }'
codes=$(awk -F, 'NR > 1 { print $1 }' "$T/athletes.csv")

bench() { # bench ENGINE STORE-A STORE-B: both jobs on one engine (empty stores A and B)
    eng=$1; A=$2; B=$3
    "$BIN" --db "$A" --quiet init && "$BIN" --db "$A" --quiet athlete add S01 --name "Season Rider" --mass 72 ||
        { echo "  $eng: init failed"; return 1; }
    t_imp=$(secs "$BIN" --db "$A" --quiet session add S01 "$T/season"); st_imp=$(cat "$T/st")
    n=$("$BIN" --db "$A" --json session list S01 2>/dev/null | /usr/bin/python3 -c 'import json,sys; print(len(json.load(sys.stdin)["sessions"]))' 2>/dev/null)
    t_curve=$(secs "$BIN" --db "$A" --json curve S01)
    "$BIN" --db "$B" --quiet init || { echo "  $eng: init failed"; return 1; }
    t_ath=$(secs sh -c "'$BIN' --db '$B' --quiet athlete import '$T/athletes.csv' && '$BIN' --db '$B' --quiet trial import '$T/trials.csv'"); st_ath=$(cat "$T/st")
    s0=$(date +%s%N); nfit=0
    for c in $codes; do "$BIN" --db "$B" --quiet fit "$c" >/dev/null 2>&1 && nfit=$((nfit + 1)); done
    s1=$(date +%s%N); t_fit=$(awk -v a="$s0" -v b="$s1" 'BEGIN { printf "%.3f", (b - a) / 1e9 }')
    t_sheet=$(secs "$BIN" --db "$B" --quiet sheet --all --format json -o "$T/sheets_$eng"); st_sheet=$(cat "$T/st")
    printf '%s|%s|%s|%s|%s|%s|%s|%s|%s|%s\n' "$eng" "$t_imp" "${n:-?}" "$t_curve" "$t_ath" "$t_fit" "$nfit" "$t_sheet" \
        "$st_imp$st_ath$st_sheet" "$(head -c 200 "$T/last.err" | tr '\n' ' ')" >>"$T/results"
}

echo "engines: $RIDES two-hour 1-Hz rides (session add of one folder); $ATHLETES athletes x 5 trials"
bench sqlite "$T/season.db" "$T/fits.db"
PGSTATE="PostgreSQL not installed (apt-get install postgresql): skipped"
if ls /usr/lib/postgresql/*/bin/initdb >/dev/null 2>&1; then
    if sh "$ROOT/tools/pgcluster.sh" start "$PGD" >/dev/null 2>"$T/pg.err"; then
        . "$PGD/env"
        PGSTATE="PostgreSQL $("$PGC_BIN/postgres" -V | sed 's/^[^0-9]*\([0-9.]*\).*/\1/') (throw-away cluster, Unix socket, fsync off)"
        for d in bench_season bench_fits; do psql -X -q "$PGC_URI" -c "CREATE DATABASE $d" >/dev/null; done
        u() { printf '%s\n' "$PGC_URI" | sed "s#:///postgres?#:///$1?#"; }
        bench postgresql "$(u bench_season)" "$(u bench_fits)"
    else
        PGSTATE="PostgreSQL cluster did not start: $(head -c 200 "$T/pg.err")"
    fi
fi
echo "$PGSTATE"
printf '  %-11s %12s %9s %10s %12s %16s %12s\n' engine "season (s)" sessions "curve (s)" "import (s)" "fit x$ATHLETES (s)" "sheet --all"
while IFS='|' read -r eng ti n tc ta tf nf ts st err; do
    printf '  %-11s %12s %9s %10s %12s %11s %4s %12s' "$eng" "$ti" "$n" "$tc" "$ta" "$tf" "($nf)" "$ts"
    [ "$st" = 000 ] && echo || echo "   (a step failed: $st $err)"
done <"$T/results"
awk -F'|' 'NR == 1 { s = $2; f = $6 } NR == 2 && s > 0 && f > 0 { printf "  PostgreSQL / SQLite: season import %.2fx, fit of every athlete %.2fx\n", $2 / s, $6 / f }' "$T/results"
exit 0
