#!/bin/sh
# mkcorpus: the seed corpus of every fuzz target, made from the files in tests/ (and the demo and
# the default rules) at build time: `sh tests/fuzz/mkcorpus.sh OUT` fills OUT/<target>/. Seeds are
# named seed-*; files libFuzzer adds later (hash names) are left alone. The hand-written seeds in
# tests/fuzz/seeds/<target>/ are copied too.
set -eu
out=$1
root=$(cd "$(dirname "$0")/../.." && pwd)
cd "$root"
for t in netlist expr show raw csv rules lut json sweep; do mkdir -p "$out/$t"; rm -f "$out/$t"/seed-*; done
seed() { # seed TARGET NAME < data: named by its checksum, so equal seeds are one file
    cat >"$out/$1/.new"
    sum=$(cksum <"$out/$1/.new" | cut -d' ' -f1)
    mv "$out/$1/.new" "$out/$1/seed-$sum-$(basename "$2" | tr -c 'A-Za-z0-9._\n-' _)"
}

netlists=$(find tests netlists-demo -type f \( -name '*.cir' -o -name '*.sp' -o -name '*.inc' -o -name '*.lib' \) | sort)

# netlist: every netlist as it is, and with the files it includes from its own folder appended
# after `*@file NAME` marks (the form fuzz_netlist.c splits back into files)
for f in $netlists; do
    seed netlist "$f" <"$f"
    dir=$(dirname "$f")
    incs=$(awk 'tolower($1) ~ /^\.(include|inc|lib)$/ && NF >= 2 { g = $2; gsub(/["'\'']/, "", g); print g }' "$f" |
        grep -v / | sort -u || true)
    [ -n "$incs" ] || continue
    {
        cat "$f"
        for i in $incs; do
            [ -f "$dir/$i" ] || continue
            printf '\n*@file %s\n' "$i"
            cat "$dir/$i"
        done
    } | seed netlist "$f.multi"
done

# expr: the expressions of the netlists, one seed per file: brace contents and .param values as
# `name = value` lines
for f in $netlists; do
    {
        grep -o '{[^}]*}' "$f" | sed 's/^{//; s/}$//' || true
        awk 'tolower($1) == ".param" { for (i = 2; i <= NF; i++) print $i }' "$f" | grep '=.' || true
    } >"$out/expr/.tmp"
    [ -s "$out/expr/.tmp" ] && seed expr "$f" <"$out/expr/.tmp"
done
rm -f "$out/expr/.tmp"

# show: ngspice batch output (fixtures are ngspice's own, see tests/fixtures/op/gen/regen.sh)
for f in $(find tests -type f \( -name '*.out' -o -name '*.log' -o -name '*.err' \) | sort); do
    seed show "$f" <"$f"
done

# raw: binary and ASCII raw files, each behind both mode bytes (fuzz_raw.c)
for f in $(find tests -type f -name '*.raw' | sort); do
    { printf '\000'; cat "$f"; } | seed raw "$f.m0"
    { printf '\001'; cat "$f"; } | seed raw "$f.m1"
done

# csv
for f in $(find tests -type f -name '*.csv' | sort); do
    seed csv "$f" <"$f"
done

# rules: the defaults and the test rule files
for f in rules/*.rules $(find tests -type f -name '*.rules' | sort); do
    [ -f "$f" ] && seed rules "$f" <"$f"
done

# lut: characterization tables, when the tests have some
for f in $(find tests -type f \( -path '*lut*' \) \( -name '*.csv' -o -name '*.lut' -o -name '*.tsv' \) | sort); do
    seed lut "$f" <"$f"
done

# json: JSON files of the tests, and reports biaslint writes on the op fixtures when it is built
# (BIASLINT, default build/biaslint); each behind the four mode bytes of fuzz_json.c
jsons=$(find tests -type f -name '*.json' | sort)
bin=${BIASLINT:-build/biaslint}
if [ -x "$bin" ]; then
    for c in tests/fixtures/op/gen/*.cir; do
        o=tests/fixtures/op/$(basename "$c" .cir).out
        [ -f "$o" ] || continue
        "$bin" check "$c" --op "$o" --format json >"$out/json/.report" 2>/dev/null || true
        [ -s "$out/json/.report" ] && cp "$out/json/.report" "$out/json/.r-$(basename "$c" .cir)" && jsons="$jsons $out/json/.r-$(basename "$c" .cir)"
    done
fi
for f in $jsons; do
    for m in 0 1 2 3; do { printf "\\00$m"; cat "$f"; } | seed json "$f.m$m"; done
done
rm -f "$out/json"/.r-* "$out/json/.report"

# hand-written seeds
for d in tests/fuzz/seeds/*/; do
    [ -d "$d" ] || continue
    t=$(basename "$d")
    for f in "$d"*; do [ -f "$f" ] && seed "$t" "$f" <"$f"; done
done
for t in netlist expr show raw csv rules lut json sweep; do
    printf 'mkcorpus: %-8s %3d seeds\n' "$t" "$(ls "$out/$t" | grep -c '^seed-' || true)"
done
