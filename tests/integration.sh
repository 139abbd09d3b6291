#!/usr/bin/env bash
# integration: the real binary on real ngspice output. Simulates tests/fixtures/cli/pair.cir, then
# checks the command line end to end: exit codes, the annotated netlist round trip, and the bad-input
# set (each must exit 2, name file:line, and leave no output file behind).
set -u
here=$(cd "$(dirname "$0")" && pwd)
bin=$(cd "$(dirname "${BIASLINT:-build/biaslint}")" && pwd)/$(basename "${BIASLINT:-build/biaslint}")
work=$(mktemp -d /tmp/biaslint-it-XXXXXX)
trap 'rm -rf "$work"' EXIT
pass=0 fail=0
ok() { pass=$((pass + 1)); }
bad() { fail=$((fail + 1)); echo "FAIL: $*"; }

cp "$here"/fixtures/cli/pair.cir "$here"/fixtures/cli/pair.ctl "$work"/
cd "$work"
if ! ngspice -b pair.ctl >pair.log 2>pair.err; then
    echo "FAIL: ngspice could not simulate pair.cir"; cat pair.err; echo "0 passed, 1 failed"; exit 1
fi

# ---- a clean run ----
"$bin" check pair.cir --op pair.log --annotate pair.ann.cir -o pair.json --format json 2>run.err
rc=$?
[ $rc -le 1 ] && ok || { bad "check on a good dump exited $rc"; cat run.err; }
[ -s pair.ann.cir ] && ok || bad "no annotated netlist written"
[ -s pair.json ] && ok || bad "no JSON report written"
grep -Eq '"tool": *"biaslint"' pair.json && ok || bad "JSON report lacks the tool key"

# round trip: strip gives the input back byte for byte; annotating the annotated netlist changes nothing
"$bin" strip pair.ann.cir -o pair.stripped.cir && cmp -s pair.cir pair.stripped.cir && ok || bad "strip(annotate(x)) != x"
cp pair.ann.cir pair.ann1.cir
"$bin" check pair.ann1.cir --op pair.log --annotate pair.ann2.cir 2>/dev/null >/dev/null
cmp -s pair.ann1.cir pair.ann2.cir && ok || bad "annotating an annotated netlist is not idempotent"
# ngspice simulates the annotated netlist to the same operating point
sed 's/pair.cir/pair.ann.cir/; s/pair.raw/pair2.raw/' pair.ctl >pair2.ctl
ngspice -b pair2.ctl >pair2.log 2>/dev/null
diff <(grep -E '^ +(id|gm|gds|vdsat) ' pair.log) <(grep -E '^ +(id|gm|gds|vdsat) ' pair2.log) >/dev/null && ok ||
    bad "ngspice gives other results on the annotated netlist"
# the input is never overwritten
"$bin" check pair.cir --op pair.log --annotate pair.cir >/dev/null 2>over.err
rc=$?
[ $rc -eq 2 ] && cmp -s pair.cir "$here"/fixtures/cli/pair.cir && ok || bad "--annotate over the input: rc $rc or input changed"

# ---- the bad-input set ----
# expect_bad NAME NETLIST DUMP PATTERN: exit 2, a file:line message matching PATTERN, no output left.
expect_bad() {
    local name=$1 net=$2 dump=$3 pat=$4
    rm -f out.cir out.json
    "$bin" check "$net" --op "$dump" --annotate out.cir -o out.json 2>err.txt >/dev/null
    local rc=$?
    if [ $rc -ne 2 ]; then bad "$name: exit $rc, expected 2"; cat err.txt; return; fi
    if ! grep -Eq "$pat" err.txt; then bad "$name: message does not match /$pat/"; cat err.txt; return; fi
    if ls out.cir out.json out.*.tmp* 2>/dev/null | grep -q .; then bad "$name: an output file was left behind"; return; fi
    ok
}
: >empty.cir
expect_bad "empty netlist" empty.cir pair.log 'empty.cir(:[0-9]+)?:'
head -c 4096 /dev/urandom >garbage.cir
expect_bad "binary garbage" garbage.cir pair.log 'garbage.cir:[0-9]+:[0-9]+:'
{ printf 'title\nm1 d g 0 0 nch w='; head -c 1048576 /dev/zero | tr '\0' 'q'; printf '\n.end\n'; } >longline.cir
expect_bad "a 1 MB line" longline.cir pair.log 'longline.cir:2:[0-9]+:'
printf 'title\n.subckt amp a b\nm1 a b 0 0 nch\n.end\n' >unterminated.cir
expect_bad "unterminated subcircuit" unterminated.cir pair.log 'unterminated.cir:2:[0-9]+:'
printf 'title\n.subckt loop a\nx1 a loop\n.ends\nx0 n loop\n.end\n' >recursive.cir
expect_bad "recursive subcircuit" recursive.cir pair.log 'recursive.cir:[0-9]+:[0-9]+:'
printf 'title\n.include cyc_b.inc\n.end\n' >cyc_a.cir
printf '.include cyc_a.cir\n' >cyc_b.inc
expect_bad "include cycle" cyc_a.cir pair.log 'cyc_[ab].(cir|inc):[0-9]+:[0-9]+:'
printf 'title\n.include nowhere.inc\n.end\n' >missing.cir
expect_bad "missing include" missing.cir pair.log 'missing.cir:2:[0-9]+:.*nowhere.inc'
printf 'title\n.model nch nmos level=14 version=4.8\nm1 d g 0 0 nch w={wid} l=1u\n.end\n' >undef.cir
expect_bad "undefined parameter" undef.cir pair.log 'undef.cir:3:[0-9]+:.*wid'
head -c 300 pair.raw >trunc.raw
expect_bad "truncated raw file" pair.cir trunc.raw 'trunc.raw:[0-9]+:'
sed '0,/No. Points: 1/s//No. Points: 3/' pair.raw >points.raw
expect_bad "raw file with a wrong point count" pair.cir points.raw 'points.raw:[0-9]+:'
printf 'name,id,gm,gds,vgs,vds,vbs,vth,vdsat,cgg\nx1.m1,1e-5,abc,1e-6,0.5,0.9,0,0.3,0.1,1e-14\n' >nonnum.csv
expect_bad "CSV with a non-numeric field" pair.cir nonnum.csv 'nonnum.csv:2:[0-9]+:'
printf 'title\n.model nch nmos level=14 version=4.8\nm1 a b 0 0 nch\nm2 a b 0 0 nch\nm3 a b 0 0 nch\n.end\n' >other.cir
expect_bad "a dump from another netlist" other.cir pair.log 'pair.log(:[0-9]+)?:.*another netlist'

# ---- a PDK-style design (tests/circuits-pdk, invented lp18 process): the subcircuit-only export
# checked with --top against its testbench's dump; rows and annotations under the X cards ----
mkdir pdk && cp -r "$here"/circuits-pdk/. pdk/
(cd pdk && printf '* tb\n.include tb_ota.spice\n.control\nop\nshow m : w l m nf id gm gds vgs vds vbs vth vdsat cgg\nquit\n.endc\n.end\n' >tb.ctl &&
    ngspice -b tb.ctl >tb.log 2>tb.err) || bad "ngspice could not simulate circuits-pdk/tb_ota.spice"
"$bin" check pdk/lp_ota.spice --top lp_ota --op pdk/tb.log --annotate pdk/ota.ann.spice --format json -o pdk/ota.json 2>pdk/run.err
rc=$?
[ $rc -le 1 ] && ok || { bad "check --top lp_ota exited $rc"; cat pdk/run.err; }
names=$(grep -Eo '"name": *"x[^"]*"' pdk/ota.json | sed 's/.*"\(x[^"]*\)"$/\1/' | sort | tr '\n' ' ')
[ "$names" = "xm1 xm2 xm3 xm4 xm5 xm6 xm7 " ] && ok || bad "rows are not the X instances: '$names'"
grep -q "the dump holds the design under the instance path 'xtop.x1'" pdk/run.err && ok || bad "prefix xtop.x1 not found"
grep -q "not checked.*xq1 of cell lp_vnpn" pdk/run.err && ok || bad "the bipolar cell is not listed as unchecked"
# every annotation line stands right under the X card of its device
awk '/^XM[0-9]/ { want = "*~ [" tolower($1) "]"; next }
     /^\*~/ { if (index($0, want) != 1) { print "misplaced: " $0; exit 1 } ; next }
     { want = "" }' pdk/ota.ann.spice && ok || bad "annotation lines are not under their X cards"
[ "$(grep -c '^\*~ \[xm' pdk/ota.ann.spice)" -eq 7 ] && ok || bad "expected 7 annotation lines in pdk/ota.ann.spice"
"$bin" strip pdk/ota.ann.spice -o pdk/ota.stripped.spice && cmp -s pdk/lp_ota.spice pdk/ota.stripped.spice && ok ||
    bad "strip(annotate(lp_ota.spice)) != lp_ota.spice"
# the testbench itself, library read: the same devices under their full paths
"$bin" check pdk/tb_ota.spice --op pdk/tb.log --format json -o pdk/tb.json 2>/dev/null
grep -q '"name": *"xtop.x1.xm4"' pdk/tb.json && ok || bad "testbench rows lack xtop.x1.xm4"
# two instances of the cell in a dump: --prefix is needed
sed 's/^xtop\.x1\./xtop.x2./; s/m\.xtop\.x1\./m.xtop.x2./g' pdk/tb.log >pdk/tb2.log
cat pdk/tb.log pdk/tb2.log >pdk/both.log
"$bin" check pdk/lp_ota.spice --top lp_ota --op pdk/both.log >/dev/null 2>pdk/both.err
[ $? -eq 2 ] && grep -q "several instance paths" pdk/both.err && ok || bad "an ambiguous prefix is not an input error"
"$bin" check pdk/lp_ota.spice --top lp_ota --prefix xtop.x2 --op pdk/both.log >/dev/null 2>&1
[ $? -le 1 ] && ok || bad "--prefix xtop.x2 does not settle the ambiguity"

# ---- corners, every report format, baselines, merging (issue 5) ----
# pair.cir in three corners of our own: cool (-20 C, 1.62 V), nom (27 C, 1.8 V), warm (85 C, 1.98 V)
for c in cool:-20:1.62 nom:27:1.8 warm:85:1.98; do
    IFS=: read -r name temp vdd <<<"$c"
    printf '.include pair.cir\n.control\noption temp=%s\nalter vdd dc=%s\nop\nset width=200\nshow m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb\nquit\n.endc\n.end\n' \
        "$temp" "$vdd" >pair.$name.ctl
    ngspice -b pair.$name.ctl >pair.$name.log 2>/dev/null || bad "ngspice could not simulate corner $name"
done
mkdir -p rep
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log -j 3 --annotate rep/ann.cir \
    --report json=rep/r.json --report csv=rep/r.csv --report junit=rep/r.xml --report sarif=rep/r.sarif \
    --report html=rep/r.html >rep/r.txt 2>rep/err.txt
rc=$?
[ $rc -le 1 ] && ok || { bad "check over three corners exited $rc"; cat rep/err.txt; }
for f in ann.cir r.json r.csv r.xml r.sarif r.html r.txt; do [ -s rep/$f ] && ok || bad "no rep/$f written"; done
grep -q 'in 3 corners' rep/r.txt && ok || bad "the text report does not name three corners"
[ "$(grep -c '^\*~ \[x1\.m1\] \(cool\|nom\|warm\):' rep/ann.cir)" -ge 3 ] && ok || bad "annotation lacks a line per corner"
"$bin" strip rep/ann.cir -o rep/stripped.cir && cmp -s pair.cir rep/stripped.cir && ok || bad "strip of a corner annotation"
[ "$(wc -l <rep/r.csv)" -eq 16 ] && ok || bad "CSV: expected a header and 5 devices x 3 corners"
if command -v python3 >/dev/null; then
    python3 -c 'import json,sys; d=json.load(open("rep/r.json")); assert d["schema"]==3 and len(d["corners"])==3; assert all(len(x["corners"])==3 for x in d["devices"]); s=json.load(open("rep/r.sarif")); assert s["version"]=="2.1.0" and s["runs"][0]["tool"]["driver"]["name"]=="biaslint"' &&
        ok || bad "JSON or SARIF do not read back"
fi
if command -v xmllint >/dev/null; then
    xmllint --noout --schema "$here"/fixtures/report/junit.xsd rep/r.xml 2>/dev/null && ok || bad "JUnit XML does not validate"
fi
# the HTML in a real browser, when there is one: it renders, its script runs to the end, no script error
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -n "$browser" ]; then
    prof=$(mktemp -d "$work/prof-XXXXXX")
    flags="--headless --no-sandbox --disable-gpu --disable-background-networking --disable-component-update --disable-sync --no-first-run --user-data-dir=$prof"
    timeout 90 "$browser" $flags --screenshot="$work/rep/shot.png" --window-size=1400,2000 "file://$work/rep/r.html" \
        >/dev/null 2>"$work/rep/browser.err"
    [ "$(stat -c %s rep/shot.png 2>/dev/null || echo 0)" -gt 30000 ] && ok || bad "the HTML screenshot is missing or blank"
    timeout 90 "$browser" $flags --enable-logging=stderr --v=0 --dump-dom "file://$work/rep/r.html" >rep/dom.html \
        2>rep/console.txt
    grep -q 'data-biaslint="ready"' rep/dom.html && ok || bad "the HTML report's script did not run to its end"
    grep -Eq 'Uncaught|SyntaxError|TypeError|ReferenceError' rep/console.txt && bad "the HTML raised script errors" || ok
fi
# a baseline: the same run again has nothing new (exit 0 with --fail-on new although it has findings);
# a tighter margin makes new findings (exit 1); the new ones are marked
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log --baseline rep/r.json \
    --fail-on new --min-margin 80mV --format json -o rep/b0.json 2>/dev/null
rc=$?
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log --min-margin 80mV \
    --format json -o rep/base.json 2>/dev/null
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log --min-margin 80mV \
    --baseline rep/base.json --fail-on new >rep/same.txt 2>/dev/null
[ $? -eq 0 ] && ok || bad "--fail-on new against an identical baseline should exit 0"
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log --min-margin 400mV \
    --baseline rep/base.json --fail-on new --report sarif=rep/new.sarif >rep/new.txt 2>/dev/null
[ $? -eq 1 ] && grep -q '^  new  ' rep/new.txt && grep -q '"baselineState": "new"' rep/new.sarif && ok ||
    bad "new findings against the baseline should exit 1 and be marked new"
"$bin" check pair.cir --op cool=pair.cool.log --op nom=pair.nom.log --op warm=pair.warm.log --baseline rep/new.sarif \
    --report html=rep/x.html >/dev/null 2>rep/bl.err
[ $? -eq 2 ] && grep -q 'new.sarif:[0-9]*:[0-9]*: .*not a biaslint JSON report' rep/bl.err && [ ! -e rep/x.html ] && ok ||
    bad "a SARIF file as baseline should exit 2 with a located message and leave no output"
"$bin" check pair.cir --op pair.nom.log --fail-on new 2>/dev/null; [ $? -eq 2 ] && ok || bad "--fail-on new without --baseline"
"$bin" check pair.cir --op a=pair.nom.log --op a=pair.cool.log 2>/dev/null; [ $? -eq 2 ] && ok || bad "two corners, one label"
"$bin" check pair.cir --op pair.nom.log --report junit=rep/same.xml --report sarif=rep/same.xml 2>/dev/null
[ $? -eq 2 ] && [ ! -e rep/same.xml ] && ok || bad "two reports into one file"
# merging runs
"$bin" merge rep/r.json rep/base.json rep/b0.json --format json -o rep/m.json --report html=rep/m.html --report csv=rep/m.csv
[ $? -eq 0 ] && grep -q '"kind": "merge"' rep/m.json && [ -s rep/m.html ] && [ -s rep/m.csv ] && ok || bad "merge of three runs"
"$bin" merge rep/r.json rep/r.sarif -o rep/m2.json 2>rep/m.err
[ $? -eq 2 ] && [ ! -e rep/m2.json ] && grep -q 'r.sarif' rep/m.err && ok || bad "merge of a non-report should exit 2, nothing written"

# ---- usage errors ----
"$bin" check pair.cir 2>/dev/null; [ $? -eq 2 ] && ok || bad "check without --op should exit 2"
"$bin" frobnicate 2>/dev/null; [ $? -eq 2 ] && ok || bad "unknown command should exit 2"
"$bin" --version | grep -q '^biaslint [0-9]' && ok || bad "--version"
"$bin" check --help | grep -q -- '--annotate' && ok || bad "check --help"

echo "integration: $pass passed, $fail failed"
[ $fail -eq 0 ]
