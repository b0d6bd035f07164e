#!/bin/sh
# Run the whole suite and print one closing line "N passed, N failed".
#
# Every test program speaks TAP ("ok N - what" / "not ok N - what"):
#   - $BUILD/tests/test_*  cmocka programs, one per module (CMOCKA_MESSAGE_OUTPUT=TAP);
#   - tests/check_*.sh     shell checks of the arrank program (CLI, bad inputs, demo);
#   - tests/check_*.py     checks against SciPy, run with Debian's /usr/bin/python3.
# A program that crashes or exits non-zero without reporting a failure counts
# as one failure more.
set -u
BUILD=${BUILD:-build}
export BUILD
export ARRANK="$BUILD/arrank"
export CMOCKA_MESSAGE_OUTPUT=TAP
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3

pass=0
fail=0
log=$(mktemp)
trap 'rm -f "$log"' EXIT

run_one() {
    name=$1
    shift
    "$@" >"$log" 2>&1
    status=$?
    p=$(grep -c '^ok ' "$log")
    f=$(grep -c '^not ok ' "$log")
    if [ "$status" -ne 0 ] && [ "$f" -eq 0 ]; then
        f=1
        echo "not ok - $name exited with status $status" >>"$log"
    fi
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

echo "$pass passed, $fail failed"
[ "$fail" -eq 0 ]
