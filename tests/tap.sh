# tap.sh - sourced by the shell checks: TAP output helpers.
#   ok_if NAME CMD...     run CMD; "ok" when it succeeds, else "not ok"
#   expect_eq NAME GOT WANT
#   tap_relay FILE        'ok NAME' / 'not ok NAME' lines from another program
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
# tap_relay FILE: a check written in another language prints "ok NAME" or
# "not ok NAME" per line into FILE; each becomes a numbered TAP line here,
# anything else a diagnostic.
tap_relay() {
    while IFS= read -r tap_line; do
        case $tap_line in
        "ok "*) ok_if "${tap_line#ok }" true ;;
        "not ok "*) ok_if "${tap_line#not ok }" false ;;
        *) echo "# $tap_line" ;;
        esac
    done <"$1"
}
# tap_plan: the closing plan "1..N", printed as the script's last line.  A
# script that stops before it has no plan, and tests/run.sh counts it failed.
tap_plan() {
    echo "1..$tap_n"
}
