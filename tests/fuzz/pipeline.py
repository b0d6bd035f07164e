#!/usr/bin/env python3
"""pipeline.py - random campaigns through the whole program.

Usage: pipeline.py ARRANK SECONDS [SEED]

Writes random campaign folders (1 to 6 samples; ordinary, narrow, huge, tiny,
repeated and degenerate temperatures and rates; ids with quotes, %, UTF-8 and
control characters; rate_sd, conversion, run and time-on-stream columns) and
runs `fit`, `rank`, `check`, `plot`, `report` (and at times `plan`) on each with ARRANK (the
sanitizer build, so that memory and undefined-behaviour errors abort it).

A run fails when the program:
  - prints a sanitizer report or dies from a signal;
  - exits with anything but 0 or 1 (2 would be a usage error we did not make,
    3 an I/O failure, 4 gnuplot failing on data arrank itself fitted); the one
    2 allowed is the documented refusal of an operating temperature far
    outside every sample's range ("give --extrapolate"), which about half the
    campaigns avoid by passing --extrapolate where the command takes it;
  - exits 0 from plot or report without the files it lists.
Each failing campaign is kept in pipeline-failures/ beside ARRANK's folder (the
build folder, never the repository) with the command and its output, and the
script exits 1 after SECONDS.
"""
import os
import random
import shutil
import subprocess
import sys
import tempfile
import time

ARRANK = os.path.abspath(sys.argv[1])
SECONDS = float(sys.argv[2])
SEED = int(sys.argv[3]) if len(sys.argv) > 3 else int(time.time())
KEEP = os.path.join(os.path.dirname(ARRANK), "pipeline-failures")

ID_PARTS = ["ZX-01", "Pd%d wt%%", "O'Neil's", 'say "hi"', "back\\slash", "µ-Ni/Al₂O₃",
            "tab\there", "esc\x1b[2J", "amp & <lt>", "^caret_", "a" * 300, "%s%n%x", ""]


def rnd_temperatures(r, n):
    kind = r.choice(["normal", "normal", "normal", "narrow", "same", "tiny", "wide", "few"])
    if kind == "normal":
        lo = r.uniform(150, 400)
        return [lo + r.uniform(0, 120) for _ in range(n)], "degC"
    if kind == "narrow":
        t = r.uniform(200, 300)
        return [t + k * 1e-7 for k in range(n)], "degC"
    if kind == "same":
        return [r.uniform(400, 600)] * n, "K"
    if kind == "tiny":
        return [r.uniform(1e-3, 5) for _ in range(n)], "K"
    if kind == "wide":
        return [r.uniform(100, 3000) for _ in range(n)], "K"
    return [r.choice([250.0, 260.0]) for _ in range(n)], "degC"


def rnd_rates(r, temps, unit):
    kind = r.choice(["arrhenius", "arrhenius", "arrhenius", "huge", "tiny", "noise", "zero", "bent"])
    ea = r.uniform(5e3, 3e5)
    ln_a = r.uniform(-5, 60)
    out = []
    for t in temps:
        tk = t + 273.15 if unit == "degC" else t
        if kind == "huge":
            v = 10.0 ** r.uniform(250, 307)
        elif kind == "tiny":
            v = 10.0 ** r.uniform(-320, -290)
        elif kind == "noise":
            v = r.lognormvariate(0, 3)
        elif kind == "zero":
            v = r.choice([0.0, -1.0, 1.0])
        else:
            x = ln_a - ea / (8.314 * max(tk, 1e-3))
            if kind == "bent":
                x = min(x, r.uniform(-2, 2))
            x = max(min(x, 700.0), -700.0)
            v = 2.718281828459045 ** x * r.lognormvariate(0, 0.05)
        out.append(v)
    return out


def write_sample(r, path, sid):
    n = r.choice([1, 2, 3, 4, 5, 6, 8, 12, 40])
    temps, tunit = rnd_temperatures(r, n)
    rates = rnd_rates(r, temps, tunit)
    cols = ["T [%s]" % tunit, "rate [umol/(g*s)]"]
    extra = r.sample(["rate_sd", "run", "time_on_stream", "conversion"], r.randint(0, 2))
    if "rate_sd" in extra:
        cols.append("rate_sd [umol/(g*s)]")
    if "run" in extra:
        cols.append("run")
    if "time_on_stream" in extra:
        cols.append("time_on_stream [h]")
    if "conversion" in extra:
        cols.append("conversion")
    lines = ["# sample = %s" % sid, "# mass = %.3g mg" % r.uniform(1, 200)]
    if r.random() < 0.2:
        lines += ["# particle_diameter = 0.2 mm", "# pellet_density = 1.2 g/cm3",
                  "# effective_diffusivity = 1e-7 m2/s", "# bulk_concentration = 10 mol/m3"]
    lines.append(",".join(cols))
    for k, (t, v) in enumerate(zip(temps, rates)):
        row = ["%.17g" % t, "%.17g" % v]
        if "rate_sd" in extra:
            row.append("%.3g" % abs(v * r.uniform(0, 0.2)))
        if "run" in extra:
            row.append(r.choice(["a", "b", "fresh", "aged"]))
        if "time_on_stream" in extra:
            row.append("%.3g" % (k * r.uniform(0, 3)))
        if "conversion" in extra:
            row.append("%.3g" % r.uniform(0, 0.6))
        lines.append(",".join(row))
    with open(path, "w", encoding="utf-8", errors="surrogateescape") as f:
        f.write("\n".join(lines) + "\n")


def make_campaign(r, folder):
    os.makedirs(folder)
    for i in range(r.randint(1, 6)):
        sid = r.choice(ID_PARTS)
        if "%d" in sid:
            sid = sid % i
        sid = (sid + " %d" % i) if r.random() < 0.9 else sid
        write_sample(r, os.path.join(folder, "s%02d.csv" % i), sid)
    if r.random() < 0.5:
        with open(os.path.join(folder, "campaign.ini"), "w") as f:
            f.write("[campaign]\noperating_temperature = %.1f degC\n" % r.uniform(100, 500))


REFUSAL = "fitted kinetics say nothing reliable there (give --extrapolate"


def check(cmd, out_dir):
    env = dict(os.environ, ASAN_OPTIONS="detect_leaks=0:abort_on_error=1",
               UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1")
    p = subprocess.run(cmd, capture_output=True, env=env, timeout=120)
    err = p.stderr.decode("utf-8", "replace")
    why = None
    if "Sanitizer" in err or "runtime error" in err:
        why = "sanitizer report"
    elif p.returncode < 0:
        why = "killed by signal %d" % -p.returncode
    elif p.returncode == 2 and REFUSAL in (err.strip().splitlines() or [""])[-1]:
        why = None  # documented: far outside every range without --extrapolate
    elif p.returncode not in (0, 1):
        why = "exit status %d" % p.returncode
    elif p.returncode == 0 and out_dir:
        for line in p.stdout.decode("utf-8", "replace").splitlines():
            if line and not os.path.exists(line):
                why = "listed %s, which does not exist" % line
    return why, p.returncode, err


def main():
    r = random.Random(SEED)
    deadline = time.time() + SECONDS
    runs = failures = 0
    work = tempfile.mkdtemp(prefix="arrank-pipeline-")
    try:
        while time.time() < deadline:
            camp = os.path.join(work, "c%d" % runs)
            make_campaign(r, camp)
            at = ["--at", "%.1fC" % r.uniform(100, 500)]
            ext = ["--extrapolate"] if r.random() < 0.5 else []
            out = os.path.join(work, "out%d" % runs)
            cmds = [([ARRANK, "fit", camp] + ext, None),
                    ([ARRANK, "rank", camp] + at + ext, None),
                    ([ARRANK, "check", camp], None),
                    ([ARRANK, "plot", camp] + at + ext + ["--out", out], out),
                    ([ARRANK, "report", camp] + at + ext + ["--out", out], out)]
            if r.random() < 0.3:
                cmds.append(([ARRANK, "rank", camp] + at + ext +
                             ["--model", "modified", "--bootstrap", "50"], None))
            if r.random() < 0.4:
                goal = r.choice(["separate", "precision", "curvature"])
                cmds.append(([ARRANK, "plan", camp] + at + ext +
                             ["--max-temperature", "%.1fC" % r.uniform(100, 600),
                              "--budget", str(r.randint(1, 30)), "--simulations", "200",
                              "--goal", goal] +
                             (["--bend", "20kJ/mol"] if goal == "curvature" else []) +
                             (["--out", out] if r.random() < 0.2 else []), None))
            for cmd, out_dir in cmds:
                why, status, err = check(cmd, out_dir)
                if why:
                    failures += 1
                    keep = os.path.join(KEEP, "%d-%d" % (SEED, runs))
                    os.makedirs(KEEP, exist_ok=True)
                    if not os.path.exists(keep):
                        shutil.copytree(camp, keep)
                    with open(os.path.join(keep, "failure.txt"), "a") as f:
                        f.write("%s\n%s\n%s\n" % (why, " ".join(cmd[1:2] + cmd[3:]), err))
                    print("# %s: %s (kept in %s)" % (cmd[1], why, keep))
                    print("# " + err.strip().replace("\n", "\n# ")[:2000])
            shutil.rmtree(camp, ignore_errors=True)
            shutil.rmtree(out, ignore_errors=True)
            runs += 1
    finally:
        shutil.rmtree(work, ignore_errors=True)
    print("pipeline fuzzer: seed %d, %d campaigns, %d failures" % (SEED, runs, failures))
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
