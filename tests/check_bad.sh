#!/bin/sh
# check_bad.sh - the bad-input corpus.  Each tests/bad/<case>/ is a small
# campaign folder with two files:
#   expect         what `arrank fit tests/bad/<case>` does by default: line 1
#                  the class ("skips the file", "leaves points out", "merges"
#                  or "stops the run"), line 2 the exit status, then the exact
#                  stderr;
#   expect-strict  what `arrank fit --strict tests/bad/<case>` does (all or
#                  nothing, the reader's behaviour before issue 13): line 1
#                  the exit status, line 2 the exact one-line stderr.
# Checks: status, messages (with FILE:LINE[:COLUMN]), the class against the
# messages, nothing on stdout and no output file when the run fails, and no
# file created or changed in the case folder.  Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT

# one_run NAME WANT_STATUS WANT_ERR ARGS...: the run and its checks
one_run() {
    label=$1 want_status=$2 want_err=$3
    shift 3
    before=$(ls -la "$case" | md5sum)
    sums_before=$(cat "$case"/* 2>/dev/null | md5sum)
    rm -f "$T/out.json"
    "$A" fit "$@" "$case" --json "$T/out.json" >"$T/out" 2>"$T/err"
    st=$?
    expect_eq "$label: exit status" "$st" "$want_status"
    expect_eq "$label: message" "$(cat "$T/err")" "$want_err"
    if [ "$st" -ne 0 ]; then
        ok_if "$label: nothing on stdout" test ! -s "$T/out"
        ok_if "$label: no output file" test ! -e "$T/out.json"
    else
        ok_if "$label: the table on stdout" test -s "$T/out"
        ok_if "$label: the JSON written" test -s "$T/out.json"
    fi
    ok_if "$label: input folder untouched" \
        test "$before" = "$(ls -la "$case" | md5sum)" -a "$sums_before" = "$(cat "$case"/* 2>/dev/null | md5sum)"
}

for dir in tests/bad/*/; do
    case=${dir%/}
    name=${case#tests/bad/}
    [ -f "$case/expect" ] || continue
    class=$(sed -n 1p "$case/expect")
    one_run "$name" "$(sed -n 2p "$case/expect")" "$(sed -n '3,$p' "$case/expect")"
    err=$(cat "$T/err")
    case $class in
    "skips the file")
        ok_if "$name: skips the file, and says so" grep -q '; file not used$' "$T/err"
        ok_if "$name: the summary line last" sh -c 'tail -n 1 "$1" | grep -q "files not used; see above$" ||
            tail -n 1 "$1" | grep -q "could be fitted$"' sh "$T/err" ;;
    "leaves points out")
        ok_if "$name: leaves the point out, and says so" grep -q '; point left out$' "$T/err"
        ok_if "$name: no file skipped" test "$(grep -c 'file not used' "$T/err")" -eq 0 ;;
    "merges")
        expect_eq "$name: merges, exit 0" "$(sed -n 2p "$case/expect")" 0 ;;
    "stops the run")
        ok_if "$name: stops with one line" test "$(printf '%s\n' "$err" | wc -l)" -eq 1
        ok_if "$name: nothing skipped" test "$(grep -c 'not used' "$T/err")" -eq 0 ;;
    *)
        ok_if "$name: known class '$class'" false ;;
    esac
    [ -f "$case/expect-strict" ] &&
        one_run "$name --strict" "$(sed -n 1p "$case/expect-strict")" \
            "$(sed -n '2,$p' "$case/expect-strict")" --strict
done

tap_plan
