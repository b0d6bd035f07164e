#!/bin/sh
# check_figs_text.sh - user text in the paired figure of `compare` and in a
# plan's figure: sample ids, folder names and titles with quotes, a
# backslash, '%', '&', '_', '^', '$(...)' and backquotes reach gnuplot only
# as quoted strings (plot.c's rule), so both figures are drawn, nothing is
# run, and every such text shows as itself (XML-escaped) in the SVG, whose
# <title> names the figure.  Invented data.  Prints TAP.  Env: ARRANK
# (program).  Needs gnuplot.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
# two campaigns with the same ids, the second's rates 0.7 times the first's
# for the second sample; folder names with a quote and a percent sign
CA="$T/run 'A' 50%"
CB="$T/run \"B\" & co"
mkdir "$CA" "$CB"
printf '[campaign]\ntitle = it'"'"'s a "screen" & 5 %%d_x^2\noperating_temperature = 270 degC\nrate_unit = umol/(g*s)\n' \
    >"$CA/campaign.ini"
sed 's/title = /title = again: /' "$CA/campaign.ini" >"$CB/campaign.ini"
id1='Ni'"'"'s "best" 5 %d & Al_2O_3^x \ end'
id2='Pt $(touch PWNED) `touch PWNED2` %s'
w() { # w FILE ID FACTOR: six points of an Arrhenius line, Ea 90 kJ/mol
    printf '# sample = %s\nT [degC],rate [umol/(g*s)]\n' "$2" >"$1"
    for t in 230 240 250 260 270 280; do
        awk -v t="$t" -v f="$3" 'BEGIN { k = t + 273.15; e = (t / 10 + int(f * 100)) % 3 - 1;
            y = f * exp(1.2 - 90000 / 8.314462618 * (1 / k - 1 / 533.15)) * (1 + 0.06 * e);
            printf "%d,%.6g\n", t, y }' >>"$1"
    done
}
w "$CA/s1.csv" "$id1" 1
w "$CA/s2.csv" "$id2" 0.98
w "$CB/s1.csv" "$id1" 1
w "$CB/s2.csv" "$id2" 0.56
"$A" compare "$CA" "$CB" --out "$T/cmp" >"$T/out" 2>"$T/err"; st=$?
expect_eq "compare with hostile ids: exit 0" "$st" 0
"$A" plan "$CA" --max-temperature 290C --budget 6 --out "$T/plan" >"$T/out2" 2>"$T/err2"; st=$?
expect_eq "plan with hostile ids: exit 0" "$st" 0
ok_if "nothing in a name was run" sh -c "! find '$T' . -maxdepth 3 -name 'PWNED*' | grep -q ."
for f in "$T/cmp/compare.svg" "$T/plan/plan.svg"; do
    n=$(basename "$f")
    ok_if "$n: drawn" test -s "$f"
    # each id whole, as XML text: ' and " may stay bare in text nodes
    ok_if "$n: the first id shows as itself" sh -c \
        "grep -q 'Ni'\\''s &quot;best&quot; 5 %d &amp; Al_2O_3^x \\\\ end\|Ni'\\''s \"best\" 5 %d &amp; Al_2O_3^x \\\\ end' '$f'"
    ok_if "$n: the second id shows as itself" grep -qF 'Pt $(touch PWNED) `touch PWNED2` %s' "$f"
done
ok_if "compare.svg: the title names the figure and both campaigns" \
    grep -q '<title>Rate at 270 °C in each campaign, 95 % intervals – it.s a .*→ again:' \
    "$T/cmp/compare.svg"
ok_if "plan.svg: the title names the figure and the campaign" \
    grep -q '<title>Planned runs on the Arrhenius plot: 6 runs .* – it.s a ' "$T/plan/plan.svg"
ok_if "compare.svg: the campaigns' folder names under their ticks" \
    sh -c "grep -q \"run 'A' 50%\" '$T/cmp/compare.svg' && grep -q 'run .*B.* &amp; co' '$T/cmp/compare.svg'"
tap_plan
