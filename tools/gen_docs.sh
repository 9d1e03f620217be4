#!/bin/sh
# gen_docs.sh: the man page and the bash and zsh completions, generated from the command tables
# themselves: the binary's own --help texts (main.c's table, each family's subcommand table and
# each command's help with its usage lines). One source: change a table or a help text and the
# next build regenerates all three. Usage: sh tools/gen_docs.sh BINARY OUTDIR
# Writes OUTDIR/cpdomain.1, OUTDIR/cpdomain.bash and OUTDIR/_cpdomain.
set -eu
bin=$1
out=$2
mkdir -p "$out"
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
export CPDOMAIN_DB=/nonexistent/never-opened.db   # --help never opens a store

"$bin" --help >"$tmp/top"
version=$("$bin" --version | awk '{ print $2 }')
# "  name  summary" rows between "commands:" and the next blank line
commands=$(awk '/^commands:/ { on = 1; next } on && /^$/ { exit } on { print $1 }' "$tmp/top")
# the global options: "--name" at the start of the rows after "options:"
globals=$(awk '/^options:/ { on = 1; next } on && /^$/ { exit } on && /^  --/ { print $1 }' "$tmp/top")

# options of one help text: every --long-option in its usage lines (up to the first blank line),
# plus -o when the usage has it
opts_of() {
    awk 'NR > 1 && /^$/ { exit } { print }' "$1" | grep -oE -- '(^|[^a-z-])(--[a-z][a-z0-9-]*|-o)\b' |
        sed 's/^[^-]*//' | sort -u | tr '\n' ' '
}

: >"$tmp/leaves"   # "cmd sub|- options" per runnable command
: >"$tmp/subs"     # "cmd sub1 sub2 ..." per family
for c in $commands; do
    "$bin" "$c" --help >"$tmp/h_$c" 2>&1 || true
    if head -n 1 "$tmp/h_$c" | grep -q "^usage: cpdomain $c SUBCOMMAND"; then
        subs=$(awk 'NR > 2 && /^$/ { exit } NR > 2 { print $1 }' "$tmp/h_$c")
        echo "$c $(echo $subs)" >>"$tmp/subs"
        for s in $subs; do
            "$bin" "$c" "$s" --help >"$tmp/h_${c}_$s" 2>&1 || true
            echo "$c $s $(opts_of "$tmp/h_${c}_$s")" >>"$tmp/leaves"
        done
    else
        echo "$c - $(opts_of "$tmp/h_$c")" >>"$tmp/leaves"
    fi
done

# ---- man page (man(7) macros; every help text verbatim in a no-fill block) ----
esc() { sed -e 's/\\/\\e/g' -e "s/^\\([.']\\)/\\\\\\&\\1/"; }
{
    printf '%s\n' ".TH CPDOMAIN 1 \"\" \"cpdomain $version\" \"User Commands\""
    printf '%s\n' ".SH NAME"
    printf '%s\n' "cpdomain \\- critical power, W\\(aq and the intensity domains from an athlete\\(aqs tests"
    printf '%s\n' ".SH SYNOPSIS"
    printf '%s\n' ".B cpdomain"
    printf '%s\n' "[\\fB\\-\\-db\\fR \\fIFILE\\fR] [\\fB\\-\\-json\\fR] [\\fB\\-\\-quiet\\fR] \\fICOMMAND\\fR [\\fISUBCOMMAND\\fR] [\\fIARGS\\fR...]"
    printf '%s\n' ".SH DESCRIPTION"
    awk 'NR > 2 && /^commands:/ { exit } NR > 2 && !/^$/ { print }' "$tmp/top" | esc
    printf '%s\n' ".SH OPTIONS"
    # "  --name [VALUE]  text" rows; a row indented further continues the text above it
    awk '/^options:/ { on = 1; next } on && /^$/ { exit } on { print }' "$tmp/top" | esc |
        awk '/^  --/ { sub(/^  /, ""); o = $1; if ($2 ~ /^[A-Z]+$/) { o = o " " $2; $2 = "" } $1 = "";
                       sub(/^ +/, ""); print ".TP\n.B " o "\n" $0; next }
             { sub(/^ +/, ""); print }'
    printf '%s\n' ".SH COMMANDS"
    for c in $commands; do
        summary=$(awk -v c="$c" '/^commands:/ { on = 1; next } on && $1 == c { $1 = ""; sub(/^ +/, ""); print; exit }' "$tmp/top")
        printf '%s\n' ".SS $c"
        printf '%s\n' "$summary" | esc
        if grep -q "^$c " "$tmp/subs"; then
            for s in $(grep "^$c " "$tmp/subs" | cut -d' ' -f2-); do
                printf '%s\n' ".TP"
                printf '%s\n' ".B $c $s"
                printf '%s\n' ".nf"
                esc <"$tmp/h_${c}_$s"
                printf '%s\n' ".fi"
            done
        else
            printf '%s\n' ".PP"
            printf '%s\n' ".nf"
            esc <"$tmp/h_$c"
            printf '%s\n' ".fi"
        fi
    done
    printf '%s\n' ".SH ENVIRONMENT"
    printf '%s\n' ".TP"
    printf '%s\n' ".B CPDOMAIN_DB"
    printf '%s\n' "The store used without \\fB\\-\\-db\\fR (default ./cpdomain.db)."
    printf '%s\n' ".TP"
    printf '%s\n' ".B CPDOMAIN_TODAY"
    printf '%s\n' "The date (YYYY\\-MM\\-DD) taken as today, for reproducible reports."
    printf '%s\n' ".SH EXIT STATUS"
    printf '%s\n' "0 success; 64 usage; 65 bad input data, unknown athlete or id; 66 input file or store missing;"
    printf '%s\n' "69 not enough data or no convergence; 70 internal error; 73 cannot create output; 74 store I/O error."
    printf '%s\n' ".SH CAUTION"
    printf '%s\n' "Predictions and prescriptions are model estimates with their uncertainty, not guarantees."
    printf '%s\n' "Maximal and severe\\-domain efforts need pre\\-participation screening, supervision and agreed"
    printf '%s\n' "stop criteria; defer to licensed practitioners."
} >"$out/cpdomain.1"

# The completions' case table on the command and the subcommand: the words to offer at each
# place. $1 and $2 wrap a word list: '="' and '"' for bash's words="...", '_=(' and ')' for zsh's
# words_=(...).
case_table() {
    echo "    case \"\$cmd\" in"
    echo "    '') words$1$(echo $commands) $(echo $globals)$2 ;;"
    while read -r c rest; do
        echo "    $c)"
        echo "        case \"\$sub\" in"
        echo "        '') words$1$rest$2 ;;"
        grep "^$c " "$tmp/leaves" | while read -r _ s o; do
            echo "        $s) words$1${o:+$o }--help$2 ;;"
        done
        echo "        esac ;;"
    done <"$tmp/subs"
    grep " - " "$tmp/leaves" | while read -r c _ o; do
        echo "    $c) words$1${o:+$o }--help$2 ;;"
    done
    echo "    esac"
}

# ---- bash completion ----
{
    echo "# bash completion for cpdomain, generated from its command tables by tools/gen_docs.sh"
    echo "_cpdomain() {"
    echo "    local cur=\${COMP_WORDS[COMP_CWORD]} i cmd= sub= words="
    echo "    for ((i = 1; i < COMP_CWORD; i++)); do"
    echo "        case \${COMP_WORDS[i]} in"
    echo "        --db) ((i++)) ;;"
    echo "        -*) ;;"
    echo "        *) if [ -z \"\$cmd\" ]; then cmd=\${COMP_WORDS[i]}; elif [ -z \"\$sub\" ]; then sub=\${COMP_WORDS[i]}; fi ;;"
    echo "        esac"
    echo "    done"
    case_table '="' '"'
    echo "    COMPREPLY=(\$(compgen -W \"\$words\" -- \"\$cur\"))"
    echo "    case \"\$cur\" in -*) ;; *) [ \${#COMPREPLY[@]} -eq 0 ] && COMPREPLY=(\$(compgen -f -- \"\$cur\")) ;; esac"
    echo "}"
    echo "complete -o filenames -F _cpdomain cpdomain"
} >"$out/cpdomain.bash"

# ---- zsh completion ----
{
    echo "#compdef cpdomain"
    echo "# zsh completion for cpdomain, generated from its command tables by tools/gen_docs.sh"
    echo "_cpdomain() {"
    echo "    local -a words_"
    echo "    local cmd=\${words[(r)^-*~cpdomain]} sub"
    echo "    local -a rest; rest=(\${words[2,CURRENT-1]:#-*})"
    echo "    cmd=\${rest[1]}; sub=\${rest[2]}"
    case_table '_=(' ')'
    echo "    compadd -a words_"
    echo "    _files"
    echo "}"
    echo "_cpdomain \"\$@\""
} >"$out/_cpdomain"
