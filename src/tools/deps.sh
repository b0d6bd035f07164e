#!/bin/sh
# Install what arrank needs to build and test, from Debian's packages, and
# only what pkg-config or `command -v` cannot find.  Says what it installs.
#
#   deps.sh          what `make demo` needs (build, gnuplot)
#   deps.sh --test   and what `make test` needs besides (SciPy, headless
#                    Chromium for the report check, a CJK font for the
#                    figures of CJK ids, clang for the fuzzers, a locale
#                    with a decimal comma for the locale tests)
set -eu
for_test=0
[ "${1:-}" = "--test" ] && for_test=1

need=""
need_locale=0
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
    # A font with Chinese, Japanese and Korean characters: tests/check_plot.sh
    # draws PNG figures of such ids (without one, pango draws them wrongly).
    [ -n "$(fc-list :lang=zh 2>/dev/null)" ] || need="$need fonts-wqy-microhei"
    # The fuzzers (make fuzz): clang and its libFuzzer runtime; make test-valgrind;
    # GNU time for peak memory in tests/check_limits.sh and make bench.
    command -v clang >/dev/null 2>&1 || need="$need clang"
    rt=$(clang --print-runtime-dir 2>/dev/null || true)
    [ -n "$rt" ] && [ -f "$rt/libclang_rt.fuzzer-$(uname -m).a" ] ||
        need="$need libclang-rt-14-dev"
    command -v valgrind >/dev/null 2>&1 || need="$need valgrind"
    [ -x /usr/bin/time ] || need="$need time"
    # tests/test_locale.c and check_cli.sh run under de_DE.UTF-8 (a decimal
    # comma): Debian's locales package has its source, localedef builds it.
    if ! locale -a 2>/dev/null | grep -qix 'de_DE\.utf-\?8'; then
        need_locale=1
        [ -f /usr/share/i18n/locales/de_DE ] || need="$need locales"
    fi
fi
[ -n "${ARRANK_DEPS_EXTRA:-}" ] && need="$need $ARRANK_DEPS_EXTRA"

if [ -z "$need" ] && [ "$need_locale" -eq 0 ]; then
    echo "deps: all build and test dependencies present"
    exit 0
fi

if [ "$(id -u)" -eq 0 ]; then sudo=""; else sudo="sudo"; fi
if [ -n "$need" ]; then
    echo "deps: installing:$need"
    export DEBIAN_FRONTEND=noninteractive
    $sudo apt-get update -qq
    # shellcheck disable=SC2086
    $sudo apt-get install -y -qq --no-install-recommends $need >/dev/null
    echo "deps: installed:$need"
fi
if [ "$need_locale" -eq 1 ]; then
    echo "deps: generating the locale de_DE.UTF-8"
    $sudo localedef -i de_DE -f UTF-8 de_DE.UTF-8
fi
