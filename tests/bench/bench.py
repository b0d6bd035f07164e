#!/usr/bin/python3
"""bench.py - `make bench`: how fast arrank is, side by side with a SciPy
reference (tests/bench/reference.py) and the floor (bench_floor: open, read
and close every file, nothing else).  Not a test: it prints measurements and
whether each target of the hardening issue is met, and exits 0 either way.

    bench.py BUILD [REPS]

Campaigns are written once by gen_bench into BUILD/bench/.  Each repetition
runs floor, arrank and the reference one after the other, so all three see
the same machine load; medians over REPS (default 5) after one warm-up run.
Wall-clock times; peak memory from GNU time (/usr/bin/time -f %M).
"""
import json
import os
import statistics
import subprocess
import sys
import time

BUILD = sys.argv[1] if len(sys.argv) > 1 else "build"
REPS = int(sys.argv[2]) if len(sys.argv) > 2 else 5
ARRANK = os.path.join(BUILD, "arrank")
TOOLS = os.path.join(BUILD, "tools")
HERE = os.path.dirname(os.path.abspath(__file__))
T_OP_K = "523.15"  # the gen_bench campaign.ini says 250 degC


def campaign(name, n, points=12):
    path = os.path.join(BUILD, "bench", name)
    if not os.path.exists(os.path.join(path, "campaign.ini")):
        os.makedirs(os.path.join(BUILD, "bench"), exist_ok=True)
        subprocess.run([os.path.join(TOOLS, "gen_bench"), path, str(n), str(points)], check=True)
    return path


def wall(cmd):
    t0 = time.perf_counter()
    subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    return time.perf_counter() - t0


def peak_kb(cmd):
    if not os.access("/usr/bin/time", os.X_OK):
        return None
    r = subprocess.run(["/usr/bin/time", "-f", "%M"] + cmd, stdout=subprocess.DEVNULL,
                       stderr=subprocess.PIPE, text=True, check=False)
    return int(r.stderr.strip().splitlines()[-1])


def medians(cmds, reps):
    for cmd in cmds.values():  # warm-up: page cache, dynamic loader
        wall(cmd)
    times = {k: [] for k in cmds}
    for _ in range(reps):
        for k, cmd in cmds.items():
            times[k].append(wall(cmd))
    return {k: statistics.median(v) for k, v in times.items()}, times


def verdict(ok):
    return "met" if ok else "MISSED"


def main():
    c10k = campaign("c10k", 10000)
    print(f"bench: {REPS} repetitions, medians of wall-clock time; machine load: "
          f"{os.getloadavg()[0]:.2f} (1-min average) on {os.cpu_count()} CPUs")
    cmds = {
        "floor": [os.path.join(TOOLS, "bench_floor"), c10k],
        "arrank": [ARRANK, "rank", c10k],
        # The same work as the reference: P(best) at its minimum of 100 draws.
        "arrank100": [ARRANK, "rank", c10k, "--draws", "100"],
        "scipy": ["/usr/bin/python3", os.path.join(HERE, "reference.py"), c10k, T_OP_K],
    }
    med, times = medians(cmds, REPS)
    for k, cmd in cmds.items():
        runs = " ".join(f"{t:.3f}" for t in times[k])
        print(f"  {k:9s} {med[k]:8.3f} s   ({runs})   {' '.join(cmd)}")
    mem = peak_kb(cmds["arrank"])
    print(f"  arrank / floor  = {med['arrank'] / med['floor']:.2f}x   "
          f"(--draws 100: {med['arrank100'] / med['floor']:.2f}x)")
    print(f"  scipy / arrank  = {med['scipy'] / med['arrank']:.1f}x   "
          f"(--draws 100: {med['scipy'] / med['arrank100']:.1f}x)")
    if mem is not None:
        print(f"  arrank peak memory {mem / 1024:.1f} MB")
    print("targets (10,000 samples x 12 temperatures; default rank, P(best) 10^4 draws "
          "over every sample):")
    print(f"  pass <= 0.2 s:            {verdict(med['arrank'] <= 0.2)}")
    print(f"  <= 2.5x the floor:        {verdict(med['arrank'] <= 2.5 * med['floor'])}")
    print(f"  >= 15x faster than SciPy: {verdict(med['scipy'] >= 15 * med['arrank'])}")
    if mem is not None:
        print(f"  peak memory <= 64 MB:     {verdict(mem <= 64 * 1024)}")

    # Same answer: the ranked order of arrank's JSON against the reference's.
    ids = os.path.join(BUILD, "bench", "reference-ids.txt")
    subprocess.run(cmds["scipy"] + ["--ids", ids], stdout=subprocess.DEVNULL, check=True)
    js = subprocess.run([ARRANK, "rank", c10k, "--json", "-"], capture_output=True, text=True)
    ranked = sorted((s for s in json.loads(js.stdout)["samples"] if s["rank"]),
                    key=lambda s: s["rank"])
    ours = [s["id"] for s in ranked]
    with open(ids) as f:
        theirs = [line.strip() for line in f]
    same = sum(a == b for a, b in zip(ours, theirs))
    print(f"  same order as SciPy: {same} of {len(theirs)} ranks")

    # P(best) with 10^4 draws over 1,000 samples (rank statistics, issue 5).
    if os.path.exists("include/arrank/rank.h"):
        c1k = campaign("c1k", 1000)
        cmd = [ARRANK, "rank", c1k, "--draws", "10000"]
        m, t = medians({"pbest": cmd}, REPS)
        print(f"  P(best) 10^4 draws, 1,000 samples: {m['pbest']:.3f} s   {' '.join(cmd)}"
              f"   target <= 1 s: {verdict(m['pbest'] <= 1.0)}")
    else:
        print("  P(best) 10^4 draws, 1,000 samples: not available yet (rank statistics "
              "not on this branch)")

    # Figures for a 50-sample campaign (issue 4), when the plot command exists.
    probe = subprocess.run([ARRANK, "plot", "--help"], capture_output=True, text=True)
    if probe.returncode == 0:
        c50 = campaign("c50", 50)
        out = os.path.join(BUILD, "bench", "c50-figures")
        cmd = [ARRANK, "plot", c50, "--out", out]
        m, t = medians({"figures": cmd}, min(REPS, 3))
        print(f"  figures, 50 samples: {m['figures']:.3f} s   {' '.join(cmd)}"
              f"   target <= 3 s: {verdict(m['figures'] <= 3.0)}")
    else:
        print("  figures, 50 samples: not available yet (no 'arrank plot' on this branch)")


if __name__ == "__main__":
    main()
