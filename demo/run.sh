#!/bin/sh
# run.sh: build the demo store from demo/data (see demo/TRUTH.md for the invented centre and the
# true parameters behind every file) and run the main job on it. Usage: sh demo/run.sh BINARY
set -eu
bin=${1:-build/cpdomain}
here=$(cd "$(dirname "$0")" && pwd)
data="$here/data"
out="$here/out"
db="$here/demo.db"
export CPDOMAIN_TODAY=2026-11-30   # the demo's "today", so the demo never ages
rm -f "$db" "$db-wal" "$db-shm"
rm -rf "$out"
mkdir -p "$out"
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

# the main job: every athlete's power-duration fit (saved in the store), predictions, ramps
for code in $codes; do
    f="$out/$code.txt"
    {
        cpd fit "$code" || true
        echo
        if has ramp; then
            for id in $(cpd ramp list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd ramp show "$id" || true
                cpd ramp plot "$id" --kind vslope -o "$out/${code}_ramp${id}_vslope.svg" || true
                echo
            done
        fi
        if has lactate; then
            for id in $(cpd lactate list "$code" | awk 'NR > 1 { print $1 }'); do
                cpd lactate show "$id" || true
                cpd lactate plot "$id" -o "$out/${code}_lactate${id}.svg" || true
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
            cpd curve "$code" || true
            echo
            cpd fit "$code" --source curve || true
            echo
            race=$(cpd session list "$code" | awk '$NF == "RACE" { print $1; exit }')
            if [ -n "$race" ]; then
                cpd predict "$code" --session "$race" || true
                echo
            fi
        fi
    } >"$f" 2>&1
    cpd --json fit "$code" >"$out/$code.fit.json" 2>/dev/null || true
done

echo "Tarnbridge Endurance Centre (invented demo data, see demo/TRUTH.md): the best fit of each athlete"
for code in $codes; do
    name=$(cpd athlete show "$code" | sed -n 's/^name *//p')
    line=$(sed -n 's/^\* best: //p' "$out/$code.txt" | head -1)
    printf '  %-4s %-52s %s\n' "$code" "${line:-no model qualifies: see $out/$code.txt}" "$name"
done
echo
echo "store:   $db"
echo "outputs: $out/  (one CODE.txt per athlete with the fits, ramps, lactate and all-out tests, curves; SVG plots)"
