#!/bin/sh
# check_diagnose.sh - `arrank check` on the demo campaign, whose flawed
# samples are made by src/tools/gen_demo.c (transport, deactivation, high
# conversion), and the diagnostics options of fit and rank.  Prints TAP.
# Env: ARRANK (program), BUILD (build folder).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
DEMO=campaigns/zeolite-ni-screen

"$A" --help >"$T/out" 2>&1
ok_if "--help lists check with one line" grep -q '^  check  *[a-z]' "$T/out"
"$A" check --help >"$T/out"; st=$?
expect_eq "check --help exits 0" "$st" 0
ok_if "check --help documents --conversion-limit" grep -q -- '--conversion-limit' "$T/out"

"$A" check "$DEMO" >"$T/out" 2>"$T/err"; st=$?
expect_eq "check on the demo exits 0 although it finds problems" "$st" 0
ok_if "check: nothing on stderr" test ! -s "$T/err"
ok_if "check: transport sample bends concave-down" \
    grep -q "bends concave-down" "$T/out"
ok_if "check: pore diffusion named as a likely cause" \
    grep -q "likely cause: pore diffusion" "$T/out"
ok_if "check: Weisz-Prater number above its limit" \
    grep -q "Weisz-Prater number .* is above" "$T/out"
ok_if "check: points left out with their reason" \
    grep -q "left out: line .*pore-limited point" "$T/out"
# ZN-12.csv line 22 reads "320.9,9.279" under "T [degC]": the row as the
# file wrote it, kelvin beside it (320.9 + 273.15 = 594.05 K)
ok_if "check: a left-out point's temperature as its file wrote it, K beside it" \
    grep -q "left out: line 22, 320.9 degC (594.0 K): pore-limited point" "$T/out"
# ZN-05.csv is written in K ("T [K]"): its cooling points, left out by --run
"$A" check "$DEMO" --run heat >"$T/run" 2>/dev/null
ok_if "check: a file in kelvin gives the temperature once" \
    grep -q "left out: line 15, 613.1 K: run 'cool', not 'heat'" "$T/run"
ok_if "check: deactivation between heating and cooling ramps" \
    grep -q "run 'cool' is .* below 'heat'.*(deactivation)" "$T/out"
ok_if "check: conversion above the 10 % limit" \
    grep -q "conversion .* above the 10 % differential limit" "$T/out"
ok_if "check: the unfittable sample is listed with its reason" \
    grep -q "ZN-11 ITQ-2 (ZN-11.csv): not fitted: only 2 data points" "$T/out"
ok_if "check: clean samples say 'not detected', never 'absent'" \
    sh -c "grep -q 'curvature not detected' '$T/out' && ! grep -qi 'absent' '$T/out'"

# a stricter conversion limit finds more points; --use-all keeps every point
n10=$(grep -c "above the 10 % differential limit: the rate" "$T/out")
"$A" check "$DEMO" --conversion-limit 5% >"$T/out5" 2>&1
n5=$(grep -c "above the 5 % differential limit: the rate" "$T/out5")
ok_if "check --conversion-limit 5%: more points flagged ($n5 > $n10)" test "$n5" -gt "$n10"
"$A" check "$DEMO" --use-all >"$T/all" 2>&1; st=$?
expect_eq "check --use-all exits 0" "$st" 0
ok_if "check --use-all: no point left out" sh -c "! grep -q 'left out:' '$T/all'"
"$A" check "$DEMO" --no-diagnose >/dev/null 2>"$T/err"; st=$?
expect_eq "check --no-diagnose: usage status 2" "$st" 2

# fit and rank take the same flags and use the kinetic window (the per-point
# detail and the whole diagnosis are in the JSON with --json-points)
"$A" rank "$DEMO" --json "$T/r.json" --json-points >/dev/null 2>&1; st=$?
expect_eq "rank with diagnostics exits 0" "$st" 0
"$A" rank "$DEMO" --use-all --json "$T/a.json" >/dev/null 2>&1
"$A" fit "$DEMO" --drop-outliers --conversion-limit 0.05 >/dev/null 2>&1; st=$?
expect_eq "fit accepts --drop-outliers and --conversion-limit" "$st" 0
/usr/bin/python3 - "$T/r.json" "$T/a.json" >"$T/py" <<'PY'
import json, sys
r, a = (json.load(open(p)) for p in sys.argv[1:])
s = {x["id"]: x for x in r["samples"]}
u = {x["id"]: x for x in a["samples"]}
t = s["ZN-12 beta extrudate"]
checks = [
    len(t["regime"]) == t["n_points"],
    t["regime"][0] == "kinetic" and t["regime"][-1] == "pore_diffusion",
    len(t["excluded"]) == t["n_points"] - t["n_used"] > 0,
    all(set(e) == {"file", "line", "temp_K", "reason"} and e["file"] == t["file"] for e in t["excluded"]),
    t["curvature"]["verdict"] == "detected" and t["curvature"]["direction"] == "concave-down",
    t["criteria"]["weisz_prater"]["computed"] and t["criteria"]["weisz_prater"]["value"] > 0.6,
    "transport" in t["flags"] and "excluded" in t["flags"],
    u["ZN-12 beta extrudate"]["n_used"] == t["n_points"],
    u["ZN-12 beta extrudate"]["ea_kJ_mol"] < t["ea_kJ_mol"],
    s["ZN-11 ITQ-2"]["regime"] is None and s["ZN-11 ITQ-2"]["curvature"] is None,
    s["ZN-01 H-beta"]["curvature"]["verdict"] == "not detected",
    isinstance(s["ZN-13 Ni-rich Y"]["quality"]["runs"], list)
    and s["ZN-13 Ni-rich Y"]["quality"]["runs"][0]["verdict"] == "deactivation",
]
print(" ".join("1" if c else "0" for c in checks))
PY
expect_eq "JSON: regime, excluded, curvature, criteria, quality; --use-all keeps all" \
    "$(cat "$T/py")" "1 1 1 1 1 1 1 1 1 1 1 1"

# intervals at the run's level with the standard error named beside them;
# temperatures to 0.01 K, so that inside or outside a range can be seen
"$A" check "$DEMO" >"$T/plain" 2>/dev/null
ok_if "check: Ea with its 95 % interval and the standard error named" \
    grep -q '^ZN-01 H-beta (ZN-01.csv): no problem found; Ea 61.9 kJ/mol (95 % interval 59.5-64.4, standard error 1.0) on 9 points$' "$T/plain"
# fitting on the kinetic window is what the fit did, not a problem of the data
ok_if "check: the kinetic window is a note, not a problem, in the file's degC beside K" \
    grep -q '^  note: fitted on the kinetic window, 7 points at 210.1-270.4 degC (483.2-543.5 K): ' "$T/plain"
ok_if "check: ZN-12's three problems (the window not counted)" \
    grep -q '^ZN-12 beta extrudate (ZN-12.csv): 3 problems found$' "$T/plain"
# counts agree with their nouns
mkdir "$T/three"
cp "$DEMO/ZN-01.csv" "$DEMO/ZN-02.csv" "$DEMO/ZN-13.csv" "$T/three/"
"$A" check "$T/three" >"$T/three.out" 2>/dev/null
ok_if "check: '1 of 3 samples has problems'" \
    grep -qx '1 of 3 samples has problems or could not be fitted' "$T/three.out"
ok_if "check: '1 problem found'" grep -q '(ZN-13.csv): 1 problem found$' "$T/three.out"
mkdir "$T/one"
cp "$DEMO/ZN-01.csv" "$T/one/"
"$A" fit "$T/one" >"$T/one.out" 2>/dev/null
ok_if "table: 'campaign ...: 1 sample,'" grep -q "^campaign 'one': 1 sample, rates in" "$T/one.out"
"$A" check "$DEMO" --at 340C >"$T/ext" 2>/dev/null
ok_if "check: an operating temperature against the range to 0.01 K (a degC file: degC beside K)" \
    grep -q 'measured range: 340.00 degC (613.15 K) against 230.00-310.20 degC (503.15-583.35 K) measured (29.80 K outside, 37 % of the span)' "$T/ext"
ok_if "check: the same for a file in K: K alone" \
    grep -q 'measured range: 613.15 K against 512.90-593.00 K measured (20.15 K outside, 25 % of the span)' "$T/ext"
# The local Ea windows carry their interval at the run's level: Ea -/+ t se
# with t on the window's n - 2 degrees of freedom (t quantile from SciPy,
# scipy.stats.t.ppf), and the figure's legend says so (no bare standard error).
"$A" rank "$DEMO" --at 270C --json "$T/loc.json" --json-points >/dev/null 2>&1
/usr/bin/python3 - "$T/loc.json" >"$T/loc.py" <<'PY'
import json, sys
from scipy.stats import t
d = json.load(open(sys.argv[1]))
n = bad = 0
for s in d["samples"]:
    for w in ((s.get("curvature") or {}).get("local_ea") or []):
        if w["ea_kJ_mol_se"] is None or w["n_points"] < 3:
            continue
        q = t.ppf(0.975, w["n_points"] - 2)
        lo, hi = w["ea_kJ_mol_ci"]
        n += 1
        if abs(lo - (w["ea_kJ_mol"] - q * w["ea_kJ_mol_se"])) > 1e-9 * abs(lo) + 1e-9 or \
           abs(hi - (w["ea_kJ_mol"] + q * w["ea_kJ_mol_se"])) > 1e-9 * abs(hi) + 1e-9:
            bad += 1
print(n > 20, bad)
PY
expect_eq "local Ea windows: 95 % intervals with t on n - 2 dof (SciPy)" "$(cat "$T/loc.py")" "True 0"
"$A" plot "$DEMO" --at 270C --out "$T/locfig" >/dev/null 2>&1
ok_if "diagnostics figure: the local Ea bars are the 95 % interval, no bare SE" \
    sh -c "grep -q 'local Ea, 3 temperatures, 95 % interval' '$T/locfig/diagnostics-12-ZN-12_beta_extrudate.svg' && ! grep -q '1 SE' '$T/locfig/diagnostics-12-ZN-12_beta_extrudate.svg'"

tap_plan
