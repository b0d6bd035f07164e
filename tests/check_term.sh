#!/bin/sh
# check_term.sh - the table on a terminal (README "The table on a
# terminal"): in a terminal emulated by script(1) with stty cols 80 and 120,
# `rank` and `fit` on the demo print no line wider than the terminal
# (characters counted, not bytes: the table has UTF-8) and say what they left
# out; long ids wrap rather than being cut; colour only on a terminal and
# never with NO_COLOR; --wide shows every column; piped output keeps every
# column, the same whatever COLUMNS says.  The same for the reference's
# block under rank's table (the two demo campaigns), compare's table (with
# and without --reference) and plan's table (README "Comparing two
# campaigns", "The reference catalyst", "Planning the next runs"), and the
# report of `check`, wrapped with its items indented.
# Prints TAP.
# Env: ARRANK (program).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
DEMO=campaigns/zeolite-ni-screen
PY=/usr/bin/python3

# on_term COLS OUT CMD...: CMD run on a terminal COLS columns wide, its
# standard output (the terminal's, carriage returns removed) into OUT.
on_term() {
    cols=$1 out=$2
    shift 2
    # the command line for script's shell, each word quoted
    cmd="stty cols $cols;"
    for w in "$@"; do
        cmd="$cmd '$w'"
    done
    script -qec "$cmd 2>/dev/null" /dev/null </dev/null | tr -d '\r' >"$out"
}

# widest FILE: the widest line in terminal columns (East Asian Wide and
# Fullwidth characters two, combining marks none: Unicode Standard Annex #11
# through Python's unicodedata), colour sequences not counted
widest() {
    "$PY" - "$1" <<'PY'
import re, sys, unicodedata
def cols(line):
    return sum(0 if unicodedata.category(c) in ("Mn", "Me") else
               2 if unicodedata.east_asian_width(c) in ("W", "F") else 1 for c in line)
text = open(sys.argv[1], encoding="utf-8").read()
text = re.sub(r"\x1b\[[0-9;]*m", "", text)
print(max(cols(line) for line in text.split("\n")))
PY
}

for cols in 80 120; do
    for at in "--at 270C" ""; do
        # shellcheck disable=SC2086
        NO_COLOR=1 on_term "$cols" "$T/rank" "$A" rank "$DEMO" $at
        w=$(widest "$T/rank")
        ok_if "rank ${at:-(campaign.ini T)} on $cols columns: no line over $cols ($w)" \
            test "$w" -le "$cols"
        ok_if "rank ${at:-(campaign.ini T)} on $cols columns: every sample shown" \
            test "$(grep -c '^ *[0-9-][0-9]* .*ZN-' "$T/rank")" -eq 14
        ok_if "rank ${at:-(campaign.ini T)} on $cols columns: says what it left out" \
            grep -q "^(left out to fit $cols columns: .*--wide" "$T/rank"
    done
    NO_COLOR=1 on_term "$cols" "$T/fit" "$A" fit "$DEMO"
    w=$(widest "$T/fit")
    ok_if "fit on $cols columns: no line over $cols ($w)" test "$w" -le "$cols"
    ok_if "fit on $cols columns: Ea kept" grep -q 'Ea \[kJ/mol\]' "$T/fit"
done
# at 80 columns the rank, the id, the rate at T with its interval and the
# flags stay; the columns of least priority go
NO_COLOR=1 on_term 80 "$T/rank" "$A" rank "$DEMO" --at 270C
ok_if "80 columns: rate at T with its interval kept" \
    grep -q 'ZN-09 beta-desilicated *4\.58 \[4\.16, 5\.05\]' "$T/rank"
ok_if "80 columns: flags kept" grep -q 'deactivation$' "$T/rank"
ok_if "80 columns: ln A named as left out" grep -q '^(left out.*ln A' "$T/rank"
ok_if "80 columns: the footer wrapped too (caution on two lines)" \
    grep -q '^Caution: apparent kinetics of these samples in this window; not for reactor$' \
    "$T/rank"

# --wide: every column on the terminal, nothing said left out
NO_COLOR=1 on_term 80 "$T/wide" "$A" rank "$DEMO" --at 270C --wide
w=$(widest "$T/wide")
ok_if "--wide on 80 columns: the whole table ($w columns)" test "$w" -gt 150
ok_if "--wide: nothing left out" sh -c "! grep -q 'left out to fit' '$T/wide'"
ok_if "--wide: ln A shown" grep -q 'ln A \[ln(umol/(g\*s))\]' "$T/wide"

# piped: every column, byte for byte the same whatever COLUMNS says, no colour
"$A" rank "$DEMO" --at 270C >"$T/piped" 2>/dev/null
COLUMNS=40 "$A" rank "$DEMO" --at 270C >"$T/piped40" 2>/dev/null
ok_if "piped: COLUMNS is not read" cmp -s "$T/piped" "$T/piped40"
ok_if "piped: every column's head" \
    grep -q '^rank  P(best)  group  sample  *n  T range \[K\]  Ea \[kJ/mol\]  *ln A \[ln(umol/(g\*s))\]  *rate at 543.15 K \[umol/(g\*s)\]  flags$' \
    "$T/piped"
ok_if "piped: no colour" sh -c "! grep -q \"$(printf '\033')\" '$T/piped'"
ok_if "piped: nothing said left out" sh -c "! grep -q 'left out to fit' '$T/piped'"
"$A" rank "$DEMO" --at 270C --wide >"$T/piped-wide" 2>/dev/null
ok_if "piped: --wide changes nothing" cmp -s "$T/piped" "$T/piped-wide"

# colour: on a terminal for the flags, never with NO_COLOR set
on_term 120 "$T/colour" "$A" rank "$DEMO" --at 270C
ok_if "terminal: flags in colour" grep -q "$(printf '\033')\[33mdeactivation" "$T/colour"
NO_COLOR=1 on_term 120 "$T/nocolour" "$A" rank "$DEMO" --at 270C
ok_if "NO_COLOR: no colour" sh -c "! grep -q \"$(printf '\033')\" '$T/nocolour'"
ok_if "NO_COLOR: the same text otherwise" sh -c \
    "sed 's/$(printf '\033')\[[0-9;]*m//g' '$T/colour' | cmp -s - '$T/nocolour'"

# ids of 40 characters and more wrap in the id column, whole, never cut
mkdir "$T/long"
cp "$DEMO/ZN-01.csv" "$DEMO/ZN-02.csv" "$DEMO/ZN-03.csv" "$T/long/"
id1="MT-REF commercial Ni reference catalyst, batch 2026-03 lot 7"
id2="Ni/USY-steamed-800C-4h-reduced-450C-H2-then-passivated-A"
sed -i "s|^# sample = .*|# sample = $id1|" "$T/long/ZN-01.csv"
sed -i "s|^# sample = .*|# sample = $id2|" "$T/long/ZN-02.csv"
NO_COLOR=1 on_term 80 "$T/longout" "$A" rank "$T/long" --at 270C
w=$(widest "$T/longout")
ok_if "long ids on 80 columns: no line over 80 ($w)" test "$w" -le 80
ok_if "long ids: not cut with '...'" sh -c "! grep -q '\.\.\.' '$T/longout'"
"$PY" - "$T/longout" "$id1" "$id2" >"$T/py" <<'PY'
import sys
lines = open(sys.argv[1], encoding="utf-8").read().split("\n")
head = next(l for l in lines if l.startswith("rank"))
col = head.index("sample")
# the next column's head starts where the id column and its two spaces end
nxt = col + 6
while head[nxt] == " ":
    nxt += 1
for ident in sys.argv[2:]:
    # the id column of the row that starts it and of the lines that follow
    start = next(i for i, l in enumerate(lines) if l[col:].startswith(ident[:10]))
    pieces = [lines[start][col:nxt].rstrip()]
    for l in lines[start + 1:]:
        if l[:col].strip() or not l[col:].strip():
            break
        pieces.append(l[col:nxt].rstrip())
    joined = " ".join(pieces)
    whole = joined == ident or "".join(pieces) == ident
    print(("ok" if whole and len(pieces) > 1 else "not ok")
          + " id of %d characters wraps onto %d lines, whole" % (len(ident), len(pieces)))
PY
tap_relay "$T/py"
# ---- the reference's block, compare and plan on 80 columns ---------------
B2=campaigns/zeolite-ni-batch2
REF="ZN-01 H-beta"

# ok_fits NAME FILE: no line over 80 characters
ok_fits() {
    w=$(widest "$2")
    ok_if "$1 on 80 columns: no line over 80 ($w)" test "$w" -le 80
}
# ok_piped NAME TERMFILE ARGS...: piped, the same whatever COLUMNS says, no
# colour, nothing said left out, and not the terminal's text
ok_piped() {
    name=$1 term=$2
    shift 2
    "$A" "$@" >"$T/p1" 2>/dev/null
    COLUMNS=40 "$A" "$@" --wide >"$T/p2" 2>/dev/null
    ok_if "$name piped: COLUMNS and --wide change nothing" cmp -s "$T/p1" "$T/p2"
    ok_if "$name piped: nothing said left out, no colour" sh -c \
        "! grep -q 'left out to fit' '$T/p1' && ! grep -q \"$(printf '\033')\" '$T/p1'"
    ok_if "$name piped: not the terminal's text" sh -c "! cmp -s '$T/p1' '$term'"
}

# rank of the two demo campaigns: the reference's block under the table
NO_COLOR=1 on_term 80 "$T/ref" "$A" rank "$DEMO" "$B2" --at 270C
ok_fits "rank with the reference's block" "$T/ref"
sed -n '/^against the reference/,$p' "$T/ref" >"$T/refblock"
ok_if "reference block: a long id wrapped, whole (zeolite-ni-screen/ZN-09 beta-desilicated)" \
    sh -c "grep -A1 '^  zeolite-ni-screen/ZN-09  *1\.91 \[1\.73, 2\.1\]' '$T/refblock' |
           grep -q '^  beta-desilicated$'"
ok_if "reference block: says what it left out" \
    grep -q '^(left out to fit 80 columns: Ea difference; --wide' "$T/refblock"
ok_if "reference block: every sample (18 rows)" \
    test "$(grep -cE '  ([0-9.]+ \[|1 \(the reference\))' "$T/refblock")" -eq 18
ok_if "reference block: the per-campaign line reflowed" \
    grep -q '^\[2\.34, 2\.47\]; zeolite-ni-batch2 1\.99 \[1\.94, 2\.03\]$' "$T/refblock"
NO_COLOR=1 on_term 80 "$T/refwide" "$A" rank "$DEMO" "$B2" --at 270C --wide
ok_if "reference block --wide: the Ea difference shown" \
    grep -q 'ZN-05 ferrierite  *0\.0506 \[0\.0482, 0\.053\]  0\.000  *+79\.5 \[+76\.0, +83\.1\]$' \
    "$T/refwide"
ok_if "reference block --wide: nothing left out" sh -c "! grep -q 'left out to fit' '$T/refwide'"
ok_piped "rank with the reference" "$T/ref" rank "$DEMO" "$B2" --at 270C

# compare, without and with --reference
for ref in "" "$REF"; do
    tag=${ref:+ --reference}
    if [ -n "$ref" ]; then
        NO_COLOR=1 on_term 80 "$T/cmp" "$A" compare "$DEMO" "$B2" --reference "$ref"
        NO_COLOR=1 on_term 80 "$T/cmpwide" "$A" compare "$DEMO" "$B2" --reference "$ref" --wide
    else
        NO_COLOR=1 on_term 80 "$T/cmp" "$A" compare "$DEMO" "$B2"
        NO_COLOR=1 on_term 80 "$T/cmpwide" "$A" compare "$DEMO" "$B2" --wide
    fi
    ok_fits "compare$tag" "$T/cmp"
    ok_if "compare$tag: says what it left out" \
        grep -q '^(left out to fit 80 columns: rate A, rate B, change, Ea verdict; --wide' "$T/cmp"
    ok_if "compare$tag: the ratio, its verdict and the Ea change kept" \
        grep -Eq '^ZN-09 beta-desilicated +0\.(58|703) \[.*\] +changed +-0\.3 \[-7\.7, \+7\.2\]$' \
        "$T/cmp"
    ok_if "compare$tag: the unmatched ids wrapped after commas, whole" \
        grep -q '^ZN-12 beta extrudate, ZN-13 Ni-rich Y, ZN-14 high-load ZSM-5$' "$T/cmp"
    ok_if "compare$tag --wide: every column" \
        grep -q '^sample  *rate A  *rate B  *B / A  *change  *verdict  *Ea B - A \[kJ/mol\]  *verdict$' \
        "$T/cmpwide"
    ok_if "compare$tag --wide: nothing left out" sh -c "! grep -q 'left out to fit' '$T/cmpwide'"
    if [ -n "$ref" ]; then
        ok_if "compare --reference: the reference's reason wraps in its span" \
            sh -c "grep -q '  0\.826  *not compared: the reference: each$' '$T/cmp' &&
                   grep -q '^  *rate is taken relative to it$' '$T/cmp'"
        ok_piped "compare$tag" "$T/cmp" compare "$DEMO" "$B2" --reference "$ref"
    else
        ok_piped "compare" "$T/cmp" compare "$DEMO" "$B2"
    fi
done
on_term 80 "$T/cmpcolour" "$A" compare "$DEMO" "$B2"
ok_if "compare on a terminal: changed in colour" \
    grep -q "$(printf '\033')\[33mchanged" "$T/cmpcolour"

# compare of two folders with ids of 40 characters and more: whole, wrapped
cp -r "$T/long" "$T/long2"
NO_COLOR=1 on_term 80 "$T/cmplong" "$A" compare "$T/long" "$T/long2" --at 270C
ok_fits "compare with long ids" "$T/cmplong"
ok_if "compare with long ids: not cut with '...'" sh -c "! grep -q '\.\.\.' '$T/cmplong'"
"$PY" - "$T/cmplong" "$id1" >"$T/py" <<'PY'
import sys
lines = open(sys.argv[1], encoding="utf-8").read().split("\n")
head = next(l for l in lines if l.startswith("sample"))
end = head.index("B / A")
start = next(i for i, l in enumerate(lines) if l.startswith(sys.argv[2][:10]))
pieces = [lines[start][:end].rstrip()]
for l in lines[start + 1:]:
    if not l[:end].strip() or l[end:].strip():  # a new row has cells past the id
        break
    pieces.append(l[:end].rstrip())
whole = " ".join(pieces) == sys.argv[2]
print(("ok" if whole and len(pieces) > 1 else "not ok")
      + " compare: an id of %d characters wraps onto %d lines, whole"
      % (len(sys.argv[2]), len(pieces)))
PY
tap_relay "$T/py"
# piped, compare keeps every id whole (scripts read it) and its columns in line
"$A" compare "$T/long" "$T/long2" --at 270C >"$T/cmppiped" 2>/dev/null
"$PY" - "$T/cmppiped" "$id1" >"$T/py" <<'PY'
import sys
lines = open(sys.argv[1], encoding="utf-8").read().split("\n")
h = next(i for i, l in enumerate(lines) if l.startswith("sample"))
at = lines[h].index("rate A")
rows = lines[h + 1:lines.index("", h)]
ok = (any(r.startswith(sys.argv[2] + "  ") for r in rows) and len(rows) > 1 and
      all(r[at - 2:at] == "  " and r[at] != " " for r in rows))
print(("ok" if ok else "not ok") + " compare piped: an id of %d characters whole, columns in line"
      % len(sys.argv[2]))
PY
tap_relay "$T/py"
# plan on the demo (48 runs: every sample gets runs at two or three
# temperatures, which wrap)
PLAN="plan $DEMO --max-temperature 300C --budget 48"
# shellcheck disable=SC2086
NO_COLOR=1 on_term 80 "$T/plan" "$A" $PLAN
ok_fits "plan" "$T/plan"
ok_if "plan: the temperatures wrap after a comma, aligned in their column" sh -c \
    "grep -q '^ZN-09 beta-desilicated  *33  543\.15 K x11,  ' '$T/plan' &&
     grep -q '^                              553\.15 K x22$' '$T/plan' &&
     grep -q '^ZN-03 USY  *5  543\.15 K x1,  ' '$T/plan' &&
     grep -q '^                              558\.15 K x1,$' '$T/plan'"
ok_if "plan: the budget line reflowed (no line break of the piped text kept)" \
    grep -q '^most 10 K outside each sample.s kinetic window, never at or above its coldest$' \
    "$T/plan"
# at 60 columns the rates now -> expected are left out, and said so
# shellcheck disable=SC2086
NO_COLOR=1 on_term 60 "$T/plan60" "$A" $PLAN
w=$(widest "$T/plan60")
ok_if "plan on 60 columns: no line over 60 ($w)" test "$w" -le 60
ok_if "plan on 60 columns: says what it left out" \
    grep -q '^(left out to fit 60 columns: rate at T now -> expected;' "$T/plan60"
# shellcheck disable=SC2086
NO_COLOR=1 on_term 80 "$T/planwide" "$A" $PLAN --wide
ok_if "plan --wide: the table as piped" sh -c \
    "'$A' $PLAN 2>/dev/null | cmp -s - '$T/planwide'"
# shellcheck disable=SC2086
ok_piped "plan" "$T/plan" $PLAN

# ids in Chinese, Japanese and Korean: each of their characters takes two
# columns of the terminal, so the columns after the id line up (piped and
# on 80 columns) and no line runs past the terminal
mkdir "$T/cjk"
cp "$DEMO/campaign.ini" "$DEMO/ZN-01.csv" "$DEMO/ZN-02.csv" "$DEMO/ZN-04.csv" "$DEMO/ZN-06.csv" "$T/cjk/"
sed -i "s|^# sample = .*|# sample = 镍沸石-β 催化剂|" "$T/cjk/ZN-01.csv"
sed -i "s|^# sample = .*|# sample = ニッケル触媒 A|" "$T/cjk/ZN-02.csv"
sed -i "s|^# sample = .*|# sample = 니켈 제올라이트|" "$T/cjk/ZN-04.csv"
"$A" rank "$T/cjk" --at 270C >"$T/cjk-piped" 2>/dev/null
NO_COLOR=1 on_term 80 "$T/cjk-term" "$A" rank "$T/cjk" --at 270C
w=$(widest "$T/cjk-term")
ok_if "CJK ids on 80 columns: no line over 80 ($w)" test "$w" -le 80
for f in cjk-piped cjk-term; do
    ok_if "CJK ids ($f): the first interval starts at one terminal column in every row" "$PY" - \
        "$T/$f" <<'PY'
import re, sys, unicodedata
def cols(text):
    return sum(2 if unicodedata.east_asian_width(c) in ("W", "F") else 1 for c in text)
rows = [l for l in open(sys.argv[1], encoding="utf-8").read().split("\n")
        if re.match(r"^ +[0-9]+ ", l)]
starts = {cols(l[:re.search(r"[0-9.]+ \[", l).start()]) for l in rows}
ids = sum(any(ord(c) > 0x3000 for c in l) for l in rows)
print("#", len(rows), "rows,", ids, "with CJK ids, first interval at", sorted(starts))
sys.exit(0 if len(rows) == 4 and ids == 3 and len(starts) == 1 else 1)
PY
done

# check: the report wrapped to the terminal, each item's continuation lines
# indented four columns past it; the same words as piped, where each item
# is one line
NO_COLOR=1 on_term 80 "$T/check" "$A" check "$DEMO"
w=$(widest "$T/check")
ok_if "check on 80 columns: no line over 80 ($w)" test "$w" -le 80
"$A" check "$DEMO" >"$T/check-piped" 2>/dev/null
ok_if "check piped: items longer than 80 columns, one line each" \
    test "$(widest "$T/check-piped")" -gt 200
ok_if "check on 80 columns: the same words as piped" "$PY" -c '
import sys
a, b = (open(f, encoding="utf-8").read().split() for f in sys.argv[1:3])
sys.exit(a != b)' "$T/check" "$T/check-piped"
ok_if "check on 80 columns: an item continued four columns in" \
    grep -A1 "^  left out: line 22, 320.9 degC (594.0 K): pore-limited point" "$T/check" \
    | sed -n 2p | grep -q "^      [a-z]"
NO_COLOR=1 on_term 80 "$T/checkwide" "$A" check "$DEMO" --wide
ok_if "check --wide on a terminal: one line per item, as piped" \
    cmp -s "$T/checkwide" "$T/check-piped"
ok_piped "check" "$T/check" check "$DEMO"
tap_plan
