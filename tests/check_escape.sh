#!/bin/sh
# check_escape.sh - text from files on the terminal: a sample file named
# "a<line break>b.csv" (its id "a<line break>b" from the name) and one
# whose name holds an escape character (a terminal colour code); the reader
# refuses such characters in the id metadata, not in file names.  The table and the check text show them escaped
# (arrank/text.h: a\nb, \033) on one line; the JSON and the CSV keep the text
# exact (JSON escapes by itself, CSV quotes).  Invented data.  Prints TAP.
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
C=$T/esc
mkdir "$C"
nl='
'
pts='T [K], rate [1/s]
500, 0.0100
510, 0.0161
520, 0.0262
530, 0.0418
540, 0.0650'
printf '%s\n' "$pts" >"$C/a${nl}b.csv"
printf '%s\n' "$pts" | sed 's/0\.0/0.00/' >"$C/plain.csv"
esc=$(printf '\033')
printf '%s\n' "$pts" >"$C/E${esc}[31mred.csv"

"$A" fit "$C" >"$T/table" 2>"$T/err"
expect_eq "fit: exit 0" "$?" 0
ok_if "table: the id escaped (backslash n), on one row" grep -q '^a\\nb  ' "$T/table"
ok_if "table: no line starts with the bare 'b'" sh -c '! grep -q "^b" "$1"' _ "$T/table"
ok_if "table: no escape character reaches the terminal" sh -c '! grep -q "$(printf "\033")" "$1"' _ "$T/table"
ok_if "table: the colour code shown as \\033" grep -q '^E\\033\[31mred ' "$T/table"

"$A" check "$C" >"$T/check" 2>/dev/null
ok_if "check: the id and file escaped on the sample's first line" \
    grep -q '^a\\nb (a\\nb.csv): ' "$T/check"
ok_if "check: no escape character reaches the terminal" \
    sh -c '! grep -q "$(printf "\033")" "$1"' _ "$T/check"
ok_if "check: the colour code shown as \\033" grep -q '^E\\033\[31mred (E\\033\[31mred.csv): ' "$T/check"

"$A" fit "$C" --json "$T/r.json" --csv "$T/r.csv" >/dev/null 2>&1
cat >"$T/rows.py" <<'PYEOF'
import csv, json, sys
d = json.load(open(sys.argv[1]))
ids = [s["id"] for s in d["samples"]]
print(("ok " if "a\nb" in ids and "E\x1b[31mred" in ids and any(s["file"] == "a\nb.csv" for s in d["samples"])
       else "not ok ") + "json: the id and file kept exact (a line break inside)")
with open(sys.argv[2], newline="") as f:
    rows = list(csv.DictReader(l for l in f.read().splitlines(keepends=True)
                               if not l.startswith("#")))
print(("ok " if "a\nb" in [r["id"] for r in rows] else "not ok ")
      + "csv: the id kept exact, quoted")
PYEOF
"$PY" "$T/rows.py" "$T/r.json" "$T/r.csv" >"$T/py" 2>&1 || echo "not ok json and csv checks ran" >>"$T/py"
tap_relay "$T/py"
tap_plan
