"""check_scipy_hold.py - a stability hold at one temperature against SciPy.

A sample measured at one temperature with a time on stream cannot give an
Arrhenius fit; arrank fits the drift of its rate with time instead,
ln r = a + b t, and reports it as `stability_hold` in the JSON and in
`check`'s words (src/lib/quality.c).  Seeded holds (numpy) are written into
a temporary campaign beside one ordinary sample, `arrank rank --json -` is
run, and every number is recomputed independently: unweighted holds by
scipy.stats.linregress (slope, its standard error, the two-sided p), weighted
ones (a rate_sd column) by scipy.linalg.lstsq on ln r with the rows scaled
by rate / rate_sd, the covariance (X'WX)^-1 scaled by the weighted residual
variance (as arrank's fits), p from scipy.stats.t; the change over the hold
exp(b span) - 1 and its interval from scipy.stats.t.ppf.  The verdict follows
the drift rule (p < 0.05 and a change of at least 5 %).  Agreement claimed:
1e-8 relative.  Prints TAP.
"""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import linalg, stats

from tap import finish, report

BUILD = os.environ.get("BUILD", "build")
ARRANK = os.path.join(BUILD, "arrank")
TOL = 1e-8

# id, seed, points, hours between them, drift per hour of ln r, scatter, weighted, degC
HOLDS = [
    ("H-down", 11, 13, 4.0, -0.004, 0.01, False, 250.0),
    ("H-flat", 12, 9, 6.0, 0.0, 0.02, False, 250.0),
    ("H-weighted", 13, 11, 2.5, -0.006, 0.015, True, 265.5),
    ("H-up", 14, 7, 8.0, 0.003, 0.01, False, 240.0),
]


def close(got, want, what):
    scale = abs(want) if want != 0 else 1.0
    ok = got is not None and abs(got - want) <= TOL * scale
    report(ok, "%s: %r against SciPy %r" % (what, got, want))


def write(folder):
    with open(os.path.join(folder, "campaign.ini"), "w") as f:
        f.write("[campaign]\ntitle = holds\noperating_temperature = 250 degC\n"
                "rate_unit = umol/(g*s)\n")
    with open(os.path.join(folder, "A1.csv"), "w") as f:  # an ordinary sample
        f.write("T [degC],rate [umol/(g*s)]\n220,0.61\n230,0.92\n240,1.38\n250,2.02\n")
    data = {}
    for name, seed, n, step, drift, sd, weighted, temp in HOLDS:
        rng = np.random.default_rng(seed)
        t = step * np.arange(n)
        rate = 2.0 * np.exp(drift * t + rng.normal(0.0, sd, n))
        rsd = rate * rng.uniform(0.5 * sd, 1.5 * sd, n) if weighted else None
        with open(os.path.join(folder, name + ".csv"), "w") as f:
            f.write("# sample = %s\nT [degC],rate [umol/(g*s)]%s,time_on_stream [h]\n"
                    % (name, ",rate_sd [umol/(g*s)]" if weighted else ""))
            for k in range(n):
                f.write("%r,%r%s,%r\n" % (temp, float(rate[k]),
                                          ",%r" % float(rsd[k]) if weighted else "",
                                          float(t[k])))
        data[name] = (t, rate, rsd)
    # too short to tell (4 points) and two temperatures: no hold
    with open(os.path.join(folder, "short.csv"), "w") as f:
        f.write("T [degC],rate [umol/(g*s)],time_on_stream [h]\n"
                "250,2.0,0\n250,1.9,5\n250,1.8,10\n250,1.7,15\n")
    return data


def reference(t, rate, rsd):
    """slope, se, dof, p, intercept at t = 0 by SciPy."""
    y = np.log(rate)
    n = len(t)
    if rsd is None:
        r = stats.linregress(t, y)
        return r.slope, r.stderr, n - 2, r.pvalue, r.intercept
    w = rate / rsd  # 1 / sigma of ln r
    X = np.column_stack([np.ones(n), t])
    beta, _, _, _ = linalg.lstsq(X * w[:, None], y * w)
    resid = (y - X @ beta) * w
    cov = np.linalg.inv((X * w[:, None]).T @ (X * w[:, None])) * (resid @ resid) / (n - 2)
    se = math.sqrt(cov[1][1])
    p = 2.0 * stats.t.sf(abs(beta[1] / se), n - 2)
    return beta[1], se, n - 2, p, beta[0]


def main():
    if not os.access(ARRANK, os.X_OK):
        print("1..1")
        print("not ok 1 - %s not built (make BUILD=%s)" % (ARRANK, BUILD))
        return 1
    with tempfile.TemporaryDirectory() as folder:
        data = write(folder)
        proc = subprocess.run([ARRANK, "rank", folder, "--json", "-"], capture_output=True,
                              text=True)
        report(proc.returncode == 0, "rank with holds beside a fitted sample: exit %d"
               % proc.returncode)
        doc = json.loads(proc.stdout)
        check = subprocess.run([ARRANK, "check", folder], capture_output=True, text=True)
    by_id = {s["id"]: s for s in doc["samples"]}
    report(by_id["A1"]["stability_hold"] is None,
           "an ordinary sample has no stability_hold")
    report(by_id["short"]["stability_hold"] is None and by_id["short"]["error"],
           "four points at one temperature: not fitted, too short for a hold")
    for name, seed, n, step, drift, sd, weighted, temp in HOLDS:
        h = by_id[name]["stability_hold"]
        if h is None:
            report(False, "%s: stability_hold present" % name)
            continue
        t, rate, rsd = data[name]
        slope, se, dof, p, a = reference(t, rate, rsd)
        close(h["slope_ln_rate_per_h"], slope, "%s slope of ln r per hour" % name)
        close(h["slope_se"], se, "%s its standard error" % name)
        close(h["p"], p, "%s two-sided p" % name)
        close(h["ln_rate_at_0"], a, "%s ln r at time 0" % name)
        report(h["dof"] == dof and h["n_points"] == n,
               "%s: %s dof, %s points" % (name, h["dof"], h["n_points"]))
        close(h["temp_K"], temp + 273.15, "%s temperature in K" % name)
        span = float(t[-1] - t[0])
        q = stats.t.ppf(0.975, dof)
        close(h["change"], math.expm1(slope * span), "%s change over the hold" % name)
        close(h["change_ci"][0], math.expm1((slope - q * se) * span), "%s change, lower" % name)
        close(h["change_ci"][1], math.expm1((slope + q * se) * span), "%s change, upper" % name)
        want = ("none" if not (p < 0.05 and abs(math.expm1(slope * span)) >= 0.05)
                else "deactivation" if slope < 0 else "activation")
        report(h["verdict"] == want, "%s: verdict %s (want %s)" % (name, h["verdict"], want))
        # the words give the change's interval with its sign (at another level
        # than the test's 5 % it may hold 0)
        if want != "none":
            span_words = "the change's 95 %% interval %+.0f to %+.0f %%" % (
                100 * math.expm1((slope - q * se) * span), 100 * math.expm1((slope + q * se) * span))
            report(any(span_words in line for line in check.stdout.splitlines()),
                   "%s: check gives %r" % (name, span_words))
        lead = "  problem: " if want != "none" else "  note: "
        report(any(line.startswith(lead + "held at one temperature, %.2f degC" % temp)
                   for line in check.stdout.splitlines()),
               "%s: check says it as a %s" % (name, lead.strip()))
    report("H-down" in by_id and by_id["H-down"]["stability_hold"]["verdict"] == "deactivation",
           "the hold drifting down 0.4 % an hour over 48 h is deactivation")
    report(by_id["H-flat"]["stability_hold"]["verdict"] == "none",
           "the flat hold has no verdict")
    return finish()


if __name__ == "__main__":
    sys.exit(main())
