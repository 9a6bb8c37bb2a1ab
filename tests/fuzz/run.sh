#!/bin/sh
# Runs the libFuzzer harnesses of tests/fuzz/ (make fuzz; see README.md).
#
#   sh tests/fuzz/run.sh BUILD SECONDS RSS_MB TIMEOUT_S "FLAGS" HARNESS...
#
# For each harness: its seed corpus and its saved regressions, once each;
# then, if SECONDS > 0, SECONDS of fuzzing on a copy of the seed corpus in
# BUILD/corpus/<harness> (the committed corpus is never written), with
# crash, leak, timeout and out-of-memory inputs kept in
# BUILD/artifacts/<harness>/. One summary line per harness; the exit
# status is 1 when any harness found something or failed a saved input.
# PLUMB_FUZZ_WAIVE (a comma-separated list) waives known, reported
# defects; see README.md.

build=$(cd "$1" && pwd)
seconds=$2
rss_mb=$3
timeout_s=$4
flags=$5
shift 5

here=$(dirname "$0")
failed=0
harnesses_passed=0
harnesses_failed=0
started=$(date +%s)

# The last number after "$1: " in a log, or "?".
last_number() {
    value=$(grep -a -o "$1: *[0-9][0-9]*" "$2" 2>/dev/null | tail -n 1 |
            sed 's/.*: *//')
    echo "${value:-?}"
}

for harness in "$@"; do
    binary="$build/fuzz_$harness"
    corpus="$build/corpus/$harness"
    artifacts="$build/artifacts/$harness"
    log="$build/logs/$harness.log"
    saved_log="$build/logs/$harness.saved.log"
    # The harnesses' temporary files (and libFuzzer's) stay in the build.
    TMPDIR="$build/tmp/$harness"
    export TMPDIR
    rm -rf "$artifacts" "$TMPDIR"
    mkdir -p "$corpus" "$artifacts" "$build/logs" "$TMPDIR"
    if [ ! -x "$binary" ]; then
        echo "fuzz_$harness: not built ($binary)"
        failed=1
        harnesses_failed=$((harnesses_failed + 1))
        continue
    fi
    cp "$here/corpus/$harness/"* "$corpus/" 2>/dev/null
    findings=0
    notes=""

    # The seeds and the saved regressions, once each.
    : > "$saved_log"
    for file in "$here/corpus/$harness/"* "$here/regressions/$harness/"*; do
        [ -f "$file" ] || continue
        if ! "$binary" -rss_limit_mb="$rss_mb" -timeout="$timeout_s" \
                "$file" >> "$saved_log" 2>&1; then
            findings=$((findings + 1))
            notes="$notes
    saved input fails: $file"
        fi
    done

    # Fuzzing.
    runs="-"
    cov="-"
    features="-"
    took=0
    if [ "$seconds" -gt 0 ]; then
        begin=$(date +%s)
        # shellcheck disable=SC2086 # FLAGS is a list of options
        "$binary" -max_total_time="$seconds" -rss_limit_mb="$rss_mb" \
            -timeout="$timeout_s" -artifact_prefix="$artifacts/" \
            -print_final_stats=1 $flags "$corpus" > "$log" 2>&1
        status=$?
        took=$(($(date +%s) - begin))
        runs=$(last_number "stat::number_of_executed_units" "$log")
        if [ "$runs" = "?" ]; then
            runs=$(grep -a -o '^#[0-9][0-9]*' "$log" | tail -n 1 | tr -d '#')
        fi
        cov=$(last_number "cov" "$log")
        features=$(last_number "ft" "$log")
        kept=0
        for file in "$artifacts"/crash-* "$artifacts"/leak-* \
                    "$artifacts"/timeout-* "$artifacts"/oom-*; do
            [ -f "$file" ] || continue
            kept=$((kept + 1))
            notes="$notes
    $file"
        done
        findings=$((findings + kept))
        if [ "$status" -ne 0 ] && [ "$kept" -eq 0 ]; then
            findings=$((findings + 1))
            notes="$notes
    exited with status $status without an artifact; see $log"
        fi
        reports=$(grep -a -h -e '^SUMMARY: ' -e 'invariant failed' \
                  -e 'runtime error' "$log" | sort | uniq -c | head -n 5)
        [ -n "$reports" ] && notes="$notes
$reports"
    fi
    rm -rf "$TMPDIR"
    corpus_files=$(ls "$corpus" | wc -l | tr -d ' ')
    if [ "$findings" -eq 0 ]; then
        verdict="no findings"
        harnesses_passed=$((harnesses_passed + 1))
    else
        verdict="$findings FINDING(S)"
        failed=1
        harnesses_failed=$((harnesses_failed + 1))
    fi
    echo "fuzz_$harness: $runs runs in ${took} s, cov $cov, ft $features," \
         "corpus $corpus_files: $verdict$notes"
done

echo "fuzzing took $(($(date +%s) - started)) s; logs in $build/logs"
echo "fuzz: $harnesses_passed passed, $harnesses_failed failed"
exit $failed
