#!/usr/bin/env bash
# run-demo.sh -- simulate the Loamline demo front-end (afe.cir) in every corner of models.lib with
# ngspice, then check each corner with biaslint.
#
#   usage: bash netlists-demo/run-demo.sh BUILD_DIR
#
# Everything it writes goes to BUILD_DIR/demo/; the netlists in netlists-demo/ are only read.
# Per corner C (mild, frost, desert):
#   afe.C.list.cir   deck that only asks ngspice for its expanded netlist (to learn every MOSFET)
#   afe.C.cir        control wrapper: a copy of afe.cir with the corner on its .lib line and a
#                    .control block that saves the device vectors, runs op, prints `show` tables
#                    and writes the raw file
#   afe.C.log        ngspice stdout: the `show m` tables (the dump biaslint reads)
#   afe.C.stderr     ngspice stderr, kept apart from the tables
#   afe.C.raw        binary raw file with @m...[...] vectors for every MOSFET
#   report.C.txt, report.C.json, afe.C.annotated.cir   biaslint's output
#   report.C.messages   what biaslint printed on stderr (and on stdout with -o)
# Exit status: 0 when every simulation and every biaslint run worked (biaslint exit 1 only means
# it found something, which the demo expects); 2 on any failure, with a message on stderr.

set -u

CORNERS="mild frost desert"
NOMINAL=mild
# Parameters asked from every device. BSIM4 has vth and cgg; level 1 has von and cgs/cgd/cgb instead.
SHOW_PARAMS="id gm gds gmbs vgs vds vbs vth vdsat von cgg cgs cgd cgb m w l nf"
SAVE_BSIM4="id gm gds gmbs vdsat vth cgg vgs vds vbs"
SAVE_MOS1="id gm gds gmbs vdsat von cgs cgd cgb vgs vds vbs"
# 11-character label plus 8 columns of 22 characters per `show` block.
SHOW_WIDTH=199
# A node that every good operating point has; a failed op leaves its vector empty.
PROBE_NODE=vdd

die() { printf 'run-demo: %s\n' "$*" >&2; exit 2; }

[ $# -eq 1 ] || { printf 'usage: bash netlists-demo/run-demo.sh BUILD_DIR\n' >&2; exit 2; }
command -v ngspice >/dev/null 2>&1 || die "ngspice not found on PATH (Debian: apt-get install ngspice, or make deps)"

DEMO_DIR=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd) || die "cannot find the script's folder"
REPO=$(cd "$DEMO_DIR/.." && pwd)
mkdir -p "$1/demo" || die "cannot create $1/demo"
BUILD=$(cd "$1" && pwd) || die "cannot enter $1"
OUT="$BUILD/demo"
NETLIST="$DEMO_DIR/afe.cir"
MODELS="$DEMO_DIR/models.lib"

# ngspice's .lib and write commands take the paths written below; keep them free of blanks and quotes.
case "$DEMO_DIR$OUT" in
    *[[:space:]\'\"]*) die "paths with blanks or quotes are not supported: '$DEMO_DIR', '$OUT'" ;;
esac
[ -r "$NETLIST" ] || die "missing $NETLIST"
[ -r "$MODELS" ] || die "missing $MODELS"

nlib=$(grep -Eic "^\.lib[[:space:]]+'?models\.lib'?[[:space:]]+[a-z0-9_]+[[:space:]]*$" "$NETLIST")
[ "$nlib" = 1 ] || die "afe.cir must have exactly one \".lib 'models.lib' CORNER\" line (found $nlib)"
grep -Eiq '^\.end[[:space:]]*$' "$NETLIST" || die "afe.cir has no .end line"
for c in $CORNERS; do
    grep -Eiq "^\.lib[[:space:]]+${c}[[:space:]]*$" "$MODELS" || die "models.lib has no section '$c'"
done

# netlist_copy CORNER: afe.cir with the corner's .lib line (absolute path) and without its .end.
netlist_copy() {
    awk -v lib="$MODELS" -v corner="$1" -v q="'" '
        tolower($0) ~ /^\.lib[ \t]+.?models\.lib.?[ \t]+[a-z0-9_]+[ \t]*$/ {
            print ".lib " q lib q " " corner; next }
        tolower($0) ~ /^\.end[ \t]*$/ { exit }
        { print }' "$NETLIST"
}

# devices LISTING: "name model-level" per MOSFET, from `listing e` output (full names, not cut).
devices() {
    awk '
        $2 == ":" && tolower($3) == ".model" {
            lvl = 1
            for (i = 5; i <= NF; i++) if (tolower($i) ~ /^level=/) { split($i, a, "="); lvl = a[2] + 0 }
            level[tolower($4)] = lvl; next }
        $2 == ":" && tolower(substr($3, 1, 1)) == "m" { n++; dev[n] = tolower($3); mdl[n] = tolower($8) }
        END { for (i = 1; i <= n; i++) print dev[i], ((mdl[i] in level) ? level[mdl[i]] : -1), mdl[i] }' "$1"
}

# sim DECK: ngspice in batch mode, run from netlists-demo/. ngspice 39 looks for a relative .lib or
# .include file in the current folder before the including file's folder, so models.lib's own
# `.lib 'models.lib' cards` would pick up any models.lib in the caller's folder.
sim() { (cd "$DEMO_DIR" && exec ngspice -b "$1"); }

fail_sim() { # corner, message [, stem of the deck: afe.C or afe.C.list]
    stem=${3:-afe.$1}
    printf 'run-demo: corner %s: %s\n' "$1" "$2" >&2
    printf '  deck %s\n  stdout %s\n  stderr %s (last lines below)\n' \
        "$OUT/$stem.cir" "$OUT/$stem.log" "$OUT/$stem.stderr" >&2
    tail -n 8 "$OUT/$stem.stderr" 2>/dev/null | sed 's/^/    /' >&2
    exit 2
}

failure_text='simulation\(s\) aborted|DC solution failed|Simulation interrupted|Error on line|Error:|unknown subckt|can.t find model'

for c in $CORNERS; do
    deck="$OUT/afe.$c.cir" log="$OUT/afe.$c.log" err="$OUT/afe.$c.stderr" raw="$OUT/afe.$c.raw"
    listdeck="$OUT/afe.$c.list.cir" listlog="$OUT/afe.$c.list.log"
    rm -f "$raw" "$log" "$err"

    # Pass 1: learn the MOSFETs from ngspice's own expanded netlist.
    { netlist_copy "$c"; printf '.control\nlisting e\nquit 0\n.endc\n.end\n'; } > "$listdeck" \
        || die "cannot write $listdeck"
    sim "$listdeck" > "$listlog" 2> "$OUT/afe.$c.list.stderr"
    rc=$?
    if [ $rc -ne 0 ] || grep -Eq "$failure_text" "$listlog" "$OUT/afe.$c.list.stderr"; then
        fail_sim "$c" "ngspice could not read the netlist (rc $rc)" "afe.$c.list"
    fi
    devs=$(devices "$listlog")
    ndev=$(printf '%s\n' "$devs" | grep -c .)
    [ "$ndev" -gt 0 ] || fail_sim "$c" "no MOSFET found in ngspice's listing" "afe.$c.list"
    bad=$(printf '%s\n' "$devs" | awk '$2 != 1 && $2 != 14 && $2 != 54 { print $1 " (model " $3 ", level " $2 ")" }')
    [ -z "$bad" ] || fail_sim "$c" "devices whose model level this script does not know: $bad" "afe.$c.list"

    # Pass 2: the control wrapper.
    {
        netlist_copy "$c"
        printf '.control\n* written by run-demo.sh: corner %s, source %s\n' "$c" "$NETLIST"
        printf 'set width=%s\nset filetype=binary\nsave all\n' "$SHOW_WIDTH"
        printf '%s\n' "$devs" | while read -r name level _model; do
            if [ "$level" = 1 ]; then params=$SAVE_MOS1; else params=$SAVE_BSIM4; fi
            line=save
            for p in $params; do line="$line @${name}[${p}]"; done
            printf '%s\n' "$line"
        done
        printf 'let npts = 0\nop\nlet npts = length(%s)\n' "$PROBE_NODE"
        printf 'if npts = 0\n  echo "run-demo: no operating point"\n  quit 2\nend\n'
        printf 'show m : %s\n' "$SHOW_PARAMS"
        printf 'write %s\nquit 0\n.endc\n.end\n' "$raw"
    } > "$deck" || die "cannot write $deck"

    sim "$deck" > "$log" 2> "$err"
    rc=$?
    [ $rc -eq 0 ] || fail_sim "$c" "ngspice exit status $rc (2 = the operating point failed)"
    if grep -Eq "$failure_text" "$log" "$err"; then
        fail_sim "$c" "ngspice reported a failure: $(grep -Eh "$failure_text" "$log" "$err" | head -n 1)"
    fi

    # Every MOSFET must be in the tables (names longer than 21 characters are cut there).
    shown=$(awk 'substr($0, 1, 11) ~ /^ *device$/ { for (i = 2; i <= NF; i++) print $i }' "$log" | sort -u)
    missing=$(printf '%s\n' "$devs" | awk '{ n = $1; if (length(n) > 21) n = substr(n, 1, 21); print n }' |
        sort -u | comm -23 - <(printf '%s\n' "$shown"))
    [ -z "$missing" ] || fail_sim "$c" "devices missing from the show tables: $(printf '%s\n' "$missing" | tr '\n' ' ')"
    long=$(printf '%s\n' "$devs" | awk 'length($1) > 21 { print $1 }')
    [ -z "$long" ] || printf 'run-demo: corner %s: note: names cut to 21 characters in the tables: %s\n' \
        "$c" "$(printf '%s\n' "$long" | tr '\n' ' ')" >&2

    # A converged but absurd answer: gm below zero.
    neg=$(awk 'substr($0, 1, 11) ~ /^ *gm$/ { for (i = 2; i <= NF; i++) if ($i ~ /^-/ && $i != "-0") print $i }' "$log")
    [ -z "$neg" ] || fail_sim "$c" "negative gm in the tables: not a sane operating point"

    # The raw file: one point, every saved device vector present (dims=0 marks a name ngspice did not know).
    [ -s "$raw" ] || fail_sim "$c" "ngspice wrote no raw file ($raw)"
    header=$(LC_ALL=C sed -n '/^Binary:/q;p' "$raw")
    printf '%s\n' "$header" | grep -Eq '^No\. Points:[[:space:]]*1[[:space:]]*$' || fail_sim "$c" "raw file does not hold one point"
    printf '%s\n' "$header" | grep -q 'dims=0' &&
        fail_sim "$c" "raw file has vectors ngspice could not fill: $(printf '%s\n' "$header" | grep 'dims=0' | awk '{print $2}' | head -n 3 | tr '\n' ' ')"
    nsaved=$(printf '%s\n' "$header" | grep -c '@m')
    nwant=$(printf '%s\n' "$devs" | awk -v b="$SAVE_BSIM4" -v m="$SAVE_MOS1" \
        '{ n += ($2 == 1) ? split(m, x, " ") : split(b, x, " ") } END { print n }')
    [ "$nsaved" -eq "$nwant" ] || fail_sim "$c" "raw file has $nsaved device vectors, expected $nwant"

    printf 'run-demo: corner %-7s %3d MOSFETs, op found, tables %s, raw %s\n' "$c" "$ndev" "$log" "$raw"
done

BL="$BUILD/biaslint"
if [ ! -x "$BL" ]; then
    printf 'run-demo: simulations done (files in %s)\n' "$OUT" >&2
    printf 'run-demo: %s does not exist yet: build it (make) and run this script again; stopping before the checks\n' "$BL" >&2
    exit 2
fi

cd "$REPO" || die "cannot enter $REPO"
for c in $CORNERS; do
    log="$OUT/afe.$c.log" msg="$OUT/report.$c.messages"
    "$BL" check netlists-demo/afe.cir --op "$log" --annotate "$OUT/afe.$c.annotated.cir" --format text \
        > "$OUT/report.$c.txt" 2> "$msg"
    rc=$?
    if [ $rc -gt 1 ]; then
        cat "$msg" >&2
        die "corner $c: biaslint failed (exit $rc) on $log"
    fi
    "$BL" check netlists-demo/afe.cir --op "$log" -o "$OUT/report.$c.json" --format json >> "$msg" 2>&1
    rcj=$?
    if [ $rcj -gt 1 ]; then
        cat "$msg" >&2
        die "corner $c: biaslint --format json failed (exit $rcj) on $log"
    fi
    if [ $rc -eq 1 ]; then what="findings, as the demo expects"
    else what="no findings, although the demo has problems planted: check the rules"; fi
    printf 'run-demo: corner %-7s biaslint exit %d (%s): %s, %s, %s\n' "$c" "$rc" "$what" \
        "$OUT/report.$c.txt" "$OUT/report.$c.json" "$OUT/afe.$c.annotated.cir"
done

# ---- The design review: all three corners in one run, every report format (README, "Reports").
ops=""
for c in $CORNERS; do ops="$ops --op $c=$OUT/afe.$c.log"; done
# shellcheck disable=SC2086 # ops holds one option pair per corner
"$BL" check netlists-demo/afe.cir $ops --annotate "$OUT/afe.review.annotated.cir" \
    --report html="$OUT/review.html" --report sarif="$OUT/review.sarif" --report junit="$OUT/review.junit.xml" \
    --report csv="$OUT/review.csv" --report json="$OUT/review.json" -o "$OUT/review.txt" 2> "$OUT/review.messages"
rc=$?
[ $rc -le 1 ] || { cat "$OUT/review.messages" >&2; die "biaslint failed on the three corners (exit $rc)"; }
printf 'run-demo: all corners     biaslint exit %d: %s/review.{txt,html,sarif,junit.xml,csv,json}, %s\n' \
    "$rc" "$OUT" "$OUT/afe.review.annotated.cir"

# ---- Lookup tables (README, "Lookup tables"): the demo's four models characterized with ngspice into
# tables (lengths as the netlist uses them), then the nominal corner simulated again with node
# voltages only (no @m vector in the raw file) and checked with the tables standing in for the device
# data; the regions and gm/ID must agree with the check on the full device dump.
TABLES=""
for spec in ncore:300n,500n,1u pcore:500n,1u nlong:2u,4u plong:1u,4u,40u; do
    m=${spec%%:*} ls=${spec#*:}
    "$BL" characterize --models "$MODELS" --section "$NOMINAL" --model "$m" --l "$ls" \
        --vgs 0:1.8:25m --vds 0:1.8:50m --vsb 0:0.8:0.1 -o "$OUT/$m.lut" -q 2> "$OUT/$m.lut.messages" ||
        { cat "$OUT/$m.lut.messages" >&2; die "biaslint characterize failed for model $m"; }
    TABLES="$TABLES --table $OUT/$m.lut"
done
deck="$OUT/afe.$NOMINAL.nodes.cir" raw="$OUT/afe.$NOMINAL.nodes.raw"
rm -f "$raw"
{ netlist_copy "$NOMINAL"; printf '.control\nset filetype=binary\nop\nwrite %s\nquit 0\n.endc\n.end\n' "$raw"; } > "$deck" ||
    die "cannot write $deck"
sim "$deck" > "$OUT/afe.$NOMINAL.nodes.log" 2> "$OUT/afe.$NOMINAL.nodes.stderr" && [ -s "$raw" ] ||
    fail_sim "$NOMINAL" "the node-voltage run wrote no raw file" "afe.$NOMINAL.nodes"
# shellcheck disable=SC2086 # TABLES holds one option pair per table
"$BL" check netlists-demo/afe.cir --op "$raw" $TABLES -o "$OUT/report.$NOMINAL.nodes.json" --format json \
    2> "$OUT/report.$NOMINAL.nodes.messages"
[ $? -le 1 ] || { cat "$OUT/report.$NOMINAL.nodes.messages" >&2; die "biaslint failed on the node voltages"; }
cmp_out=$(awk '
    function field(s, k,   r) { if (match(s, "\"" k "\": [^,}]*")) { r = substr(s, RSTART + length(k) + 4, RLENGTH - length(k) - 4);
                                 gsub(/"/, "", r); return r } return "" }
    /^    \{"name": / { n = field($0, "name"); if (FILENAME == ARGV[1]) { g[n] = field($0, "gm_id"); r[n] = field($0, "region") }
                      else { cnt++; if (field($0, "region") != r[n]) { bad++; which = which " " n }
                             x = field($0, "gm_id") + 0; y = g[n] + 0;
                             e = (y > 0 && x > 0) ? (x > y ? x / y - 1 : y / x - 1) : 0; err[cnt] = e; if (e > mx) mx = e } }
    END { for (i = 2; i <= cnt; i++) { v = err[i]; for (j = i - 1; j >= 1 && err[j] > v; j--) err[j + 1] = err[j]; err[j + 1] = v }
          printf "%d %d %.3f %.3f%s", cnt, bad + 0, 100 * err[int((cnt + 1) / 2)], 100 * mx, which }
' "$OUT/report.$NOMINAL.json" "$OUT/report.$NOMINAL.nodes.json")
read -r ndev nbad med mx rest <<<"$cmp_out"
printf 'run-demo: corner %-7s node voltages + tables (%s): %s MOSFETs, %s with another region than the full dump%s, gm/ID off by %s %% median, %s %% at most\n' \
    "$NOMINAL" "$OUT/report.$NOMINAL.nodes.json" "$ndev" "$nbad" "${rest:+ (${rest})}" "$med" "$mx"
[ "$nbad" = 0 ] && awk -v a="$med" -v b="$mx" 'BEGIN { exit !(a <= 0.5 && b <= 2) }' ||
    die "the check on node voltages and tables disagrees with the check on the device dump"

printf '\n===== biaslint report, corner %s =====\n' "$NOMINAL"
cat "$OUT/report.$NOMINAL.txt"
if [ -s "$OUT/report.$NOMINAL.messages" ]; then
    printf '\n===== biaslint messages, corner %s =====\n' "$NOMINAL"
    cat "$OUT/report.$NOMINAL.messages"
fi
exit 0
