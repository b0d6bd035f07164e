"""check_outputs.py - the JSON record per sample, --json-points, points.csv and
streaming, on the demo campaign and a generated 2,500-sample campaign.

Checks, printed as TAP (plan last):
  - points.csv from `rank --points`: exactly the documented columns, one row
    per point of every sample, every left-out point with a reason and every
    used point without one, T_K equal to the file's temperature converted to
    kelvin, every number parses; `plot` writes the same file beside
    results.csv;
  - the JSON without --json-points has none of the per-point keys and equals
    the --json-points document with the detail keys taken out (the detail
    document is the one written before the record per sample was made lean);
  - --json-points without --json is a usage error;
  - a 2,500-sample campaign (more than one block of the writers): the
    streamed JSON parses, holds every sample, equals the detail document
    stripped, is the same byte for byte on one worker thread (and so are
    results.csv and points.csv), stays within 2 kB a sample with each record on a line of
    its own; points.csv has a row per point.
Temperature conversions are the definitions of the scales (BIPM, The
International System of Units, 9th ed., 2019: T/K = t/degC + 273.15;
t/degF = 1.8 t/degC + 32).
"""
import csv
import io
import json
import math
import os
import subprocess
import sys
import tempfile

BUILD = os.environ.get("BUILD", "build")
ARRANK = os.environ.get("ARRANK", os.path.join(BUILD, "arrank"))
GEN_BENCH = os.path.join(BUILD, "tools", "gen_bench")
DEMO = "campaigns/zeolite-ni-screen"
N_BIG = 2500  # samples of the generated campaign: more than one writer block (2,048)
COLUMNS = ["sample", "file", "line", "T_K", "T_file", "T_file_unit", "rate", "rate_sd",
           "conversion", "time_on_stream_s", "run", "used", "regime", "local_ea_kJ_mol",
           "fitted", "residual", "reason"]
NUMERIC = ["line", "T_K", "T_file", "rate", "rate_sd", "conversion", "time_on_stream_s",
           "local_ea_kJ_mol", "fitted", "residual"]
# Keys of each sample that only --json-points keeps (README "JSON keys").
DETAIL = ("points", "regime", "local_ea_kJ_mol", "criteria", "quality")
CURVATURE_DETAIL = ("quadratic", "series_resistance", "local_ea")
n = 0


def tap(ok, name, diag=""):
    global n
    n += 1
    print(("ok %d - %s" if ok else "not ok %d - %s") % (n, name))
    if not ok and diag:
        for line in str(diag).splitlines()[:20]:
            print("# " + line)


def run(*args, env=None):
    return subprocess.run([ARRANK] + list(args), capture_output=True, text=True, env=env)


def stripped(doc):
    """The detail document with the detail keys taken out."""
    for s in doc["samples"]:
        for k in DETAIL:
            s.pop(k, None)
        if isinstance(s.get("curvature"), dict):
            for k in CURVATURE_DETAIL:
                s["curvature"].pop(k, None)
    return doc


def file_temperature(path, line_no):
    """The temperature on physical line line_no of a demo sample file as
    written, and the unit of its header, read here independently of the
    program: header "T [unit]", separator ',', ';' (decimal commas) or tab."""
    with open(path, encoding="utf-8-sig") as f:
        lines = f.read().split("\n")
    header = next(l for l in lines if l and not l.startswith("#"))
    sep = "\t" if "\t" in header else (";" if ";" in header else ",")
    names = header.split(sep)
    col = next(i for i, h in enumerate(names) if h.strip().startswith("T ["))
    unit = names[col].strip()[3:-1]
    return float(lines[line_no - 1].split(sep)[col].replace(",", ".")), unit


def file_temperature_K(path, line_no):
    """The same temperature in K (273.15 K = 0 degC; degF = 1.8 K + 32 - 459.67)."""
    value, unit = file_temperature(path, line_no)
    return {"K": value, "degC": value + 273.15, "degF": (value - 32.0) / 1.8 + 273.15}[unit]


def numbers_parse(rows):
    bad = []
    for r in rows:
        for k in NUMERIC:
            if r[k] != "":
                try:
                    float(r[k])
                except ValueError:
                    bad.append((r["sample"], r["line"], k, r[k]))
    return bad


with tempfile.TemporaryDirectory() as tmp:
    # ---- points.csv on the demo
    pts, js, jd = (os.path.join(tmp, f) for f in ("points.csv", "lean.json", "detail.json"))
    p = run("rank", DEMO, "--at", "270C", "--points", pts, "--json", js)
    tap(p.returncode == 0, "rank --points --json on the demo exits 0", p.stderr)
    p = run("rank", DEMO, "--at", "270C", "--json", jd, "--json-points")
    tap(p.returncode == 0, "rank --json --json-points on the demo exits 0", p.stderr)
    text = open(pts, encoding="utf-8").read()
    rows = list(csv.DictReader(io.StringIO(text)))
    header = text.split("\n", 1)[0].split(",")
    tap(header == COLUMNS, "points.csv: the documented columns in order", header)
    lean, detail = json.load(open(js)), json.load(open(jd))
    total = sum(s["n_points"] for s in lean["samples"])
    tap(len(rows) == total and total > 0, "points.csv: one row per point (%d)" % total,
        "%d rows" % len(rows))
    left = [r for r in rows if r["used"] == "0"]
    used = [r for r in rows if r["used"] == "1"]
    tap(len(left) + len(used) == len(rows), "points.csv: used is 1 or 0")
    tap(left and all(r["reason"] for r in left), "points.csv: every left-out point has a reason",
        [r for r in left if not r["reason"]][:3])
    tap(all(r["reason"] == "" for r in used), "points.csv: no used point has a reason")
    used_by_sample = {}
    for r in used:
        used_by_sample[r["sample"]] = used_by_sample.get(r["sample"], 0) + 1
    tap(all(used_by_sample.get(s["id"], 0) == (s["n_used"] if s["error"] is None else 0)
            for s in lean["samples"]), "points.csv: used points per sample = the JSON's n_used")
    off = []
    for r in rows:
        want = file_temperature_K(os.path.join(DEMO, r["file"]), int(r["line"]))
        if not math.isclose(float(r["T_K"]), want, rel_tol=1e-9):
            off.append((r["file"], r["line"], r["T_K"], want))
    tap(not off, "points.csv: T_K is the file's temperature in kelvin (K, degC, degF)", off[:5])
    off, units = [], set()
    for r in rows:
        value, unit = file_temperature(os.path.join(DEMO, r["file"]), int(r["line"]))
        units.add(r["T_file_unit"])
        if r["T_file"] == "" or float(r["T_file"]) != value or r["T_file_unit"] != unit:
            off.append((r["file"], r["line"], r["T_file"], r["T_file_unit"], value, unit))
    tap(not off and len(units) >= 2,
        "points.csv: T_file and T_file_unit are the temperature and unit as the file wrote them "
        "(units %s)" % sorted(units), off[:5])
    tap(not numbers_parse(rows), "points.csv: every number parses", numbers_parse(rows)[:5])
    fitted = [r for r in used if r["fitted"]]
    tap(fitted and all(math.isclose(float(r["residual"]),
                                    math.log(float(r["rate"])) - float(r["fitted"]),
                                    rel_tol=1e-6, abs_tol=1e-9) for r in fitted),
        "points.csv: residual = ln rate - fitted")
    regimes = {r["regime"] for r in rows}
    tap(regimes <= {"", "kinetic", "pore_diffusion", "film_diffusion", "unclassified"}
        and "kinetic" in regimes, "points.csv: regime names of the one vocabulary", regimes)

    # ---- the plot command writes the same points.csv beside results.csv
    out = os.path.join(tmp, "plot")
    gp = os.path.join(tmp, "no-gnuplot")
    env = dict(os.environ, ARRANK_GNUPLOT=gp)  # no gnuplot needed: the numbers come first
    p = run("plot", DEMO, "--at", "270C", "--out", out, env=env)
    tap(os.path.exists(os.path.join(out, "points.csv")) and
        open(os.path.join(out, "points.csv"), encoding="utf-8").read() == text,
        "plot writes points.csv beside results.csv, the same as rank --points", p.stderr)

    # ---- the record per sample and --json-points
    keys = {k for s in lean["samples"] for k in s}
    tap(not keys & {"points", "regime", "local_ea_kJ_mol"},
        "JSON without --json-points: no per-point keys", keys & set(DETAIL))
    tap(all(k in detail["samples"][0] for k in ("points", "regime", "local_ea_kJ_mol")),
        "JSON with --json-points: points, regime, local_ea_kJ_mol")
    tap(stripped(detail) == lean, "JSON: the record per sample = the detail without its keys")
    tap(all("excluded" in s and "flags" in s and "ea_kJ_mol_ci" in s for s in lean["samples"]),
        "JSON record: flags, intervals and the excluded points with reasons")
    # dof and t_quantile are those of the model in force (the ones
    # rate_at_T_ci uses): n - 3 with --model modified, n - 2 for the line;
    # ea_kJ_mol_ci stays on the line's t
    for model, drop in (("arrhenius", 2), ("modified", 3)):
        p = run("rank", DEMO, "--at", "270C", "--model", model, "--json", "-")
        fitted = [s for s in json.loads(p.stdout)["samples"] if s["error"] is None]
        tap(fitted and all(s["dof"] == s["n_used"] - drop for s in fitted),
            "--model %s: JSON dof is n - %d" % (model, drop),
            [(s["id"], s["dof"], s["n_used"]) for s in fitted])
        line_t = [(s["ea_kJ_mol_ci"][1] - s["ea_kJ_mol"]) / s["ea_kJ_mol_se"] for s in fitted]
        same = all(math.isclose(t, s["t_quantile"], rel_tol=1e-9) for t, s in zip(line_t, fitted))
        tap(same if drop == 2 else not same and all(
            t < s["t_quantile"] for t, s in zip(line_t, fitted)),
            "--model %s: ea_kJ_mol_ci on the line's t, t_quantile the model's" % model)
    # weighted fits (rate_sd given) report sqrt_chi2_dof, unweighted ones resid_sd_ln_rate
    w = [s for s in lean["samples"] if s["error"] is None]
    tap(any(s["weighted"] for s in w) and all(
        (s["resid_sd_ln_rate"] is None and math.isclose(s["sqrt_chi2_dof"] ** 2, s["chi2_dof"]))
        if s["weighted"] else (s["sqrt_chi2_dof"] is None and s["resid_sd_ln_rate"] > 0)
        for s in w), "JSON: sqrt_chi2_dof for weighted fits, resid_sd_ln_rate for the others")
    p = run("rank", DEMO, "--at", "270C", "--json-points")
    tap(p.returncode == 2 and "--json-points" in p.stderr,
        "--json-points without --json: usage error", p.stderr)

    # ---- streaming on 2,500 samples: more than one block of 2,048 samples
    # (the JSON and CSV writers format a block at a time on the workers)
    big = os.path.join(tmp, "c2500")
    subprocess.run([GEN_BENCH, big, str(N_BIG)], check=True, capture_output=True)
    bj, bd, b1, bp, bc, b1p, b1c = (os.path.join(tmp, f) for f in (
        "b.json", "bd.json", "b1.json", "bp.csv", "bc.csv", "b1p.csv", "b1c.csv"))
    p = run("rank", big, "--json", bj, "--points", bp, "--csv", bc)
    tap(p.returncode == 0, "2,500 samples: rank --json --points exits 0", p.stderr)
    run("rank", big, "--json", bd, "--json-points")
    run("rank", big, "--json", b1, "--points", b1p, "--csv", b1c,
        env=dict(os.environ, ARRANK_THREADS="1"))
    try:
        doc = json.load(open(bj))
        parsed = True
    except ValueError as e:
        doc, parsed = {"samples": []}, False
        tap(False, "2,500 samples: the streamed JSON parses", e)
    if parsed:
        tap(True, "2,500 samples: the streamed JSON parses")
    tap(len(doc["samples"]) == N_BIG, "2,500 samples: every sample in the JSON")
    tap(stripped(json.load(open(bd))) == doc,
        "2,500 samples: the record per sample = the detail document stripped")
    tap(open(b1, "rb").read() == open(bj, "rb").read(),
        "2,500 samples: the same JSON byte for byte on one worker thread")
    tap(open(b1c, "rb").read() == open(bc, "rb").read(),
        "2,500 samples: the same results CSV byte for byte on one worker thread")
    tap(open(b1p, "rb").read() == open(bp, "rb").read(),
        "2,500 samples: the same points.csv byte for byte on one worker thread")
    size = os.path.getsize(bj) / N_BIG
    # the lean record's target (issue 12): 2 kB a sample
    tap(size <= 2048, "2,500 samples: JSON within 2 kB a sample (%.0f bytes)" % size)
    with open(bj, encoding="utf-8") as f:
        record_lines = [ln for ln in f if ln.startswith('    {"id": ')]
    tap(len(record_lines) == N_BIG and
        all(json.loads(ln.rstrip().rstrip(","))["id"] == s["id"]
            for ln, s in zip(record_lines, doc["samples"])),
        "2,500 samples: each sample's record on a line of its own")
    with open(bp, encoding="utf-8") as f:
        n_rows = sum(1 for _ in f) - 1
    tap(n_rows == sum(s["n_points"] for s in doc["samples"]),
        "2,500 samples: points.csv has a row per point (%d)" % n_rows)

print("1..%d" % n)
