#!/bin/sh
# check_plot.sh - `arrank plot` and `arrank report` against hostile sample
# names, a missing gnuplot and a failing gnuplot.  Prints TAP.
# Env: ARRANK (program), BUILD (build folder).
#
# The hostile names test DESIGN "Plotting": gnuplot 5.4 runs backquotes inside
# double-quoted strings, `!` and system() run shell commands, and a name could
# try to close a quoted string or a data block.  Every attack here tries to
# create a marker file; none may appear, and every name must be drawn
# literally.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
case $A in /*) ;; *) A=$(pwd)/$A ;; esac
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
DEMO=campaigns/zeolite-ni-screen

# ---- hostile names ---------------------------------------------------------
C="$T/hostile"
mkdir -p "$C"
# name|file: one sample per line; names are set with '# sample = NAME'.
i=0
while IFS= read -r name; do
    i=$((i + 1))
    # Invented rates: ln r = a - E/(R T) with E from 55 to 95 kJ/mol.
    {
        printf '# sample = %s\n' "$name"
        echo 'T [degC], rate [umol/(g*s)]'
        for t in 210 222 234 246 258 270; do
            awk -v t="$t" -v i="$i" 'BEGIN {
                e = 55000 + 5000 * i; tk = t + 273.15
                r = exp(0.35 * i + 0.9 - e / 8.314462618 * (1 / tk - 1 / 513.15))
                r *= 1 + 0.03 * sin(7 * t + i)
                printf "%s, %.6g\n", t, r }'
        done
    } >"$C/s$i.csv"
done <<'EOF'
bt `touch BT_MARKER` x
dq "in quotes" `touch DQ_MARKER`
sq it's 'quoted' ''x
sys system("touch SYS_MARKER")
bang '; !touch BANG_MARKER; '
kw set output 'k'; plot sin(x); reset; exit
at @GPVAL_PWD $pue1 EOD
xml Pt_1 & <b>bold</b> &amp;
back\slash\
EOF
# A newline is possible in a file name: the sample id is then the file stem.
nl_file=$(printf '%s/nl\nline two.csv' "$C")
awk 'BEGIN { print "T [degC], rate [umol/(g*s)]";
             for (t = 210; t <= 270; t += 12) printf "%d, %.6g\n", t, exp(-6000 / (t + 273.15) + 11) }' \
    >"$nl_file"
count=$(ls "$C" | grep -c .)
expect_eq "hostile campaign has its files" "$count" 11

W="$T/work"
mkdir -p "$W"
(cd "$W" && "$A" plot "$C" --at 250C --out "$T/out" --format svg --format png --format pdf \
    >"$T/plot.out" 2>"$T/plot.err"); st=$?
expect_eq "plot with hostile names: exit 0" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/plot.err"
(cd "$W" && "$A" report "$C" --at 250C --out "$T/out" >"$T/rep.out" 2>"$T/rep.err"); st=$?
expect_eq "report with hostile names: exit 0" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/rep.err"

markers=$(find "$T" . -maxdepth 3 \( -name '*MARKER' -o -name x -o -name k \) 2>/dev/null |
    grep -v '^./build' | tr '\n' ' ')
expect_eq "no marker file created (temp folder, working folder, cwd)" "$markers" ""
# Control: the same attack, unquoted the way DESIGN warns of, does run in this
# gnuplot, so the absence of markers above means something.
if command -v gnuplot >/dev/null 2>&1; then
    (cd "$W" && printf 'print "`touch CONTROL_MARKER`"\n' | gnuplot >/dev/null 2>&1)
    ok_if "control: a backquote in a double-quoted gnuplot string runs" test -f "$W/CONTROL_MARKER"
    rm -f "$W/CONTROL_MARKER"
fi
for kind in arrhenius rate-at-T ea-lnA; do
    for ext in svg png pdf; do
        ok_if "hostile: $kind.$ext written" test -s "$T/out/$kind.$ext"
    done
done
ndiag=$(ls "$T/out" | grep -c '^diagnostics-.*\.svg$')
expect_eq "hostile: one diagnostics figure per sample" "$ndiag" 10
ok_if "hostile: no temporary figure left" sh -c "! ls -a '$T/out' | grep -q '\\.tmp\$'"
ok_if "hostile: report.html written" test -s "$T/out/report.html"

# Every name, control characters removed, must be the text of some SVG <text>
# element, read with an XML parser (so SVG escaping is undone and checked).
cat >"$T/names.py" <<'PY'
import glob, re, sys, xml.etree.ElementTree as ET
out, campaign = sys.argv[1], sys.argv[2]
names = []
for p in sorted(glob.glob(campaign + "/*.csv")):
    raw = open(p, encoding="utf-8").read().splitlines()
    meta = [l for l in raw if l.startswith("# sample = ")]
    if meta:
        names.append(meta[0][len("# sample = "):].strip())
    else:
        stem = p.rsplit("/", 1)[1][:-4]
        names.append(re.sub(r"[\x00-\x1f\x7f]", "", stem))
ns = "{http://www.w3.org/2000/svg}"
texts = {}
for f in ["arrhenius.svg", "ea-lnA.svg", "rate-at-T.svg"]:
    root = ET.parse(out + "/" + f).getroot()
    texts[f] = {"".join(t.itertext()).strip() for t in root.iter(ns + "text")}
diag = set()
for f in glob.glob(out + "/diagnostics-*.svg"):
    root = ET.parse(f).getroot()
    diag |= {"".join(t.itertext()).strip() for t in root.iter(ns + "text")}
html = open(out + "/report.html", encoding="utf-8").read()
import html as H
for n in names:
    for f, ts in texts.items():
        print("ok" if n in ts else "MISSING", f, repr(n))
    print("ok" if "Diagnostics: " + n in diag else "MISSING", "diagnostics", repr(n))
    print("ok" if H.escape(n, quote=True).replace("&#x27;", "&#39;") in html else "MISSING",
          "report", repr(n))
PY
"$PY" "$T/names.py" "$T/out" "$C" >"$T/names.txt" 2>&1
total=$(grep -c . "$T/names.txt")
missing=$(grep -vc '^ok ' "$T/names.txt")
expect_eq "hostile: all 10 names x 5 places checked" "$total" 50
expect_eq "hostile: every name drawn literally in every SVG and the report" "$missing" 0
grep -v '^ok ' "$T/names.txt" | sed 's/^/# /'
ok_if "hostile: report has no unescaped <b> from a name" \
    sh -c "! grep -q 'Pt_1 & <b>' '$T/out/report.html'"

# ---- gnuplot missing -------------------------------------------------------
ARRANK_GNUPLOT=/nonexistent/gnuplot "$A" plot "$DEMO" --at 270C --out "$T/nogp" \
    >/dev/null 2>"$T/nogp.err"; st=$?
expect_eq "ARRANK_GNUPLOT=/nonexistent: exit 5" "$st" 5
ok_if "no gnuplot: says it was not found" grep -q "not found" "$T/nogp.err"
ok_if "no gnuplot: says how to install it" grep -q "apt-get install gnuplot-nox" "$T/nogp.err"
ok_if "no gnuplot: results.json still written" test -s "$T/nogp/results.json"
ok_if "no gnuplot: results.csv still written" test -s "$T/nogp/results.csv"
ok_if "no gnuplot: no figure written" sh -c "! ls '$T/nogp' | grep -q svg"
env -u ARRANK_GNUPLOT PATH=/nonexistent-bin "$A" plot "$DEMO" --at 270C --out "$T/nopath" \
    >/dev/null 2>"$T/nopath.err"; st=$?
expect_eq "PATH without gnuplot: exit 5" "$st" 5
ok_if "PATH without gnuplot: names gnuplot and PATH" grep -q "'gnuplot' not found on PATH" \
    "$T/nopath.err"
ARRANK_GNUPLOT=/nonexistent/gnuplot "$A" report "$DEMO" --at 270C --out "$T/nogp" \
    >/dev/null 2>"$T/nogprep.err"; st=$?
expect_eq "report without gnuplot: exit 5" "$st" 5
ok_if "report without gnuplot: page still written, with a note" \
    grep -q "The figures could not be drawn" "$T/nogp/report.html"

# ---- gnuplot failing -------------------------------------------------------
cat >"$T/fakegp" <<'EOF'
#!/bin/sh
cat >/dev/null
echo "fake-gnuplot: line 12: simulated failure on this figure" >&2
exit 1
EOF
chmod +x "$T/fakegp"
ARRANK_GNUPLOT="$T/fakegp" "$A" plot "$DEMO" --at 270C --out "$T/fail" >/dev/null \
    2>"$T/fail.err"; st=$?
expect_eq "failing gnuplot: exit 4" "$st" 4
ok_if "failing gnuplot: its own message is shown" \
    grep -q "fake-gnuplot: line 12: simulated failure on this figure" "$T/fail.err"
ok_if "failing gnuplot: results.json still written" test -s "$T/fail/results.json"
ok_if "failing gnuplot: no figure and no temporary left" \
    sh -c "! ls -a '$T/fail' | grep -q -e svg -e tmp"
# A real gnuplot error: a program that is gnuplot but exits on a bad command.
cat >"$T/badgp" <<'EOF'
#!/bin/sh
{ echo "this-is-not-a-command"; cat; } | gnuplot
EOF
chmod +x "$T/badgp"
ARRANK_GNUPLOT="$T/badgp" "$A" plot "$DEMO" --at 270C --out "$T/bad" >/dev/null \
    2>"$T/bad.err"; st=$?
expect_eq "gnuplot error: exit 4" "$st" 4
ok_if "gnuplot error: gnuplot's message is passed on" grep -q "invalid command" "$T/bad.err"
ok_if "gnuplot error: one line for it" test "$(grep -c 'gnuplot failed' "$T/bad.err")" -eq 1
ok_if "plot --help documents exit statuses 4 and 5" \
    sh -c "'$A' plot --help | grep -q '5 gnuplot not found' && '$A' plot --help | grep -q '4 gnuplot failed'"
ok_if "report --help documents exit statuses 4 and 5" \
    sh -c "'$A' report --help | grep -q '4 gnuplot failed on a figure' && '$A' report --help | grep -q '5 gnuplot not found'"
