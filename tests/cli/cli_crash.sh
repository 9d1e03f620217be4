# cli_crash.sh: crashes and concurrency. Imports killed with SIGKILL at spread-out moments leave
# a sound store (PRAGMA integrity_check, foreign keys) with each import whole or absent; several
# processes writing at once lose nothing; a writer that finds the store busy waits the time
# --busy-timeout (or CPDOMAIN_BUSY_TIMEOUT) sets, then fails saying another process holds it.
# Bounded: about 25 kills and 60 concurrent writes, a few seconds in all.
. "$CPDOMAIN_TESTS/cli/lib.sh"
DEMO="$CPDOMAIN_TESTS/../demo/data"   # invented demo data (demo/TRUTH.md)
M=400        # trials per imported file
KILLS=${CPD_CRASH_KILLS:-24}

expect 0 "init" init
expect 0 "an athlete" athlete add K1 --name "Kill Test" --mass 70
# trials file k: M distinct trials (k in the note keeps every file distinct)
trials_file() {
    awk -v k="$1" -v m="$M" 'BEGIN { print "athlete,date,power_w,duration_s,note";
        for (i = 0; i < m; i++) printf "K1,2026-%02d-%02d,%d,%d,batch %d\n", 1 + i % 11, 1 + i % 28, 150 + (i * 7 + k) % 700, 60 + i, k }' >"$2"
}
# session file k: the demo session cut to a length that differs per k (its hash differs)
session_file() { head -n $((200 + 37 * $1)) "$DEMO/session_C02_2026-08-30.csv" >"$2"; }
ms() { date +%s%3N; }
# how long one whole import takes here (the kills are spread over it)
trials_file 0 "$TMP/t0.csv"
newdb PROBE probe
t0=$(ms); "$BIN" --db "$PROBE" --quiet init; "$BIN" --db "$PROBE" --quiet athlete add K1 --name P
"$BIN" --db "$PROBE" --quiet trial import "$TMP/t0.csv"; t1=$(ms)
SPAN=$(( (t1 - t0) * 2 / 3 + 20 ))   # ms: one import (its share of the three runs) with a margin
# the delay in seconds before kill k: spread over 0 to SPAN ms by a fixed sequence (reproducible)
delay() { awk -v k="$1" -v s="$SPAN" 'BEGIN { printf "%.3f", ((k * 37) % 31) / 31 * s / 1000 }'; }

sound() { # sound WHAT: integrity, foreign keys, whole imports only, every session readable
    if [ -z "$PGBASE" ]; then
        ic=$(sqlite3 "$DB" "PRAGMA integrity_check" 2>&1)
        fk=$(sqlite3 "$DB" "PRAGMA foreign_key_check" 2>&1)
    else # PostgreSQL: no file to check; no trial without its athlete (the server enforces the keys)
        ic=ok
        fk=$(sql "$DB" "SELECT t.id FROM trial t LEFT JOIN athlete a ON a.id = t.athlete_id WHERE a.id IS NULL" 2>&1)
    fi
    part=$(sql "$DB" "SELECT count(*) FROM (SELECT note FROM trial GROUP BY note HAVING count(*) != $M) AS p" 2>&1)
    bad_s=""
    for id in $(sql "$DB" "SELECT id FROM session"); do
        "$BIN" --db "$DB" --quiet session show "$id" >/dev/null 2>&1 || bad_s="$bad_s $id"
    done
    if [ "$ic" = ok ] && [ -z "$fk" ] && [ "$part" = 0 ] && [ -z "$bad_s" ]; then return 0; fi
    fail "$1" "integrity_check: $ic" "foreign_key_check: $fk" "partial trial imports: $part" "unreadable sessions:$bad_s"
    return 1
}

# ---- imports killed with SIGKILL at spread-out moments ----
done_whole=0; done_none=0; broken=0; k=0; want_trials=0; want_sessions=0
while [ $k -lt "$KILLS" ]; do
    k=$((k + 1))
    if [ $((k % 3)) -eq 0 ]; then
        f="$TMP/s_2026-08-30_$k.csv"; session_file $k "$f"
        "$BIN" --db "$DB" --quiet session add K1 "$f" >/dev/null 2>&1 &
    else
        f="$TMP/t$k.csv"; trials_file $k "$f"
        "$BIN" --db "$DB" --quiet trial import "$f" >/dev/null 2>&1 &
    fi
    pid=$!
    sleep "$(delay $k)"
    kill -KILL $pid 2>/dev/null
    wait $pid 2>/dev/null; rc=$?
    ntr=$(sql "$DB" "SELECT count(*) FROM trial WHERE note = 'batch $k'")
    nse=$(sql "$DB" "SELECT count(*) FROM session WHERE source_file = '$f'")
    if [ "$ntr" = "$M" ] || [ "$nse" = 1 ]; then done_whole=$((done_whole + 1)); else done_none=$((done_none + 1)); fi
    # a run that was not killed (it finished first) must have stored its file
    if [ "$rc" -eq 0 ] && [ "$ntr" != "$M" ] && [ "$nse" != 1 ]; then
        broken=$((broken + 1)); echo "# run $k exited 0 but stored nothing"
    fi
    sound "after kill $k the store is sound" || broken=$((broken + 1))
done
[ "$broken" -eq 0 ] && pass "$KILLS imports killed with SIGKILL ($done_whole had committed, $done_none left nothing): every store sound, no partial import" \
    || fail "$broken of $KILLS killed imports left a broken store or lost a finished import"
[ "$done_none" -gt 0 ] && pass "some kills landed before the commit ($done_none)" || fail "no kill landed before a commit: the test did not test"
echo "# kills: $KILLS over 0 to $SPAN ms, committed before the kill: $done_whole, nothing stored: $done_none"

# ---- several processes writing to one store at once ----
newdb DB conc
expect 0 "init a store for concurrent writers" init
expect 0 "an athlete" athlete add W1 --name "Many Writers" --mass 70
P=4; K=15
for w in $(seq 1 $P); do
    (
        for j in $(seq 1 $K); do
            "$BIN" --db "$DB" --quiet trial add W1 --date 2026-10-$(printf %02d $j) --power $((200 + w * 20 + j)) \
                --duration $((100 + w * 60 + j)) --note "writer $w write $j" || echo "writer $w write $j failed: exit $?"
        done
    ) >"$TMP/writer$w.log" 2>&1 &
done
wait
failed=$(cat "$TMP"/writer*.log | grep -c "failed: exit")
got=$(sql "$DB" "SELECT count(*) FROM trial")
lost=$((P * K - got))
[ "$failed" = 0 ] && pass "$P writers x $K writes at once: every command succeeded" || fail "$failed writes failed" "$(cat "$TMP"/writer*.log | head -5)"
[ "$lost" = 0 ] && pass "0 writes lost ($got of $((P * K)) stored)" || fail "$lost writes lost ($got of $((P * K)))"
distinct=$(sql "$DB" "SELECT count(DISTINCT note) FROM trial")
[ "$distinct" = $((P * K)) ] && pass "each write stored once" || fail "$distinct distinct writes"
echo "# concurrent writers: $P x $K, lost: $lost"

# ---- a busy store: wait the configured time, then say who holds it ----
# (the SQLite file lock; on PostgreSQL, cli_pg.sh checks writers that wait on each other)
if sqlite_only "the busy timeout waits on the SQLite file's write lock" 7; then
    # Python's sqlite3 (Debian's) holds the write lock for HOLD seconds, then commits
    hold() {
        /usr/bin/python3 - "$DB" "$1" "$TMP/locked" <<'PY' &
import sqlite3, sys, time
con = sqlite3.connect(sys.argv[1], isolation_level=None)
con.execute("BEGIN IMMEDIATE")
open(sys.argv[3], "w").write("locked")
time.sleep(float(sys.argv[2]))
con.execute("COMMIT")
PY
        HOLDER=$!
        i=0; while [ ! -s "$TMP/locked" ] && [ $i -lt 100 ]; do sleep 0.05; i=$((i + 1)); done
    }
    rm -f "$TMP/locked"; hold 2.5
    t0=$(ms); expect 74 "--busy-timeout 300 on a held store" --busy-timeout 300 trial add W1 --date 2026-11-01 --power 250 --duration 300; t1=$(ms)
    err_has "another process holds the store" "the message says another process holds the store"
    err_has "--busy-timeout" "the message says how to wait longer"
    [ $((t1 - t0)) -ge 250 ] && pass "it waited before failing ($((t1 - t0)) ms)" || fail "it failed after $((t1 - t0)) ms, before its 300 ms"
    t0=$(ms); CPDOMAIN_BUSY_TIMEOUT=200 "$BIN" --db "$DB" trial add W1 --date 2026-11-01 --power 250 --duration 300 >"$TMP/out" 2>"$TMP/err"; RC=$?; t1=$(ms)
    [ "$RC" = 74 ] && grep -q "another process holds the store" "$TMP/err" && pass "CPDOMAIN_BUSY_TIMEOUT=200 fails the same way (after $((t1 - t0)) ms)" \
        || fail "CPDOMAIN_BUSY_TIMEOUT: exit $RC" "$(cat "$TMP/err")"
    wait $HOLDER
    rm -f "$TMP/locked"; hold 1
    expect 0 "the default timeout (5 s) outwaits a 1 s lock" trial add W1 --date 2026-11-02 --power 251 --duration 301
    wait $HOLDER
    n=$(sqlite3 "$DB" "SELECT count(*) FROM trial WHERE date >= '2026-11-01'")
    [ "$n" = 1 ] && pass "only the write that waited long enough was stored" || fail "$n late writes stored"
fi
expect 64 "a bad --busy-timeout" --busy-timeout soon init
err_has "--busy-timeout must be a whole number of milliseconds" "the bad value is explained"
CPDOMAIN_BUSY_TIMEOUT=-5 "$BIN" --db "$DB" athlete list >/dev/null 2>"$TMP/err"; RC=$?
[ "$RC" = 64 ] && pass "a bad CPDOMAIN_BUSY_TIMEOUT is a usage error" || fail "CPDOMAIN_BUSY_TIMEOUT=-5: exit $RC"
