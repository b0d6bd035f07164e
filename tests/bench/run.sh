#!/bin/sh
# run.sh BUILD - `make bench`: see bench.py.  Debian's python3 has SciPy.
set -eu
exec /usr/bin/python3 tests/bench/bench.py "$1" "${BENCH_REPS:-5}"
