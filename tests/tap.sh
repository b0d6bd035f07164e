# tap.sh - sourced by the shell checks: TAP output helpers.
#   ok_if NAME CMD...     run CMD; "ok" when it succeeds, else "not ok"
#   expect_eq NAME GOT WANT
#   tap_plan              the closing plan line, last thing a script prints
# Each failure prints got/want as TAP diagnostics.
tap_n=0
# (Its variables start with tap_: a caller's own $name must survive the call.)
ok_if() {
    tap_name=$1
    shift
    tap_n=$((tap_n + 1))
    if "$@"; then
        echo "ok $tap_n - $tap_name"
    else
        echo "not ok $tap_n - $tap_name"
    fi
}
expect_eq() {
    tap_n=$((tap_n + 1))
    if [ "$2" = "$3" ]; then
        echo "ok $tap_n - $1"
    else
        echo "not ok $tap_n - $1"
        printf '# got:  %s\n# want: %s\n' "$2" "$3"
    fi
}
# tap_plan: the closing plan "1..N", printed as the script's last line.  A
# script that stops before it has no plan, and tests/run.sh counts it failed.
tap_plan() {
    echo "1..$tap_n"
}
