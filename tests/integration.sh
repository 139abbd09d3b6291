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

# ---- usage errors ----
"$bin" check pair.cir 2>/dev/null; [ $? -eq 2 ] && ok || bad "check without --op should exit 2"
"$bin" frobnicate 2>/dev/null; [ $? -eq 2 ] && ok || bad "unknown command should exit 2"
"$bin" --version | grep -q '^biaslint [0-9]' && ok || bad "--version"
"$bin" check --help | grep -q -- '--annotate' && ok || bad "check --help"

echo "integration: $pass passed, $fail failed"
[ $fail -eq 0 ]
