#!/bin/sh
# check_bad.sh - the bad-input corpus.  Each tests/bad/<case>/ is a small
# campaign folder whose `expect` file holds the exit status of
# `arrank fit tests/bad/<case>` on line 1 and the exact stderr on line 2.
# Checks: status, message (with FILE:LINE[:COLUMN]), nothing on stdout, and
# no file created or changed in the case folder.  Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT

for dir in tests/bad/*/; do
    case=${dir%/}
    name=${case#tests/bad/}
    [ -f "$case/expect" ] || continue
    want_status=$(sed -n 1p "$case/expect")
    want_err=$(sed -n 2p "$case/expect")
    before=$(ls -la "$case" | md5sum)
    sums_before=$(cat "$case"/* 2>/dev/null | md5sum)
    "$A" fit "$case" --json "$T/$name.json" >"$T/out" 2>"$T/err"
    st=$?
    expect_eq "$name: exit status" "$st" "$want_status"
    expect_eq "$name: message" "$(cat "$T/err")" "$want_err"
    ok_if "$name: nothing on stdout" test ! -s "$T/out"
    ok_if "$name: no output file" test ! -e "$T/$name.json"
    ok_if "$name: input folder untouched" \
        test "$before" = "$(ls -la "$case" | md5sum)" -a "$sums_before" = "$(cat "$case"/* 2>/dev/null | md5sum)"
done

tap_plan
