#!/bin/sh
# run: each fuzz target in turn for SECONDS seconds on its corpus (`make fuzz` calls this):
#   [FUZZ_BIN=DIR] [FUZZ_LABEL=SANITIZERS] sh tests/fuzz/run.sh FUZZBUILD SECONDS TARGET...
# The binaries are FUZZ_BIN/fuzz_<target> (default FUZZBUILD); SECONDS 0 runs each input of the
# corpus once (a replay, e.g. under ASan of a corpus grown by a faster build). New inputs go to
# FUZZBUILD/corpus/<target>, crashes to FUZZBUILD/artifacts/. One line per run is appended to
# FUZZBUILD/stats.txt: date, target, seconds, executions, result, sanitizers. Exit 1 when a target
# failed (a crash, a leak, a timeout, an out-of-memory): its log is FUZZBUILD/log/<target>.log.
set -u
secs=$2
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$1/artifacts" "$1/log"
fb=$(cd "$1" && pwd) # absolute: the netlist target works in a private folder
bin=$(cd "${FUZZ_BIN:-$1}" && pwd)
label=${FUZZ_LABEL:-address,undefined}
limit="-max_total_time=$secs"
[ "$secs" = 0 ] && limit="-runs=0"
shift 2
status=0
for t in "$@"; do
    dict=
    [ -f "$here/$t.dict" ] && dict="-dict=$here/$t.dict"
    log="$fb/log/$t.log"
    # -timeout: one input may take 10 s at most (a hang is a bug); -rss_limit_mb: 2 GiB of memory;
    # -max_len: the text readers' cost grows with the input and their bugs show in short inputs; the
    # netlist target loads, flattens and annotates twice per input, so its inputs stay shortest
    case $t in
    netlist) maxlen=2048 ;;
    show | csv | rules | expr | sweep | lut) maxlen=4096 ;;
    *) maxlen=16384 ;;
    esac
    "$bin/fuzz_$t" $limit -timeout=10 -rss_limit_mb=2048 -max_len=$maxlen -print_final_stats=1 \
        -artifact_prefix="$fb/artifacts/$t-" $dict "$fb/corpus/$t" >"$log" 2>&1
    rc=$?
    execs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
    result=ok
    [ $rc -eq 0 ] || { result="FAILED($rc)"; status=1; }
    printf '%s %-8s %6ss %12s execs %s %s\n' "$(date -u +%Y-%m-%dT%H:%M:%SZ)" "$t" "$secs" "${execs:-?}" "$result" "$label" |
        tee -a "$fb/stats.txt"
    if [ $rc -ne 0 ]; then
        grep -E 'ERROR|SUMMARY|broken promise|Test unit written' "$log" | head -20
    fi
done
exit $status
