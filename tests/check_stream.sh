#!/bin/sh
# check_stream.sh - the figure of rate against time on stream (README
# "Rate against time on stream"): `plot` and `check --out` draw it for a
# sample whose file has a time_on_stream column and for no other; check
# writes only the per-sample figures, all or nothing, and refuses a folder
# inside the campaign before printing anything.  Runs gnuplot.  Prints TAP.
# Env: ARRANK (program).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
C="$T/campaign"
mkdir "$C"

# An invented sample losing 1.2 %/h over 27 h on stream, its temperatures
# up and back so that time does not follow temperature; a second without
# the column.
awk 'BEGIN {
    split("500 510 520 530 540 550 560 500 520 540 560 510 530 550", T, " ")
    print "# sample = S1 drifting"
    print "T [K], rate [umol/(g*s)], time_on_stream [h]"
    for (k = 1; k <= 14; k++) {
        t = 2 * k - 1
        printf "%s, %.6g, %.1f\n", T[k], exp(30 - 90000 / (8.314462618 * T[k]) - 0.012 * t + 0.01 * sin(2.3 * k)), t
    }
}' >"$C/S1.csv"
awk 'BEGIN {
    print "# sample = S2 no time column"
    print "T [K], rate [umol/(g*s)]"
    for (k = 0; k < 8; k++) {
        T = 500 + 10 * k
        printf "%d, %.6g\n", T, exp(29 - 88000 / (8.314462618 * T) + 0.01 * sin(1.7 * k))
    }
}' >"$C/S2.csv"

"$A" plot "$C" --at 260C --out "$T/plot" >"$T/out" 2>"$T/err"; st=$?
expect_eq "plot: exit 0" "$st" 0
ok_if "plot: the figure for the sample with time_on_stream" \
    test -s "$T/plot/time-on-stream-01-S1_drifting.svg"
ok_if "plot: listed with the others" grep -q '/time-on-stream-01-S1_drifting.svg$' "$T/out"
ok_if "plot: none for the sample without the column" \
    sh -c "! ls '$T/plot' | grep -q 'time-on-stream-02'"
ok_if "plot: the figure says the drift per hour with its interval" \
    grep -q 'drift -1\.[0-9]* %/h (95 % interval -1\.[0-9]* to -1\.[0-9]*)' \
    "$T/plot/time-on-stream-01-S1_drifting.svg"
ok_if "plot: and the temperature the rates are brought to" \
    grep -q 'rates brought to 256\.1 °C' "$T/plot/time-on-stream-01-S1_drifting.svg"
"$A" check "$C" >"$T/check.txt" 2>/dev/null
ok_if "check: the drift the figure draws is the one check reports" \
    grep -q 'the rate drifts down by 2[0-9] % over 26.0 h on stream' "$T/check.txt"

# check --out DIR: the per-sample figures of the checks, nothing else
"$A" check "$C" --out "$T/chk" >"$T/out" 2>"$T/err"; st=$?
expect_eq "check --out: exit 0" "$st" 0
expect_eq "check --out: the diagnostics and time-on-stream figures, and only them" \
    "$(ls "$T/chk" | tr '\n' ' ')" \
    "diagnostics-01-S1_drifting.svg diagnostics-02-S2_no_time_column.svg time-on-stream-01-S1_drifting.svg "
ok_if "check --out: the report first, then the files written" \
    sh -c "head -n 1 '$T/out' | grep -q '^campaign ' && tail -n 1 '$T/out' | grep -q '^$T/chk/time-on-stream-01-S1_drifting.svg$'"
"$A" check "$C" --out "$T/chk-png" --format png >/dev/null 2>&1
ok_if "check --out --format png" test -s "$T/chk-png/time-on-stream-01-S1_drifting.png"
"$A" check "$C" --out "$C/figs" >"$T/out" 2>"$T/err"; st=$?
expect_eq "check --out inside the campaign: refused (exit 2)" "$st" 2
ok_if "check --out inside the campaign: nothing printed, nothing made" \
    sh -c "test ! -s '$T/out' && test ! -e '$C/figs'"
"$A" check "$C" --json - --out "$T/chk-json" >"$T/json" 2>"$T/err"; st=$?
expect_eq "check --json - --out: exit 0" "$st" 0
ok_if "check --json - --out: the file list goes with the report, to stderr" \
    sh -c "grep -q 'time-on-stream-01' '$T/err' && ! grep -q 'time-on-stream-01' '$T/json'"
# without gnuplot: nothing written, exit 5
ARRANK_GNUPLOT=/nonexistent/gnuplot "$A" check "$C" --out "$T/nognu" >/dev/null 2>"$T/err"
st=$?
expect_eq "check --out without gnuplot: exit 5" "$st" 5
ok_if "check --out without gnuplot: no folder made" test ! -e "$T/nognu"

# a sample held at one temperature (a stability hold): not fitted, but its
# drift with time is (README "Stability holds"): the figure draws that line
# and says it; with four points only, too short, the rates as measured and why
mkdir "$T/iso"
awk 'BEGIN {
    print "# sample = I1 one temperature"
    print "T [K], rate [umol/(g*s)], time_on_stream [h]"
    for (k = 1; k <= 8; k++)
        printf "530, %.6g, %d\n", 10 * exp(-0.02 * k), k
}' >"$T/iso/I1.csv"
printf '# sample = I2 short hold\nT [K],rate [umol/(g*s)],time_on_stream [h]\n530,9.8,1\n530,9.6,2\n530,9.4,3\n530,9.2,4\n' \
    >"$T/iso/I2.csv"
cp "$C/S2.csv" "$T/iso/"
"$A" check "$T/iso" --out "$T/iso-out" >"$T/iso.txt" 2>&1; st=$?
expect_eq "one temperature: check --out exit 0" "$st" 0
ok_if "one temperature: the figure draws the hold's drift line and says it (-1.98 %/h)" \
    grep -q 'drift -1.98 %/h (95 % interval -1.98 to -1.98), p = .*, 8 points; held at one temperature, 256.9 °C' \
    "$T/iso-out/time-on-stream-01-I1_one_temperature.svg"
ok_if "one temperature: check says the drift under the not-fitted line" \
    grep -q '^  problem: held at one temperature, 530.00 K: the rate drifts down by 13 % over 7.0 h on stream' \
    "$T/iso.txt"
ok_if "a short hold (4 points): the figure says why there is no drift line" \
    grep -q 'rates as measured; no drift line: sample not fitted: all 4 points are at one temperature' \
    "$T/iso-out/time-on-stream-02-I2_short_hold.svg"
"$A" report "$T/iso" --at 530K --out "$T/iso-rep" >/dev/null 2>&1
ok_if "one temperature: the report says the hold's drift as a problem under 'Not fitted'" \
    grep -q '<li class="problem"><b>problem</b>: held at one temperature, 530.00 K: the rate drifts down by 13 %' \
    "$T/iso-rep/report.html"

# rates near the top of the double range (found by the pipeline fuzzer: the
# axis reached gnuplot as "inf" and plot exited 4): drawn, axis kept finite
mkdir "$T/huge"
awk 'BEGIN {
    print "# sample = H1 huge rates"
    print "T [degC],rate [umol/(g*s)],time_on_stream [h]"
    print "250,9.06e+265,0"; print "260,1.43e+267,0.705"; print "260,5.23e+256,1.1"
    print "260,3.85e+266,0.776"; print "260,7.18e+289,7.09"; print "250,1.52e+260,6.59"
}' >"$T/huge/H1.csv"
"$A" plot "$T/huge" --at 260C --out "$T/huge-out" >/dev/null 2>"$T/err"; st=$?
expect_eq "huge rates: plot exit 0" "$st" 0
ok_if "huge rates: the time-on-stream figure drawn" \
    test -s "$T/huge-out/time-on-stream-01-H1_huge_rates.svg"

# rates near the bottom of the double range, temperatures near 0 K (found by
# the pipeline fuzzer: the drift band reached gnuplot with 0 and subnormal
# values on a log axis and gnuplot crashed): drawn
mkdir "$T/tiny"
cat >"$T/tiny/U1.csv" <<'EOF'
# sample = U1 tiny rates
T [K],rate [umol/(g*s)],time_on_stream [h]
3.047,9.244e-305,0
0.2912,9.400e-305,0.519
2.782,9.808e-305,1.29
1.631,1.0296e-304,6.63
4.779,2.281e-223,12
2.170,1.0901e-304,10.1
4.493,7.973e-238,16.5
0.2009,1.0148e-304,18.5
3.215,1.0423e-304,17.8
2.834,1.0446e-304,1.57
4.337,1.4608e-246,11.8
EOF
"$A" plot "$T/tiny" --at 4K --out "$T/tiny-out" >/dev/null 2>"$T/err"; st=$?
expect_eq "tiny rates: plot exit 0" "$st" 0
ok_if "tiny rates: the time-on-stream figure drawn" \
    test -s "$T/tiny-out/time-on-stream-01-U1_tiny_rates.svg"

# rates of order 1e-24 within a few per cent (a linear axis): each tic says
# its own value; they read '0.000000' when the labels had fixed decimals
mkdir "$T/small"
cat >"$T/small/V1.csv" <<'EOF'
# sample = V1 small rates
T [degC],rate [umol/(g*s)],rate_sd [umol/(g*s)],time_on_stream [h]
260,2.575e-24,1.06e-25,0
260,2.526e-24,7.69e-26,2.16
250,9.427e-25,3.99e-26,1.38
260,2.431e-24,3.81e-25,7.67
260,2.579e-24,1.85e-25,5.95
250,9.227e-25,1.75e-25,2.14
EOF
"$A" plot "$T/small" --at 255C --out "$T/small-out" >/dev/null 2>"$T/err"; st=$?
expect_eq "small rates: plot exit 0" "$st" 0
ok_if "small rates: no tic reads 0.000000" \
    sh -c "! grep -q '>0\.000000<' '$T/small-out/time-on-stream-01-V1_small_rates.svg'"
ok_if "small rates: the tics give the rates (e-24)" \
    grep -q '>[0-9.]*e-24<' "$T/small-out/time-on-stream-01-V1_small_rates.svg"

# the demo has no time_on_stream column: no such figure
"$A" plot campaigns/zeolite-ni-screen --out "$T/demo" >/dev/null 2>&1
ok_if "demo: no time-on-stream figure" sh -c "! ls '$T/demo' | grep -q time-on-stream"
tap_plan
