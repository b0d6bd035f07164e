#!/bin/sh
# check_runner.sh - tests/run.sh itself counts honestly: a program that stops
# before the end of its TAP plan fails the suite even with exit status 0, as
# does one with no plan; the closing summary names it.  Runs a copy of run.sh
# on made-up test programs in a temporary folder.  Prints TAP.
. tests/tap.sh
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
mkdir -p "$T/build/tests" "$T/tests"
cp tests/run.sh "$T/tests/run.sh"

fake() { # fake NAME BODY: a test program that prints BODY and exits 0
    printf '#!/bin/sh\nprintf "%s"\nexit 0\n' "$2" >"$T/build/tests/$1"
    chmod +x "$T/build/tests/$1"
}
runner() { (cd "$T" && BUILD=build sh tests/run.sh >out 2>&1; echo $? >status); }

fake test_whole '1..2\nok 1 - a\nok 2 - b\n'
runner
expect_eq "a whole plan: exit 0" "$(cat "$T/status")" 0
ok_if "a whole plan: 2 passed, 0 failed" grep -qx '2 passed, 0 failed' "$T/out"

fake test_half '1..4\nok 1 - a\nok 2 - b\n'
runner
expect_eq "half a plan with status 0: the suite fails" "$(cat "$T/status")" 1
ok_if "half a plan: counted as a failure" grep -qx '4 passed, 1 failed' "$T/out"
ok_if "half a plan: named in the closing summary" grep -qx 'failed: test_half' "$T/out"
ok_if "half a plan: says what it planned and saw" grep -q 'planned 4 checks and reported 2' "$T/out"

rm "$T/build/tests/test_half"
fake test_noplan 'ok 1 - a\n'
runner
expect_eq "no plan: the suite fails" "$(cat "$T/status")" 1
ok_if "no plan: named in the closing summary" grep -qx 'failed: test_noplan' "$T/out"

rm "$T/build/tests/test_noplan"
printf '#!/bin/sh\necho "1..1"\necho "ok 1 - a"\nexit 3\n' >"$T/build/tests/test_status"
chmod +x "$T/build/tests/test_status"
runner
expect_eq "whole plan but exit 3: the suite fails" "$(cat "$T/status")" 1
ok_if "exit status reported" grep -q 'test_status exited with status 3' "$T/out"

tap_plan
