#!/bin/sh
# run.sh BUILD SECONDS NAME... - run each libFuzzer harness BUILD/fuzz/NAME for
# SECONDS seconds on a working copy of its committed seed corpus
# (tests/fuzz/corpus/NAME/, never written to).  New inputs go to
# BUILD/fuzz-corpus/NAME/, crashes to BUILD/fuzz-artifacts/.  Exits non-zero
# at the first harness that finds a crash, leak, timeout or sanitizer report.
set -u
build=$1
secs=$2
shift 2
status=0
for name in "$@"; do
    bin=$build/fuzz/$name
    seeds=tests/fuzz/corpus/$name
    work=$build/fuzz-corpus/$name
    art=$build/fuzz-artifacts
    mkdir -p "$work" "$art"
    dict=
    [ -f "tests/fuzz/$name.dict" ] && dict="-dict=tests/fuzz/$name.dict"
    echo "fuzz: $name for ${secs}s"
    # shellcheck disable=SC2086
    LSAN_OPTIONS=suppressions=tests/fuzz/lsan.supp "$bin" -max_total_time="$secs" -timeout=10 -rss_limit_mb=2048 -max_len=8192 \
        -print_final_stats=1 -artifact_prefix="$art/$name-" $dict \
        "$work" "$seeds" >"$build/fuzz-$name.log" 2>&1
    st=$?
    grep -E '^stat::number_of_executed_units|^stat::peak_rss_mb' "$build/fuzz-$name.log" |
        sed "s/^/fuzz: $name: /"
    if [ "$st" -ne 0 ]; then
        echo "fuzz: $name FAILED (status $st); log: $build/fuzz-$name.log"
        grep -E 'ERROR|SUMMARY|fuzz_|Test unit written' "$build/fuzz-$name.log" | head -20
        status=1
    fi
done
[ "$status" -eq 0 ] && echo "fuzz: all harnesses ran clean"
exit "$status"
