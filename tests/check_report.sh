#!/bin/sh
# check_report.sh - `arrank report` on the demo campaign, opened in headless
# Chromium: no console errors, a screenshot that is not blank, a PDF print,
# no network references, and the SHA-256 of the inputs.  Prints TAP.
# Env: ARRANK (program), BUILD (build folder).  Needs /usr/bin/chromium
# (Debian's chromium package) and gnuplot.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
DEMO=campaigns/zeolite-ni-screen
CHROME=/usr/bin/chromium
[ -x "$CHROME" ] || CHROME=$(command -v chromium || command -v chromium-browser || echo none)

"$A" report "$DEMO" --at 270C --out "$T/rep" >"$T/out" 2>"$T/err"; st=$?
expect_eq "report on the demo campaign: exit 0" "$st" 0
R="$T/rep/report.html"
ok_if "report.html written" test -s "$R"
ok_if "report: nothing else left in the folder" test "$(ls -A "$T/rep")" = "report.html"

# Self-contained: no URL to fetch, no script, no external stylesheet or image.
expect_eq "report: no http:// or https:// anywhere" \
    "$(grep -c -i -e 'http://' -e 'https://' "$R")" 0
expect_eq "report: no <script>, <link>, <img> or src=" \
    "$(grep -c -i -e '<script' -e '<link' -e '<img' -e ' src=' "$R")" 0
ok_if "report: print stylesheet" grep -q '@media print' "$R"
# figures are the <svg> elements the report marks as images (the sample marks
# beside names are small <svg class="swatch"> elements, hidden from readers)
nsvg=$(grep -o 'class="figure" role="img"' "$R" | grep -c .)
# the campaign's fitted samples, counted independently from the JSON
"$A" fit "$DEMO" --json "$T/fit.json" >/dev/null 2>&1
nfit=$("$PY" -c "import json, sys
print(sum(s['error'] is None for s in json.load(open(sys.argv[1]))['samples']))" "$T/fit.json")
want_svg=$((3 + nfit))
expect_eq "report: figures inline (3 + one per fitted sample)" "$nsvg" "$want_svg"
for f in "$DEMO"/ZN-01.csv "$DEMO"/ZN-11.csv "$DEMO"/campaign.ini; do
    h=$(sha256sum "$f" | cut -c1-64)
    ok_if "report: SHA-256 of $(basename "$f") matches sha256sum" grep -q "$h" "$R"
done
ok_if "report: cautions about extrapolation" \
    grep -q 'Do not extrapolate them to reactor design' "$R"
ok_if "report: thermal runaway caution" grep -q 'hot spots and can run away' "$R"
ok_if "report: flammable and toxic gases caution" grep -q 'flammable or toxic' "$R"
ok_if "report: judgement of qualified people" grep -q 'judgement of qualified people' "$R"
ok_if "report: unfitted sample explained" \
    grep -q 'Not fitted and not ranked: only 2 data points' "$R"
ok_if "report: the command line" grep -q "Command line: <code>arrank report $DEMO --at 270C" "$R"
ok_if "report: program version" grep -q "Made by arrank $("$A" --version | cut -d' ' -f2)" "$R"

# ---- diagnostics in the report --------------------------------------------
# Each sample's section against `arrank check` (diagnose.c's plain words): the
# same findings, and one row per point left out with the reason check gives.
"$A" check "$DEMO" >"$T/check.txt" 2>/dev/null
cat >"$T/sections.py" <<'PY'
import html, re, sys
page = open(sys.argv[1], encoding="utf-8").read()
check = open(sys.argv[2], encoding="utf-8").read()
sample = sys.argv[3]
sec = [s for s in page.split('<section class="sample">')[1:]
       if re.sub(r"<[^>]+>", "", s.split("</h3>")[0]).strip().startswith(sample + " ")]
blocks = re.split(r"\n(?=\S)", check)
blk = [b for b in blocks if b.startswith(sample + " ")]
if len(sec) != 1 or len(blk) != 1:
    print("missing", "no-section", "no-problems", "no-rows", "no-reasons")
    sys.exit()
text = html.unescape(re.sub(r"<[^>]+>", "", sec[0]))
problems = [l.strip()[len("problem: "):] for l in blk[0].splitlines()
            if l.strip().startswith("problem: ")]
left = [l.strip().split(": ", 2)[2] for l in blk[0].splitlines()
        if l.strip().startswith("left out: ")]
table = re.search(r'<table class="left-out">(.*?)</table>', sec[0], re.S)
rows = re.findall(r"<tr><td class=\"n\">\d+</td>.*?</tr>", table.group(1)) if table else []
reasons = [html.unescape(re.findall(r"<td>(.*?)</td>", r)[-1]) for r in rows]
print(sum(p in text for p in problems), len(problems), len(rows), len(left),
      sum(a == b for a, b in zip(reasons, left)))
PY
for s in ZN-12 ZN-13 ZN-14; do
    set -- $("$PY" "$T/sections.py" "$R" "$T/check.txt" "$s")
    ok_if "report $s: every problem check names is in its section (${1:-?} of ${2:-?})" \
        test "${1:-x}" = "${2:-y}" -a "${2:-0}" -gt 0
    expect_eq "report $s: one row per point left out (check: ${4:-?})" "${3:-}" "${4:-}"
    expect_eq "report $s: each row has check's reason" "${5:-}" "${4:-}"
done
expect_eq "check: ZN-12 has 7 points left out (the demo's pore-diffusion sample)" \
    "$(sed -n '/^ZN-12 /,/^$/p' "$T/check.txt" | grep -c 'left out: ')" 7
# intervals at the run's level, never a bare standard error; a weighted fit's
# sqrt(chi2/dof) named as such, not as a residual SD in ln r
ok_if "report: no bare +- standard error" sh -c '! grep -q "&plusmn;" "$1"' _ "$R"
ok_if "report: Ea and ln A columns with their 95 % intervals" \
    grep -q 'Ea \[kJ mol<sup>&minus;1</sup>\] (95 % interval)</th><th>ln A (95 % interval)' "$R"
ok_if "report: a weighted fit shows sqrt(chi2/dof) by that name" \
    grep -q 'weighted by rate_sd, &chi;&sup2;/dof = [0-9.e+-]*, &radic;(&chi;&sup2;/dof) = ' "$R"
ok_if "report: 'residual SD' only for unweighted fits" \
    sh -c '! grep -q "residual SD [^;]*in ln r; R&sup2; = [0-9.]*; weighted" "$1"' _ "$R"
ok_if "report: ZN-12's likely cause in words" grep -q 'likely cause: pore diffusion' "$R"
ok_if "report: pore-diffusion-like rows in ZN-12's table" \
    grep -q '<td>pore-diffusion-like</td><td>pore-limited point: hotter than the kinetic' "$R"
ok_if "report: ZN-14's high-conversion rows" \
    grep -q '<td>conversion 20.4 % above the 10 % differential limit</td>' "$R"
ok_if "report: Weisz-Prater verdict for ZN-12 (check: 8.78 above 0.6)" \
    grep -q '<th>Weisz&ndash;Prater</th><td class="n">8.78</td><td class="n">0.6</td>' "$R"
ok_if "check agrees: Weisz-Prater number 8.78 above 0.6" \
    grep -q 'Weisz-Prater number 8.78 at 339.6 degC (612.8 K) is above 0.6' "$T/check.txt"

# ---- reproducible date (reproducible-builds.org, SOURCE_DATE_EPOCH) --------
# 1700000000 s is 2023-11-14 22:13:20 UTC (GNU date -u -d @1700000000).
SOURCE_DATE_EPOCH=1700000000 "$A" report "$DEMO" --at 270C --out "$T/sde" >/dev/null 2>&1
cp "$T/sde/report.html" "$T/sde1.html"
sleep 1
SOURCE_DATE_EPOCH=1700000000 "$A" report "$DEMO" --at 270C --out "$T/sde" >/dev/null 2>&1
ok_if "SOURCE_DATE_EPOCH: the date printed is that time" \
    grep -q 'on 2023-11-14 22:13 UTC' "$T/sde1.html"
ok_if "SOURCE_DATE_EPOCH: two runs give byte-identical pages" cmp -s "$T/sde1.html" \
    "$T/sde/report.html"
SOURCE_DATE_EPOCH=17e8 "$A" report "$DEMO" --at 270C --out "$T/bad-sde" >/dev/null \
    2>"$T/bad-sde.err"; st=$?
expect_eq "SOURCE_DATE_EPOCH malformed: exit 2" "$st" 2
ok_if "SOURCE_DATE_EPOCH malformed: named in the message" grep -q "'SOURCE_DATE_EPOCH'" \
    "$T/bad-sde.err"
ok_if "SOURCE_DATE_EPOCH malformed: no report written" test ! -e "$T/bad-sde/report.html"

if [ ! -x "$CHROME" ]; then
    echo "not ok - chromium not found: install it (apt-get install chromium)"
    exit 0
fi

chrome() {
    # A fresh profile per run; everything that could reach the network is off.
    profile="$T/profile-$1"
    shift
    timeout 120 "$CHROME" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --user-data-dir="$profile" --enable-logging=stderr --v=0 "$@"
}
# Control: a page with a console error is seen as one, so the check can fail.
printf '%s%s\n' '<!DOCTYPE html><html><body><p>x</p>' \
    '<script>console.error("arrank-control-error")</script></body></html>' >"$T/control.html"
chrome c --dump-dom "file://$T/control.html" >/dev/null 2>"$T/control.err"
ok_if "control: a console error shows in Chromium's log" grep -q 'CONSOLE.*arrank-control-error' \
    "$T/control.err"

chrome d --dump-dom "file://$R" >"$T/dom.html" 2>"$T/dom.err"
expect_eq "Chromium: no console messages from the report" "$(grep -c 'CONSOLE' "$T/dom.err")" 0
grep 'CONSOLE' "$T/dom.err" | head -5 | sed 's/^/# /'
ok_if "Chromium: DOM has the ranking table" grep -q '<h2>Ranking</h2>' "$T/dom.html"
expect_eq "Chromium: DOM has every figure" "$(grep -o 'class="figure" role="img"' "$T/dom.html" | grep -c .)" "$want_svg"

chrome s --window-size=1280,2400 --screenshot="$T/shot.png" "file://$R" >/dev/null 2>"$T/shot.err"
ok_if "Chromium: screenshot written" test -s "$T/shot.png"
# PNG decoded with the standard library only (zlib + struct; PNG spec, W3C
# REC-PNG sec. 9 filters): count distinct colours and the share of pixels that
# are not white.  A blank page has one colour.
cat >"$T/png.py" <<'PY'
import struct, sys, zlib
data = open(sys.argv[1], "rb").read()
assert data[:8] == b"\x89PNG\r\n\x1a\n"
pos, idat, w = 8, b"", 0
while pos < len(data):
    n, kind = struct.unpack(">I4s", data[pos:pos + 8])
    body = data[pos + 8:pos + 8 + n]
    if kind == b"IHDR":
        w, h, depth, ctype = struct.unpack(">IIBB", body[:10])
        bpp = {2: 3, 6: 4}[ctype]
        assert depth == 8
    elif kind == b"IDAT":
        idat += body
    pos += 12 + n
raw = zlib.decompress(idat)
stride = w * bpp
prev = bytearray(stride)
colours, nonwhite, total = set(), 0, 0
for y in range(h):
    f = raw[y * (stride + 1)]
    line = bytearray(raw[y * (stride + 1) + 1:(y + 1) * (stride + 1)])
    for x in range(stride):
        a = line[x - bpp] if x >= bpp else 0
        b = prev[x]
        c = prev[x - bpp] if x >= bpp else 0
        if f == 1: line[x] = (line[x] + a) & 255
        elif f == 2: line[x] = (line[x] + b) & 255
        elif f == 3: line[x] = (line[x] + (a + b) // 2) & 255
        elif f == 4:
            p = a + b - c
            pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
            line[x] = (line[x] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
    if y % 4 == 0:
        for x in range(0, stride, bpp * 4):
            px = bytes(line[x:x + 3])
            colours.add(px)
            total += 1
            nonwhite += px != b"\xff\xff\xff"
    prev = line
print(len(colours), round(100.0 * nonwhite / total, 2))
PY
set -- $("$PY" "$T/png.py" "$T/shot.png" 2>&1)
ok_if "screenshot not blank: more than 20 distinct colours (got ${1:-?})" test "${1:-0}" -gt 20
ok_if "screenshot not blank: over 2 % of pixels not white (got ${2:-?} %)" \
    "$PY" -c "import sys; sys.exit(0 if float('${2:-0}') > 2 else 1)"

chrome p --print-to-pdf="$T/report.pdf" --no-pdf-header-footer "file://$R" >/dev/null 2>"$T/pdf.err"
ok_if "Chromium: prints to PDF" sh -c "head -c 5 '$T/report.pdf' | grep -q '%PDF-'"

tap_plan
