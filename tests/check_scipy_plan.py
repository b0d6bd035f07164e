"""check_scipy_plan.py - the planner's P(best) against SciPy.

The plan scores a simulated campaign's separate goal by the leader's P(best)
under the ranking's model: each key is mean + se T with T ~ Student's t on
the sample's dof (normal for an infinite dof).  arrank computes it by
Gauss-Legendre quadrature on z = tan(theta) (src/lib/plan.c); the reference
here is an independent route: scipy.integrate.quad (QUADPACK's adaptive
QAGI) of the same integral over the real line, with scipy.stats.t's pdf and
cdf, to 1e-11.  Cases are seeded random draws covering 2 to 6 samples, dof 1
to 40 and infinite, and ratios of the leader's se to a rival's from 0.01 to
100.  Agreement claimed (README "Planning the next runs"): 1e-9.  Prints
TAP.
"""
import math
import os
import subprocess
import sys

import numpy as np
from scipy import integrate, stats

from tap import finish, report

BUILD = os.environ.get("BUILD", "build")
PBESTCHECK = os.path.join(BUILD, "tools", "pbestcheck")

TOL = 1e-9


def dist(dof):
    return stats.norm if math.isinf(dof) else stats.t(dof)


def reference(best, mean, se, dof):
    """P(best) by adaptive quadrature over the leader's z."""
    lead = dist(dof[best])
    rivals = [(mean[j], se[j], dist(dof[j])) for j in range(len(mean)) if j != best]

    def f(z):
        v = mean[best] + se[best] * z
        p = lead.pdf(z)
        for m, s, d in rivals:
            p *= d.cdf((v - m) / s)
        return p

    # the rivals' steps in z as break points, where each one's cdf moves
    pts = sorted((m - mean[best]) / se[best] for m, _, _ in rivals)
    lo, hi = min(pts) - 50.0, max(pts) + 50.0
    total = integrate.quad(f, -np.inf, lo, epsabs=1e-12, epsrel=1e-11, limit=500)[0]
    total += integrate.quad(f, lo, hi, points=[p for p in pts if lo < p < hi],
                            epsabs=1e-12, epsrel=1e-11, limit=2000)[0]
    total += integrate.quad(f, hi, np.inf, epsabs=1e-12, epsrel=1e-11, limit=500)[0]
    return total


def cases():
    rng = np.random.default_rng(20261203)
    out = []
    for k in range(60):
        n = int(rng.integers(2, 7))
        dof = [float(rng.integers(1, 41)) for _ in range(n)]
        if k % 6 == 0:
            dof = [math.inf] * n
        elif k % 6 == 1:
            dof[0] = math.inf
        lead_se = float(rng.uniform(0.005, 0.05))
        # the leader's se over each rival's: 0.01 to 40, a few to 100
        top = 100.0 if k % 10 == 9 else 40.0
        ratio = np.exp(rng.uniform(math.log(0.01), math.log(top), n - 1))
        se = [lead_se] + [lead_se / r for r in ratio]
        # rivals near the leader, a few of them far below
        mean = [0.0] + [float(rng.normal(0.0, 1.5) * math.hypot(lead_se, s)) for s in se[1:]]
        if k % 5 == 0:
            mean[-1] -= 30.0 * lead_se
        out.append((0, mean, se, dof, max(ratio)))
    return out


def main():
    if not os.access(PBESTCHECK, os.X_OK):
        print("1..1")
        print("not ok 1 - %s not built (make BUILD=%s)" % (PBESTCHECK, BUILD))
        return 1
    all_cases = cases()
    lines = []
    for best, mean, se, dof, _ in all_cases:
        fields = [str(best)]
        for m, s, d in zip(mean, se, dof):
            fields += [repr(m), repr(s), "inf" if math.isinf(d) else repr(d)]
        lines.append(" ".join(fields))
    proc = subprocess.run([PBESTCHECK], input="\n".join(lines) + "\n", capture_output=True,
                          text=True)
    got = [float(x) for x in proc.stdout.split()]
    report(proc.returncode == 0 and len(got) == len(all_cases),
           "pbestcheck answered every case (exit %d)" % proc.returncode)
    worst = 0.0
    seen_low = seen_high = 0
    for (best, mean, se, dof, ratio), p in zip(all_cases, got):
        want = reference(best, mean, se, dof)
        worst = max(worst, abs(p - want))
        seen_low += want < 0.5
        seen_high += want > 0.9
        report(abs(p - want) <= TOL,
               "n %d, dof %s, se ratio up to %.3g: P(best) %.12f, SciPy %.12f"
               % (len(mean), ",".join("inf" if math.isinf(d) else "%g" % d for d in dof),
                  ratio, p, want))
    report(seen_low >= 5 and seen_high >= 5,
           "cases on both sides: %d below 0.5, %d above 0.9" % (seen_low, seen_high))
    # one closed form: two normal keys, P = Phi(d / sqrt(s1^2 + s2^2))
    proc = subprocess.run([PBESTCHECK], input="0 1 0.02 inf 0.95 0.03 inf\n",
                          capture_output=True, text=True)
    want = stats.norm.cdf(0.05 / math.hypot(0.02, 0.03))
    report(abs(float(proc.stdout) - want) < 1e-10,
           "two normal keys: %s against Phi(d / s) = %.12f" % (proc.stdout.strip(), want))
    print("# worst difference: %.2e" % worst)
    return finish()


if __name__ == "__main__":
    sys.exit(main())
