#!/bin/sh
# check_reference.sh - the reference catalyst, several campaigns and compare
# on the command line (issue 16), with the demo's two batches: the merged
# ranking names the drift and ranks on the ratios; the reference's row is
# marked; the CSV gains its columns only with a reference; bad uses give a
# one-line error and the documented exit status; compare lists the matched
# and unmatched ids and draws its figure.  Invented data.  Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
D1=campaigns/zeolite-ni-screen
D2=campaigns/zeolite-ni-batch2
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT

"$A" rank "$D1" "$D2" >"$T/table" 2>"$T/err"
expect_eq "rank of two campaigns exits 0" "$?" 0
ok_if "colliding ids named CAMPAIGN/ID" grep -q 'zeolite-ni-batch2/ZN-03 USY' "$T/table"
ok_if "ranked on the ratios" grep -q 'ranked by rate as a ratio to the reference' "$T/table"
ok_if "the drift is named" grep -q 'the reference ran 17 % lower in zeolite-ni-batch2 than in zeolite-ni-screen; 95 % interval 15-20 %' "$T/table"
ok_if "Welch's test says the rig drifted" grep -q 'the rig drifted' "$T/table"
ok_if "the reference's rows are marked" grep -q 'REFERENCE' "$T/table"

"$A" rank "$D1" --reference 'ZN-01 H-beta' --csv - >"$T/csv" 2>/dev/null
ok_if "CSV with a reference: its columns" grep -q 'is_reference,ratio_to_reference,ratio_to_reference_ci_low' "$T/csv"
"$A" rank "$D1" --csv - >"$T/csv0" 2>/dev/null
ok_if "CSV without a reference: no such column" sh -c "! grep -q ratio_to_reference '$T/csv0'"

"$A" rank "$D1" --reference NOPE >/dev/null 2>"$T/err"
expect_eq "an unknown reference: exit 2" "$?" 2
expect_eq "... in one line" "$(cat "$T/err")" "arrank: the reference 'NOPE' is no sample of campaign 'zeolite-ni-screen'"
"$A" rank "$D1" --by ratio >/dev/null 2>"$T/err"
expect_eq "--by ratio without a reference: exit 2" "$?" 2
ok_if "... says what to give" grep -q 'needs a reference' "$T/err"

# rates of another dimension cannot be merged
mkdir "$T/tof"
printf 'T [K], rate [1/s]\n500, 0.01\n510, 0.016\n520, 0.026\n' >"$T/tof/X.csv"
"$A" rank "$D1" "$T/tof" >/dev/null 2>"$T/err"
expect_eq "another rate dimension: exit 1" "$?" 1
ok_if "... named" grep -q 'different dimensions cannot be ranked together' "$T/err"
"$A" rank "$D1" "$D2" --json "$D2/x.json" >/dev/null 2>"$T/err"
expect_eq "two campaigns: no output into the second folder" "$?" 2
ok_if "... nothing written" test ! -e "$D2/x.json"
"$A" check "$D1" "$D2" >/dev/null 2>"$T/err"
expect_eq "check takes one campaign" "$?" 2

"$A" compare "$D1" "$D2" --json "$T/cmp.json" --out "$T/fig" >"$T/cmp" 2>/dev/null
expect_eq "compare exits 0" "$?" 0
ok_if "compare: 3 samples in both" grep -q '3 samples in both' "$T/cmp"
ok_if "compare: the unmatched listed" grep -q 'only in zeolite-ni-batch2: ZN-15 Ni-USY steamed, ZN-16 Ni-beta nanocrystals' "$T/cmp"
ok_if "compare: the paired figure" test -s "$T/fig/compare.svg"
ok_if "compare: its JSON and CSV beside it" test -s "$T/fig/compare.json" -a -s "$T/fig/compare.csv"
ok_if "compare: the report page with the figure inline" sh -c "grep -q '<svg' '$T/fig/compare.html' && grep -q 'ZN-09 beta-desilicated' '$T/fig/compare.html'"
"$A" compare "$D1" "$D2" --reference 'ZN-01 H-beta' >"$T/cmpref" 2>/dev/null
ok_if "compare against the reference: ZN-03 unchanged" grep -q '^ZN-03 USY .*0.98 \[0.92, 1.04\] .* -  ' "$T/cmpref"
ok_if "compare against the reference: ZN-09 changed" grep -q '^ZN-09 beta-desilicated .*0.703 \[0.636, 0.777\] .*changed' "$T/cmpref"
ok_if "compare JSON: unmatched and changed" sh -c "grep -q '\"unmatched\"' '$T/cmp.json' && grep -q '\"changed\": true' '$T/cmp.json'"
"$A" compare "$D1" >/dev/null 2>"$T/err"
expect_eq "compare of one campaign: exit 2" "$?" 2
"$A" compare "$D1" "$D2" --json "$D1/x.json" >/dev/null 2>"$T/err"
expect_eq "compare never writes into a campaign folder" "$?" 2
"$A" compare "$D1" "$D2" --json "$D2/x.json" >/dev/null 2>"$T/err"
expect_eq "... nor into the second one" "$?" 2
tap_plan
