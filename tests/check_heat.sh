#!/bin/sh
# check_heat.sh - the heat checks through the program: `arrank check` and the
# JSON on a small invented campaign whose metadata (in the files and in
# campaign.ini) give the heat criteria, and a sample run exothermic above the
# conversion limit.  The numbers are those of tests/test_transport.c (hand
# calculations from Mears 1971 and Anderson 1963 via Madon & Boudart 1982,
# tests/data/transport.md).  Prints TAP.  Env: ARRANK (program).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
C=$T/heat
mkdir "$C"

# rates 3.7 umol/(g s) at 550 K, Ea 95 kJ/mol; 6 mm pellets
pts='T [K], rate [umol/(g*s)]
500, 0.4634305388
510, 0.7254049068
520, 1.116071128
530, 1.689438747
540, 2.518398709
550, 3.7'
pellet='# particle_diameter = 6 mm
# pellet_density = 1.25 g/cm3
# effective_diffusivity = 0.002 cm2/s
# bulk_concentration = 8.2 mol/m3
# reaction_enthalpy = -120 kJ/mol'
# Anderson 0.786 > 0.75 (lambda_e 0.24), Mears 0.143 < 0.15 (h 440)
printf '# sample = Wren-1\n%s\n# pellet_conductivity = 0.24 W/(m*K)\n%s\n' "$pellet" "$pts" \
    >"$C/Wren-1.csv"
# both below their limits (lambda_e 0.26 from campaign.ini)
printf '# sample = Wren-2\n%s\n# heat_transfer_coefficient = 440 W/(m2*K)\n%s\n' "$pellet" \
    "$pts" >"$C/Wren-2.csv"
# exothermic, 20.4 % conversion at 550 K, feed described
cat >"$C/Wren-3.csv" <<'CSV'
# sample = Wren-3
# reaction_enthalpy = -120 kJ/mol
# feed_fraction = 5 %
# feed_heat_capacity = 30 J/(mol*K)
T [K], rate [umol/(g*s)], conversion [%]
500, 0.4634305388, 2.0
510, 0.7254049068, 3.1
520, 1.116071128, 4.5
530, 1.689438747, 6.4
540, 2.518398709, 14.0
550, 3.7, 20.4
CSV
cat >"$C/campaign.ini" <<'INI'
[campaign]
title = heat checks
[sample Wren-1]
heat_transfer_coefficient = 440 W/(m2*K)
[sample Wren-2]
pellet_conductivity = 0.26 W/(m*K)
INI

"$A" check "$C" >"$T/out" 2>"$T/err"; st=$?
expect_eq "check exits 0" "$st" 0
ok_if "check: nothing on stderr" test ! -s "$T/err"
ok_if "check: Anderson's number above 0.75 is a problem of Wren-1" \
    grep -q "problem: Anderson intraparticle heat number 0.786 at 550.0 K is above 0.75 (Anderson 1963" "$T/out"
ok_if "check: Mears' interphase number below 0.15 is a note" \
    grep -q "note: Mears interphase heat number 0.143 at 550.0 K is below 0.15 (Mears 1971" "$T/out"
ok_if "check: Prater's rise of Wren-1, 0.82 K" \
    grep -q "note: Prater temperature rise (Prater 1958): the pellet centre is at most 0.82 K hotter" "$T/out"
ok_if "check: the hot-spot caution names Wren-3, with the adiabatic rise of 40.8 K" \
    grep -q "problem: hot-spot caution for Wren-3: .*20.4 %.*dilute the bed.*40.8 K" "$T/out"
ok_if "check: the Mears number lists only film_coefficient as missing" \
    grep -q "note: Mears number not computed: needs film_coefficient$" "$T/out"

"$A" fit "$C" --json "$T/r.json" --json-points >"$T/table" 2>&1; st=$?
expect_eq "fit exits 0" "$st" 0
ok_if "fit: the table names the heat flag in words" \
    grep -q "heat transfer may limit" "$T/table"
/usr/bin/python3 - "$T/r.json" >"$T/py" <<'PY'
import json, sys
r = json.load(open(sys.argv[1]))
s = {x["id"]: x for x in r["samples"]}
checks = [
    ("Wren-1 has the heat flag", "heat" in s["Wren-1"]["flags"]),
    ("Wren-2 has not", "heat" not in s["Wren-2"]["flags"]),
    ("Wren-3 has not (the caution is no criterion)", "heat" not in s["Wren-3"]["flags"]),
    ("Wren-1 Anderson value 0.7861190 (hand calculation)",
     abs(s["Wren-1"]["criteria"]["intraparticle_heat"]["value"] / 0.7861190 - 1) < 1e-6),
    ("Wren-2 interphase value 0.1429307 (hand calculation)",
     abs(s["Wren-2"]["criteria"]["interphase_heat"]["value"] / 0.1429307 - 1) < 1e-6),
    ("Wren-3 hot_spot caution with 40.8 K",
     s["Wren-3"]["criteria"]["hot_spot"]["caution"] is True
     and abs(s["Wren-3"]["criteria"]["hot_spot"]["adiabatic_rise_K"] - 40.8) < 1e-9),
]
for name, good in checks:
    print(("ok - " if good else "not ok - ") + name)
PY
while IFS= read -r line; do
    case $line in
    "ok - "*) ok_if "json: ${line#ok - }" true ;;
    *) ok_if "json: ${line#not ok - }" false ;;
    esac
done <"$T/py"
ok_if "json: six checks ran" test "$(wc -l <"$T/py")" -eq 6
# the report: the heat criteria and Prater's rise in each sample's table
SOURCE_DATE_EPOCH=0 "$A" report "$C" --at 540K --out "$T/rep" >/dev/null 2>&1
R="$T/rep/report.html"
wren1=$(sed -n '/<h3 id="sample-1">/,/<\/section>/p' "$R")
has() { case $wren1 in *"$1"*) echo true ;; *) echo false ;; esac; }
ok_if "report: Wren-1's Anderson row, heat conduction inside the pellet, above its limit" \
    "$(has '<th>Anderson: heat conduction inside the pellet</th><td class="n">0.786</td><td class="n">0.75</td>')"
ok_if "report: Wren-1's Prater rise of 0.82 K" \
    "$(has '<th>Prater temperature rise inside the pellet</th><td class="n">0.82 K')"
wren2=$(sed -n '/<h3 id="sample-2">/,/<\/section>/p' "$R")
case $wren2 in *'<th>Mears: heat transfer across the gas film</th><td class="n">0.143</td><td class="n">0.15</td>'*'below the limit: negligible'*) b=true ;; *) b=false ;; esac
ok_if "report: Wren-2's Mears row, heat transfer across the gas film, below its limit" $b
tap_plan
