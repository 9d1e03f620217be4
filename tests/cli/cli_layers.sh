# cli_layers.sh: the layers of the source tree hold (issue 17). From the built objects (nm): no
# command file (cmd_*.c) uses a function another command file defines; no library object uses
# a CLI object; the objects of the CLI need each other without a circle; the athlete layer
# (athlete*.c, export_domains.c) writes nothing to stdout or stderr. From the sources: no circle
# of #include among src/ headers, and no command file includes a header a command file implements.
. "${CPDOMAIN_TESTS:-tests}/cli/lib.sh"
OBJ=$(dirname "$BIN")/obj
SRC="$TESTS/../src"
[ -d "$OBJ" ] || { fail "objects in $OBJ"; exit 0; }
# defs: OBJECT SYMBOL for every function an object defines; uses: OBJECT SYMBOL for every undefined one
for o in "$OBJ"/*.o; do
    b=$(basename "$o" .o)
    nm "$o" | awk -v b="$b" '$2 ~ /^[TDRB]$/ { print b, $3 }' >>"$TMP/defs"
    nm "$o" | awk -v b="$b" '$1 == "U" { print b, $2 }' >>"$TMP/uses"
done
# edges: USER DEFINER (object-level "needs")
awk 'NR == FNR { def[$2] = $1; next } ($2 in def) && def[$2] != $1 { print $1, def[$2], $2 }' "$TMP/defs" "$TMP/uses" \
    | sort -u >"$TMP/edges"
[ -s "$TMP/edges" ] && pass "the objects' needs are read ($(wc -l <"$TMP/edges") uses)" || fail "no uses between objects found"
bad=$(awk '$1 ~ /^cmd_/ && $2 ~ /^cmd_/' "$TMP/edges")
[ -z "$bad" ] && pass "no command file uses another command file's function" || fail "command files use each other" "$bad"
lib=$(make -C "$TESTS/.." -pn 2>/dev/null | sed -n 's/^LIB_SRCS = //p' | tr ' ' '\n' | sed -n 's|^src/\(.*\)\.c$|\1|p' | sort -u)
printf '%s\n' $lib >"$TMP/lib"
bad=$(awk 'NR == FNR { lib[$1] = 1; next } ($1 in lib) && !($2 in lib) && $2 != "migrations"' "$TMP/lib" "$TMP/edges")
[ -z "$bad" ] && pass "no library object uses a CLI object" || fail "library objects use CLI objects" "$bad"
grep -qx athlete "$TMP/lib" && grep -qx athlete_domains "$TMP/lib" && grep -qx export_domains "$TMP/lib" \
    && pass "the athlete layer is in the library" || fail "athlete.c, athlete_domains.c, export_domains.c are not LIB_SRCS"
# a circle among the CLI's objects and the athlete layer (the computation modules' own needs, such
# as ramp.c and steps.c, are theirs)
cyc=$(awk '($1 ~ /^(cli_|cmd_|athlete|export_domains)/) && ($2 ~ /^(cli_|cmd_|athlete|export_domains)/) { print $1, $2 }' \
    "$TMP/edges" | sort -u | tsort 2>&1 >/dev/null | head -5)
[ -z "$cyc" ] && pass "no circle between the CLI's source files and the athlete layer (tsort of the objects' needs)" \
    || fail "a circle between source files" "$cyc"
for o in athlete athlete_domains export_domains; do
    out=$(nm "$OBJ/$o.o" | awk '$1 == "U"' | grep -wE 'printf|fprintf|puts|fputs|putchar|fputc|putc|fwrite|perror|stdout|stderr|vfprintf')
    [ -z "$out" ] && pass "$o.c prints nothing" || fail "$o.c prints" "$out"
done
# #include among the headers of src/: no circle
for h in "$SRC"/*.h; do
    b=$(basename "$h")
    sed -n 's/^#include "\([^/"]*\)"/\1/p' "$h" | while read -r d; do echo "$b $d"; done
done >"$TMP/inc"
cyc=$(tsort "$TMP/inc" 2>&1 >/dev/null | head -5)
[ -z "$cyc" ] && pass "no circle of #include among src/*.h" || fail "a circle of #include" "$cyc"
# a command file includes only headers whose functions no command file defines
for c in "$SRC"/cmd_*.c; do
    for h in $(sed -n 's/^#include "\([^/"]*\.h\)"/\1/p' "$c"); do
        [ "$h" = commands.h ] && continue
        impl=$(basename "$h" .h)
        [ -f "$SRC/$impl.c" ] && case "$impl" in cmd_*) fail "$(basename "$c") includes $h of a command file" ;; esac
        # every function the header declares is defined outside the command files
        for f in $(sed -n 's/^[a-z_ ]*[ *]\(cli_[a-z_0-9]*\)(.*/\1/p' "$SRC/$h"); do
            where=$(awk -v f="$f" '$2 == f { print $1 }' "$TMP/defs")
            case "$where" in cmd_*) fail "$(basename "$c") includes $h, whose $f is defined in $where.c" ;; esac
        done
    done
done
pass "no command file includes a header implemented by a command file"
# no circle among the library's modules through their public headers (a two-segment fit that lived
# in ramp.c once made ramp -> steps -> lactate -> ramp; it is linfit's now)
cyc=$(/usr/bin/python3 "$CPDOMAIN_TESTS/cli/module_cycles.py" "$CPDOMAIN_TESTS/..")
[ "$cyc" = none ] && pass "no circle among the library modules' includes" || fail "a circle of modules: $cyc"
exit 0
