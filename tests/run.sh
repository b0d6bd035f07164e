#!/bin/sh
# Run the whole suite and print one closing line "N passed, N failed".
#
# Every test program speaks TAP ("ok N - what" / "not ok N - what"):
#   - $BUILD/tests/test_*  cmocka programs, one per module (CMOCKA_MESSAGE_OUTPUT=TAP);
#   - tests/check_*.sh     shell checks of the arrank program (CLI, bad inputs, demo);
#   - tests/check_*.py     checks against SciPy, run with Debian's /usr/bin/python3.
# Each program states its plan ("1..N", first or last line).  A program that
# crashes or exits non-zero without reporting a failure counts as one failure
# more; so does one whose ok/not ok lines do not add up to its plan (it
# stopped early, even with status 0) or that prints no plan at all.  The
# closing summary names every program that failed.
set -u
BUILD=${BUILD:-build}
export BUILD
export ARRANK="$BUILD/arrank"
export CMOCKA_MESSAGE_OUTPUT=TAP
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3

pass=0
fail=0
failed_names=""
log=$(mktemp)
trap 'rm -f "$log"' EXIT

run_one() {
    name=$1
    shift
    "$@" >"$log" 2>&1
    status=$?
    p=$(grep -c '^ok ' "$log")
    f=$(grep -c '^not ok ' "$log")
    seen=$((p + f))
    if [ "$status" -ne 0 ] && [ "$f" -eq 0 ]; then
        f=1
        echo "not ok - $name exited with status $status" >>"$log"
    fi
    plans=$(grep -c '^1\.\.[0-9][0-9]*' "$log")
    planned=$(sed -n 's/^1\.\.\([0-9][0-9]*\).*/\1/p' "$log" | head -n 1)
    if [ "$plans" -ne 1 ]; then
        f=$((f + 1))
        echo "not ok - $name printed $plans plan lines (1..N), not one: it stopped early or misreports" >>"$log"
    elif [ "$planned" -ne "$seen" ]; then
        f=$((f + 1))
        echo "not ok - $name planned $planned checks and reported $seen" >>"$log"
    fi
    [ "$f" -gt 0 ] && failed_names="$failed_names $name"
    pass=$((pass + p))
    fail=$((fail + f))
    if [ "$f" -gt 0 ]; then
        echo "== $name: $p passed, $f failed"
        grep -v '^ok ' "$log" | sed 's/^/   /'
    else
        echo "== $name: $p passed"
    fi
}

for t in "$BUILD"/tests/test_*; do
    [ -x "$t" ] || continue
    run_one "$(basename "$t")" "$t"
done
for t in tests/check_*.sh; do
    [ -f "$t" ] || continue
    run_one "$(basename "$t")" sh "$t"
done
for t in tests/check_*.py; do
    [ -f "$t" ] || continue
    run_one "$(basename "$t")" "$PY" "$t"
done

[ -n "$failed_names" ] && echo "failed:$failed_names"
echo "$pass passed, $fail failed"
[ "$fail" -eq 0 ]
