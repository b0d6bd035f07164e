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
expect_eq "report: no http:// or https:// anywhere" "$(grep -c -i -e 'http://' -e 'https://' "$R")" 0
expect_eq "report: no <script>, <link>, <img> or src=" \
    "$(grep -c -i -e '<script' -e '<link' -e '<img' -e ' src=' "$R")" 0
ok_if "report: print stylesheet" grep -q '@media print' "$R"
nsvg=$(grep -c '<svg' "$R")
# the campaign's fitted samples, counted independently from the JSON
"$A" fit "$DEMO" --json "$T/fit.json" >/dev/null 2>&1
nfit=$(/usr/bin/python3 -c "import json,sys; print(sum(s['error'] is None for s in json.load(open(sys.argv[1]))['samples']))" "$T/fit.json")
want_svg=$((3 + nfit))
expect_eq "report: figures inline (3 + one per fitted sample)" "$nsvg" "$want_svg"
for f in "$DEMO"/ZN-01.csv "$DEMO"/ZN-11.csv "$DEMO"/campaign.ini; do
    h=$(sha256sum "$f" | cut -c1-64)
    ok_if "report: SHA-256 of $(basename "$f") matches sha256sum" grep -q "$h" "$R"
done
ok_if "report: cautions about extrapolation" grep -q 'Do not extrapolate them to reactor design' "$R"
ok_if "report: thermal runaway caution" grep -q 'hot spots and can run away' "$R"
ok_if "report: flammable and toxic gases caution" grep -q 'flammable or toxic' "$R"
ok_if "report: judgement of qualified people" grep -q 'judgement of qualified people' "$R"
ok_if "report: unfitted sample explained" grep -q 'Not fitted and not ranked: only 2 data points' "$R"
ok_if "report: the command line" grep -q "Command line: <code>arrank report $DEMO --at 270C" "$R"
ok_if "report: program version" grep -q "Made by arrank $("$A" --version | cut -d' ' -f2)" "$R"

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
printf '<!DOCTYPE html><html><body><p>x</p><script>console.error("arrank-control-error")</script></body></html>\n' \
    >"$T/control.html"
chrome c --dump-dom "file://$T/control.html" >/dev/null 2>"$T/control.err"
ok_if "control: a console error shows in Chromium's log" grep -q 'CONSOLE.*arrank-control-error' \
    "$T/control.err"

chrome d --dump-dom "file://$R" >"$T/dom.html" 2>"$T/dom.err"
expect_eq "Chromium: no console messages from the report" "$(grep -c 'CONSOLE' "$T/dom.err")" 0
grep 'CONSOLE' "$T/dom.err" | head -5 | sed 's/^/# /'
ok_if "Chromium: DOM has the ranking table" grep -q '<h2>Ranking</h2>' "$T/dom.html"
expect_eq "Chromium: DOM has every figure" "$(grep -o '<svg' "$T/dom.html" | grep -c .)" "$want_svg"

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
