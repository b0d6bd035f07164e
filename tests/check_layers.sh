#!/bin/sh
# check_layers.sh - the layering of DEVELOPERS.md holds (src/tools/check_layers.py
# on this build), and the check is real: a planted upward include and call
# (fit.c, layer 8, calling the pipeline's arrank_analysis_run) and a program
# file that includes a private header are each refused, naming the file, in a
# copy of the tree; so are a function over 120 lines and a file over 1,200
# lines in src/lib (the limits of the restructure).  Prints TAP.
. tests/tap.sh
BUILD=${BUILD:-build}
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT

"$PY" src/tools/check_layers.py --root . --objects "$BUILD" >"$T/real" 2>&1; st=$?
expect_eq "this tree: every include and call goes down" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/real"

# A copy of the tree with fit.c calling up.
mkdir -p "$T/tree/src" "$T/obj/src/lib"
cp -r src/lib src/cli "$T/tree/src/"
cp -r include DEVELOPERS.md "$T/tree/"
cp "$BUILD"/src/lib/*.o "$T/obj/src/lib/"
cat >>"$T/tree/src/lib/fit.c" <<'C'

#include "arrank/analysis.h"
int arrank_planted_upward_call(void);
int arrank_planted_upward_call(void)
{
    return arrank_analysis_run(0, 0, 0, 0);
}
C
${CC:-cc} -std=c11 -D_POSIX_C_SOURCE=200809L -I"$T/tree/include" \
    $(pkg-config --cflags gsl udunits inih jansson 2>/dev/null) \
    -c -o "$T/obj/src/lib/fit.o" "$T/tree/src/lib/fit.c" 2>"$T/cc.err"
ok_if "planted: the copy of fit.c compiles" test -s "$T/obj/src/lib/fit.o"
"$PY" src/tools/check_layers.py --root "$T/tree" --objects "$T/obj" >"$T/out" 2>&1; st=$?
expect_eq "planted upward call: check-layers fails" "$st" 1
ok_if "planted: the upward include is named" \
    grep -q '^src/lib/fit.c: includes analysis.h (analysis\*, layer 13) from fit (layer 9)' "$T/out"
ok_if "planted: the upward call is named" \
    grep -q '^src/lib/fit.c: calls arrank_analysis_run in analysis\* (layer 13) from layer 9' "$T/out"

# A function of 121 lines and a file of 1,201 lines in the copy.
{
    printf 'int arrank_planted_long(void);\nint arrank_planted_long(void)\n{\n    int x = 0;\n'
    i=0
    while [ $i -lt 117 ]; do printf '    x++;\n'; i=$((i + 1)); done
    printf '    return x;\n}\n'
} >"$T/tree/src/lib/regress.c.long"
cat "$T/tree/src/lib/regress.c.long" >>"$T/tree/src/lib/regress.c"
"$PY" src/tools/check_layers.py --root "$T/tree" --objects "$T/obj" >"$T/out3" 2>&1
ok_if "planted: a function of 121 lines is named" \
    grep -q '^src/lib/regress.c:[0-9]*: function arrank_planted_long is 121 lines (at most 120)' \
    "$T/out3"
lines=$(wc -l <"$T/tree/src/lib/stats.c")
while [ "$lines" -le 1200 ]; do echo '/* padding */' >>"$T/tree/src/lib/stats.c"; lines=$((lines + 1)); done
"$PY" src/tools/check_layers.py --root "$T/tree" --objects "$T/obj" >"$T/out4" 2>&1
ok_if "planted: a file of 1,201 lines is named" \
    grep -q '^src/lib/stats.c: 1201 lines (at most 1200)' "$T/out4"

# The program including a private header of the library.
printf '#include "../lib/stats.h"\n' >>"$T/tree/src/cli/main.c"
"$PY" src/tools/check_layers.py --root "$T/tree" --objects "$T/obj" >"$T/out2" 2>&1
ok_if "the program including a private header is named" \
    grep -q '^src/cli/main.c: includes ../lib/stats.h, which is not a public header' "$T/out2"

tap_plan
