# cli_store_pack.sh: the compact sample storage (db/007_compact_samples.sql, src/store_codec.h) and
# the journal strategy: a store written before 007 (tests/data/store_v4, made by the binary of
# that time: SOURCE.md there) upgrades on first open to the compact encoding and shows exactly what
# that binary showed; new sessions are stored compact and read back bit for bit; a command leaves
# its WAL for a later checkpoint, and a copy of the files as a crash leaves them reads back.
. "$CPDOMAIN_TESTS/cli/lib.sh"
OLD="$CPDOMAIN_TESTS/data/store_v4"
# all of it is about the SQLite file: a version-4 file upgraded in place, the WAL left behind
# and a crash copy of the files (24 checks)
sqlite_only "a version-4 SQLite file upgraded in place; its WAL and a crash copy of its files" 24 || exit 0

cp "$OLD/old.db" "$DB"
# 'session show' summarises the curve at other durations since that binary (2, 3, 15, 30 and 60 min
# instead of 5 s, 1, 5, 20 and 60 min): every other key must be the old JSON, value for value, and
# the summary must agree with the old one at the durations both list
same_session() {
    /usr/bin/python3 - "$1" "$2" <<'EOF'
import json, sys
new, old = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
nc, oc = new.pop("curve"), old.pop("curve")
ov = {p["duration_s"]: p for p in oc}
both = [p for p in nc if p["duration_s"] in ov]
sys.exit(0 if new == old and both and all(p == ov[p["duration_s"]] for p in both) else 1)
EOF
}
expect 0 "the version-4 store opens (and upgrades)" --json session show 1
if same_session "$TMP/out" "$OLD/show1.json"; then pass "session 1 after the upgrade: the old binary's JSON"
else fail "session 1 differs after the upgrade" "$(diff "$TMP/out" "$OLD/show1.json" | head -5)"; fi
expect 0 "session 2 (speed, 0.5-s times)" --json session show 2
if same_session "$TMP/out" "$OLD/show2.json"; then pass "session 2: the old binary's JSON"; else fail "session 2 differs"; fi
expect 0 "the all-out test" --json allout show 3
# the intervals of the end power and the work above it came later (the honest-numbers change): the
# rest must be the old binary's JSON, value for value
if /usr/bin/python3 - "$TMP/out" "$OLD/allout3.json" <<'EOF'
import json, sys
new, old = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
for k in ("end_power_ci95", "end_power_se_w", "work_above_end_ci95", "work_above_end_se_j"):
    new.pop(k, None)
sys.exit(0 if new == old else 1)
EOF
then pass "all-out test 3: the old binary's JSON (less the intervals added since)"; else fail "all-out 3 differs"; fi
expect 0 "power curve" --json curve M1
p=$(sha256sum <"$TMP/out" | cut -d' ' -f1)
expect 0 "speed curve" --json curve M1 --modality speed
v=$(sha256sum <"$TMP/out" | cut -d' ' -f1)
if [ "$p  curve_power.json
$v  curve_speed.json" = "$(cat "$OLD/curves.sha256")" ]; then pass "both season curves: the old binary's JSON (SHA-256)"
else fail "a season curve differs after the upgrade"; fi
n=$(sqlite3 "$DB" "SELECT ((SELECT count(*) FROM session_channel WHERE packed = 0) + (SELECT count(*) FROM session_curve WHERE packed = 0)) || ' ' || (SELECT count(*) FROM session_channel) || ' ' || (SELECT sum(length(data)) < 4000 FROM session_channel)")
if [ "$n" = "0 11 1" ]; then pass "every channel and curve re-encoded; 11 channels in under 4 kB (were 36 kB)"
else fail "after the upgrade: unpacked, channels, small = '$n', wanted '0 11 1'"; fi
v=$(sqlite3 "$DB" "PRAGMA user_version")
expect 0 "opening again" session list M1
if [ "$(sqlite3 "$DB" "PRAGMA user_version")" = "$v" ]; then pass "the upgrade ran once"; else fail "the version moved again"; fi

# ---- a new session, stored compact (the round trip bit for bit: test_store); durability: the
# command returned with its WAL in place, and a copy of the files as a crash of the process leaves
# them (database and WAL, no shared memory) holds the session ----
awk 'BEGIN { print "time_s,power_w,hr_bpm,cadence_rpm,distance_m"; srand(7); d = 0;
             for (k = 0; k < 1500; k++) { t = 50 + k + (k >= 700) * 4 + (k >= 1100) * 40; d += 9.13 + rand();
               printf "%d,%d,%d,%d,%.2f\n", t, 180 + int(120 * rand()), 130 + int(k / 30), 85 + int(10 * rand()), d } }' \
    >"$TMP/new_2026-03-10.csv"
expect 0 "a new session" --json session add M1 "$TMP/new_2026-03-10.csv"
id=$(json 'd["id"]')
if [ -s "$DB-wal" ]; then pass "the write-ahead log was left for a later checkpoint"; else fail "no WAL after a write"; fi
mkdir "$TMP/crash"
cp "$DB" "$TMP/crash/store.db"
cp "$DB-wal" "$TMP/crash/store.db-wal"
DB0=$DB
DB="$TMP/crash/store.db"
expect 0 "the crashed copy opens" --json session show "$id"
json_is 'd["samples"], d["segments"], d["dropouts"]' "(1500, 2, 2)" "and holds the new session"
DB=$DB0
if [ "$(sqlite3 "$DB" "SELECT DISTINCT packed FROM session_channel WHERE session_id = $id")" = "1" ]; then
    pass "its channels are packed"; else fail "unpacked channels"; fi
# ---- the season cache (session_season): the same curve as computed from every session's curve
# (--from forces that), after an add and after a remove ----
same_season() {
    cpd --json curve M1
    cp "$TMP/out" "$TMP/cached.json"
    cpd --json curve M1 --from 1970-01-01
    if /usr/bin/python3 -c "import json,sys; a=json.load(open(sys.argv[1])); b=json.load(open(sys.argv[2])); sys.exit(a['points'] != b['points'] or a['sessions'] != b['sessions'])" \
        "$TMP/cached.json" "$TMP/out"; then pass "$1: the stored season curve equals the one computed from the sessions"
    else fail "$1: the stored season curve differs"; fi
}
same_season "after the upgrade and a new session"
awk 'BEGIN { print "time_s,power_w"; srand(9); for (k = 0; k < 900; k++) printf "%d,%d\n", k, 300 + int(200 * rand()) }' \
    >"$TMP/hard_2026-02-01.csv"
expect 0 "an earlier, harder session" --json session add M1 "$TMP/hard_2026-02-01.csv"
hard=$(json 'd["id"]')
same_season "after an earlier session"
expect 0 "remove it" session remove "$hard"
same_season "after removing it"
expect 0 "remove the new one too" session remove "$id"
same_season "after removing another"
exit 0
