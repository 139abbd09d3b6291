#!/usr/bin/env bash
# bigfile: dumps over 2 GiB are read, and a located error past the 2 GiB mark names the right line
# (64-bit sizes and offsets through the readers). Each file is sparse: a title line padded with
# 2.1 GB of NUL bytes, then a real ngspice raw file; it takes no disk space but about 7 s and 2.2 GB
# of memory per run, so this is not part of `make test`: .ci/run runs it.
#   BIASLINT=build/biaslint bash tests/bigfile.sh
set -u
here=$(cd "$(dirname "$0")" && pwd)
bin=$(cd "$(dirname "${BIASLINT:-build/biaslint}")" && pwd)/$(basename "${BIASLINT:-build/biaslint}")
work=$(mktemp -d /tmp/biaslint-big-XXXXXX)
trap 'rm -rf "$work"' EXIT
pass=0 fail=0
ok() { pass=$((pass + 1)); }
bad() { fail=$((fail + 1)); echo "FAIL: $*"; }
cp "$here"/fixtures/cli/pair.cir "$work"/
cd "$work"
{
    printf '.include pair.cir\n.control\nsave all'
    for m in m1 m2 m3 m4 mt; do for q in id gm gds vgs vds vbs vth vdsat cgg; do printf ' @m.x1.%s[%s]' $m $q; done; done
    printf '\nop\nset filetype=ascii\nwrite pair.raw\nquit\n.endc\n.end\n'
} >big.ctl
ngspice -b big.ctl >/dev/null 2>&1 || { echo "FAIL: ngspice"; exit 1; }
size=2200000000 # past 2^31 = 2147483648
big() { # big OUT: the title line of pair.raw padded past 2 GiB, then the rest of the file
    printf 'Title: a title line padded to past 2 GiB ' >"$1"
    truncate -s $size "$1"
    printf '\n' >>"$1"
    tail -n +2 pair.raw >>"$1"
}
big big.raw
[ "$(stat -c %s big.raw)" -gt 2147483648 ] && ok || bad "big.raw is not over 2 GiB"
"$bin" check pair.cir --op big.raw --format json -o big.json 2>err.txt
rc=$?
[ $rc -le 1 ] && grep -q '"name":"x1.m1".*"has_data":true' big.json && ok || { bad "a 2.2 GB raw file: exit $rc"; cat err.txt; }
vl=$(grep -n '^Values:' pair.raw | cut -d: -f1)
sed -i "$((vl + 2))s/.*/\t1.5x-03/" pair.raw
big bad.raw
rm -f big.raw
"$bin" check pair.cir --op bad.raw 2>err.txt >/dev/null
rc=$?
# the error sits after byte 2^31, on the same line as in pair.raw (the padded title is one line)
[ $rc -eq 2 ] && grep -Eq "bad.raw:$((vl + 2)):2: error: .*'1.5x-03' is not a number" err.txt && ok ||
    { bad "an error past 2 GiB: exit $rc"; cat err.txt; }
echo "bigfile: $pass passed, $fail failed"
[ $fail -eq 0 ]
