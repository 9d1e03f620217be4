#!/bin/sh
# run.sh: build the demo store from demo/data (see demo/TRUTH.md for the invented centre and the
# true parameters behind every file) and run the main job on it. Usage: sh demo/run.sh BINARY [DIR]
# DIR (default: demo/) receives demo.db and out/; the tests pass a temporary one.
# CPDOMAIN_DEMO_DB names another store instead of DIR/demo.db (a PostgreSQL URI: an existing,
# empty database; the tests' PostgreSQL mode).
set -eu
bin=${1:-build/cpdomain}
here=$(cd "$(dirname "$0")" && pwd)
dir=${2:-$here}
mkdir -p "$dir"
dir=$(cd "$dir" && pwd)
data="$here/data"
out="$dir/out"
db=${CPDOMAIN_DEMO_DB:-$dir/demo.db}
export CPDOMAIN_TODAY=2026-11-30   # the demo's "today", so the demo never ages
case $db in *://*) ;; *) rm -f "$db" "$db-wal" "$db-shm" ;; esac
rm -rf "$out"
mkdir -p "$out/details"
cpd() { "$bin" --db "$db" --quiet "$@"; }
has() { "$bin" "$1" --help >/dev/null 2>&1; }   # the commands this build has

cpd init
cpd athlete import "$data/athletes.csv"
cpd trial import "$data/trials.csv"
codes=$(cpd athlete list | awk 'NR > 1 { print $1 }')

# the manifest says which file needs which arguments (demo/data/manifest.csv, written by gen_demo)
tail -n +2 "$data/manifest.csv" | while IFS=, read -r kind code file date unit rate start onset power baseline note; do
    case "$kind" in
    trial_exclude)
        id=$(cpd trial list "$code" | awk -v d="$date" '$2 == d { print $1; exit }')
        cpd trial exclude "$id" --reason "chain dropped at 3:16: not task failure" ;;
    ramp)
        has ramp || continue
        mod=power; [ "$unit" = "m/s" ] && mod=speed
        cpd ramp add "$code" "$data/$file" --date "$date" --rate "$rate" --start "$start" --onset "$onset" \
            --modality "$mod" --note "$note" ;;
    steps)
        has ramp || continue
        cpd ramp add "$code" "$data/$file" --date "$date" --note "$note" ;;
    bout)
        has bout || continue
        cpd bout add "$code" "$data/$file" --date "$date" --power "$power" --baseline "$baseline" --onset "$onset" ;;
    lactate)
        has lactate || continue
        cpd lactate add "$code" "$data/$file" --date "$date" ;;
    session)
        has session || continue
        cpd session add "$code" "$data/$file" --date "$date" --note "$note" ;;
    allout)
        has allout || continue
        cpd allout add "$code" "$data/$file" --date "$date" ;;
    esac
done

# the main job: every athlete's power-duration fit (saved in the store, for the history), then the
# domain sheets of the whole team: demo/out/index.html and one CODE.html per athlete
fits=$(mktemp -d)
trap 'rm -rf "$fits"' EXIT
for code in $codes; do
    cpd fit "$code" -o "$out/details/${code}_fit.svg" >"$fits/$code.txt" 2>&1 || true
    f="$out/details/$code.txt"
    {
        cat "$fits/$code.txt"
        echo
        if has ramp; then
            for id in $(cpd ramp list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd ramp show "$id" || true
                cpd ramp plot "$id" --kind vslope -o "$out/details/${code}_ramp${id}_vslope.svg" || true
                echo
            done
        fi
        if has lactate; then
            for id in $(cpd lactate list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd lactate show "$id" || true
                cpd lactate plot "$id" -o "$out/details/${code}_lactate${id}.svg" || true
                echo
            done
        fi
        if has bout; then
            for id in $(cpd bout list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd bout show "$id" || true
                cpd bout plot "$id" -o "$out/details/${code}_bout${id}.svg" || true
                echo
            done
            # repeats of one transition (the same intensity) ensemble-averaged: bout show ID,ID,...
            for ids in $(cpd bout list "$code" | awk 'NR > 1 { k = $3 $4; ids[k] = ids[k] (k in n ? "," : "") $1; n[k]++ }
                                                   END { for (k in n) if (n[k] > 1) print ids[k] }'); do
                cpd bout show "$ids" || true
                cpd bout plot "$ids" -o "$out/details/${code}_bouts$(echo "$ids" | tr , _).svg" || true
                echo
            done
        fi
        if has allout; then
            for id in $(cpd allout list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd allout show "$id" || true
                echo
            done
        fi
        # the season's sessions: the mean-maximal curve, the field estimate fitted to it, and the
        # W' balance through the race (the session noted RACE in the manifest)
        if has curve && [ "$(cpd session list "$code" | wc -l)" -gt 1 ]; then
            cpd curve "$code" -o "$out/details/${code}_curve.svg" || true
            echo
            cpd fit "$code" --source curve || true
            echo
            race=$(cpd session list "$code" | awk '$NF == "RACE" { print $1; exit }')
            if [ -n "$race" ]; then
                cpd predict "$code" --session "$race" -o "$out/details/${code}_race_balance.svg" || true
                echo
            fi
        fi
        # the cost of the heavy interval ride (noted H) from the athlete's own kinetics, with its minutes as CSV
        if has energy; then
            for id in $(cpd session list "$code" | awk 'NR > 1 && $NF == "H" { print $1 }'); do
                cpd energy "$id" --minutes "$out/details/${code}_energy${id}.csv" --plot "$out/details/${code}_energy${id}.svg" || true
                echo
            done
        fi
    } >"$f" 2>&1
    cpd --json fit "$code" >"$out/details/$code.fit.json" 2>/dev/null || true
    # the domains as a spreadsheet table, and the season as a plot where there is one
    cpd --csv domains "$code" >"$out/details/$code.domains.csv" 2>/dev/null || true
    cpd history "$code" -o "$out/details/${code}_season.svg" >/dev/null 2>&1 || true
done
cpd sheet --all -o "$out"
# the team in one spreadsheet table (with every athlete's CSV sheet beside it)
cpd sheet --all --format csv -o "$out/csv"

echo "Tarnbridge Endurance Centre (invented demo data, see demo/TRUTH.md): the best fit of each athlete"
for code in $codes; do
    name=$(cpd athlete show "$code" | sed -n 's/^name *//p')
    line=$(sed -n 's/^\* best: //p' "$fits/$code.txt" | head -1)
    printf '  %-4s %-52s %s\n' "$code" "${line:-no model qualifies: see cpdomain fit $code}" "$name"
done
echo
echo "store:   $db"
echo "sheets:  $out/  (index.html for the team, one CODE.html per athlete)"
echo "details: $out/details/  (each athlete's fits, ramps, lactate, bouts, all-out tests and session curves as text, with SVG plots)"
echo "$out/index.html"
