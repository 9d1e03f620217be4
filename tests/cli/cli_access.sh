# cli_access.sh: who sees which athletes on a PostgreSQL store (db/pg/008_squads_access.sql):
# squads granted to coaches' login roles, the lab role that reads everything and writes nothing,
# through the real binary with --db URIs of each user. Runs only when CPDOMAIN_TEST_PG is set
# (lib.sh then makes $DB the URI of a fresh database as a superuser, who is the store's owner).
. "$CPDOMAIN_TESTS/cli/lib.sh"
if [ -z "${CPDOMAIN_TEST_PG:-}" ]; then
    echo "ok 1 - # SKIP needs a PostgreSQL server"
    exit 0
fi
case "$DB" in
postgresql://* | postgres://*) pass "the store is a PostgreSQL database" ;;
*) fail "CPDOMAIN_TEST_PG is set but DB is '$DB'"; exit 1 ;;
esac

# uri_as USER: $DB with its user replaced (the user of the authority part dropped, user=USER in
# the query, which libpq reads last)
uri_as() {
    u=$(printf '%s' "$DB" | sed -E 's|^(postgres(ql)?://)[^@/]*@|\1|; s/([?&])user=[^&]*&?/\1/; s/[?&]$//')
    case "$u" in *\?*) echo "$u&user=$1" ;; *) echo "$u?user=$1" ;; esac
}
# as USER WANT WHAT ARGS...: runs the binary as USER and checks the exit status
as() {
    who=$1; want=$2; what=$3; shift 3
    ${VALGRIND:-} "$BIN" --db "$(uri_as "$who")" "$@" >"$TMP/out" 2>"$TMP/err"; RC=$?
    if [ "$RC" -eq "$want" ]; then pass "$who: $what (exit $want)"
    else fail "$who: $what: exit $RC, wanted $want" "stderr: $(head -c 400 "$TMP/err")"; fi
}
# as_refused USER WHAT ARGS...: the command is refused as no athlete (65) or as not permitted (77)
as_refused() {
    who=$1; what=$2; shift 2
    "$BIN" --db "$(uri_as "$who")" "$@" >"$TMP/out" 2>"$TMP/err"; RC=$?
    if [ "$RC" -eq 65 ] && grep -q "no athlete" "$TMP/err"; then pass "$who: $what: no such athlete for this user (exit 65)"
    elif [ "$RC" -eq 77 ]; then pass "$who: $what: not permitted (exit 77)"
    else fail "$who: $what: exit $RC, wanted 65 'no athlete' or 77" "stderr: $(head -c 400 "$TMP/err")"; fi
}
psql_do() { psql "$DB" -v ON_ERROR_STOP=1 -qAt -c "$1" >"$TMP/psql" 2>&1 || fail "psql: $1" "$(cat "$TMP/psql")"; }

# role names are per cluster: this run's own
CA=coach_a_$$ CB=coach_b_$$ LAB=lab_$$
# the databases first (lib.sh's lib_cleanup: a role with rights in one cannot be dropped), then the roles
cleanup() {
    lib_cleanup
    for r in $CA $CB $LAB; do psql "$PGBASE" -qc "DROP ROLE IF EXISTS $r" >/dev/null 2>&1; done
}
trap cleanup EXIT

# ---- the owner builds the store ----
expect 0 "init" init
expect 0 "squad A" squad add A
expect 0 "squad B" squad add B
expect 0 "A1 in A" athlete add A1 --name "Ada Quell" --squad A --mass 60
expect 0 "A2 in A" athlete add A2 --name "Aino Varr" --squad A
expect 0 "B1 in B" athlete add B1 --name "Bram Ostic" --squad B --mass 75
for k in A1 B1; do
    expect 0 "$k trial 1" trial add $k --date 2026-10-01 --power 420 --duration 2:30
    expect 0 "$k trial 2" trial add $k --date 2026-10-03 --power 350 --duration 6:10
    expect 0 "$k trial 3" trial add $k --date 2026-10-05 --power 305 --duration 15:20
done
expect 0 "server setup" --json server setup
json_is 'd["lab_role"], d["coach_role"]' "('cpdomain_lab', 'cpdomain_coach')" "the default group roles"
expect 0 "server setup again is harmless" server setup
psql_do "CREATE ROLE $CA LOGIN IN ROLE cpdomain_coach"
psql_do "CREATE ROLE $CB LOGIN IN ROLE cpdomain_coach"
psql_do "CREATE ROLE $LAB LOGIN IN ROLE cpdomain_lab"
expect 0 "grant A to coach a" squad grant A $CA
expect 0 "grant B to coach b" squad grant B $CB
expect 0 "granting twice is harmless" squad grant B $CB
expect 65 "grant to a role that does not exist" squad grant A nobody_$$
err_has "no role 'nobody_$$'" "the missing role is named"
expect 64 "a role name with capitals" squad grant A Coach
expect 0 "the owner sees everyone" --json athlete list
json_is '[a["code"] for a in d["athletes"]]' "['A1', 'A2', 'B1']" "owner: every athlete"

# ---- coach a: squad A only ----
as $CA 0 "athlete list" --json athlete list
json_is '[(a["code"], a["squad"]) for a in d["athletes"]]' "[('A1', 'A'), ('A2', 'A')]" "$CA sees A's athletes only"
as_refused $CA "athlete show B1" athlete show B1
as_refused $CA "trial add for B1" trial add B1 --date 2026-10-09 --power 300 --duration 10:00
as_refused $CA "fit B1" fit B1
as_refused $CA "athlete add into squad B" athlete add B9 --name "Not Hers" --squad B
as_refused $CA "athlete add into no squad" athlete add N9 --name "Nowhere"
as_refused $CA "move A2 to squad B" squad assign A2 B
as $CA 0 "athlete add into squad A" athlete add A3 --name "Alke Sund" --squad A
as $CA 0 "trial add for A1" trial add A1 --date 2026-10-09 --power 330 --duration 9:00
as $CA 0 "fit A1" --json fit A1
as $CA 77 "squad grant by a coach" squad grant B $CA
as $CA 77 "squad add by a coach" squad add C
as $CA 0 "squad list" --json squad list
json_is '[(q["name"], q["athletes"]) for q in d["squads"]]' "[('A', 3), ('B', 0)]" "$CA counts only A's athletes"

# ---- coach b: squad B only ----
as $CB 0 "athlete list" --json athlete list
json_is '[a["code"] for a in d["athletes"]]' "['B1']" "$CB sees B's athlete only"
as_refused $CB "athlete show A1" athlete show A1
as_refused $CB "trial add for A1" trial add A1 --date 2026-10-10 --power 300 --duration 10:00
as_refused $CB "fit A1" fit A1
as_refused $CB "athlete add into squad A" athlete add A9 --name "Not His" --squad A
as $CB 0 "fit B1" fit B1

# ---- the lab: reads everyone, writes nothing ----
as $LAB 0 "athlete list" --json athlete list
json_is '[a["code"] for a in d["athletes"]]' "['A1', 'A2', 'A3', 'B1']" "$LAB sees every athlete"
as $LAB 0 "athlete show B1" athlete show B1
as $LAB 0 "sheet of A1" --json sheet A1
as $LAB 77 "athlete add" athlete add L1 --name "Lab Made" --squad A
as $LAB 77 "trial add" trial add A1 --date 2026-10-11 --power 300 --duration 10:00
as $LAB 77 "athlete set" athlete set B1 --mass 74
as $LAB 77 "athlete remove" athlete remove B1 --yes
expect 0 "the owner sees B1 unchanged" --json athlete show B1
json_is 'd["mass_kg"], d["trials"]' "(75, 3)" "B1 as the owner left it"

# ---- revoking, and a grant to a dropped role ----
expect 0 "revoke A from coach a" squad revoke A $CA
as $CA 0 "athlete list after the revoke" --json athlete list
json_is 'len(d["athletes"])' "0" "$CA sees no athlete"
expect 65 "revoke again" squad revoke A $CA
expect 0 "grant A to coach a again" squad grant A $CA
psql_do "DROP ROLE $CA"
as $CB 0 "athlete list with a grant naming a dropped role around" --json athlete list
json_is '[a["code"] for a in d["athletes"]]' "['B1']" "$CB unaffected"
expect 65 "the owner cannot remove a squad with athletes" squad remove A
