#!/bin/sh
# check_cautions.sh - the cautions wherever results go (the table, check,
# JSON, CSV, the report) and how far each rate is extrapolated, on the demo
# campaign (invented data) at three operating temperatures:
#   270 degC  inside every range: the general caution only
#   300 degC  ZN-07 0.2 K above its range: flagged with the distance, not
#             far (the limit is 10 K or 20 % of the span, common practice);
#             ZN-09 (heated only to 270 degC), ZN-12 and ZN-14 far
#   320 degC  six samples more than 10 K or 20 % of their span out: named in
#             a prominent caution; ZN-06 9.9 K and ZN-01 9.8 K out: flagged
#             with the distance, not far
#   380 degC  beyond the campaign's isokinetic temperature (about 639 K, the
#             compensation judged real): the ranking may reverse
# Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
DEMO=campaigns/zeolite-ni-screen
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
GENERAL='apparent kinetics of these samples in this window; not for reactor design, scale-up or safety limits'

for at in 270C 300C 320C 380C; do
    "$A" rank "$DEMO" --at $at --json "$T/$at.json" --csv "$T/$at.csv" >"$T/$at.table" 2>/dev/null
    "$A" check "$DEMO" --at $at >"$T/$at.check" 2>/dev/null
done

# the table: the distance in the flag, the caution lines in the footer
ok_if "table: a flag says how far (0.2 K)" grep -q 'ZN-07 H-Y .*extrapolated 0.2 K$' "$T/300C.table"
ok_if "table: a flag says how far (9.9 K)" grep -q 'ZN-06 SAPO-34 .*extrapolated 9.9 K$' "$T/320C.table"
ok_if "table: the caution on apparent kinetics in the footer" grep -qx "Caution: $GENERAL." "$T/300C.table"
ok_if "table: no far-extrapolation caution inside the ranges" sh -c '! grep -q "far outside" "$1"' _ "$T/270C.table"
ok_if "table: 0.2 K out is not far, 20.1 K is" \
    grep -q '^Caution: the operating temperature 573.15 K lies far outside the measured range of 3 samples (more than 10 K or 20 % of the span): ZN-09 beta-desilicated (29.9 K, 59 % of its span), ZN-12 beta extrudate (29.6 K, 49 % of its span), ZN-14 high-load ZSM-5 (20.1 K, 41 % of its span); their rates are extrapolations and may be wrong in kind.$' "$T/300C.table"
ok_if "table: 9.9 K and 9.8 K out are not far (ZN-06, ZN-01 not named)" \
    sh -c 'grep -q "^Caution: .* lies far outside" "$1" && ! grep "^Caution: .* lies far outside" "$1" | grep -q "ZN-06\|ZN-01"' _ "$T/320C.table"
ok_if "table: the samples extrapolated far are named" \
    grep -q '^Caution: the operating temperature 593.15 K lies far outside the measured range of 6 samples (more than 10 K or 20 % of the span): ZN-03 USY (19.3 K, 24 % of its span), ' "$T/320C.table"
ok_if "table: no T_iso caution below T_iso" sh -c '! grep -q "isokinetic temperature T_iso" "$1"' _ "$T/320C.table"
ok_if "table: the ranking may reverse beyond T_iso" \
    grep -q '^Caution: the operating temperature 653.15 K lies beyond the isokinetic temperature T_iso = 638.8 K (95 % interval 604.9-676.8 K) of a compensation judged real: the ranking by rate may reverse beyond T_iso.$' "$T/380C.table"

# check: the same lines
ok_if "check: the caution on apparent kinetics" grep -qx "caution: $GENERAL" "$T/300C.check"
ok_if "check: the T_iso caution" grep -q '^caution: the operating temperature 653.15 K lies beyond the isokinetic' "$T/380C.check"

# JSON and CSV
cat >"$T/check.py" <<'PYEOF'
import csv, json, sys
d, general = sys.argv[1], sys.argv[2]
def say(ok, what):
    print(("ok " if ok else "not ok ") + what)
j = {at: json.load(open("%s/%s.json" % (d, at))) for at in ("270C", "300C", "320C", "380C")}
say(all(x["cautions"][0] == general for x in j.values()), "json: cautions, the general one first")
say(len(j["270C"]["cautions"]) == 1 and len(j["320C"]["cautions"]) == 2
    and "far outside" in j["320C"]["cautions"][1] and len(j["380C"]["cautions"]) == 3
    and "may reverse beyond T_iso" in j["380C"]["cautions"][2],
    "json: far extrapolation and T_iso cautions only where they apply")
s = {x["id"]: x for x in j["300C"]["samples"]}
say(abs(s["ZN-07 H-Y"]["extrapolation_K"] - 0.2) < 1e-9 and s["ZN-01 H-beta"]["extrapolation_K"] == 0
    and s["ZN-11 ITQ-2"]["extrapolation_K"] is None,
    "json: extrapolation_K, 0 inside the range, null without a fit")
z = s["ZN-09 beta-desilicated"]
say(abs(z["extrapolation_rel"] - z["extrapolation_K"] / (z["T_max_K"] - z["T_min_K"])) < 1e-12,
    "json: extrapolation_rel is the distance over the span")
with open("%s/300C.csv" % d, newline="") as f:
    lines = f.read().splitlines()
say(lines[0] == "# caution: " + general, "csv: the caution as the first line, a comment")
rows = {r["id"]: r for r in csv.DictReader(l for l in lines if not l.startswith("#"))}
say(abs(float(rows["ZN-07 H-Y"]["extrapolation [K]"]) - 0.2) < 1e-9
    and rows["ZN-01 H-beta"]["extrapolation_rel"] == "0" and rows["ZN-11 ITQ-2"]["extrapolation [K]"] == "",
    "csv: extrapolation [K] and extrapolation_rel at the end, read once comments are skipped")
PYEOF
"$PY" "$T/check.py" "$T" "$GENERAL" >"$T/py" 2>&1 || echo "not ok json and csv checks ran" >>"$T/py"
tap_relay "$T/py"

# the report: the cautions in its caution box
SOURCE_DATE_EPOCH=0 "$A" report "$DEMO" --at 380C --out "$T/rep" >/dev/null 2>&1
R="$T/rep/report.html"
box=$(sed -n '/<div class="caution">/,/<\/div>/p' "$R")
case $box in *"<b>Apparent kinetics of these samples in this window; not for reactor design, scale-up or safety limits.</b>"*) b=true ;; *) b=false ;; esac
ok_if "report: the general caution in the caution box" $b
case $box in *"lies far outside the measured range of 13 samples"*) b=true ;; *) b=false ;; esac
ok_if "report: the far extrapolation in the caution box" $b
case $box in *"the ranking by rate may reverse beyond T_iso"*) b=true ;; *) b=false ;; esac
ok_if "report: the T_iso caution in the caution box" $b
tap_plan
