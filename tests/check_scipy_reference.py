"""check_scipy_reference.py - the reference catalyst, several campaigns and
`compare` against SciPy.

Writes two seeded campaigns (numpy) into a temporary folder: the same
reference catalyst in both, the second rig reading 20 % low, three samples
in both and two in one only.  Runs `arrank rank A B --json -` and
`arrank compare A B --json -` and recomputes every ratio, interval,
P(better), Ea difference, the test of equal reference rates and the
comparison's p-values from the per-sample numbers the same JSON prints
(ln r at T, its standard error and degrees of freedom; Ea and its standard
error): Welch's two-sample t test by scipy.stats.ttest_ind_from_stats
(equal_var=False, with nobs = dof + 1 and std = se sqrt(nobs), so that its
standard error and degrees of freedom are the estimate's), t quantiles by
scipy.stats.t.ppf, Holm's procedure written out here (Holm 1979).
Agreement claimed: 1e-8 relative.  Prints TAP.
"""
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

from tap import finish, report

R = 8.31446261815324  # J/(mol K), exact in the 2019 SI
TOL = 1e-8
BUILD = os.environ.get("BUILD", "build")
ARRANK = os.path.join(BUILD, "arrank")
T_OP = 525.0



def close(got, want, what):
    if got is None or want is None:
        report(got is None and want is None, what)
        return
    scale = abs(want) if want != 0 else 1.0
    ok = abs(got - want) <= TOL * scale
    report(ok, "%s (got %r, want %r)" % (what, got, want) if not ok else what)


def write_campaign(folder, name, samples, drift, rng, reference):
    path = os.path.join(folder, name)
    os.mkdir(path)
    with open(os.path.join(path, "campaign.ini"), "w") as f:
        f.write("[campaign]\noperating_temperature = %g K\n" % T_OP)
        if reference:
            f.write("reference = %s\n" % reference)
    for sid, ea, ln_r_op, n in samples:
        temps = np.linspace(495.0, 560.0, n)
        ln_r = ln_r_op + math.log(drift) - ea / R * (1.0 / temps - 1.0 / T_OP)
        ln_r = ln_r + rng.normal(0.0, 0.04, n)
        with open(os.path.join(path, sid + ".csv"), "w") as f:
            f.write("T [K], rate [umol/(g*s)]\n")
            for t, r in zip(temps, np.exp(ln_r)):
                f.write("%.3f, %.8g\n" % (t, r))
    return path


def welch(a, se_a, dof_a, b, se_b, dof_b):
    """d, se, Welch dof, two-sided p: SciPy's Welch test on equivalent samples."""
    na, nb = dof_a + 1.0, dof_b + 1.0
    res = stats.ttest_ind_from_stats(a, se_a * math.sqrt(na), na, b, se_b * math.sqrt(nb), nb,
                                     equal_var=False)
    se = math.sqrt(se_a ** 2 + se_b ** 2)
    dof = (se_a ** 2 + se_b ** 2) ** 2 / (se_a ** 4 / dof_a + se_b ** 4 / dof_b)
    return a - b, se, dof, float(res.pvalue)


def holm(p):
    order = sorted(range(len(p)), key=lambda i: p[i])
    adj, run = [0.0] * len(p), 0.0
    for k, i in enumerate(order):
        run = max(run, min(1.0, (len(p) - k) * p[i]))
        adj[i] = run
    return adj


def run(args):
    out = subprocess.run([ARRANK] + args, capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError("arrank %s: %s" % (" ".join(args), out.stderr))
    return json.loads(out.stdout)


def check_rank(doc, conf):
    by_campaign = {}
    for s in doc["samples"]:
        if s.get("is_reference"):
            by_campaign[s["campaign"]] = s
    for s in doc["samples"]:
        if s["error"] is not None or s.get("is_reference"):
            continue
        ref = by_campaign[s["campaign"]]
        d, se, dof, _ = welch(math.log(s["rate_at_T"]), s["ln_rate_at_T_se"], s["dof"],
                              math.log(ref["rate_at_T"]), ref["ln_rate_at_T_se"], ref["dof"])
        t = stats.t.ppf(0.5 + conf / 2.0, dof)
        close(s["ratio_to_reference"], math.exp(d), "%s ratio" % s["id"])
        close(s["ratio_to_reference_ci"][0], math.exp(d - t * se), "%s ratio low" % s["id"])
        close(s["ratio_to_reference_ci"][1], math.exp(d + t * se), "%s ratio high" % s["id"])
        close(s["p_better_than_reference"], float(stats.t.cdf(d / se, dof)),
              "%s P(better)" % s["id"])
        e, ese, edof, _ = welch(s["ea_kJ_mol"], s["ea_kJ_mol_se"], s["n_used"] - 2,
                                ref["ea_kJ_mol"], ref["ea_kJ_mol_se"], ref["n_used"] - 2)
        te = stats.t.ppf(0.5 + conf / 2.0, edof)
        close(s["ea_minus_reference_kJ_mol"], e, "%s Ea difference" % s["id"])
        close(s["ea_minus_reference_kJ_mol_ci"][1], e + te * ese, "%s Ea difference high"
              % s["id"])
    refs = [by_campaign[c["campaign"]] for c in doc["reference"]["campaigns"]]
    a, b = refs
    d, se, dof, p = welch(math.log(b["rate_at_T"]), b["ln_rate_at_T_se"], b["dof"],
                          math.log(a["rate_at_T"]), a["ln_rate_at_T_se"], a["dof"])
    t = stats.t.ppf(0.5 + conf / 2.0, dof)
    second = doc["reference"]["campaigns"][1]
    close(second["ratio_to_first"], math.exp(d), "reference's ratio, second to first")
    close(second["ratio_to_first_ci"][0], math.exp(d - t * se), "its interval, low")
    close(second["ratio_to_first_ci"][1], math.exp(d + t * se), "its interval, high")
    close(doc["reference"]["equal_p"], p, "equal reference rates: Welch's p (SciPy)")
    report(second["ratio_to_first_ci"][0] < 0.8 < second["ratio_to_first_ci"][1],
           "the drift interval holds the true 0.8")
    report("lower" in second["drift"], "the drift is named: %s" % second["drift"])
    report(doc["ranked_by"] == "ratio_to_reference", "pooled ranking on the ratios")


def check_compare(doc, ranked):
    rows = [r for r in doc["samples"] if r["compared"]]
    p_rate, p_ea = [], []
    for r in rows:
        d, se, dof, p = welch(math.log(r["rate_at_T_b"]), r["_b_se"], r["_b_dof"],
                              math.log(r["rate_at_T_a"]), r["_a_se"], r["_a_dof"])
        t = stats.t.ppf(0.5 + doc["confidence"] / 2.0, dof)
        close(r["ratio"], math.exp(d), "compare %s ratio" % r["id"])
        close(r["ratio_ci"][0], math.exp(d - t * se), "compare %s ratio low" % r["id"])
        close(r["p"], p, "compare %s p (SciPy Welch)" % r["id"])
        e, _, _, pe = welch(r["_b_ea"], r["_b_ea_se"], r["_b_n"] - 2, r["_a_ea"], r["_a_ea_se"],
                            r["_a_n"] - 2)
        close(r["ea_change_kJ_mol"], e, "compare %s Ea change" % r["id"])
        close(r["ea_p"], pe, "compare %s Ea p (SciPy Welch)" % r["id"])
        p_rate.append(r["p"])
        p_ea.append(r["ea_p"])
    for r, adj in zip(rows, holm(p_rate)):
        close(r["p_holm"], adj, "compare %s Holm" % r["id"])
        report(r["changed"] == (adj <= 1.0 - doc["confidence"]), "compare %s verdict" % r["id"])
    for r, adj in zip(rows, holm(p_ea)):
        report(r["ea_changed"] == (adj <= 1.0 - doc["confidence"]),
               "compare %s Ea verdict" % r["id"])
    report(sorted(doc["unmatched"]) == ["Q4", "Z9"], "unmatched ids listed")


def check_compare_reference(doc, fa, fb):
    """compare --reference: (r_B/ref_B)/(r_A/ref_A), the four variances summed,
    Welch-Satterthwaite over four terms, SciPy's t."""
    report(doc["reference"] == "REF", "compare against the reference: named")
    for r in doc["samples"]:
        if r["id"] == "REF":
            report(not r["compared"] and r["ratio_measured"] is not None,
                   "compare: the reference itself not compared, its drift shown")
            continue
        parts = [(fb[r["id"]], 1), (fb["REF"], -1), (fa[r["id"]], -1), (fa["REF"], 1)]
        d = sum(sign * math.log(s["rate_at_T"]) for s, sign in parts)
        v = [s["ln_rate_at_T_se"] ** 2 for s, _ in parts]
        dof = sum(v) ** 2 / sum(vi ** 2 / s["dof"] for vi, (s, _) in zip(v, parts))
        se = math.sqrt(sum(v))
        t = stats.t.ppf(0.5 + doc["confidence"] / 2.0, dof)
        close(r["ratio"], math.exp(d), "compare --reference %s ratio" % r["id"])
        close(r["ratio_ci"][1], math.exp(d + t * se), "compare --reference %s ratio high"
              % r["id"])
        close(r["ratio_dof"], dof, "compare --reference %s Welch dof, four terms" % r["id"])
        close(r["p"], float(2.0 * stats.t.sf(abs(d / se), dof)),
              "compare --reference %s p (SciPy t.sf)" % r["id"])


def main():
    if not os.access(ARRANK, os.X_OK):
        print("1..1")
        print("not ok 1 - %s not built" % ARRANK)
        return 1
    rng = np.random.default_rng(20261203)
    common = [("REF", 72e3, math.log(2.0), 8), ("P1", 60e3, math.log(3.1), 7),
              ("P2", 95e3, math.log(1.2), 9)]
    with tempfile.TemporaryDirectory() as folder:
        a = write_campaign(folder, "rig-a", common + [("Q4", 80e3, 0.4, 6)], 1.0, rng, "REF")
        b = write_campaign(folder, "rig-b", common + [("Z9", 70e3, 0.9, 6)], 0.8, rng, None)
        ranked = run(["rank", a, b, "--json", "-"])
        check_rank(ranked, ranked["confidence"])
        cmp_doc = run(["compare", a, b, "--json", "-"])
        # each sample's own numbers, from the fit JSON of each campaign
        fa = {s["id"]: s for s in run(["fit", a, "--json", "-"])["samples"]}
        fb = {s["id"]: s for s in run(["fit", b, "--json", "-"])["samples"]}
        for r in cmp_doc["samples"]:
            sa, sb = fa[r["id"]], fb[r["id"]]
            r.update({"_a_se": sa["ln_rate_at_T_se"], "_a_dof": sa["dof"],
                      "_b_se": sb["ln_rate_at_T_se"], "_b_dof": sb["dof"],
                      "_a_ea": sa["ea_kJ_mol"], "_a_ea_se": sa["ea_kJ_mol_se"],
                      "_a_n": sa["n_used"], "_b_ea": sb["ea_kJ_mol"],
                      "_b_ea_se": sb["ea_kJ_mol_se"], "_b_n": sb["n_used"]})
        check_compare(cmp_doc, ranked)
        check_compare_reference(run(["compare", a, b, "--reference", "REF", "--json", "-"]),
                                fa, fb)
    return finish()


if __name__ == "__main__":
    sys.exit(main())
