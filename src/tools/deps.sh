#!/bin/sh
# Install what arrank needs to build and test, from Debian's packages, and
# only what pkg-config or `command -v` cannot find.  Says what it installs.
#
#   deps.sh          what `make demo` needs (build, gnuplot)
#   deps.sh --test   and what `make test` needs besides (SciPy, headless
#                    Chromium for the report check, clang for the fuzzers)
set -eu
for_test=0
[ "${1:-}" = "--test" ] && for_test=1

need=""
have_pc() { pkg-config --exists "$1" 2>/dev/null; }
have_header() { [ -f "/usr/include/$1" ]; }

command -v cc >/dev/null 2>&1 || need="$need gcc"
command -v make >/dev/null 2>&1 || need="$need make"
command -v pkg-config >/dev/null 2>&1 || need="$need pkg-config"
have_pc gsl || need="$need libgsl-dev"
have_header csv.h || need="$need libcsv-dev"
have_pc udunits || need="$need libudunits2-dev"
have_pc inih || need="$need libinih-dev"
have_pc jansson || need="$need libjansson-dev"
have_pc nettle || need="$need nettle-dev"
command -v gnuplot >/dev/null 2>&1 || need="$need gnuplot-nox"
if [ "$for_test" -eq 1 ]; then
    have_pc cmocka || need="$need libcmocka-dev"
    # SciPy is the independent reference in the tests; it must be Debian's, for
    # Debian's python3 (a python3 earlier on PATH may be another installation).
    /usr/bin/python3 -c 'import scipy' >/dev/null 2>&1 || need="$need python3-scipy"
    command -v chromium >/dev/null 2>&1 || need="$need chromium"
    # The fuzzers (make fuzz): clang and its libFuzzer runtime; make test-valgrind;
    # GNU time for peak memory in tests/check_limits.sh and make bench.
    command -v clang >/dev/null 2>&1 || need="$need clang"
    rt=$(clang --print-runtime-dir 2>/dev/null || true)
    [ -n "$rt" ] && [ -f "$rt/libclang_rt.fuzzer-$(uname -m).a" ] ||
        need="$need libclang-rt-14-dev"
    command -v valgrind >/dev/null 2>&1 || need="$need valgrind"
    [ -x /usr/bin/time ] || need="$need time"
fi
[ -n "${ARRANK_DEPS_EXTRA:-}" ] && need="$need $ARRANK_DEPS_EXTRA"

if [ -z "$need" ]; then
    echo "deps: all build and test dependencies present"
    exit 0
fi

echo "deps: installing:$need"
if [ "$(id -u)" -eq 0 ]; then sudo=""; else sudo="sudo"; fi
export DEBIAN_FRONTEND=noninteractive
$sudo apt-get update -qq
# shellcheck disable=SC2086
$sudo apt-get install -y -qq --no-install-recommends $need >/dev/null
echo "deps: installed:$need"
