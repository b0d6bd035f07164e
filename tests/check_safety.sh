#!/bin/sh
# check_safety.sh - the README's promises on outputs (issue "data safety"):
#   - outputs never touch inputs: a destination that is a sample file,
#     campaign.ini, a link to an input, or anything inside the campaign folder
#     is refused (exit 2) and every input is unchanged;
#   - a failed run writes nothing: no file, no folder, no temporary;
#   - an interrupt (SIGTERM, SIGINT) leaves no temporary behind;
#   - gnuplot works in a private folder, never on a guessable name in the
#     user's folder (the old '.NAME.PID.tmp' names could be planted as links).
# Prints TAP.
. tests/tap.sh
A=${ARRANK:-build/arrank}
DEMO=campaigns/zeolite-ni-screen
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
C="$T/C"
cp -r "$DEMO" "$C"
sums() { (cd "$1" && ls -la . | sed 's/ [A-Z][a-z][a-z] .* / /' && cat ./* | md5sum); }
before=$(sums "$C")

# ---- outputs never touch inputs -------------------------------------------
refuse() { # refuse NAME ARGS...: exit 2, one line naming the place, inputs unchanged
    what=$1; shift
    "$A" "$@" >"$T/out" 2>"$T/err"; st=$?
    expect_eq "$what: refused with exit 2" "$st" 2
    ok_if "$what: one line saying why" sh -c "test \$(wc -l <'$T/err') -eq 1 && grep -q refusing '$T/err'"
    expect_eq "$what: campaign unchanged" "$(sums "$C")" "$before"
}
refuse "--json onto a sample file" rank "$C" --at 270C --json "$C/ZN-01.csv"
refuse "--csv onto campaign.ini" rank "$C" --at 270C --csv "$C/campaign.ini"
refuse "--json through ./C//./" rank "$C" --at 270C --json "$T/./C//./ZN-02.csv"
refuse "--json to a new file inside the campaign" rank "$C" --at 270C --json "$C/new.json"
ln -s "$C/ZN-03.csv" "$T/link.csv"
refuse "--json onto a link to a sample file" fit "$C" --json "$T/link.csv"
ln -s "$C" "$T/linkdir"
refuse "--csv into a link to the campaign folder" fit "$C" --csv "$T/linkdir/r.csv"
refuse "plot --out the campaign folder" plot "$C" --at 270C --out "$C"
refuse "report --out a folder inside the campaign" report "$C" --at 270C --out "$C/figs"
ok_if "refusal: the message names the campaign folder" grep -q "campaign folder" "$T/err"

# ---- a failed run writes nothing ------------------------------------------
mkdir "$T/w"
cd_w() { (cd "$T/w" && "$@"); }
"$A" rank "$C" --at 270C --json "$T/w/o.json" --csv /dev/full >/dev/null 2>"$T/err"; st=$?
expect_eq "--json o.json --csv /dev/full: exit 3" "$st" 3
ok_if "--csv /dev/full: o.json not written" test ! -e "$T/w/o.json"
"$A" rank "$C" --at 270C --json "$T/w/nested/deep/o.json" --csv /dev/full >/dev/null 2>&1
ok_if "a failed run creates no folder" test ! -e "$T/w/nested"
"$A" rank "$C" --at 270C --json "$T/w/nested/deep/o.json" --csv "$T/w/nested/o.csv" >/dev/null 2>&1
ok_if "a run that succeeds creates its folders" test -s "$T/w/nested/deep/o.json" -a -s "$T/w/nested/o.csv"
mkdir -p "$T/w/figs/ea-lnA.svg"
"$A" plot "$C" --at 270C --out "$T/w/figs" >/dev/null 2>"$T/err"; st=$?
expect_eq "plot where a figure's name is a folder: exit 3" "$st" 3
ok_if "plot where a figure's name is a folder: says which" grep -q "ea-lnA.svg: exists and is not a plain file" "$T/err"
expect_eq "plot where a figure's name is a folder: nothing else written" "$(ls -A "$T/w/figs")" "ea-lnA.svg"
expect_eq "no temporary left anywhere" "$(find "$T/w" -name '.arrank-*' | wc -l)" 0

# ---- interrupts -------------------------------------------------------------
# The CSV goes to a FIFO: the run blocks at the end, with every output staged,
# until a reader comes.  SIGTERM then: nothing of the run may remain.
mkfifo "$T/w/fifo"
mkdir "$T/tmp"
TMPDIR="$T/tmp" "$A" rank "$C" --at 270C --json "$T/w/r.json" --csv "$T/w/fifo" >/dev/null 2>&1 &
pid=$!
i=0
while [ "$i" -lt 100 ] && [ -z "$(ls -A "$T/tmp")" ]; do sleep 0.1; i=$((i + 1)); done
ok_if "interrupt: the run is staged and waiting" test -n "$(ls -A "$T/tmp")"
sleep 0.3
kill -TERM "$pid"
wait "$pid"; st=$?
expect_eq "interrupt: ended by SIGTERM (128 + 15)" "$st" 143
expect_eq "interrupt: no temporary left beside the outputs" "$(ls -A "$T/w" | grep -c arrank)" 0
expect_eq "interrupt: no temporary left in TMPDIR" "$(ls -A "$T/tmp" | wc -l)" 0
ok_if "interrupt: r.json not written" test ! -e "$T/w/r.json"

# plot, interrupted (SIGINT, as Ctrl-C sends it) while gnuplot runs: no
# private folder left.  A background job of a script starts with SIGINT
# ignored (POSIX), and arrank leaves an ignored signal ignored (nohup), so
# env gives the job the default disposition first, as a terminal would.
cat >"$T/slowgp" <<'SH'
#!/bin/sh
pwd >"$GP_CWD"
cat >"$GP_SCRIPT"
sleep 30
SH
chmod +x "$T/slowgp"
GP_CWD="$T/gp.cwd" GP_SCRIPT="$T/gp.script" ARRANK_GNUPLOT="$T/slowgp" \
    env --default-signal=INT "$A" plot "$C" --at 270C --out "$T/w/p" >/dev/null 2>&1 &
pid=$!
i=0
while [ "$i" -lt 100 ] && ! [ -s "$T/gp.cwd" ]; do sleep 0.1; i=$((i + 1)); done
sleep 0.3
kill -INT "$pid"
wait "$pid"; st=$?
expect_eq "plot interrupted: ended by SIGINT (128 + 2)" "$st" 130
expect_eq "plot interrupted: no private folder left" "$(ls -A "$T/w" | grep -c arrank)" 0
ok_if "plot interrupted: no output folder" test ! -e "$T/w/p"
pkill -f "$T/slowgp" 2>/dev/null
sleep 0.1

# ---- gnuplot never writes to a guessable name in the user's folder ----------
case "$(cat "$T/gp.cwd")" in
# (the library's own mkdtemp folder inside the run's private folder)
"$T/w/.arrank-"??????/.arrank-figures.??????) gp_private=yes ;;
*) gp_private="no: $(cat "$T/gp.cwd")" ;;
esac
expect_eq "gnuplot runs in a private folder made by mkdtemp" "$gp_private" yes
ok_if "gnuplot's script names no path outside its folder" \
    sh -c "! grep '^set output' '$T/gp.script' | grep -q /"

# ---- outputs never collide: two campaigns in folders of the same name -----
AA=$(cd "$(dirname "$A")" && pwd)/$(basename "$A") # the program, from another folder
mkdir -p "$T/co/2026-03" "$T/co/2026-05"
cp -r "$DEMO" "$T/co/2026-03/screen"
cp -r "$DEMO" "$T/co/2026-05/screen"
(cd "$T/co" && "$AA" plot 2026-03/screen --at 270C >/dev/null 2>&1); st=$?
expect_eq "collision: the first campaign plots into plots/screen" "$st" 0
before_co=$(sums "$T/co/plots/screen")
(cd "$T/co" && "$AA" plot 2026-05/screen --at 270C >/dev/null 2>"$T/err"); st=$?
expect_eq "collision: another campaign into the same default folder is refused (exit 2)" "$st" 2
ok_if "collision: the message names both campaigns and --out" \
    sh -c "grep -q '2026-03/screen.*2026-05/screen.*--out' '$T/err'"
(cd "$T/co" && "$AA" report 2026-05/screen --at 270C >/dev/null 2>&1); st=$?
expect_eq "collision: report into that folder is refused too" "$st" 2
expect_eq "collision: the first campaign's figures are untouched" "$(sums "$T/co/plots/screen")" "$before_co"
(cd "$T/co" && "$AA" report 2026-03/screen --at 270C >/dev/null 2>&1); st=$?
expect_eq "collision: the same campaign again is fine" "$st" 0
(cd "$T/co" && "$AA" plot 2026-05/screen --at 270C --out plots/screen >/dev/null 2>&1); st=$?
expect_eq "collision: an explicit --out is the user's choice" "$st" 0

# ---- messages: text from files cannot reach the terminal raw ----------------
mkdir "$T/esc"
printf '# sample = X\033[2J\n# mass = 40 mg\nT [degC],rate [umol/(g*s)]\n231,0.4\n245,0.8\n' \
    >"$T/esc/a
b.csv"
cp "$C/ZN-01.csv" "$T/esc/good.csv"
"$A" fit "$T/esc" >/dev/null 2>"$T/err"
# An id with a control character is refused at its line since issue 18 (the
# file is not used): two lines, the file's and the summary, each one line.
expect_eq "a file name with a newline: each message stays one line" "$(wc -l <"$T/err")" 2
ok_if "a file name with a newline: shown escaped" grep -q 'a\\nb.csv:1: ' "$T/err"
ok_if "an id with ESC: refused at its line, the file not used" \
    grep -q "the sample id is not valid UTF-8 text (or holds a control character).*; file not used" "$T/err"
ok_if "an id with ESC: no raw ESC byte on the terminal" \
    sh -c "! grep -q \"\$(printf '\033')\" '$T/err'"

# An id from a file name (no '# sample' line) may still hold ESC: shown escaped.
mkdir "$T/esc2"
printf 'T [degC],rate [umol/(g*s)]\n231,0.4\n245,0.8\n' >"$T/esc2/$(printf 'X\033[2J').csv"
cp "$C/ZN-01.csv" "$T/esc2/good.csv"
"$A" fit "$T/esc2" >/dev/null 2>"$T/err"
ok_if "an id with ESC from a file name: shown escaped as backslash 033" \
    grep -q "sample 'X\\\\033\[2J'" "$T/err"
ok_if "an id with ESC from a file name: no raw ESC byte on the terminal" \
    sh -c "! grep -q \"\$(printf '\033')\" '$T/err'"

tap_plan
