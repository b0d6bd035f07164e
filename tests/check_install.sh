#!/bin/sh
# check_install.sh - `make install` gives what a Unix tool gives: it installs
# into a DESTDIR, the manual page renders with `man -l` and says what --help
# says, bash completion completes commands and option words, and the example
# of the public API (tests/example_api.c) compiles through pkg-config against
# the installed headers and shared library (soname libarrank.so.0) and runs on
# the demo.  Its own build folder ($BUILD-install, plain flags), so that a
# sanitizer build's objects are never mixed in.  Prints TAP.
. tests/tap.sh
BUILD=${BUILD:-build}
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
D="$T/dest"
B="$BUILD-install"
# Plain flags named on the command line: make exports the variables a parent
# make was given (make test-asan's SAN, OPT) into this script's environment.
env -u MAKEFLAGS -u MFLAGS -u MAKELEVEL make -s -j2 BUILD="$B" SAN= OPT="-O2 -g" CFLAGS= \
    DESTDIR="$D" PREFIX=/usr install >"$T/make.log" 2>&1; st=$?
expect_eq "make install DESTDIR=... PREFIX=/usr: exit 0" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/make.log" | tail -20
for f in bin/arrank lib/libarrank.a lib/libarrank.so lib/libarrank.so.0 lib/pkgconfig/arrank.pc \
    include/arrank/analysis.h share/man/man1/arrank.1 share/bash-completion/completions/arrank; do
    ok_if "installed: /usr/$f" test -e "$D/usr/$f"
done
ok_if "the shared library carries the soname libarrank.so.0" \
    sh -c "objdump -p '$D/usr/lib/libarrank.so.0' | grep -q 'SONAME *libarrank.so.0'"

# The manual: renders without a warning, and holds every option of --help.
MANWIDTH=80 man -l "$D/usr/share/man/man1/arrank.1" >"$T/man.txt" 2>"$T/man.err"; st=$?
expect_eq "man -l arrank.1: exit 0" "$st" 0
ok_if "man -l arrank.1: no warning" test ! -s "$T/man.err"
groff -man -ww -z "$D/usr/share/man/man1/arrank.1" 2>"$T/groff.err"
ok_if "groff -ww finds nothing to warn about" test ! -s "$T/groff.err"
missing=""
for c in fit rank check plot report; do
    for o in $("$D/usr/bin/arrank" "$c" --help | grep -oE '^  --[a-z-]+' | sort -u); do
        grep -q -- "$o" "$T/man.txt" || missing="$missing $c$o"
    done
done
expect_eq "the manual names every option of every command's --help" "$missing" ""
ok_if "the manual carries the cautions" grep -q "reactor" "$T/man.txt"

# Completion: commands, options, and the words an option takes.
comp() { bash -c ". '$D/usr/share/bash-completion/completions/arrank'; COMP_WORDS=($1);
    COMP_CWORD=$2; _arrank; echo \"\${COMPREPLY[*]}\""; }
expect_eq "completion: 'arrank ra' -> rank" "$(comp 'arrank ra' 1)" "rank"
expect_eq "completion: 'arrank rank C --b' -> --bootstrap --by" "$(comp 'arrank rank C --b' 3)" \
    "--bootstrap --by"
expect_eq "completion: 'arrank rank C --by' -> rate ea prefactor" \
    "$(comp 'arrank rank C --by ""' 4)" "rate ea prefactor"
expect_eq "completion: 'arrank fit C --model' -> the three models" \
    "$(comp 'arrank fit C --model ""' 4)" "arrhenius modified eyring"

# The example of the public API, built through pkg-config against the copy.
export PKG_CONFIG_PATH="$D/usr/lib/pkgconfig" PKG_CONFIG_SYSROOT_DIR="$D"
flags=$(pkg-config --cflags --libs arrank 2>"$T/pc.err"); st=$?
expect_eq "pkg-config finds arrank.pc" "$st" 0
ok_if "pkg-config points into the installed copy" sh -c "echo '$flags' | grep -q -- '-I$D/usr/include'"
${CC:-cc} -std=c11 -Wall -Wextra -o "$T/example" tests/example_api.c $flags 2>"$T/cc.err"; st=$?
expect_eq "tests/example_api.c compiles against the installed copy" "$st" 0
[ "$st" -eq 0 ] || sed 's/^/# /' "$T/cc.err"
ok_if "the example links the shared library" \
    sh -c "LD_LIBRARY_PATH='$D/usr/lib' ldd '$T/example' | grep -q '$D/usr/lib/libarrank.so.0'"
LD_LIBRARY_PATH="$D/usr/lib" "$T/example" campaigns/zeolite-ni-screen 270C >"$T/ex.out" 2>"$T/ex.err"
st=$?
expect_eq "the example runs on the demo" "$st" 0
# The example's ranking is the program's: the same ids in the same order.
build_ids=$("$D/usr/bin/arrank" rank campaigns/zeolite-ni-screen --at 270C --csv - 2>/dev/null |
    grep -v '^#' | awk -F, 'NR > 1 && $1 != "" { print $2 }' | tr '\n' ' ')
ex_ids=$(awk -F, 'NR > 1 && $1 != "-" { print $2 }' "$T/ex.out" | tr '\n' ' ')
ok_if "the example ranks some samples" test -n "$ex_ids"
expect_eq "the example ranks as arrank rank does" "$ex_ids" "$build_ids"

tap_plan
