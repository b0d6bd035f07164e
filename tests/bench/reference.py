#!/usr/bin/python3
"""reference.py - the SciPy reference for `make bench`: the same work as
`arrank rank CAMPAIGN --no-diagnose` on a gen_bench campaign, written the way a
scientist would in Python with NumPy and SciPy.

For each *.csv of the folder: read it (metadata '#' lines, a 'name [unit]'
header, rows of T, rate, rate_sd), convert to K and umol/(g*s) (the two unit
sets gen_bench writes), fit ln r = b0 + b1 (1/T - 1/T_ref) weighted by
(r/sd)^2 with scipy.optimize.curve_fit (covariance scaled by the residual
variance, absolute_sigma=False, as arrank does), predict the rate at the
operating temperature with its t-based interval (scipy.stats.t.ppf, delta
method with the full covariance), and sort by that rate, highest first.

    reference.py CAMPAIGN T_OP_K [--ids FILE] [--json FILE]

Prints the ranked table on stdout; --ids writes the ranked sample ids, one a
line, so the benchmark can check both programs agree on the order; --json
writes the results as JSON, one record per sample (rank, id, Ea, rate at T
with its interval), as a script that hands its results on would.
"""
import csv
import json
import math
import os
import sys

import numpy as np
from scipy import optimize, stats

# Unit conversions for the two unit sets of gen_bench (1 umol/(g*s) = 3.6 mol/(kg*h)).
TEMP_TO_K = {"degC": (1.0, 273.15), "K": (1.0, 0.0)}
RATE_TO_UMOL_G_S = {"umol/(g*s)": 1.0, "mol/(kg*h)": 1.0 / 3.6}


def split_header(field):
    name, _, rest = field.strip().partition("[")
    return name.strip(), rest.rstrip("]").strip()


def read_sample(path):
    sample_id = os.path.splitext(os.path.basename(path))[0]
    with open(path, newline="") as f:
        lines = f.read().splitlines()
    k = 0
    while k < len(lines) and lines[k].lstrip().startswith("#"):
        key, eq, value = lines[k].lstrip()[1:].partition("=")
        if eq and key.strip() == "sample":
            sample_id = value.strip()
        k += 1
    rows = list(csv.reader(lines[k:]))
    header = [split_header(h) for h in rows[0]]
    (_, t_unit), (_, r_unit), (_, _) = header[:3]
    scale, offset = TEMP_TO_K[t_unit]
    rf = RATE_TO_UMOL_G_S[r_unit]
    data = np.array([[float(c) for c in row[:3]] for row in rows[1:] if row], dtype=float)
    T = data[:, 0] * scale + offset
    return sample_id, T, data[:, 1] * rf, data[:, 2] * rf


def line(x, b0, b1):
    return b0 + b1 * x


def fit_and_predict(T, r, sd, T_op, confidence):
    y = np.log(r)
    sigma = sd / r  # relative error of r is the absolute error of ln r
    w = 1.0 / sigma**2
    inv_T_ref = np.sum(w / T) / np.sum(w)
    x = 1.0 / T - inv_T_ref
    p, cov = optimize.curve_fit(line, x, y, p0=(y.mean(), -1e4), sigma=sigma,
                                absolute_sigma=False)
    x_op = 1.0 / T_op - inv_T_ref
    ln_r = p[0] + p[1] * x_op
    se = math.sqrt(cov[0, 0] + x_op * x_op * cov[1, 1] + 2 * x_op * cov[0, 1])
    t = stats.t.ppf(0.5 * (1 + confidence), len(T) - 2)
    ea_kJ_mol = -8.31446261815324 * p[1] / 1e3
    return ea_kJ_mol, math.exp(ln_r), math.exp(ln_r - t * se), math.exp(ln_r + t * se)


def main():
    folder, T_op = sys.argv[1], float(sys.argv[2])
    opts = dict(zip(sys.argv[3::2], sys.argv[4::2]))
    ids_path, json_path = opts.get("--ids"), opts.get("--json")
    results = []
    for name in sorted(os.listdir(folder)):
        if not name.endswith(".csv"):
            continue
        sid, T, r, sd = read_sample(os.path.join(folder, name))
        results.append((sid,) + fit_and_predict(T, r, sd, T_op, 0.95))
    results.sort(key=lambda row: -row[2])
    out = sys.stdout
    out.write("rank  sample  Ea [kJ/mol]  rate [umol/(g*s)] [95% interval]\n")
    for k, (sid, ea, rate, lo, hi) in enumerate(results, 1):
        out.write(f"{k}  {sid}  {ea:.1f}  {rate:.3g} [{lo:.3g}, {hi:.3g}]\n")
    if ids_path:
        with open(ids_path, "w") as f:
            f.writelines(row[0] + "\n" for row in results)
    if json_path:
        with open(json_path, "w") as f:
            json.dump({"operating_temperature_K": T_op, "rate_unit": "umol/(g*s)",
                       "confidence": 0.95,
                       "samples": [{"rank": k, "id": sid, "ea_kJ_mol": ea, "rate_at_T": rate,
                                    "rate_at_T_ci": [lo, hi]}
                                   for k, (sid, ea, rate, lo, hi) in enumerate(results, 1)]},
                      f, indent=2)


if __name__ == "__main__":
    main()
