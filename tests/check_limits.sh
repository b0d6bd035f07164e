#!/bin/sh
# check_limits.sh - input that could exhaust memory or hang a reader: a huge
# line, a million columns, a 1 GB (sparse) file, a folder of 100,000 sample
# files, symlink loops (of files and of folders), a FIFO, a device, a CSV that
# is really binary, an id of a million apostrophes to plot.  Each must end within its time limit with a clear one-line
# error (with --strict, which stops at the first file that cannot be read;
# tests/check_messy.sh holds the default, which goes on without it), or be
# processed, in bounded memory (peak resident set from GNU time
# where installed).  Prints TAP.  Env: ARRANK (program), ARRANK_SANITIZED
# (set by make test-asan: memory ceilings not checked).
set -u
. tests/tap.sh
A=${ARRANK:-build/arrank}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
HAVE_TIME=0
[ -x /usr/bin/time ] && HAVE_TIME=1
# Sanitizers (make test-asan) multiply memory use: time limits only.
[ -n "${ARRANK_SANITIZED:-}" ] && HAVE_TIME=0 && echo "# memory not measured under sanitizers"
PY=/usr/bin/python3
[ -x "$PY" ] || PY=python3

# run NAME LIMIT_S LIMIT_MB WANT_STATUS WANT_ERR_PATTERN ARGS...
run() {
    case_name=$1 limit_s=$2 limit_mb=$3 want=$4 pattern=$5
    shift 5
    if [ "$HAVE_TIME" -eq 1 ]; then
        timeout -k 2 "$limit_s" /usr/bin/time -f '%M' -o "$T/mem" "$A" "$@" >"$T/out" 2>"$T/err"
    else
        timeout -k 2 "$limit_s" "$A" "$@" >"$T/out" 2>"$T/err"
    fi
    st=$?
    expect_eq "$case_name: exit status (124 = still running after ${limit_s} s)" "$st" "$want"
    if [ -n "$pattern" ]; then
        ok_if "$case_name: one-line message" test "$(wc -l <"$T/err")" -eq 1
        ok_if "$case_name: message says '$pattern'" grep -q -- "$pattern" "$T/err" ||
            sed 's/^/# /' "$T/err" | head -3
    fi
    if [ "$HAVE_TIME" -eq 1 ]; then
        kb=$(tail -n 1 "$T/mem" 2>/dev/null)
        [ -n "$kb" ] || kb=999999999
        ok_if "$case_name: peak memory ${kb} KB <= ${limit_mb} MB" test "$kb" -le $((limit_mb * 1024))
    fi
}

head='T [degC],rate [umol/(g*s)]'
good=$(printf '%s\n250,1.2\n260,1.9\n270,2.9\n' "$head")

# A 4 MiB line (limit 1 MiB per line).
mkdir "$T/line"
{ echo "$head"; printf '250,'; head -c 4194304 /dev/zero | tr '\0' '7'; echo; } >"$T/line/a.csv"
run "huge line" 10 64 1 "a.csv:2: line longer than 1048576 bytes" fit --strict "$T/line"

# A million columns: in the header, and in a data row.
mkdir "$T/cols" "$T/cols2"
{ printf '%s' "$head"; head -c 1000000 /dev/zero | tr '\0' ','; echo; echo "250,1"; } \
    >"$T/cols/a.csv"
run "a million header columns" 10 64 1 "a.csv:1:1001: the header has more than 1000 columns" \
    fit --strict "$T/cols"
{ echo "$head"; printf '250,1'; head -c 1000000 /dev/zero | tr '\0' ','; echo; } \
    >"$T/cols2/a.csv"
run "a million fields in a row" 10 64 1 "a.csv:2:3: row has 1000002 fields but the header has 2" \
    fit --strict "$T/cols2"

# A 1 GB file (sparse: NUL bytes, taking no disk space).
mkdir "$T/big"
truncate -s 1G "$T/big/a.csv"
run "1 GB file" 10 64 1 "a.csv: the file is larger than 268435456 bytes" fit --strict "$T/big"

# Binary: random bytes with NULs, and random bytes without any NUL.
mkdir "$T/bin" "$T/bin2"
head -c 300000 /dev/urandom >"$T/bin/a.csv"
run "binary file" 10 64 1 "not text (it has a NUL byte)" fit --strict "$T/bin"
head -c 300000 /dev/urandom | tr -d '\0' >"$T/bin2/a.csv"
run "binary file without NUL bytes" 10 64 1 "a.csv:" fit --strict "$T/bin2"

# Symlinks: a loop of two, a chain of 60, a folder loop, a campaign folder that is a loop.
mkdir "$T/loop" "$T/chain" "$T/dirloop"
ln -s b.csv "$T/loop/a.csv"
ln -s a.csv "$T/loop/b.csv"
run "symlink loop" 10 64 3 "a.csv: cannot open the file: too many levels of symbolic links" \
    fit --strict "$T/loop"
echo "$good" >"$T/chain/l0.csv.real"
i=1
while [ $i -le 60 ]; do
    ln -s "l$((i - 1)).csv" "$T/chain/l$i.csv" 2>/dev/null || ln -s l0.csv.real "$T/chain/l$i.csv"
    i=$((i + 1))
done
rm -f "$T/chain/l1.csv"
ln -s l0.csv.real "$T/chain/l1.csv"
run "chain of 60 symlinks" 10 64 3 "too many levels of symbolic links" fit --strict "$T/chain"
echo "$good" >"$T/dirloop/a.csv"
ln -s . "$T/dirloop/self"
ln -s .. "$T/dirloop/up.csv"
run "symlinked folder loop" 10 64 3 "up.csv: not a regular file" fit --strict "$T/dirloop"
ln -s selfloop "$T/selfloop"
run "campaign folder is a symlink loop" 10 64 3 \
    "selfloop: cannot read the folder: too many levels of symbolic links" fit --strict "$T/selfloop"

# A FIFO and a device named like samples: never block, never read forever.
mkdir "$T/fifo" "$T/dev"
mkfifo "$T/fifo/a.csv"
run "FIFO named a.csv" 10 64 3 "a.csv: not a regular file" fit --strict "$T/fifo"
ln -s /dev/zero "$T/dev/a.csv"
run "/dev/zero named a.csv" 10 64 3 "a.csv: not a regular file" fit --strict "$T/dev"

# One sample of 300,000 rows, each temperature 3 K above the last (more than
# the 2 K that makes one set point): 300,000 separate set points.  The local
# windows once rescanned every point for every window (quadratic: hours);
# the diagnostics must stay linear.
mkdir "$T/rows"
awk 'BEGIN { print "T [K],rate [umol/(g*s)]";
             for (i = 0; i < 300000; i++)
                 printf "%d,%.6g\n", 300 + 3 * i, exp(5 - 120.0 / (300 + 3 * i)) }' \
    >"$T/rows/a.csv"
run "300,000 set points in one sample" 60 256 0 "" fit "$T/rows" --at 500K

# One file alternating between two set points: every return to a set point
# is a new pass, so 1,000,000 rows make 500,000 passes to compare with the
# first.  The comparison once walked every point for every pass (quadratic:
# 11 s at 100,000 rows, about 20 minutes at a million); it must stay linear.
# The same with 80,000 run labels in a run column.  README: "linear time".
for rows in 10000 100000 999999; do
    mkdir "$T/two$rows"
    awk -v n="$rows" 'BEGIN { print "T [degC],rate [umol/(g*s)]"; srand(7);
        for (i = 0; i < n; i++) { t = (i % 2) ? 270 : 250;
            printf "%d,%.5g\n", t, ((i % 2) ? 2.5 : 1.0) * (1 + 0.05 * (rand() - 0.5)) } }' \
        >"$T/two$rows/a.csv"
    run "$rows rows at two set points" 60 512 0 "" fit "$T/two$rows"
done
mkdir "$T/labels"
awk 'BEGIN { print "T [degC],rate [umol/(g*s)],run"; srand(11);
    for (i = 0; i < 160000; i++) { t = (i % 2) ? 270 : 250;
        printf "%d,%.5g,r%d\n", t, ((i % 2) ? 2.5 : 1.0) * (1 + 0.05 * (rand() - 0.5)), i / 2 } }' \
    >"$T/labels/a.csv"
run "80,000 run labels" 60 512 0 "" check "$T/labels"

# An id of 1,000,000 apostrophes (the longest the reader's 1 MiB line allows):
# quoted for gnuplot in one pass it plots in about a second; each quote made a
# concatenation before, which gnuplot joined in quadratic time (577 s).
mkdir "$T/apos"
{ printf '# sample = '; head -c 1000000 /dev/zero | tr '\0' "'"; echo; echo "$head"
  printf '250,1.2\n260,1.9\n270,2.9\n280,4.1\n'; } >"$T/apos/a.csv"
run "id of 1,000,000 apostrophes plotted" 60 256 0 "" plot "$T/apos" --at 260C \
    --out "$T/apos-out"
ok_if "1,000,000 apostrophes: all four figures written" \
    test "$(ls "$T/apos-out" 2>/dev/null | grep -c '\.svg$')" -eq 4

# 100,000 sample files: hard links to a few valid files (a file takes at most
# 65,000 links on ext4), so the folder is quick to make.
mkdir "$T/many"
t0=$(date +%s)
"$PY" - "$T/many" "$good" <<'PYEOF'
import os, sys
d, text = sys.argv[1], sys.argv[2] + "\n"
for i in range(100000):
    base = os.path.join(d, "base%d.txt" % (i // 10000))
    if i % 10000 == 0:
        with open(base, "w") as f:
            f.write(text)
    os.link(base, os.path.join(d, "s%06d.csv" % i))
PYEOF
echo "# 100,000 files made in $(($(date +%s) - t0)) s"
t0=$(date +%s)
run "100,000 sample files" 60 256 0 "" fit "$T/many" --no-diagnose --json "$T/many.json"
echo "# 100,000 files read and fitted in $(($(date +%s) - t0)) s"
ok_if "100,000 files: every sample in the JSON" \
    test "$(grep -c '"file": "s[0-9]*\.csv"' "$T/many.json")" -eq 100000

tap_plan
