# cli_unix.sh: the habits of Unix tools: the man page and bash/zsh completions generated from the
# command tables (every command listed), 'make install' with the library, headers and pkg-config
# file, "did you mean" for commands, subcommands, options and athlete codes, codes in any letter
# case, quantities with their unit, and the output format from the extension in any case.
. "$CPDOMAIN_TESTS/cli/lib.sh"
ROOT="$CPDOMAIN_TESTS/.."

# ---- man page and completions, from the command tables ----
sh "$ROOT/tools/gen_docs.sh" "$BIN" "$TMP/doc" >"$TMP/gen.log" 2>&1 && pass "tools/gen_docs.sh writes the man page and completions" ||
    fail "gen_docs.sh failed" "$(tail -3 "$TMP/gen.log")"
commands=$("$BIN" --help | awk '/^commands:/ { on = 1; next } on && /^$/ { exit } on { print $1 }')
[ "$(echo "$commands" | wc -w)" -ge 17 ] && pass "the top-level help lists $(echo "$commands" | wc -w) commands" || fail "few commands: $commands"
missing_b="" missing_z="" missing_m=""
for c in $commands; do
    grep -q "^    '') words=\".*\\b$c\\b" "$TMP/doc/cpdomain.bash" || missing_b="$missing_b $c"
    grep -q "^    '') words_=(.*\\b$c\\b" "$TMP/doc/_cpdomain" || missing_z="$missing_z $c"
    grep -q "^\\.SS $c\$" "$TMP/doc/cpdomain.1" || missing_m="$missing_m $c"
done
[ -z "$missing_b" ] && pass "the bash completion offers every command" || fail "bash completion lacks:$missing_b"
[ -z "$missing_z" ] && pass "the zsh completion offers every command" || fail "zsh completion lacks:$missing_z"
[ -z "$missing_m" ] && pass "the man page has a section for every command" || fail "man page lacks:$missing_m"
head -n 1 "$TMP/doc/_cpdomain" | grep -q '^#compdef cpdomain$' && pass "zsh completion starts with #compdef" || fail "no #compdef line"
# every subcommand of every family is in the man page and the completion
bad=""
for c in $commands; do
    "$BIN" "$c" --help | head -n 1 | grep -q "SUBCOMMAND" || continue
    for s in $("$BIN" "$c" --help | awk 'NR > 2 && /^$/ { exit } NR > 2 { print $1 }'); do
        grep -q "^\\.B $c $s\$" "$TMP/doc/cpdomain.1" || bad="$bad man:$c-$s"
        grep -q "^        $s) words=" "$TMP/doc/cpdomain.bash" || bad="$bad bash:$c-$s"
    done
done
[ -z "$bad" ] && pass "every subcommand is in the man page and the bash completion" || fail "missing:$bad"
warn=$(groff -man -Tutf8 -ww -z "$TMP/doc/cpdomain.1" 2>&1)
[ -z "$warn" ] && pass "groff renders the man page without a warning" || fail "groff warnings" "$(echo "$warn" | head -3)"
man -l "$TMP/doc/cpdomain.1" 2>/dev/null | grep -q "solve CODE --protocol SPEC (--finish PCT | --lowest PCT)" &&
    pass "the man page carries solve's usage from its help" || fail "solve usage not in the man page"
# the bash completion works: complete 'cpdomain sol', 'cpdomain solve C01 --lo', 'cpdomain athlete s'
comp() {
    bash -c ". '$TMP/doc/cpdomain.bash'; COMP_WORDS=($1); COMP_CWORD=\$((\${#COMP_WORDS[@]} - 1)); _cpdomain; echo \"\${COMPREPLY[*]}\"" 2>&1
}
[ "$(comp "cpdomain sol")" = "solve" ] && pass "bash: 'cpdomain sol<TAB>' completes to solve" || fail "bash: sol -> '$(comp "cpdomain sol")'"
[ "$(comp "cpdomain --db x.db solve C01 --lo")" = "--lowest" ] && pass "bash: solve's options, after --db FILE" ||
    fail "bash: --lo -> '$(comp "cpdomain --db x.db solve C01 --lo")'"
[ "$(comp "cpdomain --c")" = "--csv" ] && pass "bash: the global options, and only those" || fail "bash: --c -> '$(comp "cpdomain --c")'"
[ "$(comp "cpdomain athlete s")" = "show set" ] && pass "bash: athlete's subcommands" || fail "bash: athlete s -> '$(comp "cpdomain athlete s")'"
[ "$(comp "cpdomain sheet C01 --f")" = "--format --from" ] && pass "bash: sheet's options" || fail "bash: sheet --f -> '$(comp "cpdomain sheet C01 --f")'"

# ---- make install: binary, library, headers, pkg-config file, man page, completions ----
build=$(dirname "$BIN")
if make -s -C "$ROOT" install BUILD="$build" DESTDIR="$TMP/inst" PREFIX=/usr >"$TMP/inst.log" 2>&1; then
    pass "make install into a staging folder"
else
    fail "make install failed" "$(tail -5 "$TMP/inst.log")"
fi
for f in bin/cpdomain lib/libcpdomain.a include/cpdomain/pd.h include/cpdomain/suggest.h lib/pkgconfig/cpdomain.pc \
    share/man/man1/cpdomain.1 share/bash-completion/completions/cpdomain share/zsh/site-functions/_cpdomain; do
    [ -f "$TMP/inst/usr/$f" ] || bad="$bad $f"
done
[ -z "$bad" ] && pass "installed: binary, libcpdomain.a, headers, cpdomain.pc, man page, completions" || fail "not installed:$bad"
# a program built against the installed library through pkg-config alone
cat >"$TMP/use.c" <<'EOF'
#include <cpdomain/suggest.h>
#include <cpdomain/version.h>
#include <stdio.h>
int main(void)
{
    const char *w[] = {"predict", "solve"};
    printf("%s %s\n", CPDOMAIN_VERSION, cpd_suggest("slove", w, 2));
    return 0;
}
EOF
sed -i "s|^prefix=/usr|prefix=$TMP/inst/usr|" "$TMP/inst/usr/lib/pkgconfig/cpdomain.pc"
flags=$(PKG_CONFIG_PATH="$TMP/inst/usr/lib/pkgconfig" pkg-config --cflags --libs --static cpdomain 2>&1)
# a library built for 'make check' carries the sanitizers; its users link them too
san=""
nm "$TMP/inst/usr/lib/libcpdomain.a" 2>/dev/null | grep -q __asan_ && san="-fsanitize=address,undefined"
if cc -std=c17 $san "$TMP/use.c" $flags -o "$TMP/use" 2>"$TMP/cc.log"; then
    out=$("$TMP/use")
    [ "$out" = "$("$BIN" --version | awk '{ print $2 }') solve" ] && pass "a program links the installed library through pkg-config" ||
        fail "the linked program printed '$out'"
else
    fail "cannot build against the installed library" "$(head -3 "$TMP/cc.log")"
fi

# ---- did you mean ----
expect 0 "init" init
expect 0 "athlete" athlete add C01 --name "Case Test" --mass 70.5
expect 0 "a second athlete" athlete add Rx2 --name "Other Case"
expect 0 "trials" trial add C01 --date 2026-10-05 --power 300W --duration 5min
expect 0 "trial with a spaced unit" trial add C01 --date 2026-10-08 --power "260 w" --duration 12min
expect 0 "a third trial" trial add c01 --date 2026-10-12 --power 350 --duration 180
expect 0 "the trials in any letter case" --json trial list c01
json_is 'sorted(t["power_w"] for t in d["trials"])' "[260, 300, 350]" "'c01' finds C01; 300W, '260 w' and 350 read as watts"
"$BIN" --db "$DB" predcit C01 >/dev/null 2>"$TMP/err"; RC=$?
[ "$RC" -eq 64 ] && pass "a mistyped command exits 64" || fail "mistyped command: exit $RC"
err_has "unknown command 'predcit' (did you mean 'predict'?)" "did you mean, for a command"
expect 64 "a mistyped subcommand" athlete shwo C01
err_has "unknown subcommand 'shwo' (did you mean 'show'?)" "did you mean, for a subcommand"
expect 64 "a mistyped option" predict C01 --powr 300
err_has "unknown option '--powr' (did you mean '--power'?)" "did you mean, for an option"
expect 65 "a mistyped code" predict C0l --power 300
err_has "no athlete with code 'C0l' (did you mean 'C01'?)" "did you mean, for an athlete code"
expect 65 "no close code" predict QQQQQQ --power 300
err_has "'cpdomain athlete list' shows the codes" "no suggestion: where to find the codes"
expect 0 "a code in other letter case" athlete show rx2
out_has "Other Case" "'rx2' is Rx2"
expect 0 "an ambiguous case" athlete add RX2 --name "Clash"
expect 65 "two codes differ only in case" athlete show rx2
err_has "differ from it only in letter case" "an ambiguous code is refused, not guessed"
expect 0 "the exact code still works" athlete show RX2
out_has "Clash" "exact match first"

# ---- quantities with units; a bare duration in seconds is echoed as seconds ----
expect 0 "--power 300W" --json predict C01 --power 300W --model linear-total
a=$(json 'd["time_to_failure_s"]')
expect 0 "--power 300" --json predict C01 --power 300 --model linear-total
json_is "d['time_to_failure_s'] == $a" True "--power 300W and --power 300 agree"
expect 0 "--duration 8min" predict C01 --duration 8min --model linear-total
out_has "for 8:00:" "--duration 8min is 8 minutes"
expect 0 "--duration 8" predict C01 --duration 8 --model linear-total
out_has "for 8 s:" "a bare --duration 8 is seconds, echoed as '8 s'"
expect 0 "a bare --duration on a trial" trial add C01 --date 2026-10-20 --power 900 --duration 8
expect 0 "trial list" trial list C01
out_has "      8 s" "a trial of 8 s is listed as '8 s', not '0:08'"
expect 0 "remove it again" trial remove "$("$BIN" --db "$DB" --json trial list C01 | /usr/bin/python3 -c "import json,sys; print(max(t['id'] for t in json.load(sys.stdin)['trials']))")"
expect 64 "a wrong unit" predict C01 --power 300kg
err_has "is not a number of W" "a wrong unit is named"

# ---- the format follows -o's extension in any letter case ----
expect 0 "sheet -o X.CSV" --quiet sheet C01 -o "$TMP/x.CSV"
head -n 1 "$TMP/x.CSV" | grep -q '^section,item,key,value,unit' && pass "sheet -o x.CSV writes CSV" || fail "x.CSV is not CSV"

# ---- a usage error names the command as the user typed it, and its --help works ----
expect 64 "session list without a code" session list
err_has "cpdomain session list: missing argument CODE" "the subcommand is named with its family"
err_has "Try 'cpdomain session list --help'" "and the help it points to exists"
expect 0 "that help" session list --help
# every global option may follow the command, --busy-timeout too, and is checked there as well
expect 0 "--busy-timeout after the command" trial list C01 --busy-timeout 250
expect 64 "a bad --busy-timeout after the command" trial list C01 --busy-timeout soon
err_has "whole number of milliseconds" "the bad value is named"
