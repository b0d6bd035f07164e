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
pct Pd 5% %s%n%x %d 100%%
enh a^2_{x} & @y µ-Ni/Al₂O₃ "q" 'it'
EOF
# A newline is possible in a file name: the sample id is then the file stem.
nl_file=$(printf '%s/nl\nline two.csv' "$C")
awk 'BEGIN { print "T [degC], rate [umol/(g*s)]";
             for (t = 210; t <= 270; t += 12)
        printf "%d, %.6g\n", t, exp(-6000 / (t + 273.15) + 11) }' >"$nl_file"
count=$(ls "$C" | grep -c .)
expect_eq "hostile campaign has its files" "$count" 13

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
expect_eq "hostile: one diagnostics figure per sample" "$ndiag" 12
ok_if "hostile: no temporary figure left" sh -c "! ls -a '$T/out' | grep -q '\\.tmp\$'"
ok_if "hostile: no private figure folder left" sh -c "! ls -a '$T/out' | grep -q 'arrank-'"
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
    print("ok" if "Diagnostics of " + n in diag else "MISSING", "diagnostics", repr(n))
    print("ok" if H.escape(n, quote=True).replace("&#x27;", "&#39;") in html else "MISSING",
          "report", repr(n))
PY
"$PY" "$T/names.py" "$T/out" "$C" >"$T/names.txt" 2>&1
total=$(grep -c . "$T/names.txt")
missing=$(grep -vc '^ok ' "$T/names.txt")
expect_eq "hostile: all 12 names x 5 places checked" "$total" 60
expect_eq "hostile: every name drawn literally in every SVG and the report" "$missing" 0
grep -v '^ok ' "$T/names.txt" | sed 's/^/# /'
ok_if "hostile: report has no unescaped <b> from a name" \
    sh -c "! grep -q 'Pt_1 & <b>' '$T/out/report.html'"

# ---- degenerate data that arrank fits ------------------------------------
# Points 1e-7 K apart (fitted, narrow_range: their rate at T overflows), rates
# near 1e300 whose interval goes past the largest double, and a plain sample.
# gnuplot once refused the first ("empty x range") and read the second's
# widened axis as the variable "inf"; the '%' in an id was read as a format in
# the rate figure's tic labels.  Every figure must now be drawn.
G="$T/degenerate"
mkdir -p "$G"
{ echo '# sample = narrow %s%n 5%'; echo 'T [degC],rate [umol/(g*s)]'
  awk 'BEGIN { for (k = 0; k < 6; k++)
      printf "%.10f,%.6g\n", 250 + k * 1e-7, 1.5 * (1 + 0.02 * sin(3 * k)) }'; } >"$G/narrow.csv"
{ echo '# sample = huge ^_&@'; echo 'T [degC],rate [umol/(g*s)]'
  awk 'BEGIN { for (k = 0; k < 12; k++)
      printf "%d,%.6g\n", 250 + 10 * k, 10 ^ (250 + 57 * (0.5 + 0.5 * sin(7 * k))) }'; } \
    >"$G/huge.csv"
{ echo '# sample = plain'; echo 'T [degC],rate [umol/(g*s)]'
  awk 'BEGIN { for (k = 0; k < 6; k++) { t = 250 + 10 * k
      printf "%d,%.6g\n", t, exp(20 - 10000 / (t + 273.15)) * (1 + 0.03 * sin(5 * k)) } }'; } \
    >"$G/plain.csv"
"$A" rank "$G" --at 300C >"$T/deg.check" 2>&1
ok_if "degenerate: the 1e-7 K sample is fitted, flagged narrow_range" \
    grep -q 'narrow_range' "$T/deg.check"
"$A" plot "$G" --at 300C --out "$T/deg" >"$T/deg.out" 2>"$T/deg.err"; st=$?
expect_eq "degenerate: plot exit 0" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/deg.err"
listed=0 there=0
while IFS= read -r f; do
    listed=$((listed + 1))
    [ -s "$f" ] && there=$((there + 1))
done <"$T/deg.out"
expect_eq "degenerate: every file listed (3 results, 3 figures, 3 diagnostics)" "$listed" 9
expect_eq "degenerate: every file listed is written" "$there" "$listed"
"$A" report "$G" --at 300C --out "$T/deg" >/dev/null 2>"$T/deg-rep.err"; st=$?
expect_eq "degenerate: report exit 0 (with its figures)" "$st" 0
ok_if "degenerate: report has no 'without figures' note" \
    sh -c "! grep -q 'without figures' '$T/deg-rep.err'"
cat >"$T/degtext.py" <<'PY'
import glob, sys, xml.etree.ElementTree as ET
ns = "{http://www.w3.org/2000/svg}"
texts = set()
for f in glob.glob(sys.argv[1] + "/*.svg"):
    texts |= {"".join(t.itertext()).strip() for t in ET.parse(f).getroot().iter(ns + "text")}
for want in sys.argv[2:]:
    print("ok" if any(want in t for t in texts) else "MISSING " + want)
PY
"$PY" "$T/degtext.py" "$T/deg" 'narrow %s%n 5%' 'huge ^_&@' \
    'arrow at the edge: the interval goes beyond the axis' >"$T/degtext.txt"
expect_eq "degenerate: ids with % ^ _ & @ drawn as written; the clipping note shown" \
    "$(grep -vc '^ok' "$T/degtext.txt")" 0
grep -v '^ok' "$T/degtext.txt" | sed 's/^/# /'

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
ok_if "failing gnuplot: all or nothing, so no output folder at all" test ! -e "$T/fail"
ok_if "failing gnuplot: no private folder left beside it" \
    sh -c "! ls -a '$T' | grep -q arrank-"
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
"$A" plot --help >"$T/plot.help" 2>&1
"$A" report --help >"$T/report.help" 2>&1
ok_if "plot --help documents exit statuses 4 and 5" \
    sh -c "grep -q '5 gnuplot not found' '$T/plot.help' &&
           grep -q '4 gnuplot failed' '$T/plot.help'"
ok_if "report --help documents exit statuses 4 and 5" \
    sh -c "grep -q '4 gnuplot failed on a figure' '$T/report.help' &&
           grep -q '5 gnuplot not found' '$T/report.help'"

# ---- diagnostics figure ----------------------------------------------------
# The demo's diagnoses, read from `arrank check` (diagnose.c's own words), say
# what each figure must show: ZN-12 bends (pore diffusion, points left out),
# ZN-13 has two runs, ZN-14 has points above the conversion limit, ZN-01 is
# clean.  The figure is read with an XML parser: the kinetic window is a
# polygon in the window grey rgb(228, 228, 228) taller than a key swatch (one
# on each of the three panels), and no key text may be anchored inside a
# data area (the plot areas' own fill rgb(252, 252, 253), plot_style.h): the
# key sits beside the panels, so it cannot cover points.
"$A" check "$DEMO" >"$T/check.txt" 2>/dev/null
ok_if "demo check: ZN-12 is diagnosed with pore diffusion" \
    grep -q 'likely cause: pore diffusion' "$T/check.txt"
"$A" plot "$DEMO" --out "$T/diag" >/dev/null 2>&1
"$A" plot "$DEMO" --no-diagnose --out "$T/nodiag" >/dev/null 2>&1
cat >"$T/diag.py" <<'PY'
import re, sys, xml.etree.ElementTree as ET
ns = "{http://www.w3.org/2000/svg}"
def read(path):
    root = ET.parse(path).getroot()
    texts = []  # (text, x, y) of every <text>, from the enclosing translate()
    def walk(el, x, y):
        m = re.search(r"translate\(([-\d.]+),([-\d.]+)\)", el.get("transform", ""))
        if m:
            x, y = float(m.group(1)), float(m.group(2))
        if el.tag == ns + "text":
            texts.append(("".join(el.itertext()).strip(), x, y))
        for ch in el:
            walk(ch, x, y)
    walk(root, 0.0, 0.0)
    shades, areas = [], []  # tall window-grey polygons; plot areas (l, t, r, b)
    for p in root.iter(ns + "polygon"):
        fill = p.get("fill", "").replace(" ", "")
        pts = [tuple(float(c) for c in v.split(",")) for v in p.get("points").split()]
        xs, ys = [q[0] for q in pts], [q[1] for q in pts]
        if fill == "rgb(228,228,228)" and max(ys) - min(ys) > 60:
            shades.append((min(ys), max(ys)))
        if fill == "rgb(252,252,253)":
            areas.append((min(xs), min(ys), max(xs), max(ys)))
    return texts, shades, areas
path, what = sys.argv[1], sys.argv[2:]
texts, shades, areas = read(path)
words = [t for t, _, _ in texts]
for w in what:
    if w == "shades":
        print(len(shades))
    elif w == "keys-outside":
        keys = {"kinetic", "pore-diffusion-like", "film-diffusion-like", "unclassified",
                "open: left out of the fit", "in the fit"}
        inside = [t for t, x, y in texts
                  if (t in keys or "kinetic window" in t or t.startswith("run "))
                  and any(l <= x <= r and tp <= y <= b for l, tp, r, b in areas)]
        print("inside:" + "|".join(inside) if inside else "all-outside")
    elif w.startswith("has="):
        print(any(t == w[4:] for t in words))
    elif w.startswith("re="):
        print(any(re.fullmatch(w[3:], t) for t in words))
PY
d12=$(ls "$T/diag" | grep '^diagnostics-12-.*\.svg$')
set -- $("$PY" "$T/diag.py" "$T/diag/$d12" shades keys-outside has=kinetic \
    has=pore-diffusion-like has=unclassified 're=grey: kinetic window 210–270 °C' \
    'has=half Ea: strong pore diffusion' 'has=open: left out of the fit')
expect_eq "ZN-12 diagnostics: kinetic window shaded on all three panels" "${1:-}" 3
expect_eq "ZN-12 diagnostics: no key inside a data area" "${2:-}" all-outside
expect_eq "ZN-12 diagnostics: key names the kinetic regime" "${3:-}" True
expect_eq "ZN-12 diagnostics: key names pore-diffusion-like points" "${4:-}" True
expect_eq "ZN-12 diagnostics: key names unclassified points" "${5:-}" True
expect_eq "ZN-12 diagnostics: key gives the window in degC (check says 483.2-543.5 K)" \
    "${6:-}" True
expect_eq "ZN-12 diagnostics: half-Ea line of strong pore diffusion" "${7:-}" True
expect_eq "ZN-12 diagnostics: open markers explained" "${8:-}" True
ok_if "ZN-12 check: window 210.1-270.4 degC (483.2-543.5 K), the figure's 210-270 degC" \
    grep -q 'kinetic window, 7 points at 210.1-270.4 degC (483.2-543.5 K)' "$T/check.txt"
d01=$(ls "$T/diag" | grep '^diagnostics-01-.*\.svg$')
set -- $("$PY" "$T/diag.py" "$T/diag/$d01" shades has=kinetic has=pore-diffusion-like \
    'has=open: left out of the fit')
expect_eq "ZN-01 (clean): window shaded on all three panels" "${1:-}" 3
expect_eq "ZN-01 (clean): kinetic points in the key" "${2:-}" True
expect_eq "ZN-01 (clean): no pore-diffusion-like entry" "${3:-}" False
expect_eq "ZN-01 (clean): nothing left out, no open-marker entry" "${4:-}" False
d13=$(ls "$T/diag" | grep '^diagnostics-13-.*\.svg$')
set -- $("$PY" "$T/diag.py" "$T/diag/$d13" "has=run heat" "has=run cool" keys-outside)
expect_eq "ZN-13 (deactivation): heating run drawn and named" "${1:-}" True
expect_eq "ZN-13 (deactivation): cooling run drawn and named" "${2:-}" True
expect_eq "ZN-13: no key inside a data area" "${3:-}" all-outside
d14=$(ls "$T/diag" | grep '^diagnostics-14-.*\.svg$')
set -- $("$PY" "$T/diag.py" "$T/diag/$d14" 'has=conversion above 10 %' \
    'has=open: left out of the fit')
expect_eq "ZN-14 (over-conversion): high-conversion mark in the key" "${1:-}" True
expect_eq "ZN-14 (over-conversion): points left out shown open" "${2:-}" True
set -- $("$PY" "$T/diag.py" "$T/nodiag/$d12" shades has=kinetic \
    'has=local apparent Ea not shown: diagnostics turned off')
expect_eq "--no-diagnose: no kinetic window shaded" "${1:-}" 0
expect_eq "--no-diagnose: no regime key" "${2:-}" False
expect_eq "--no-diagnose: the local-Ea panel says why it is empty" "${3:-}" True

# Every figure carries the caution (issue: cautions wherever results go).
"$A" plot "$DEMO" --at 270C --out "$T/caution" >/dev/null 2>&1
n_svg=$(ls "$T/caution"/*.svg | wc -l)
n_caution=$(grep -l 'not for reactor design, scale-up or safety limits' "$T/caution"/*.svg | wc -l)
ok_if "every figure carries the caution line ($n_caution of $n_svg)" test "$n_svg" -gt 3 -a "$n_caution" -eq "$n_svg"

# The figures say how far a rate is extrapolated, as the table does.
"$A" plot "$DEMO" --at 300C --out "$T/far" >/dev/null 2>&1
ok_if "rate-at-T at 300 degC: ZN-07's extrapolation in kelvin (0.2 K)" \
    grep -q 'extrapolated 0.2 K' "$T/far/rate-at-T.svg"

# ---- which samples, what size (issue 15) ------------------------------------
# --show: the top N by the ranking key (rank order from `arrank rank --json`),
# N+flagged, or ids; the rest named in a caption line.  Texts are read with an
# XML parser.
cat >"$T/shown.py" <<'PY'
import json, sys, xml.etree.ElementTree as ET
ns = "{http://www.w3.org/2000/svg}"
svg, res = sys.argv[1], json.load(open(sys.argv[2]))["samples"]
texts = ["".join(t.itertext()).strip() for t in ET.parse(svg).getroot().iter(ns + "text")]
ids = [s["id"] for s in res]
print(" ".join(sorted(i.split()[0] for i in ids if i in texts)) or "none")
print(sum(t.startswith("not drawn here") for t in texts))
PY
"$A" rank "$DEMO" --at 270C --json "$T/rank.json" >/dev/null 2>&1
top3=$("$PY" -c "import json,sys; s=json.load(open(sys.argv[1]))['samples']
print(' '.join(sorted(x['id'].split()[0] for x in s if x.get('rank') and x['rank'] <= 3)))" "$T/rank.json")
"$A" plot "$DEMO" --at 270C --show 3 --out "$T/show3" >/dev/null 2>&1
set -- $("$PY" "$T/shown.py" "$T/show3/arrhenius.svg" "$T/rank.json" | tr '\n' '|' | tr ' ' '_' | tr '|' ' ')
expect_eq "--show 3: the Arrhenius plot names the top 3 of the ranking ($top3)" "${1:-}" \
    "$(echo "$top3" | tr ' ' '_')"
expect_eq "--show 3: one caption line names the samples not drawn" "${2:-}" 1
"$A" plot "$DEMO" --at 270C --show 'ZN-04 mordenite,ZN-12 beta extrudate' --out "$T/showid" \
    >/dev/null 2>&1
set -- $("$PY" "$T/shown.py" "$T/showid/rate-at-T.svg" "$T/rank.json" | tr '\n' '|' | tr ' ' '_' | tr '|' ' ')
expect_eq "--show ID,ID: the rate figure has exactly those rows" "${1:-}" "ZN-04_ZN-12"
"$A" plot "$DEMO" --at 270C --show 2+flagged --out "$T/showfl" >/dev/null 2>&1
nfl=$("$PY" -c "import json,sys; s=json.load(open(sys.argv[1]))['samples']
print(len({x['id'] for x in s if (x.get('rank') and x['rank'] <= 2) or (x['flags'] and x['error'] is None)}))" "$T/rank.json")
"$PY" "$T/shown.py" "$T/showfl/ea-lnA.svg" "$T/rank.json" >"$T/showfl.txt"
set -- $(sed -n 1p "$T/showfl.txt")
expect_eq "--show 2+flagged: the top 2 and every flagged fitted sample ($nfl)" "$#" "$nfl"
"$A" plot "$DEMO" --at 270C --show 'nosuch sample' --out "$T/shownone" >/dev/null 2>"$T/shownone.err"
expect_eq "--show with an unknown id: exit 2" "$?" 2
ok_if "--show with an unknown id: named in one line" grep -q "^arrank: --show: no sample 'nosuch sample' in the campaign$" "$T/shownone.err"
ok_if "--show with an unknown id: nothing written" test ! -e "$T/shownone"
"$A" plot "$DEMO" --at 270C --size slide --format svg --format png --out "$T/slide" >/dev/null 2>&1
ok_if "--size slide: SVG 1280 px wide" grep -q 'width="1280" height="720"' "$T/slide/arrhenius.svg"
# PNG IHDR width and height (PNG spec, W3C REC-PNG sec. 11.2.2): twice the SVG
png_wh=$("$PY" -c "import struct,sys; d=open(sys.argv[1],'rb').read(24); print(*struct.unpack('>II', d[16:24]))" "$T/slide/arrhenius.png")
expect_eq "--size slide: PNG 2560 x 1440 px" "$png_wh" "2560 1440"
# The PNG keeps the SVG's proportions of text to canvas (its font sizes in
# pt, which pango renders at 96 dpi): the demo's end names stay inside the
# canvas (at 4/3 of the size the longest ran off the right edge).  Dark
# pixels within 6 px of the left, right, top and bottom edges:
"$A" plot "$DEMO" --at 270C --format png --out "$T/png" >/dev/null 2>&1
for fig in arrhenius rate-at-T; do
    expect_eq "PNG $fig: nothing drawn on its edges" \
        "$("$PY" tests/png_margin.py "$T/png/$fig.png")" "0 0 0 0"
done
# Ids in Chinese, Japanese and Korean, 17 to 20 characters: each character
# is as wide as about two Latin ones, and the figures make room for them so
# (the end labels go below when too wide, the id column widens); the build
# that counted one per character ran them 118 to 177 dark pixels off an edge.
# deps.sh --test installs a font with them (fonts-wqy-microhei).
mkdir "$T/cjk"
cp "$DEMO/campaign.ini" "$DEMO/ZN-01.csv" "$DEMO/ZN-02.csv" "$DEMO/ZN-06.csv" "$T/cjk/"
sed -i "s|^# sample = .*|# sample = 镍负载β沸石催化剂第二批次还原后钝化样品|" "$T/cjk/ZN-01.csv"
sed -i "s|^# sample = .*|# sample = ニッケル担持ゼオライト触媒還元後試料|" "$T/cjk/ZN-02.csv"
sed -i "s|^# sample = .*|# sample = 니켈 담지 제올라이트 촉매 환원 후 시료|" "$T/cjk/ZN-06.csv"
ok_if "a font with CJK characters is installed (deps.sh --test)" \
    sh -c "fc-list :lang=zh | grep -q ."
"$A" plot "$T/cjk" --at 270C --format png --out "$T/cjk-png" >/dev/null 2>&1
for fig in arrhenius rate-at-T ea-lnA; do
    expect_eq "PNG $fig with CJK ids: nothing drawn on its edges" \
        "$("$PY" tests/png_margin.py "$T/cjk-png/$fig.png")" "0 0 0 0"
done
"$A" plot "$DEMO" --at 270C --size 700x500 --out "$T/wxh" >/dev/null 2>&1
ok_if "--size 700x500: SVG 700 px wide" grep -q 'width="700" height="500"' "$T/wxh/ea-lnA.svg"
"$A" plot "$DEMO" --at 270C --size huge --out "$T/huge" >/dev/null 2>"$T/huge.err"
expect_eq "--size huge: exit 2" "$?" 2
ok_if "--size huge: says what is known" grep -q "^arrank: --size 'huge' is not known; use slide, page, square or WxH" "$T/huge.err"
# --size for every figure a command draws: compare's paired figure, plan's
# figure and check's per-sample figures, on the canvas asked for; a size not
# known is a usage error before anything is read (the folder does not exist)
"$A" compare "$DEMO" campaigns/zeolite-ni-batch2 --at 270C --size slide --out "$T/cmp-slide" \
    >/dev/null 2>&1
ok_if "compare --size slide: compare.svg 1280 x 720" \
    grep -q 'width="1280" height="720"' "$T/cmp-slide/compare.svg"
"$A" plan "$DEMO" --max-temperature 300C --budget 24 --size square --out "$T/plan-sq" \
    >/dev/null 2>&1
ok_if "plan --size square: plan.svg 900 x 900" \
    grep -q 'width="900" height="900"' "$T/plan-sq/plan.svg"
"$A" check "$DEMO" --size 700x500 --out "$T/check-wxh" >/dev/null 2>&1
ok_if "check --out --size 700x500: its figures 700 px wide" \
    grep -q 'width="700" ' "$T/check-wxh/diagnostics-01-ZN-01_H-beta.svg"
for cmd in "compare $T/none-a $T/none-b" "plan $T/none" "check $T/none"; do
    # shellcheck disable=SC2086
    "$A" $cmd --size huge >/dev/null 2>"$T/huge.err"
    expect_eq "${cmd%% *} --size huge: exit 2" "$?" 2
    ok_if "${cmd%% *} --size huge: the size named, not the missing folder" \
        grep -q "^arrank: --size 'huge' is not known" "$T/huge.err"
done

# A rate at T below the axis floor (1e-300) on its own: the axis stays
# positive and finite (the pipeline fuzzer found x_hi = 0 from lo * hi
# underflowing).
mkdir -p "$T/tiny"
printf '[campaign]\nrate_unit = umol/(g*s)\n' >"$T/tiny/campaign.ini"
printf '# sample = tiny\nT [degC],rate [umol/(g*s)]\n200,1.0e-303\n220,2.1e-303\n240,4.0e-303\n260,7.9e-303\n' >"$T/tiny/a.csv"
"$A" plot "$T/tiny" --at 272C --out "$T/tiny-out" >/dev/null 2>"$T/tiny.err"
expect_eq "a rate near 1e-303 alone: plot exit 0 (axis positive and finite)" "$?" 0

# P(best) beside a row only where it is 0.01 or more: as many notes as the
# JSON has samples at or above 0.01, none below.
"$A" plot "$DEMO" --at 270C --out "$T/pbest" >/dev/null 2>&1
want_pb=$("$PY" -c "import json,sys; s=json.load(open(sys.argv[1]))['samples']
print(sum(1 for x in s if x.get('p_best') is not None and x['p_best'] >= 0.01))" "$T/rank.json")
expect_eq "rate figure: P(best) printed for the $want_pb samples at 0.01 or more" \
    "$(grep -o '>P(best) [0-9.]*' "$T/pbest/rate-at-T.svg" | grep -c .)" "$want_pb"
ok_if "rate figure: no 'P(best) < 0.01' and no 0.00" \
    sh -c "! grep -q 'P(best) &lt;\|P(best) <\|P(best) 0.00' '$T/pbest/rate-at-T.svg'"

tap_plan
