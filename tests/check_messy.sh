#!/bin/sh
# check_messy.sh - a campaign folder as people really leave it (tests/messy,
# invented samples MT-*): one bad file or point never costs the campaign
# (issue 13).  What each file holds and what must happen to it:
#   MT-A1.csv          clean; 'T [degC]', a run column                  ranked
#   MT-A1 - Copy.csv   byte-identical copy of MT-A1.csv                 not used, named
#   MT-A2.csv          unit typo 'mol/(kq*h)'                           file skipped
#   MT-A3.csv          ';' and decimal commas, 'Temperature (°C)',
#                      'rate (mmol/(gcat*hr))' (aliases), 'sd [%]'
#                      (relative), an 'n.d.' cell, ';;' rows at the end ranked, 1 point out
#   MT-B1.csv          'T / K', 'r / (mol/(kg*h))', 'X'; a zero rate at
#                      the coldest point, a '< 0.01' cell                ranked, 2 points out
#   MT-B2.csv          'mol/(kg*h))': brackets do not pair up           file skipped
#   MT-B3.csv          'Temp', 'sd'; blank, '-', 'nd', '<LOD' rates, a
#                      temperature '2S0.0'                               ranked, 5 points out
#   MT-C1-day1/2.csv   one sample measured on two days ('T_bed', tab)   one sample, two runs
#   MT-D1.csv          'TOF [1/h]' in a per-mass campaign               file skipped
#   MT-D2.csv          headers in another language                      file skipped
#   MT-D3.csv          two points                                       not fitted
#   MT-E1.csv          rates from conversion, '# mass = 48,5 mg'        ranked
#   results.csv        an output of arrank                              not read, a note
# Also --strict (all or nothing: exit 1, nothing written) and --no-merge
# (two files with one id are an error).  Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
C=tests/messy
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
sums_before=$(cd "$C" && ls -la | md5sum; cat ./* | md5sum)

# --- the default: keep going -------------------------------------------
"$A" rank "$C" --at 250C --json "$T/r.json" --json-points >"$T/out" 2>"$T/err"
expect_eq "rank: exit status 0 (samples were ranked)" "$?" 0
cat >"$T/want" <<'WANT'
arrank: tests/messy/MT-A2.csv:2:2: unknown unit 'mol/(kq*h)' in column 'rate'; file not used
arrank: tests/messy/MT-A3.csv:10:2: no value ('n.d.') in column 'rate'; point left out
arrank: tests/messy/MT-B1.csv:3:2: rate 0 is not positive; a logarithm needs a positive rate; point left out
arrank: tests/messy/MT-B1.csv:6:2: below detection limit: < 0.01 in column 'r'; point left out
arrank: tests/messy/MT-B2.csv:2:2: brackets do not pair up in unit 'mol/(kg*h))' of column 'rate'; file not used
arrank: tests/messy/MT-B3.csv:4:2: no value in column 'Rate'; point left out
arrank: tests/messy/MT-B3.csv:5:2: no value ('-') in column 'Rate'; point left out
arrank: tests/messy/MT-B3.csv:6:2: no value ('nd') in column 'Rate'; point left out
arrank: tests/messy/MT-B3.csv:7:2: below detection limit: <LOD in column 'Rate'; point left out
arrank: tests/messy/MT-B3.csv:9:1: '2S0.0' is not a number in column 'Temp'; point left out
arrank: tests/messy/MT-D1.csv:2:2: rate unit '1/h' of MT-D1.csv is not convertible to the campaign's 'mol/(kg*h)'; file not used
arrank: tests/messy/MT-D2.csv:2: no temperature column (found 'Temperatur', 'Umsatzrate'); the header needs one named T, Temp, temperature, T_bed with its unit, as 'T [degC]', 'Temperature (°C)' or 'T / K'; file not used
arrank: tests/messy/MT-D3.csv:2: only 2 data points; a fit with uncertainties needs at least 3; sample 'MT-D3' not fitted
arrank: tests/messy/MT-A1 - Copy.csv: byte-identical to MT-A1.csv; not used
arrank: 5 of 13 files not used; see above
WANT
expect_eq "rank: every skipped file and point on stderr with FILE:LINE[:COLUMN] and its reason" \
    "$(cat "$T/err")" "$(cat "$T/want")"
expect_eq "rank: one summary line, last" "$(tail -n 1 "$T/err")" \
    "arrank: 5 of 13 files not used; see above"
for id in MT-A1 MT-A3 MT-B1 MT-B3 MT-C1 MT-E1; do
    ok_if "rank: $id ranked in the table" grep -Eq "^ +[1-6] .* $id " "$T/out"
done
for id in MT-A2 MT-B2 MT-D1 MT-D2; do
    ok_if "rank: $id listed, file not used" grep -Eq "^ +- .* $id +[0-9]+ +file not used: " "$T/out"
done
ok_if "rank: MT-D3 (readable, two points) listed, not fitted" \
    grep -Eq "^ +- .* MT-D3 +[0-9]+ +not fitted: " "$T/out"
ok_if "rank: the copy is no row of its own" test "$(grep -c 'MT-A1' "$T/out")" -eq 1

# JSON: the reasons reach the results, every point keeps its reason.
cat >"$T/check.py" <<'PYEOF'
import json, sys
d = json.load(open(sys.argv[1]))
s = {x["id"]: x for x in d["samples"]}
def say(ok, what):
    print(("ok " if ok else "not ok ") + what)
say(len(s) == 11, "json: 11 samples (13 files: a copy dropped, two files merged)")
say(sorted(k for k, x in s.items() if x["rank"]) ==
    ["MT-A1", "MT-A3", "MT-B1", "MT-B3", "MT-C1", "MT-E1"], "json: the six readable samples ranked")
say(s["MT-A2"]["error"] == "unknown unit 'mol/(kq*h)' in column 'rate'"
    and s["MT-A2"]["error_line"] == 2, "json: a skipped file's reason and line in error, error_line")
say(s["MT-D2"]["error"].startswith("no temperature column (found 'Temperatur', 'Umsatzrate')")
    and "'Temperature (°C)' or 'T / K'" in s["MT-D2"]["error"],
    "json: an unknown header names what it found and the accepted forms")
ex = {e["line"]: e["reason"] for e in s["MT-B3"]["excluded"]}
say(ex == {4: "no value in column 'Rate'", 5: "no value ('-') in column 'Rate'",
           6: "no value ('nd') in column 'Rate'", 7: "below detection limit: <LOD in column 'Rate'",
           9: "'2S0.0' is not a number in column 'Temp'"},
    "json: MT-B3's five points left out, each with its reason")
say(s["MT-B3"]["n_points"] == 9 and s["MT-B3"]["n_used"] == 4, "json: MT-B3 fitted on the other 4")
b1 = s["MT-B1"]
say(b1["n_used"] == 5 and b1["points"][0]["used"] is False and b1["T_min_K"] > 500,
    "json: MT-B1's zero rate at the coldest point leaves that point out, not the sample")
a3 = s["MT-A3"]["points"]
say(len(a3) == 6 and all(abs(p["rate_sd"] - f * p["rate"]) <= 1e-9 * p["rate"]
                         for p, f in zip(a3[:5], [0.05, 0.05, 0.05, 0.04, 0.04])),
    "json: rate_sd [%] is a percentage of the rate; the ';;' rows are no points")
say(abs(a3[0]["T_K"] - 493.15) < 1e-9 and abs(a3[0]["rate"] - 0.01088) < 1e-12,
    "json: 'Temperature (°C)' and 'mmol/(gcat*hr)' (= mol/(kg*h)) with decimal commas")
c1 = s["MT-C1"]
say(c1["n_points"] == 6 and sorted(set(p["run"] for p in c1["points"])) ==
    ["MT-C1-day1.csv", "MT-C1-day2.csv"], "json: MT-C1's two files are one sample, one run each")
say(any("read from 2 files" in n for n in c1["notes"]), "json: a note says MT-C1 was merged")
say("MT-A1 - Copy.csv is byte-identical to MT-A1.csv; not used" in d["notes"],
    "json: a note names the copy and the file kept")
say("results.csv looks like an output of arrank; not read as a sample" in d["notes"],
    "json: arrank's own results.csv is not read, with a note")
say(d["n_files"] == 13, "json: n_files counts the 13 sample files found")
say(d["files_not_used"] == [
    {"file": "MT-A2.csv", "line": 2, "column": 2,
     "reason": "unknown unit 'mol/(kq*h)' in column 'rate'"},
    {"file": "MT-B2.csv", "line": 2, "column": 2,
     "reason": "brackets do not pair up in unit 'mol/(kg*h))' of column 'rate'"},
    {"file": "MT-D1.csv", "line": 2, "column": 2,
     "reason": "rate unit '1/h' of MT-D1.csv is not convertible to the campaign's 'mol/(kg*h)'"},
    {"file": "MT-D2.csv", "line": 2, "column": None, "reason": s["MT-D2"]["error"]},
    {"file": "MT-A1 - Copy.csv", "line": None, "column": None,
     "reason": "byte-identical to MT-A1.csv; not used"}],
    "json: files_not_used lists the four unreadable files and the copy, with line and column")
say([k for k, x in s.items() if x["skipped"]] == ["MT-A2", "MT-B2", "MT-D1", "MT-D2"]
    and s["MT-D3"]["skipped"] is False, "json: skipped is true for the unreadable files only")
say(s["MT-A2"]["error_column"] == 2 and s["MT-D2"]["error_column"] is None
    and s["MT-A1"]["error_column"] is None, "json: error_column, null when none")
lo = {p["line"]: (p["left_out"], p["left_out_column"]) for p in s["MT-B3"]["points"]}
say(lo[9] == ("'2S0.0' is not a number in column 'Temp'", 1)
    and lo[7] == ("below detection limit: <LOD in column 'Rate'", 2) and lo[8] == (None, None),
    "json-points: each point's left_out reason and column, null when usable")
say(s["MT-E1"]["rank"] is not None and s["MT-E1"]["n_used"] == 6,
    "json: '# mass = 48,5 mg' in a decimal-comma file is read (rates derived)")
PYEOF
"$PY" "$T/check.py" "$T/r.json" >"$T/py" 2>&1 || echo "not ok json checks ran" >>"$T/py"
tap_relay "$T/py"

# check: the points left out, with the reader's reasons
"$A" check "$C" >"$T/check" 2>"$T/check_err"
expect_eq "check: exit status 0" "$?" 0
ok_if "check: the non-numeric temperature named" \
    grep -q "left out: line 9, .*'2S0.0' is not a number in column 'Temp'" "$T/check"
ok_if "check: the detection limit named" \
    grep -q "left out: line 6, .*below detection limit: < 0.01 in column 'r'" "$T/check"
ok_if "check: the skipped file with its reason" \
    grep -q "^MT-B2 (MT-B2.csv): file not used: brackets do not pair up" "$T/check"
ok_if "check: a temperature it could not read is shown as a dash, not nan K" \
    grep -q "left out: line 9, —: '2S0.0'" "$T/check"
ok_if "check: never 'nan K'" sh -c '! grep -qi "nan K" "$1"' _ "$T/check"
ok_if "check: the byte-identical copy named as not used" \
    grep -qx "MT-A1 - Copy.csv: byte-identical to MT-A1.csv; not used" "$T/check"

# CSV and points.csv: where a skipped file's error points; the reader's reasons
"$A" fit "$C" --csv "$T/r.csv" --points "$T/p.csv" >/dev/null 2>&1
cat >"$T/rows.py" <<'PYEOF'
import csv, sys
def rows(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(line for line in f if not line.startswith("#")))
r = {x["id"]: x for x in rows(sys.argv[1])}
print(("ok " if (r["MT-A2"]["error_line"], r["MT-A2"]["error_column"]) == ("2", "2")
       and (r["MT-D2"]["error_line"], r["MT-D2"]["error_column"]) == ("2", "")
       and (r["MT-A1"]["error_line"], r["MT-A1"]["error_column"]) == ("", "") else "not ok ")
      + "csv: error_line and error_column of a skipped file, empty when none")
p = {(x["sample"], x["line"]): x["reason"] for x in rows(sys.argv[2])}
print(("ok " if p[("MT-B3", "9")] == "'2S0.0' is not a number in column 'Temp'"
       and p[("MT-D3", "3")].startswith("sample not fitted: ") else "not ok ")
      + "points.csv: the reader's reason for a point it left out")
PYEOF
"$PY" "$T/rows.py" "$T/r.csv" "$T/p.csv" >"$T/py" 2>&1 || echo "not ok csv checks ran" >>"$T/py"
tap_relay "$T/py"

# --- one sample in two files with different temperature units -----------
# Each point keeps its own file and unit: points.csv's file, T_file and
# T_file_unit, check's left-out line and the report name the file the line is
# in, and the JSON's excluded entries too (made-up numbers; only the
# bookkeeping is checked).
mkdir "$T/merge"
printf '[campaign]\nrate_unit = umol/(g*s)\n' >"$T/merge/campaign.ini"
printf '# sample = Kite-4\nT [degC],rate [umol/(g*s)]\n200,0.10\n220,0.25\n240,0.55\n' \
    >"$T/merge/kite-a.csv"
printf '# sample = Kite-4\nT [K],rate [umol/(g*s)],conversion [%%]\n483.15,0.16,3\n503.15,0.37,6\n523.15,0.80,14\n533.15,n.d.,\n' \
    >"$T/merge/kite-b.csv"
"$A" rank "$T/merge" --at 230C --points "$T/mp.csv" --json "$T/mj.json" >/dev/null 2>&1
expect_eq "merged sample: points.csv gives each point its own file, unit and temperature" \
    "$(cut -d, -f2,3,5,6 "$T/mp.csv" | tr '\n' ' ')" \
    "file,line,T_file,T_file_unit kite-a.csv,3,200,degC kite-a.csv,4,220,degC kite-a.csv,5,240,degC kite-b.csv,3,483.15,K kite-b.csv,4,503.15,K kite-b.csv,5,523.15,K kite-b.csv,6,533.15,K "
"$A" check "$T/merge" >"$T/mc" 2>/dev/null
ok_if "merged sample: check names the file of a left-out line" \
    grep -q "^  left out: line 6 of kite-b.csv, 533.1 K: no value ('n.d.') in column 'rate'$" "$T/mc"
ok_if "merged sample: the diagnosis names the file of a line (files in degC and K: K alone)" \
    grep -q "conversion 14.0 % on line 5 of kite-b.csv at 523.1 K is above the 10 % differential limit" "$T/mc"
ok_if "merged sample: the JSON's excluded entry names its file" "$PY" -c '
import json, sys
e = json.load(open(sys.argv[1]))["samples"][0]["excluded"]
sys.exit(0 if [(x["file"], x["line"]) for x in e] == [("kite-b.csv", 5), ("kite-b.csv", 6)]
         and e[1]["reason"] == "no value (\x27n.d.\x27) in column \x27rate\x27" else 1)' "$T/mj.json"
"$A" rank "$T/merge" --at 230C --json "$T/mjp.json" --json-points >/dev/null 2>&1
ok_if "merged sample: --json-points gives each point its file" "$PY" -c '
import json, sys
p = json.load(open(sys.argv[1]))["samples"][0]["points"]
sys.exit(0 if [x["file"] for x in p] == ["kite-a.csv"] * 3 + ["kite-b.csv"] * 4 else 1)' "$T/mjp.json"
"$A" report "$T/merge" --at 230C --out "$T/mr" >/dev/null 2>&1
ok_if "merged sample: the report's left-out table names the file" \
    grep -q '<td class="n">6 of kite-b.csv</td>' "$T/mr/report.html"

# --- --strict: all or nothing, the reader as before ----------------------
"$A" rank "$C" --at 250C --strict --json "$T/s.json" >"$T/out" 2>"$T/err"
expect_eq "--strict: exit status 1" "$?" 1
expect_eq "--strict: the first bad file stops the run" "$(cat "$T/err")" \
    "arrank: tests/messy/MT-A2.csv:2:2: unknown unit 'mol/(kq*h)' in column 'rate'"
ok_if "--strict: nothing on stdout" test ! -s "$T/out"
ok_if "--strict: nothing written" test ! -e "$T/s.json"

# --- --no-merge: one id, two files, is an error -------------------------
"$A" fit "$C" --no-merge >"$T/out" 2>"$T/err"
expect_eq "--no-merge: exit status 1" "$?" 1
expect_eq "--no-merge: the repeated id" "$(cat "$T/err")" \
    "arrank: tests/messy/MT-A1.csv:1: sample id 'MT-A1' is also the id of MT-A1 - Copy.csv"
ok_if "--no-merge: nothing on stdout" test ! -s "$T/out"

# --- a campaign whose every file is bad: exit 1, each file named -----------
mkdir "$T/allbad"
cp "$C/MT-A2.csv" "$C/MT-B2.csv" "$T/allbad/"
"$A" fit "$T/allbad" --json "$T/a.json" >"$T/out" 2>"$T/err"
expect_eq "all files bad: exit status 1" "$?" 1
expect_eq "all files bad: each file, the summary, then why the run stops" "$(sed "s|$T|T|g" "$T/err")" \
"arrank: T/allbad/MT-A2.csv:2:2: unknown unit 'mol/(kq*h)' in column 'rate'; file not used
arrank: T/allbad/MT-B2.csv:2:2: brackets do not pair up in unit 'mol/(kg*h))' of column 'rate'; file not used
arrank: 2 of 2 files not used; see above
arrank: no sample in 'T/allbad' could be fitted"
ok_if "all files bad: nothing written" test ! -e "$T/a.json"

# --- metadata errors carry their line (issue 18) ---------------------------
meta_case() { # META WANT: one derived-rate file with META on line 5, read with --strict
    rm -rf "$T/meta"
    mkdir "$T/meta"
    printf '# sample = MT-H1\n# feed_flow = 50 mL/min\n# feed_fraction = 5 %%\n# mass = 50 mg\n%s\nT [degC],conversion [%%]\n220,1.0\n240,2.0\n260,4.0\n' \
        "$1" >"$T/meta/MT-H1.csv"
    "$A" fit --strict "$T/meta" >/dev/null 2>"$T/err"
    expect_eq "metadata '$1': refused at its line" "$(sed "s|$T/meta/||" "$T/err")" "arrank: MT-H1.csv:5: $2"
}
meta_case "# mass = 0 mg" "mass '0 mg' is not positive; rates from conversion need a positive value"
meta_case "# feed_flow = 0 mL/min" \
    "feed_flow '0 mL/min' is not positive; rates from conversion need a positive value"
meta_case "# feed_fraction = 0" \
    "feed_fraction '0' is not positive; rates from conversion need a positive value"
meta_case "# feed_flow = 50 furlongs" \
    "feed_flow '50 furlongs' is neither an amount nor a volume per time (e.g. 2.5 umol/s or 50 mL/min)"
# once garbled ('...bsolute zero'): the message was formatted into itself
meta_case "# flow_reference_temperature = 0 K" \
    "flow_reference_temperature '0 K': temperature '0 K' is at or below absolute zero"

expect_eq "the campaign folder is untouched" "$(cd "$C" && ls -la | md5sum; cat ./* | md5sum)" \
    "$sums_before"
tap_plan
