#!/usr/bin/env bash
# hostile: biaslint against broken and hostile input, and the guarantees of the README's "Bad input"
# section, on the real binary with real ngspice output. Run by `make test` (and by `make valgrind`
# with every biaslint run under memcheck).
#
# 1. The bad-input set: every case must exit 2, give a message at FILE:LINE:COL (the line is
#    asserted), and leave no output file behind (neither the outputs asked for nor a temporary file).
#    The README table lists the same cases in the same order; keep them in step.
# 2. Guarantees: limits (include depth, subcircuit nesting, expression depth, device count before
#    expanding, in bounded time and memory), nothing in a netlist is executed, outputs are atomic
#    and never written over an input, NaN/Inf/overflow/denormals in dumps, the annotation round trip
#    on every netlist of tests/ and netlists-demo/ that ngspice simulates.
# Files over 2 GiB: tests/bigfile.sh (slow; run by .ci/run).
set -u
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/.." && pwd)
bin=$(cd "$(dirname "${BIASLINT:-build/biaslint}")" && pwd)/$(basename "${BIASLINT:-build/biaslint}")
work=$(mktemp -d /tmp/biaslint-hostile-XXXXXX)
trap 'rm -rf "$work"' EXIT
pass=0 fail=0 nbad=0
ok() { pass=$((pass + 1)); }
bad() { fail=$((fail + 1)); echo "FAIL: $*"; }
# Under `make valgrind` $bin is a wrapper script: memory limits and strace are left out there. An
# ASan build (make sanitize) reserves terabytes of address space, so ulimit -v cannot bound it: its
# own RSS limit does.
wrapped=0 asan=0
[ "$(head -c 2 "$bin")" = '#!' ] && wrapped=1
[ $wrapped -eq 0 ] && ldd "$bin" 2>/dev/null | grep -q libasan && asan=1
# bounded MB CMD...: CMD with at most MB megabytes of memory and 20 seconds
bounded() {
    local mb=$1
    shift
    if [ $wrapped -eq 1 ]; then
        timeout 300 "$@"
    elif [ $asan -eq 1 ]; then
        ASAN_OPTIONS=${ASAN_OPTIONS:+$ASAN_OPTIONS:}hard_rss_limit_mb=$mb timeout 20 "$@"
    else
        (ulimit -v $((mb * 1024)); exec timeout 20 "$@")
    fi
}

cp "$here"/fixtures/cli/pair.cir "$work"/
cd "$work"
# The dumps: show tables, and raw files (binary and ASCII) with every device quantity saved.
{
    echo '* hostile.ctl: simulate pair.cir; show tables on stdout, binary and ASCII raw files'
    echo '.include pair.cir'
    echo '.control'
    printf 'save all'
    for m in m1 m2 m3 m4 mt; do for q in id gm gds vgs vds vbs vth vdsat cgg; do printf ' @m.x1.%s[%s]' $m $q; done; done
    echo
    echo 'op'
    echo 'set width=200'
    echo 'show m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb'
    echo 'write pair_bin.raw'
    echo 'set filetype=ascii'
    echo 'write pair_asc.raw'
    echo 'quit'
    echo '.endc'
    echo '.end'
} >hostile.ctl
if ! ngspice -b hostile.ctl >pair.log 2>ngspice.err || [ ! -s pair_bin.raw ] || [ ! -s pair_asc.raw ]; then
    echo "FAIL: ngspice could not simulate pair.cir"; cat ngspice.err; echo "hostile: 0 passed, 1 failed"; exit 1
fi
"$bin" check pair.cir --op pair.log >/dev/null 2>&1
[ $? -le 1 ] && ok || bad "check on the good show dump failed"
"$bin" check pair.cir --op pair_bin.raw >/dev/null 2>&1
[ $? -le 1 ] && ok || bad "check on the good binary raw file failed"
"$bin" check pair.cir --op pair_asc.raw >/dev/null 2>&1
[ $? -le 1 ] && ok || bad "check on the good ASCII raw file failed"
# the line of 'Values:' in the ASCII raw file, and of the i(@m.x1.m1[id]) declaration
vline=$(grep -n '^Values:' pair_asc.raw | cut -d: -f1)
idline=$(grep -n 'i(@m.x1.m1\[id\])' pair_asc.raw | cut -d: -f1)
idvar=$(sed -n "${idline}p" pair_asc.raw | cut -f2)

# A CSV dump for the devices of pair.cir (values printed by ngspice in pair.log, rounded).
csv_head='name,id,gm,gds,vgs,vds,vbs,vth,vdsat,cgg'
csv_rows='x1.m1,3.278e-05,5.225e-04,6.12e-06,0.4095,0.9416,-0.4905,0.3113,0.1244,1.343e-14
x1.m2,3.278e-05,5.225e-04,6.12e-06,0.4095,0.9416,-0.4905,0.3113,0.1244,1.343e-14
x1.m3,3.278e-05,4.600e-04,8.99e-06,0.3679,0.3679,0,0.2411,0.1475,2.854e-14
x1.m4,3.278e-05,4.600e-04,8.99e-06,0.3679,0.3679,0,0.2411,0.1475,2.854e-14'
good_csv() { printf '%s\n%s\n' "$csv_head" "$csv_rows"; }
good_csv >pair.csv
"$bin" check pair.cir --op pair.csv >/dev/null 2>&1
[ $? -le 1 ] && ok || bad "check on the good CSV dump failed"

# ---------------------------------------------------------------------------------------------------
# 1. The bad-input set (README "Bad input", same order).
# bad_case NAME PATTERN CHECK-ARGS...: `biaslint check CHECK-ARGS --annotate out.cir -o out.json`
# exits 2, stderr matches PATTERN (which names FILE:LINE:COL), no out.* file is left; within 1 GB of
# memory and 20 seconds.
bad_case() {
    local name=$1 pat=$2
    shift 2
    nbad=$((nbad + 1))
    rm -f out.cir out.json
    bounded 1000 "$bin" check "$@" --annotate out.cir -o out.json >/dev/null 2>err.txt
    local rc=$?
    if [ $rc -ne 2 ]; then bad "bad input '$name': exit $rc, expected 2"; head -c 2000 err.txt; return; fi
    if ! grep -Eq "$pat" err.txt; then bad "bad input '$name': message does not match /$pat/"; cat err.txt; return; fi
    if ls out.* 2>/dev/null | grep -q .; then bad "bad input '$name': output left behind: $(ls out.*)"; return; fi
    ok
}
M='.model nch nmos level=14 version=4.8'

# -- netlists --
printf 'title\n%s\nm1 d g 0 0 nch w=1u l=1u\n\001\002\003\000\n.end\n' "$M" >nul.cir
bad_case "a NUL byte in a netlist" 'nul.cir:4:[0-9]+: error: .*binary' nul.cir --op pair.log
printf 'title\n%s\nm1 d g 0 0 nch w={1+\n.end\n' "$M" >brace.cir
bad_case "an unfinished expression" 'brace.cir:3:[0-9]+: error: .*expression ends' brace.cir --op pair.log
printf 'title\n%s\nm1 d g 0 0 nch w=1.2.3u\n.end\n' "$M" >num.cir
bad_case "a malformed number" 'num.cir:3:[0-9]+: error: ' num.cir --op pair.log
printf 'title\n%s\nm1 d g 0 0 nch w={1/0}\n.end\n' "$M" >div0.cir
bad_case "division by zero" 'div0.cir:3:20: error: .*not a finite number' div0.cir --op pair.log
printf 'title\n.param a={b} b={2*a}\n%s\nm1 d g 0 0 nch w={a}\n.end\n' "$M" >pcycle.cir
bad_case "a parameter that depends on itself" "pcycle.cir:2:[0-9]+: error: .*depends on itself" pcycle.cir --op pair.log
printf 'title\n.func f(x) {f(x)+1}\n%s\nm1 d g 0 0 nch w={f(1)}\n.end\n' "$M" >frec.cir
bad_case "a function that calls itself" 'frec.cir:2:[0-9]+: error: .*nested too deeply' frec.cir --op pair.log
{ printf 'title\n%s\nm1 d g 0 0 nch w={' "$M"; for i in $(seq 300); do printf '('; done; printf 1; for i in $(seq 300); do printf ')'; done; printf '}\n.end\n'; } >deep.cir
bad_case "expression nesting over the limit (200)" 'deep.cir:3:[0-9]+: error: .*nested too deeply \(more than 200' deep.cir --op pair.log
# a recursive .func 190 operators deep: about 19 000 nested evaluations before the depth limit, in a
# 2 MB stack (a quarter of the default) where no sanitizer or valgrind needs more
{ printf 'title\n.func f(x) {'; for i in $(seq 190); do printf -- -; done; printf 'f(x)}\n%s\nm1 d g 0 0 nch w={f(1)}\n.end\n' "$M"; } >deepfunc.cir
if [ $wrapped -eq 0 ] && [ $asan -eq 0 ]; then
    (ulimit -s 2048; exec "$bin" check deepfunc.cir --op pair.log) >/dev/null 2>err.txt
    rc=$?
    [ $rc -eq 2 ] && grep -q 'deepfunc.cir:2:203: error: evaluation nested too deeply' err.txt && ok ||
        { bad "a deep recursive .func in a 2 MB stack: exit $rc"; head -c 300 err.txt; }
fi
bad_case "a deep recursive function" 'deepfunc.cir:2:203: error: evaluation nested too deeply' deepfunc.cir --op pair.log
printf 'title\n%s\nm1 d g 0 nch\n.end\n' "$M" >nodes.cir
bad_case "a MOSFET card without its four nodes" 'nodes.cir:3:1: error: .*4 nodes' nodes.cir --op pair.log
printf 'title\n%s\nm1 d g 0 0 nch\nm1 d g 0 0 nch\n.end\n' "$M" >dupname.cir
bad_case "an instance name used twice" 'dupname.cir:4:1: error: .*used twice \(first on line 3\)' dupname.cir --op pair.log
printf 'title\n.ends\n.end\n' >ends.cir
bad_case ".ends without .subckt" 'ends.cir:2:1: error: ' ends.cir --op pair.log
printf 'title\n%s\n.subckt s a b\nm1 a b 0 0 nch\n.ends\nx1 a s\n.end\n' "$M" >ports.cir
bad_case "an X card with the wrong node count" 'ports.cir:6:1: error: .*ports' ports.cir --op pair.log
printf 'title\nx1 a b nosuch\n.end\n' >undefsub.cir
bad_case "an undefined subcircuit" "undefsub.cir:2:[0-9]+: error: .*undefined subcircuit 'nosuch'" undefsub.cir --op pair.log
printf "title\n.lib 'models.lib\n.end\n" >quote.cir
bad_case "a file name whose quote is not closed" 'quote.cir:2:6: error: .*quote' quote.cir --op pair.log
printf 'title\n.lib pair.cir nosection\n.end\n' >section.cir
bad_case "a .lib section that does not exist" "section.cir:2:[0-9]+: error: .*no section 'nosection'" section.cir --op pair.log
printf 'title\n.include /dev/zero\n.end\n' >device.cir
bad_case "an include of a device (/dev/zero)" "device.cir:2:[0-9]+: error: .*is a device" device.cir --op pair.log
mkfifo nowriter.fifo
printf 'title\n.include nowriter.fifo\n.end\n' >fifo.cir
bad_case "an include of a named pipe nobody writes" "fifo.cir:2:10: error: 'nowriter.fifo' is a pipe, not a file" fifo.cir --op pair.log
for i in $(seq 1 40); do printf '.include inc%d.inc\n' $((i + 1)) >inc$i.inc; done
printf '* the end\n' >inc41.inc
printf 'title\n.include inc1.inc\n.end\n' >incdeep.cir
bad_case "includes nested over the limit (32)" 'inc32.inc:1:[0-9]+: error: .*more than 32 levels' incdeep.cir --op pair.log
{
    printf 'title\n%s\n.subckt s0 a\nm1 a a 0 0 nch\n.ends\n' "$M"
    for i in $(seq 1 70); do printf '.subckt s%d a\nx1 a s%d\n.ends\n' $i $((i - 1)); done
    printf 'x0 n s70\n.end\n'
} >nest.cir
bad_case "subcircuits nested over the limit (64)" 'nest.cir:[0-9]+:1: error: .*nested more than 64 levels' nest.cir --op pair.log
# 10 levels of 10 instances: 10^10 MOSFETs. Refused before anything is expanded.
{
    printf 'title\n%s\n.subckt l0 a\nm1 a a 0 0 nch\n.ends\n' "$M"
    for i in $(seq 1 10); do
        printf '.subckt l%d a\n' $i
        for j in $(seq 1 10); do printf 'x%d a l%d\n' $j $((i - 1)); done
        printf '.ends\n'
    done
    printf 'xtop n l10\n.end\n'
} >huge.cir
bad_case "a hierarchy of 10^10 MOSFETs" 'huge.cir:126:1: error: .*10000000000 MOSFETs.*limit of 50000000' huge.cir --op pair.log
bad_case "a hierarchy over --max-devices" 'huge.cir:126:1: error: .*limit of 1000\b' huge.cir --op pair.log --max-devices 1000
# the same of resistor cells beside one MOSFET: 10^10 instances with nothing to check, refused as fast
sed -e 's/^m1 a a 0 0 nch$/r1 a 0 1k/' -e 's/^xtop n l10$/m1 n n 0 0 nch\nxtop n l10/' huge.cir >rhuge.cir
bad_case "10^10 instances of resistor cells" 'rhuge.cir:127:1: error: .*11111111111 subcircuit instances.*limit of 600000000' \
    rhuge.cir --op pair.log
printf 'title\n%s\n.param p=`touch executed-backquote`\nm1 d g 0 0 nch w={p}\n.end\n' "$M" >backq.cir
bad_case "backquotes in a parameter" 'backq.cir:[34]:[0-9]+: error: ' backq.cir --op pair.log

# -- show tables (ngspice batch output) --
first=$(grep -n '^ *device ' pair.log | head -1 | cut -d: -f1)
idl=$((first + 2))
blk_end=$(awk -v f="$first" 'NR > f && /^ *$/ { print NR; exit }' pair.log)
{ cat pair.log; sed -n "$((first - 1)),${blk_end}p" pair.log | sed '3,$s/3\.27837e-05/3.99999e-05/'; } >conflict.log
cline=$(( $(wc -l <pair.log) + 4 ))
bad_case "a device given two values (show)" "conflict.log:$cline:[0-9]+: error: conflicting values for id of device 'x1.m4'" pair.cir --op conflict.log
sed "${first}s/m\.x1\.m3 /m.x1.m4 /" pair.log >dupcol.log
bad_case "a device twice in one table (show)" "dupcol.log:$first:[0-9]+: error: .*two devices of this table" pair.cir --op dupcol.log
sed "${idl}s/3\.27837e-05/3.27837e-05x/" pair.log >badnum.log
bad_case "a value that is not a number (show)" "badnum.log:$idl:[0-9]+: error: .*is not a number" pair.cir --op badnum.log
sed "${idl}s/3\.27837e-05/1e999/" pair.log >range.log
bad_case "a value that overflows a double (show)" "range.log:$idl:[0-9]+: error: .*out of range" pair.cir --op range.log
sed "${first}s/m\.x1\.m3/m.x1\x00m3/" pair.log >nulname.log
bad_case "a NUL byte in a device name (show)" "nulname.log:$first:[0-9]+: error: .*NUL byte" pair.cir --op nulname.log

# -- raw files --
boff=$(grep -a -b -o '^Binary:' pair_bin.raw | cut -d: -f1)
head -c $((boff + 8 + 100)) pair_bin.raw >trunc.raw
bad_case "a truncated binary raw file" "trunc.raw:$(grep -a -n '^Binary:' trunc.raw | cut -d: -f1):[0-9]+: error: .*(truncated|ends)" \
    pair.cir --op trunc.raw
head -n $((vline + 10)) pair_asc.raw >trunc_asc.raw
bad_case "a truncated ASCII raw file" "trunc_asc.raw:$((vline + 11)):[0-9]+: error: .*ends at variable" pair.cir --op trunc_asc.raw
sed "$((vline + 2))s/.*/\t6.1x-06/" pair_asc.raw >rawnum.raw
bad_case "a value that is not a number (ASCII raw)" "rawnum.raw:$((vline + 2)):2: error: .*not a number" pair.cir --op rawnum.raw
sed 's/^No. Variables: \([0-9]*\)/No. Variables: 999/' pair_asc.raw >nvars.raw
bad_case "a wrong variable count (raw)" "nvars.raw:$(grep -n '^Variables:' nvars.raw | cut -d: -f1):1: error: .*No. Variables says 999" pair.cir --op nvars.raw
sed "${idline}s/^\t$idvar\t/\t77\t/" pair_asc.raw >varidx.raw
bad_case "a variable with the wrong index (raw)" "varidx.raw:$idline:[0-9]+: error: .*bad variable index" pair.cir --op varidx.raw
sed "${idline}s/@m\.x1\.m1/@m.x1\x00m1/" pair_asc.raw >rawnul.raw
bad_case "a NUL byte in a vector name (raw)" "rawnul.raw:$idline:[0-9]+: error: .*NUL byte" pair.cir --op rawnul.raw
# the same vector twice, with two values
nv=$(sed -n 's/^No. Variables: *//p' pair_asc.raw)
awk -v nv="$nv" -v vl="$vline" -v idl="$idline" '
    /^No. Variables:/ { print "No. Variables: " nv + 1; next }
    NR == idl { decl = $0 }
    NR == vl { sub(/^\t[0-9]+/, "\t" nv, decl); print decl }
    { print }
    END { print "\t1.0e-03" }' pair_asc.raw >rawdup.raw
bad_case "a vector given twice with two values (raw)" "rawdup.raw:[0-9]+:[0-9]+: error: conflicting values for id of device 'x1.m1'" pair.cir --op rawdup.raw

# -- CSV tables --
{ good_csv; printf '%s\n' "$(good_csv | sed -n 2p)"; } >dup.csv
bad_case "a device listed twice (CSV)" "dup.csv:6:1: error: device 'x1.m1' is listed twice \(first on line 2\)" pair.cir --op dup.csv
{ good_csv; printf 'x1.mt,inf,5e-4,6e-6,0.75,0.49,0,0.5,0.25,1e-14\n'; } >inf.csv
bad_case "an infinite value (CSV)" 'inf.csv:6:7: error: .*not a finite number' pair.cir --op inf.csv
{ good_csv; printf 'x1.mt,6.5e-5,1e999,6e-6,0.75,0.49,0,0.5,0.25,1e-14\n'; } >big.csv
bad_case "a value that overflows a double (CSV)" 'big.csv:6:14: error: .*out of range' pair.cir --op big.csv
{ good_csv; printf 'x1.mt,6.5e-5,5e-4,6e-6\n'; } >short.csv
bad_case "a row with too few fields (CSV)" 'short.csv:6:[0-9]+: error: .*4 fields, the header \(line 1\) has 10' pair.cir --op short.csv
{ good_csv; printf 'x1.mt,6.5e-5,5e-4,6e-6,0.75,0.49,0,0.5,0.25,"1e-14\n'; } >quote.csv
bad_case "a quote that is never closed (CSV)" 'quote.csv:6:[0-9]+: error: .*never closed' pair.cir --op quote.csv
printf 'name,id,gm,id\nx1.m1,1,2,3\n' >dupcolumn.csv
bad_case "a column given twice (CSV)" "dupcolumn.csv:1:12: error: column 'id' repeats" pair.cir --op dupcolumn.csv
{ good_csv; printf ',6.5e-5,5e-4,6e-6,0.75,0.49,0,0.5,0.25,1e-14\n'; } >noname.csv
bad_case "a row without a device name (CSV)" 'noname.csv:6:1: error: .*no device name' pair.cir --op noname.csv
printf 'node,v\nout,0.9\nx1.tail,0.31\nV(OUT),0.9\n' >dupnode.csv
bad_case "a node listed twice (CSV node voltages)" "dupnode.csv:4:1: error: node 'out' is listed twice \(first on line 2\)" \
    pair.cir --op dupnode.csv
printf 'node,v\nout,0.9\nx1.tail,\n' >novolt.csv
bad_case "a node without a voltage (CSV node voltages)" 'novolt.csv:3:[0-9]+: error: this row has no voltage' pair.cir --op novolt.csv
{ good_csv; printf 'x1.\000mt,6.5e-5,5e-4,6e-6,0.75,0.49,0,0.5,0.25,1e-14\n'; } >nulname.csv
bad_case "a NUL byte in a device name (CSV)" 'nulname.csv:6:[0-9]+: error: .*NUL byte' pair.cir --op nulname.csv

# -- rule files --
printf '# rules\nregions nmos strong-below 12/V\nfrobnicate all\n' >unknown.rules
bad_case "an unknown statement (rules)" 'unknown.rules:3:1: error: ' pair.cir --op pair.log --rules unknown.rules
printf 'check sat-margin min 50mA error\n' >unit.rules
bad_case "a limit in the wrong unit (rules)" 'unit.rules:1:[0-9]+: error: ' pair.cir --op pair.log --rules unit.rules
# nested quantifiers backtrack exponentially on a near miss: the PCRE2 match limit stops the match
long=maaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa!
printf 'title\n%s\n%s d g 0 0 nch w=1u l=1u\n.end\n' "$M" "$long" >regex.cir
printf '%s\n%s,1e-5,2e-4,1e-6,0.6,0.9,0,0.4,0.15,1e-14\n' "$csv_head" "$long" >regex.csv
printf '# a pattern that backtracks exponentially\nsized /(a+)+$/ for: gain >= 1\n' >regex.rules
t0=$(date +%s%N)
bad_case "a pathological regular expression (rules)" 'regex.rules:2:7: error: regular expression .*could not be matched.*match limit' \
    regex.cir --op regex.csv --rules regex.rules
ms=$(( ($(date +%s%N) - t0) / 1000000 ))
[ $wrapped -eq 1 ] || [ $ms -lt 3000 ] && ok || bad "the pathological regular expression took $ms ms"

# many diagnostics on one long line: the first ones are shown, the rest counted, in linear time (each
# used to cost a scan of the line: 200 000 CSV warnings took minutes, 50 000 bad .param values 18 s)
awk 'BEGIN { n = 200000; printf "name,id,gm"; for (i = 0; i < n; i++) printf ",c%d", i; printf "\nx1.m1,1e-5,zz";
             for (i = 0; i < n; i++) printf ",x"; printf "\n" }' >wide.csv
t0=$(date +%s%N)
bad_case "a bad value and 200 000 text fields in one CSV row" "wide.csv:2:12: error: column 'gm': 'zz' is not a number" \
    pair.cir --op wide.csv
ms=$(( ($(date +%s%N) - t0) / 1000000 ))
[ $wrapped -eq 1 ] || [ $ms -lt 3000 ] && ok || bad "200 000 bad CSV fields took $ms ms"
awk -v m="$M" 'BEGIN { n = 50000; printf "title\n%s\n.param", m; for (i = 0; i < n; i++) printf " a%d={1/0}", i;
                       printf "\nm1 d g 0 0 nch\n.end\n" }' >wparam.cir
t0=$(date +%s%N)
bad_case "50 000 bad values on one .param line" 'wparam.cir:3:[0-9]+: error: .*not a finite number' wparam.cir --op pair.log
ms=$(( ($(date +%s%N) - t0) / 1000000 ))
[ $wrapped -eq 1 ] || [ $ms -lt 3000 ] && ok || bad "50 000 bad .param values took $ms ms"

# -- lookup tables (check --table) --
lut=$here/fixtures/lut
cp "$lut"/nan.lut "$lut"/ragged.lut "$lut"/nonmono.lut "$lut"/dupcol.lut .
bad_case "a NaN in a table" 'nan.lut:16:28: error: .*NaN and infinite values are not allowed' pair.cir --op pair.log --table nan.lut
bad_case "a ragged grid (table)" 'ragged.lut:13:11: error: ragged grid' pair.cir --op pair.log --table ragged.lut
bad_case "an axis that does not increase (table)" 'nonmono.lut:11:13: error: the vgs_v axis does not increase' \
    pair.cir --op pair.log --table nonmono.lut
bad_case "a column given twice (table)" "dupcol.lut:8:53: error: column 'gm_s' appears twice" pair.cir --op pair.log --table dupcol.lut
sed '2s/.*/# model: \x01tiny/' "$lut"/good.lut >ctlbyte.lut
bad_case "a control byte in a header value (table)" "ctlbyte.lut:2:10: error: a control byte in the value of header key 'model'" \
    pair.cir --op pair.log --table ctlbyte.lut
head -c -1 "$lut"/good.lut | sed '$s/,0.5,0.5$//' >shortlast.lut
bad_case "a short last row without a line ending (table)" 'shortlast.lut:20:1: error: this row has 7 fields' \
    pair.cir --op pair.log --table shortlast.lut

# ---------------------------------------------------------------------------------------------------
# 2. Guarantees.

# -- limits: bounded time and memory. The 10^10-MOSFET hierarchy is refused in well under a second
#    with 300 MB of memory (expanding it would need terabytes).
if [ $wrapped -eq 0 ]; then
    start=$(date +%s%N)
    bounded 300 "$bin" check huge.cir --op pair.log >/dev/null 2>&1
    rc=$?
    ms=$(( ($(date +%s%N) - start) / 1000000 ))
    [ $rc -eq 2 ] && [ $ms -lt 2000 ] && ok || bad "10^10 MOSFETs: exit $rc after $ms ms (want 2, under 2 s, in 300 MB)"
fi
# the device limit is exact: 3 levels of 3 instances = 27 MOSFETs pass --max-devices 27, not 26
{
    printf 'title\n%s\n.subckt c0 a\nm1 a a 0 0 nch\n.ends\n' "$M"
    for i in 1 2 3; do printf '.subckt c%d a\nx1 a c%d\nx2 a c%d\nx3 a c%d\n.ends\n' $i $((i - 1)) $((i - 1)) $((i - 1)); done
    printf 'xt n c3\n.end\n'
} >c27.cir
{
    echo "$csv_head"
    for a in 1 2 3; do for b in 1 2 3; do for c in 1 2 3; do
        echo "xt.x$a.x$b.x$c.m1,1e-5,2e-4,1e-6,0.6,0.9,0,0.4,0.15,1e-14"
    done; done; done
} >c27.csv
"$bin" check c27.cir --op c27.csv --max-devices 27 >/dev/null 2>err.txt
rc=$?
[ $rc -le 1 ] && ok || { bad "27 MOSFETs with --max-devices 27: exit $rc"; cat err.txt; }
"$bin" check c27.cir --op c27.csv --max-devices 26 >/dev/null 2>err.txt
rc=$?
[ $rc -eq 2 ] && grep -Eq 'c27.cir:[0-9]+:1: error: the design has 27 MOSFETs.*limit of 26' err.txt && ok ||
    { bad "27 MOSFETs with --max-devices 26: exit $rc"; cat err.txt; }

# -- nothing in a netlist is executed: .control blocks, shell commands, backquotes, pipes in file
#    names are text. The netlist below would create files if anything ran it.
cat >exec.cir <<EOF
* a netlist whose text, if anything ran it, would create files named executed-*
$M
.param w0=1u * \$(touch executed-dollar) \`touch executed-comment\`
m1 d g 0 0 nch w={w0} l=1u
.control
shell touch executed-shell
echo x > executed-echo
source executed-source
.endc
.option doc='\`touch executed-option\`'
.end
EOF
printf '%s\nm1,1e-5,2e-4,1e-6,0.6,0.9,0,0.4,0.15,1e-14\n' "$csv_head" >exec.csv
"$bin" check exec.cir --op exec.csv --annotate exec.ann.cir >/dev/null 2>err.txt
rc=$?
[ $rc -le 1 ] && ok || { bad "the netlist with a .control block: exit $rc"; cat err.txt; }
printf 'title\n.include "|touch executed-pipe"\n.include "$(touch executed-subst)"\n.end\n' >exec2.cir
"$bin" check exec2.cir --op exec.csv >/dev/null 2>&1
[ $? -eq 2 ] && ok || bad "includes named like commands should be missing files"
ls executed-* 2>/dev/null | grep -q . && bad "a netlist's text was executed: $(ls executed-*)" || ok
# characterize runs ngspice on a model file, and ngspice runs the .control blocks of what it reads:
# a model file (or a file it includes) with one is refused before ngspice starts
printf '* models\n.model nx nmos level=1 vto=0.5 kp=100u\n.include evil.inc\n' >models_evil.lib
printf '* a file the model file includes\n  .CONTROL\nshell touch %s/executed-characterize\n.endc\n' "$work" >evil.inc
"$bin" characterize --models models_evil.lib --model nx --l 1u --vgs 0:1:0.5 --vds 0:1:0.5 -o evil.lut -q 2>err.txt
rc=$?
[ $rc -eq 2 ] && grep -Eq 'evil.inc:2:3: error: a .control block in a model file' err.txt && [ ! -e evil.lut ] &&
    [ ! -e executed-characterize ] && ok ||
    { bad "characterize with a .control block in a model file: exit $rc"; cat err.txt; }
# and biaslint never runs a program at all (strace, where available): the only execve, in biaslint
# and in anything it might start (-f), is biaslint's own. (A clone sharing memory is a thread, such
# as the one LeakSanitizer starts at exit; a program needs an execve.)
if [ $wrapped -eq 0 ] && command -v strace >/dev/null 2>&1; then
    strace -f -qq -e trace=execve,fork,vfork -o trace.txt "$bin" check exec.cir --op exec.csv \
        --annotate exec.ann.cir >/dev/null 2>&1
    n=$(grep -c -E 'execve|fork' trace.txt)
    [ "$n" -eq 1 ] && ok || { bad "biaslint made $n execve/fork calls (want 1, its own execve)"; cat trace.txt; }
fi

# -- outputs: never over an input (the netlist, an included file, the dump, a rules file, through
#    a symbolic or hard link), atomic (a failed run leaves an existing output as it was)
mkdir -p sub
printf '%s\n' "$M" >sub/models.inc
printf 'title\n.include sub/models.inc\nm1 d g 0 0 nch w=1u l=1u\n.end\n' >withinc.cir
cp sub/models.inc models.keep
printf 'check gain min 5\n' >mine.rules
ln -sf pair.cir link.cir
ln -f pair.log hard.log
over() { # over NAME ARGS...: exit 2, 'refusing to write', the inputs unchanged
    local name=$1
    shift
    "$bin" check "$@" >/dev/null 2>err.txt
    local rc=$?
    if [ $rc -eq 2 ] && grep -q 'refusing to write output over the input' err.txt && cmp -s pair.cir "$here"/fixtures/cli/pair.cir &&
        cmp -s sub/models.inc models.keep && [ -s pair.log ] && [ "$(cat mine.rules)" = 'check gain min 5' ]; then
        ok
    else
        bad "output over $name: exit $rc"; cat err.txt
    fi
}
over "the netlist" pair.cir --op pair.log --annotate pair.cir
over "an included file" withinc.cir --op exec.csv --annotate sub/models.inc
over "the dump" pair.cir --op pair.log -o pair.log
over "a rules file" pair.cir --op pair.log --rules mine.rules -o mine.rules
over "a symbolic link to the netlist" pair.cir --op pair.log --annotate link.cir
over "a hard link to the dump" pair.cir --op pair.log -o hard.log
"$bin" strip pair.cir -o link.cir >/dev/null 2>err.txt
[ $? -eq 2 ] && cmp -s pair.cir "$here"/fixtures/cli/pair.cir && ok || bad "strip over its input (through a link)"
# a run that fails on its input leaves the existing outputs byte for byte, and no temporary file
echo 'previous report' >keep.json
echo 'previous annotation' >keep.cir
"$bin" check pair.cir --op badnum.log --annotate keep.cir -o keep.json >/dev/null 2>&1
[ $? -eq 2 ] && [ "$(cat keep.json)" = 'previous report' ] && [ "$(cat keep.cir)" = 'previous annotation' ] && ok ||
    bad "a failed run changed an existing output"
# an output in a folder that does not exist: exit 2, nothing written anywhere
"$bin" check pair.cir --op pair.log --annotate nowhere/out.cir -o out.json >/dev/null 2>err.txt
[ $? -eq 2 ] && grep -q "cannot write 'nowhere/out.cir'" err.txt && [ ! -e out.json ] && ok ||
    { bad "an output in a missing folder"; cat err.txt; }
ls ./*.tmp* sub/*.tmp* 2>/dev/null | grep -q . && bad "temporary files left: $(ls ./*.tmp* sub/*.tmp*)" || ok

# -- NaN, infinity, overflow and denormals in dumps: values that are not numbers are absent, never
#    zero; a figure that overflows (gm/ID of a denormal ID) is missing; JSON stays JSON.
json_numbers_ok() { # no bare nan/inf in a JSON file
    ! grep -Eiq '[:,\[] *-?(nan|inf|infinity)\b' "$1"
}
sed "${idl}s/3\.27837e-05/nan/" pair.log >nan.log
"$bin" check pair.cir --op nan.log --format json -o nan.json 2>err.txt
rc=$?
[ $rc -le 1 ] && grep -Eq "nan.log:$idl:[0-9]+: warning: .*NaN or infinity, read as absent" err.txt && json_numbers_ok nan.json &&
    grep '"name":"x1.m4"' nan.json | grep -vq '"id":' && ok || { bad "NaN in a show table"; cat err.txt; }
sed "${idl}s/ 3\.27837e-05/ 4.9e-324/" pair.log >denorm.log
"$bin" check pair.cir --op denorm.log --format json -o denorm.json 2>err.txt
rc=$?
[ $rc -le 1 ] && json_numbers_ok denorm.json && grep '"name":"x1.m4"' denorm.json | grep -vq '"gm_id":' && ok ||
    { bad "a denormal ID: exit $rc, or gm/ID not missing"; cat err.txt; }
{ echo "$csv_head"; echo "$csv_rows" | sed '1s/^x1.m1,3.278e-05,5.225e-04/x1.m1,1e-300,1e300/'; } >overflow.csv
"$bin" check pair.cir --op overflow.csv --format json -o overflow.json 2>err.txt
rc=$?
[ $rc -le 1 ] && json_numbers_ok overflow.json && grep '"name":"x1.m1"' overflow.json | grep -vq '"gm_id":' && ok ||
    { bad "gm/ID that overflows: exit $rc"; cat err.txt; }
"$bin" check pair.cir --op overflow.csv >overflow.txt 2>&1
! grep -Eiw 'nan|inf' overflow.txt && ok || bad "the text report prints nan or inf"
# binary raw: NaN, infinity and a denormal patched into the doubles of x1.m1
off=$(grep -a -b -o '^Binary:' pair_bin.raw | cut -d: -f1)
off=$((off + 8))
var_of() { grep -a "@m.x1.m1\[$1\]" pair_bin.raw | head -1 | awk '{ print $1 }'; }
patch() { printf "$2" | dd of=pair_nan.raw bs=1 seek=$((off + 8 * $1)) conv=notrunc status=none; }
cp pair_bin.raw pair_nan.raw
patch "$(var_of id)" '\000\000\000\000\000\000\370\177'   # NaN
patch "$(var_of gm)" '\000\000\000\000\000\000\360\177'   # +inf
patch "$(var_of gds)" '\001\000\000\000\000\000\000\000'  # the smallest denormal
"$bin" check pair.cir --op pair_nan.raw --format json -o rawnan.json 2>err.txt
rc=$?
[ $rc -le 1 ] && grep -q 'warning: 2 values are NaN or infinite, read as absent' err.txt && json_numbers_ok rawnan.json &&
    grep -q '"name":"x1.m1".*"has_data":true,"gds":4.94065645841247e-324' rawnan.json && ok ||
    { bad "NaN, infinity and a denormal in a binary raw file: exit $rc"; cat err.txt; grep x1.m1 rawnan.json | head -1; }

# -- the annotation round trip, through the command line, on every netlist of tests/ and
#    netlists-demo/ that ngspice simulates with an `op` wrapper: strip(annotate(x)) == x byte for
#    byte, and annotating the annotated netlist gives the same bytes. (test_hostile.c checks every
#    netlist file, simulated or not, through the library.)
nrt=0
for f in "$root"/tests/circuits/*.cir "$root"/tests/circuits-nl/*.sp "$root"/tests/fixtures/netlist/*.sp \
    "$root"/tests/fixtures/cli/pair.cir "$root"/netlists-demo/afe.cir; do
    [ -f "$f" ] || continue
    n=$(basename "$f")
    printf '* op wrapper\n.include %s\n.control\nset width=400\nop\nshow m : id gm gds gmbs vgs vds vbs vth von vdsat cgg cgs cgd cgb\nquit\n.endc\n.end\n' \
        "$f" >rt.ctl
    (cd "$(dirname "$f")" && ngspice -b "$work/rt.ctl" >"$work/rt.$n.log" 2>/dev/null) 2>/dev/null || continue
    "$bin" check "$f" --op "rt.$n.log" --annotate "rt.$n.ann" >/dev/null 2>&1
    [ $? -le 1 ] || continue
    nrt=$((nrt + 1))
    "$bin" strip "rt.$n.ann" -o "rt.$n.stripped" 2>/dev/null && cmp -s "$f" "rt.$n.stripped" && ok ||
        bad "round trip: strip(annotate($n)) differs from $n"
    # the annotated copy must sit where the original is, for its includes: use a copy of the folder
    rm -rf rtdir && cp -r "$(dirname "$f")" rtdir && cp "rt.$n.ann" "rtdir/$n"
    "$bin" check "rtdir/$n" --op "rt.$n.log" --annotate "rt.$n.ann2" >/dev/null 2>&1
    cmp -s "rt.$n.ann" "rt.$n.ann2" && ok || bad "round trip: annotating annotated $n is not idempotent"
done
[ $nrt -ge 15 ] && ok || bad "round trip: only $nrt netlists could be simulated and annotated (want 15 or more)"

echo "hostile: $pass passed, $fail failed ($nbad bad-input cases, $nrt round trips)"
[ $fail -eq 0 ]
