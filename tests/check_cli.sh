#!/bin/sh
# check_cli.sh - the arrank program as a user meets it: help, usage errors,
# units on the command line, output files, exit statuses.  Prints TAP.
# Env: ARRANK (program), BUILD (build folder).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
DEMO=campaigns/zeolite-ni-screen

"$A" >"$T/out" 2>"$T/err"; st=$?
expect_eq "no command: usage status 2" "$st" 2
ok_if "no command: lists the commands" grep -q '^  rank ' "$T/err"
"$A" --help >"$T/out" 2>&1; st=$?
expect_eq "--help exits 0" "$st" 0
ok_if "--help lists fit with one line" grep -q '^  fit  *[a-z]' "$T/out"
expect_eq "--version" "$("$A" --version)" "arrank 0.1.0"
expect_eq "fit --version" "$("$A" fit --version)" "arrank 0.1.0"
"$A" rank --help >"$T/out"; st=$?
expect_eq "rank --help exits 0" "$st" 0
ok_if "rank --help documents --at with a unit" grep -q -- '--at T' "$T/out"
"$A" frobnicate x 2>"$T/err"; st=$?
expect_eq "unknown command: status 2" "$st" 2
expect_eq "unknown command: message" "$(cat "$T/err")" \
    "arrank: 'frobnicate' is not a command; see 'arrank --help'"
"$A" fit "$DEMO" --draws 10 2>"$T/err"; st=$?
expect_eq "option of another command: status 2" "$st" 2

# --at needs a unit
"$A" rank "$DEMO" --at 250 >"$T/out" 2>"$T/err"; st=$?
expect_eq "--at bare number: status 2" "$st" 2
ok_if "--at bare number: says a unit is needed" grep -q "has no unit" "$T/err"
ok_if "--at bare number: nothing on stdout" test ! -s "$T/out"
"$A" rank "$DEMO" --at 250C --json "$T/c.json" >/dev/null 2>"$T/err"; st=$?
expect_eq "--at 250C works" "$st" 0
"$A" rank "$DEMO" --at 523.15K --json "$T/k.json" >/dev/null 2>&1
/usr/bin/python3 - "$T/c.json" "$T/k.json" >"$T/py" <<'PY'
import json, sys
a, b = (json.load(open(p)) for p in sys.argv[1:])
print(abs(a["operating_temperature_K"] - 523.15) < 1e-9 and a["samples"] == b["samples"])
PY
expect_eq "--at 250C and --at 523.15K give the same results" "$(cat "$T/py")" "True"

# no operating temperature anywhere
mkdir -p "$T/noini"
cp "$DEMO/ZN-01.csv" "$DEMO/ZN-02.csv" "$T/noini/"
"$A" rank "$T/noini" 2>"$T/err"; st=$?
expect_eq "rank without any operating temperature: status 2" "$st" 2
ok_if "rank without any operating temperature: says how to give one" \
    grep -q "no operating temperature: give one with --at" "$T/err"
"$A" rank "$T/noini" --by ea >"$T/out" 2>&1; st=$?
expect_eq "rank --by ea needs no temperature" "$st" 0
"$A" fit "$T/noini" >"$T/out" 2>&1; st=$?
expect_eq "fit without a temperature works" "$st" 0

# the same data in degC + umol/(g*s) and in K + mol/(kg*h)
mkdir -p "$T/units"
printf 'T [degC],rate [umol/(g*s)]\n230.0,0.1185\n245.5,0.2433\n260.0,0.4712\n275.5,0.8490\n290.0,1.5560\n' \
    >"$T/units/A.csv"
printf 'T [K],rate [mol/(kg*h)]\n503.15,0.4266\n518.65,0.87588\n533.15,1.69632\n548.65,3.0564\n563.15,5.6016\n' \
    >"$T/units/B.csv"
"$A" fit "$T/units" --at 260C --json "$T/u.json" >/dev/null 2>"$T/err"; st=$?
expect_eq "two unit systems: fit exits 0" "$st" 0
/usr/bin/python3 - "$T/u.json" >"$T/py" <<'PY'
import json, sys
s = json.load(open(sys.argv[1]))["samples"]
a, b = s
rel = lambda x, y: abs(x - y) <= 1e-9 * abs(y)
print(rel(a["ea_kJ_mol"], b["ea_kJ_mol"]) and rel(a["rate_at_T"], b["rate_at_T"])
      and rel(a["ln_A"], b["ln_A"]))
PY
expect_eq "degC + umol/(g*s) and K + mol/(kg*h) give the same Ea, ln A and rate (1e-9)" \
    "$(cat "$T/py")" "True"

# outputs
"$A" fit "$DEMO" --json - >"$T/out" 2>/dev/null; st=$?
expect_eq "--json - exits 0" "$st" 0
ok_if "--json - writes only JSON on stdout" /usr/bin/python3 -c \
    "import json,sys; json.load(open(sys.argv[1]))" "$T/out"
"$A" fit "$DEMO" --csv - >"$T/out" 2>/dev/null
ok_if "--csv - writes a header with units" grep -q '^rank,id,file,n_points,n_used,ea \[kJ/mol\]' "$T/out"
"$A" fit "$DEMO" --json /dev/full >/dev/null 2>"$T/err"; st=$?
expect_eq "writing to /dev/full: status 3" "$st" 3
ok_if "writing to /dev/full: says so" grep -q "/dev/full: cannot write: No space left on device" "$T/err"
"$A" fit "$DEMO" >/dev/full 2>"$T/err"; st=$?
expect_eq "table to a full stdout: status 3" "$st" 3
mkdir -p "$T/outs"
"$A" rank "$DEMO" --json "$T/outs/deep/r.json" --csv "$T/outs/deep/r.csv" >/dev/null 2>&1
ok_if "outputs land in a new folder, no temp files left" \
    test "$(ls "$T/outs/deep" | tr '\n' ' ')" = "r.csv r.json "
"$A" rank "$T/noini" --json "$T/outs/none.json" >/dev/null 2>&1
ok_if "a failed run writes no output" test ! -e "$T/outs/none.json"

# unreadable or missing folders
"$A" fit "$T/does-not-exist" 2>"$T/err"; st=$?
expect_eq "missing folder: status 3" "$st" 3
ok_if "missing folder: names it" grep -q "does-not-exist" "$T/err"
"$A" fit "$DEMO/ZN-01.csv" 2>"$T/err"; st=$?
expect_eq "a file instead of a folder: status 3" "$st" 3

# long and odd sample names in the table
mkdir -p "$T/long"
{ printf '# sample = Ni-Co 12 wt%% on Al2O3-SiO2, calcined 550 C, batch 2026-07-B, sieved\n'
  printf 'T [K],rate [1/s]\n500,0.01\n510,0.016\n520,0.027\n530,0.043\n'; } >"$T/long/X.csv"
{ printf '# sample = short\n'; printf 'T [K],rate [1/s]\n500,0.02\n510,0.03\n520,0.05\n530,0.07\n'; } \
    >"$T/long/Y.csv"
"$A" rank "$T/long" --at 515K >"$T/out" 2>&1; st=$?
expect_eq "long names: status 0" "$st" 0
ok_if "long names: shortened with '...' in the table" grep -q '\.\.\.' "$T/out"
w1=$(grep -n 'short' "$T/out" | head -1 | cut -d: -f2- | awk '{print index($0, "4 ")}')
w2=$(grep -n '\.\.\.' "$T/out" | head -1 | cut -d: -f2- | awk '{print index($0, "4 ")}')
expect_eq "long names: columns stay aligned" "$w1" "$w2"

# models: the transition-state form needs turnover frequencies
"$A" rank "$DEMO" --model eyring >"$T/out" 2>"$T/err"; st=$?
expect_eq "--model eyring on per-mass rates: status 2" "$st" 2
ok_if "--model eyring on per-mass rates: says why" grep -q "needs turnover frequencies" "$T/err"
"$A" rank "$T/long" --at 515K --model eyring >"$T/out" 2>&1; st=$?
expect_eq "--model eyring on turnover frequencies: status 0" "$st" 0
ok_if "--model eyring: table of dH and dS" grep -q 'dH \[kJ/mol\] *dS \[J/(mol\*K)\]' "$T/out"
"$A" rank "$DEMO" --model modified >"$T/out" 2>&1
ok_if "--model modified: table of E and n with the collinearity warning" \
    grep -q 'E and n are nearly collinear' "$T/out"
"$A" rank "$DEMO" --csv - 2>/dev/null | grep -v '^#' | head -1 >"$T/out"
ok_if "rank --csv: p_best and group columns" grep -q ',p_best,group,flags,error,error_line,error_column,extrapolation \[K\],extrapolation_rel$' "$T/out"
"$A" rank "$DEMO" --csv - 2>/dev/null | head -1 >"$T/out"
ok_if "--csv: the caution as a comment line at the top" \
    grep -qx '# caution: apparent kinetics of these samples in this window; not for reactor design, scale-up or safety limits' "$T/out"

# the user's locale: with a decimal comma (LC_ALL=de_DE.UTF-8) the program
# reads and writes exactly what it does in C.  The locale must exist (it is
# a test dependency: sh src/tools/deps.sh --test generates it).
loc=$(locale -a 2>/dev/null | grep -ix 'de_DE\.utf-\?8' | head -n 1)
ok_if "locale de_DE.UTF-8 installed (else: sh src/tools/deps.sh --test)" test -n "$loc"
loc=${loc:-de_DE.UTF-8}
expect_eq "LC_ALL=$loc: the locale has a decimal comma" \
    "$(LC_ALL=$loc /usr/bin/printf '%.2f' 1.25 2>/dev/null)" "1,25"
LC_ALL=C "$A" rank "$DEMO" --json "$T/lc-c.json" --csv "$T/lc-c.csv" >"$T/lc-c.txt" 2>&1
LC_ALL=$loc "$A" rank "$DEMO" --json "$T/lc-de.json" --csv "$T/lc-de.csv" >"$T/lc-de.txt" 2>&1
ok_if "LC_ALL=$loc: JSON byte for byte as in C" cmp -s "$T/lc-c.json" "$T/lc-de.json"
ok_if "LC_ALL=$loc: CSV byte for byte as in C" cmp -s "$T/lc-c.csv" "$T/lc-de.csv"
ok_if "LC_ALL=$loc: table byte for byte as in C" cmp -s "$T/lc-c.txt" "$T/lc-de.txt"
ok_if "LC_ALL=$loc: the JSON has numbers with a decimal point" grep -q '"T_min_K": 503.15,' "$T/lc-de.json"

# Ranking by rate far outside every sample's range is refused unless asked for.
"$A" rank "$DEMO" --at 2000C >"$T/out" 2>"$T/err"; st=$?
expect_eq "--at 2000C (1,600 K past every range): refused with exit 2" "$st" 2
ok_if "--at 2000C: one line naming the distance and --extrapolate" \
    sh -c "test \$(wc -l <'$T/err') -eq 1 && grep -q 'outside the measured range of every sample.*--extrapolate' '$T/err'"
ok_if "--at 2000C: nothing on standard output" test ! -s "$T/out"
"$A" fit "$DEMO" --at 2000C >/dev/null 2>&1; st=$?
expect_eq "fit --at 2000C: fit shows each sample's extrapolation, not refused" "$st" 0
"$A" rank "$DEMO" --at 2000C --extrapolate >"$T/out" 2>/dev/null; st=$?
expect_eq "--at 2000C --extrapolate: ranks (exit 0)" "$st" 0
"$A" rank "$DEMO" --at 300C >/dev/null 2>&1; st=$?
expect_eq "--at 300C (at the edge of the ranges): ranks without --extrapolate" "$st" 0
"$A" rank "$DEMO" --at 270C --by EA >/dev/null 2>&1; st=$?
expect_eq "--by EA: case does not matter" "$st" 0

"$A" rank "$DEMO" --at 270C --conversion-limit 5 >/dev/null 2>"$T/err"; st=$?
expect_eq "--conversion-limit 5: usage error" "$st" 2
ok_if "--conversion-limit 5: says 5% or 0.05" grep -q "for 5 % write 5% or 0.05" "$T/err"

# --run: one run of every sample that has it; the others listed as not having it.
"$A" rank "$DEMO" --at 270C --run heat --json "$T/run.json" >"$T/out" 2>"$T/err"; st=$?
expect_eq "--run heat: exit 0" "$st" 0
/usr/bin/python3 - "$T/run.json" >"$T/py" <<'PY'
import json, sys
d = json.load(open(sys.argv[1]))
by = {s["id"]: s for s in d["samples"]}
ranked = sorted(s["id"] for s in d["samples"] if s["rank"])
print(" ".join(ranked))
z13 = by["ZN-13 Ni-rich Y"]
print(z13["n_points"], z13["n_used"] <= 8)
print(by["ZN-01 H-beta"]["error"])
PY
expect_eq "--run heat: only the samples with a 'heat' run are ranked" \
    "$(sed -n 1p "$T/py")" "ZN-05 ferrierite ZN-13 Ni-rich Y"
expect_eq "--run heat: ZN-13 fitted on its heat run only (8 of 16 points)" "$(sed -n 2p "$T/py")" "16 True"
expect_eq "--run heat: a sample without it says so" "$(sed -n 3p "$T/py")" \
    "has no run 'heat' (--run); its points carry no run label"
# the other runs' points: left out with their run named, in points.csv, check
# and the JSON; no 'excluded' flag for them, n counted against the run
"$A" rank "$DEMO" --at 270C --run heat --points "$T/run-points.csv" --json "$T/run.json" \
    >"$T/out" 2>/dev/null
ok_if "--run heat: the table says only that run is used" \
    grep -q "; only run 'heat' of each sample (--run)$" "$T/out"
ok_if "--run heat: ZN-13 n is its run's 8 points, no 'excluded' flag" \
    grep -q "ZN-13 Ni-rich Y  *8  .*  -$" "$T/out"
expect_eq "--run heat: points.csv names the other run for each of ZN-13's cool points" \
    "$(grep -c "^ZN-13 Ni-rich Y,.*,cool,0,.*,\"run 'cool', not 'heat' (--run)\"$" "$T/run-points.csv")" 8
expect_eq "--run heat: its heat points used" \
    "$(grep -c '^ZN-13 Ni-rich Y,.*,heat,1,' "$T/run-points.csv")" 8
"$A" rank "$DEMO" --at 270C --run heat --no-diagnose --points - 2>/dev/null >"$T/nd.csv"
expect_eq "--run heat --no-diagnose: the same reason without a diagnosis" \
    "$(grep -c "^ZN-13 Ni-rich Y,.*run 'cool', not 'heat' (--run)" "$T/nd.csv")" 8
"$A" check "$DEMO" --run heat >"$T/out" 2>/dev/null
ok_if "--run heat: check names the run of each point left out" \
    grep -q "left out: line 14, 300.5 degC (573.6 K): run 'cool', not 'heat' (--run)" "$T/out"
"$A" rank "$DEMO" --at 270C --run fresh 2>"$T/err" >/dev/null; st=$?
expect_eq "--run fresh: no sample has it, nothing fitted (exit 1)" "$st" 1
ok_if "--run fresh: the first sample's reason" \
    grep -q "ZN-01.csv:5: has no run 'fresh' (--run); its points carry no run label$" "$T/err"
ok_if "--run fresh: the last line says which run" \
    sh -c "tail -n 1 '$T/err' | grep -q \"could be fitted on run 'fresh' (--run)$\""
mkdir "$T/runs"
cp "$DEMO/ZN-13.csv" "$T/runs/A.csv"
sed 's/^# sample = .*/# sample = B/; s/,heat$/,fresh/' "$DEMO/ZN-13.csv" >"$T/runs/B.csv"
"$A" rank "$T/runs" --at 270C --run fresh --json - 2>/dev/null >"$T/fresh.json"
ok_if "--run: a sample without the run lists the runs it has" \
    grep -q "has no run 'fresh' (--run); its runs: 'heat', 'cool'" "$T/fresh.json"

# fit and rank are distinct: fit lists the fits in file order with no ranking columns.
"$A" fit "$DEMO" --at 270C >"$T/fit.txt" 2>/dev/null
"$A" rank "$DEMO" --at 270C >"$T/rank.txt" 2>/dev/null
ok_if "fit: no rank, P(best) or group columns" sh -c "! grep -q 'P(best)' '$T/fit.txt' && ! grep -q '^rank ' '$T/fit.txt'"
expect_eq "fit: samples in file order" \
    "$(grep -o '^ZN-[0-9]*' "$T/fit.txt" | tr '\n' ' ')" \
    "$(ls "$DEMO"/*.csv | sed 's|.*/||; s|\.csv$||' | tr '\n' ' ')"
ok_if "rank: the ranking columns" grep -q '^rank  P(best)  group' "$T/rank.txt"

tap_plan
