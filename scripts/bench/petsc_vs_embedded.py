#!/usr/bin/env python3
"""The distributed engine (`rill run --engine petsc`, PETSc over MPI) against
the embedded engine on the generated steady 60 x 220 x 85 case (1.12
million cells, five wells), in the same run: wall time of the whole `rill
run`, linear iterations, and peak memory (the embedded run's from the
kernel, each rank's as `rill run` reports it). Ranks 1 and 2 (and more with
--ranks); PETSc's BoomerAMG defaults, and GAMG for comparison.

Each configuration runs --runs times (default 2), alternating; medians.

usage: scripts/bench/petsc_vs_embedded.py [--keep DIR] [--runs 2] [--ranks 1 2]
Needs: cargo build --release -p rill-cli --features petsc (PETSc, MPI: see the README)
"""
import argparse
import json
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
RILL = os.path.join(ROOT, "target", "release", "rill")
sys.path.insert(0, HERE)
from run_vs_pyamg import generate, timed  # noqa: E402


def find_stats(obj):
    """The solver statistics object wherever series.json keeps it."""
    if isinstance(obj, dict):
        if "linear_iterations" in obj:
            return obj
        for v in obj.values():
            r = find_stats(v)
            if r:
                return r
    return None


def run_once(deck, out, ranks, options):
    env = dict(os.environ, OMPI_ALLOW_RUN_AS_ROOT="1", OMPI_ALLOW_RUN_AS_ROOT_CONFIRM="1",
               OMPI_MCA_rmaps_base_oversubscribe="1")
    if ranks == 0:
        cmd = [RILL, "run", deck, "--out", out, "-q"]
    else:
        cmd = ["mpirun", "-n", str(ranks), RILL, "run", deck, "--out", out, "-q", "--engine", "petsc"]
        if options:
            cmd += ["--petsc-options", options]
    with tempfile.TemporaryFile(mode="w+") as err:
        t0 = time.perf_counter()
        p = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=err, text=True, env=env)
        _, status, usage = os.wait4(p.pid, 0)
        dt = time.perf_counter() - t0
        err.seek(0)
        text = err.read()
    if status != 0:
        sys.exit(f"failed: {' '.join(cmd)}\n{text}")
    with open(os.path.join(out, "series.json")) as f:
        st = find_stats(json.load(f)) or {}
    if ranks == 0:
        mem = [usage.ru_maxrss / 1024.0]
    else:
        line = re.search(r"peak memory per rank: (.*)", text)
        mem = [float(v.replace(" MB", "").replace(",", "")) for v in line.group(1).split(", ")] if line else []
    return dt, st.get("linear_iterations"), mem


GAMG = "-pc_type gamg -pc_gamg_type agg -pc_gamg_agg_nsmooths 1"


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--keep", help="directory for the generated case")
    ap.add_argument("--runs", type=int, default=2)
    ap.add_argument("--ranks", type=int, nargs="+", default=[1, 2])
    ap.add_argument("--gamg", action="store_true", help="also PETSc's GAMG")
    a = ap.parse_args()
    if not os.path.exists(RILL):
        sys.exit("build first: cargo build --release -p rill-cli --features petsc")
    work = a.keep or tempfile.mkdtemp(prefix="rill-petsc-bench-")
    deck = generate(work, 60, 220, 85)
    configs = [("embedded", 0, "")] + [(f"PETSc BoomerAMG, {r} rank(s)", r, "") for r in a.ranks]
    if a.gamg:
        configs += [(f"PETSc GAMG, {r} rank(s)", r, GAMG) for r in a.ranks]
    results = {name: [] for name, _, _ in configs}
    for _ in range(a.runs):
        for name, ranks, opts in configs:
            out = os.path.join(work, "out-" + re.sub(r"\W+", "-", name))
            results[name].append(run_once(deck, out, ranks, opts))
    base = statistics.median(r[0] for r in results["embedded"])
    print(f"{'configuration':34} {'time':>8} {'ratio':>6} {'linear its':>10}  peak memory per rank (MB)")
    for name, _, _ in configs:
        rs = results[name]
        t = statistics.median(r[0] for r in rs)
        mem = ", ".join(f"{m:.0f}" for m in rs[-1][2])
        print(f"{name:34} {t:7.1f}s {t / base:6.2f} {rs[-1][1]!s:>10}  {mem}")


if __name__ == "__main__":
    main()
