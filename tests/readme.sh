#!/usr/bin/env bash
# readme: every biaslint command shown in README.md runs, so the documentation cannot drift from the
# tool. A command is an indented line starting with `build/biaslint ` (with `\` continuations); it
# runs from the top of the repository after the demo has been simulated, and must not exit with 2 or 3
# (usage or input error). Commands that write files write them under build/.
set -u
top=$(cd "$(dirname "$0")/.." && pwd)
cd "$top" || exit 1
build=${BUILD:-build}
pass=0 fail=0
if ! bash netlists-demo/run-demo.sh "$build" >"$build/readme-demo.log" 2>&1; then
    echo "FAIL: the demo did not run"; tail -20 "$build/readme-demo.log"; echo "readme: 0 passed, 1 failed"; exit 1
fi
cmds=$(awk '
    /^    build\/biaslint / || cont { line = line (cont ? " " : "") $0; cont = /\\$/;
        if (cont) sub(/\\$/, "", line); else { print line; line = "" } }
' README.md)
[ -n "$cmds" ] || { echo "FAIL: no biaslint command found in README.md"; echo "readme: 0 passed, 1 failed"; exit 1; }
while IFS= read -r cmd; do
    cmd=$(echo "$cmd" | sed -e 's/^ *//' -e "s#^build/biaslint#$build/biaslint#" -e "s#\([ =]\)build/demo/#\1$build/demo/#g")
    ( eval "$cmd" ) >/dev/null 2>"$build/readme-cmd.err"
    rc=$?
    if [ $rc -ge 2 ]; then
        fail=$((fail + 1)); echo "FAIL ($rc): $cmd"; head -5 "$build/readme-cmd.err"
    else
        pass=$((pass + 1))
    fi
done <<<"$cmds"
# the manual page renders without a warning (groff -ww), and the completion script parses
if command -v groff >/dev/null; then
    w=$(groff -ww -man -z src/biaslint.1 2>&1)
    if [ -n "$w" ]; then fail=$((fail + 1)); echo "FAIL: groff warns on src/biaslint.1: $w"; else pass=$((pass + 1)); fi
fi
if bash -n src/biaslint.bash; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "FAIL: src/biaslint.bash"; fi
# every command the main --help lists has its own --help
for c in $("$build/biaslint" --help | awk '/^commands:/ {on = 1; next} on && /^  [a-z]/ && $1 != "biaslint" {print $1}'); do
    if "$build/biaslint" "$c" --help >/dev/null 2>&1; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "FAIL: biaslint $c --help"; fi
done
# make install puts the binary, the manual, the rules and the completion under PREFIX in DESTDIR
dest=$(mktemp -d /tmp/biaslint-install-XXXXXX)
if make -s install BUILD="$build" PREFIX=/opt/bl DESTDIR="$dest" >/dev/null 2>&1 &&
    [ -x "$dest/opt/bl/bin/biaslint" ] && [ -f "$dest/opt/bl/share/man/man1/biaslint.1" ] &&
    [ -f "$dest/opt/bl/share/biaslint/rules/defaults.rules" ] &&
    [ -f "$dest/opt/bl/share/bash-completion/completions/biaslint" ]; then
    pass=$((pass + 1))
else
    fail=$((fail + 1)); echo "FAIL: make install PREFIX=/opt/bl DESTDIR=$dest"
fi
rm -rf "$dest"
# README "check with tables": on the demo's node-voltage run every report says which figures came
# from a table, and the JSON and CSV reports carry the width suggestion of the input pair
tb=$(mktemp -d /tmp/biaslint-tables-XXXXXX)
"$build/biaslint" check netlists-demo/afe.cir --op "$build/demo/afe.mild.nodes.raw" -q \
    --table "$build/demo/ncore.lut" --table "$build/demo/pcore.lut" --table "$build/demo/nlong.lut" \
    --table "$build/demo/plong.lut" --annotate "$tb/a.cir" --report json="$tb/r.json" --report csv="$tb/r.csv" \
    --report html="$tb/r.html" --report sarif="$tb/r.sarif" --report junit="$tb/r.xml" >"$tb/r.txt" 2>"$tb/err"
marks() { # file, pattern, count at least
    local n
    n=$(grep -c -- "$2" "$1")
    if [ "${n:-0}" -ge "$3" ]; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "FAIL: $1: $n lines match '$2', want >= $3"; fi
}
marks "$tb/r.txt" '  table  ' 34
marks "$tb/r.txt" '^Figures from lookup tables' 1
marks "$tb/r.json" '"source":"table","table":"[^"]*pcore.lut"' 12
marks "$tb/r.json" '"name":"xpga.mi1".*"suggest_w":2\.0[0-9]*e-05' 1
marks "$tb/r.csv" '"table","[^"]*ncore.lut",' 10
marks "$tb/r.html" '>table</td>' 34
marks "$tb/r.sarif" '"figureSource": "table"' 1
marks "$tb/r.xml" 'figures from the lookup table' 1
marks "$tb/a.cir" '| from table ' 34
marks "$tb/a.cir" '^\*~ \[xpga.mi1\].*suggest W 20' 1
rm -rf "$tb"
echo "readme: $pass passed, $fail failed"
[ $fail -eq 0 ]
