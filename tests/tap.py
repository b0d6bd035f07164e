"""tap.py - TAP for the Python checks against SciPy: each result is
reported as it comes, and the plan ("1..N") is printed last with them, so a
check that stops early has no plan and fails (tests/check_runner.sh)."""

results = []


def report(ok, what):
    """One result: ok (true or false) and what was checked."""
    results.append((bool(ok), what))


def finish():
    """Print the plan and every result; the exit status: 0 when all passed."""
    print("1..%d" % len(results))
    for i, (ok, what) in enumerate(results, 1):
        print("%s %d - %s" % ("ok" if ok else "not ok", i, what))
    return 0 if all(ok for ok, _ in results) else 1
