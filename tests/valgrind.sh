#!/bin/sh
# valgrind.sh ARRANK DEMO - the program under valgrind's memcheck: `rank` and
# `fit` on the demo campaign (with JSON and CSV written), `plan`, and a campaign with
# a bad file (the error path); with a reference, with the demo's second batch
# merged, and `compare` of the two.  Fails on any memcheck error or definite leak
# (status 99 from valgrind), and on an unexpected exit status of the program.
set -u
A=$1
DEMO=$2
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
command -v valgrind >/dev/null 2>&1 || { echo "valgrind: not installed (deps.sh --test)"; exit 1; }
VG="valgrind -q --error-exitcode=99 --leak-check=full --show-leak-kinds=definite \
--errors-for-leak-kinds=definite --track-origins=yes"
fail=0
run() {
    want=$1
    shift
    # shellcheck disable=SC2086
    $VG "$A" "$@" >"$T/out" 2>"$T/err"
    st=$?
    if [ "$st" -ne "$want" ]; then
        echo "valgrind: FAILED (status $st, want $want): arrank $*"
        cat "$T/err"
        fail=1
    else
        echo "valgrind: clean: arrank $*"
    fi
}
# ARRANK_FREE_AT_EXIT=1: the program frees everything before it exits, so
# every free is checked; the second rank run shows that without it the
# session kept for the exit is not a leak either.
export ARRANK_FREE_AT_EXIT=1
run 0 rank "$DEMO" --json "$T/r.json" --csv "$T/r.csv"
run 0 fit "$DEMO" --at 255C --json -
ARRANK_FREE_AT_EXIT=0 run 0 rank "$DEMO"
# a plan with its run sheet and JSON (200 simulations: memcheck is slow)
run 0 plan "$DEMO" --max-temperature 300C --simulations 200 --run-sheet "$T/p.csv" --json "$T/p.json"
mkdir "$T/bad"
cp "$DEMO"/*.csv "$T/bad/"
printf 'T [degC],rate [umol/(g*s)]\n250,1\n260,x\n' >"$T/bad/ZZ.csv"
printf 'T [degC],rate [mol/(kq*h)]\n250,1\n260,2\n270,3\n' >"$T/bad/ZY.csv"
# the reader keeps going: ZZ's bad cell and ZY's bad unit are left out and named
run 0 rank "$T/bad" --at 250C --json "$T/b.json"
# all or nothing: the first bad file stops the run
run 1 rank "$T/bad" --at 250C --strict
run 2 rank "$DEMO" --at 250
# the reference, two campaigns merged and compared (the demo's second batch beside it)
B2="$(dirname "$DEMO")/zeolite-ni-batch2"
run 0 rank "$DEMO" --reference 'ZN-01 H-beta' --json "$T/ref.json" --csv "$T/ref.csv"
run 0 rank "$DEMO" "$B2" --json "$T/m.json"
run 0 compare "$DEMO" "$B2" --reference 'ZN-01 H-beta' --json "$T/c.json" --csv "$T/c.csv"
run 2 rank "$DEMO" --reference NOPE
[ "$fail" -eq 0 ] && echo "valgrind: no errors, no definite leaks"
exit "$fail"
