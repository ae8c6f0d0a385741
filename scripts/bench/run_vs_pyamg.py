#!/usr/bin/env python3
"""Whole `rill run` (parse, assembly, solve, writing results) on the
generated steady 60 x 220 x 85 case (log-normal permeability, five wells,
1.12 million cells) against pyamg smoothed aggregation with CG (setup plus
solve only, relative residual 1e-8) on the very system rill exports, in the
same run. Prints both times, the ratio (target: rill at most 0.6 x pyamg),
iteration counts and peak memory, and with --scaling the growth of rill's
time from 10^4 to 10^6 cells.

Each side runs --runs times (default 3), alternating, and the medians are
compared: on this virtual machine a process that touches much fresh memory
right after a pause runs up to half again as long, whichever goes first.

usage: scripts/bench/run_vs_pyamg.py [--keep DIR] [--runs 3] [--scaling]
Needs: cargo build --release -p rill-cli; pip install -r scripts/bench/requirements.txt
"""
import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
RILL = os.path.join(ROOT, "target", "release", "rill")


def timed(cmd, env=None):
    """Run cmd; return (seconds, peak RSS in MB of that child alone, stdout)."""
    with tempfile.TemporaryFile(mode="w+") as out, tempfile.TemporaryFile(mode="w+") as err:
        t0 = time.perf_counter()
        p = subprocess.Popen(cmd, stdout=out, stderr=err, text=True, env=env)
        _, status, usage = os.wait4(p.pid, 0)
        dt = time.perf_counter() - t0
        out.seek(0)
        err.seek(0)
        text = out.read()
        if status != 0:
            sys.exit(f"failed: {' '.join(cmd)}\n{text}\n{err.read()}")
    return dt, usage.ru_maxrss / 1024.0, text


def generate(work, nx, ny, nz):
    deck = os.path.join(work, "field.rill")
    if not os.path.exists(deck):
        subprocess.run([sys.executable, os.path.join(HERE, "gen_field_case.py"), work,
                        "--nx", str(nx), "--ny", str(ny), "--nz", str(nz)], check=True, stdout=subprocess.DEVNULL)
    return deck


PYAMG = r'''
import json, sys, time
import numpy as np, scipy.io, pyamg
A = scipy.io.mmread(sys.argv[1]).tocsr()
b = np.asarray(scipy.io.mmread(sys.argv[2])).ravel()
t0 = time.perf_counter()
ml = pyamg.smoothed_aggregation_solver(A, strength=("symmetric", {"theta": 0.0}),
        presmoother=("gauss_seidel", {"sweep": "symmetric"}), postsmoother=("gauss_seidel", {"sweep": "symmetric"}),
        max_coarse=2000)
t1 = time.perf_counter()
res = []
x = ml.solve(b, tol=1e-8, accel="cg", maxiter=500, residuals=res)
t2 = time.perf_counter()
rel = np.linalg.norm(b - A @ x) / np.linalg.norm(b)
print(json.dumps({"setup": t1 - t0, "solve": t2 - t1, "iterations": len(res) - 1, "levels": len(ml.levels),
                  "operator_complexity": ml.operator_complexity(), "rel_residual": rel, "n": A.shape[0]}))
'''


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--keep", help="directory for the generated case")
    ap.add_argument("--scaling", action="store_true")
    ap.add_argument("--runs", type=int, default=3)
    a = ap.parse_args()
    if not os.path.exists(RILL):
        sys.exit("build first: cargo build --release -p rill-cli")
    work = a.keep or tempfile.mkdtemp(prefix="rill-run-bench-")
    deck = generate(work, 60, 220, 85)
    sysdir = os.path.join(work, "system")
    if not os.path.exists(os.path.join(sysdir, "matrix.mtx")):
        timed([RILL, "run", deck, "--quiet", "--out", os.path.join(work, "export.out"), "--export-system", sysdir])
    # numpy/scipy with the machine's OpenBLAS settings unset for this command only.
    env = {k: v for k, v in os.environ.items() if k not in ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE")}
    py_runs, rill_runs = [], []
    for _ in range(max(1, a.runs)):
        dt_py, mem_py, out = timed([sys.executable, "-c", PYAMG, os.path.join(sysdir, "matrix.mtx"), os.path.join(sysdir, "rhs.mtx")], env=env)
        py = json.loads(out)
        py_runs.append((py["setup"] + py["solve"], py, mem_py))
        dt_rill, mem_rill, out = timed([RILL, "run", deck, "--quiet", "--out", os.path.join(work, "field.out")])
        rill_runs.append((dt_rill, mem_rill))
    stats = json.load(open(os.path.join(work, "field.out", "series.json")))
    solver = stats.get("solver", {})
    rill_times = [t for t, _ in rill_runs]
    py_times = [t for t, _, _ in py_runs]
    dt_rill = statistics.median(rill_times)
    mem_rill = max(m for _, m in rill_runs)
    t_py = statistics.median(py_times)
    _, py, mem_py = sorted(py_runs, key=lambda r: r[0])[len(py_runs) // 2]
    show = lambda ts: ", ".join(f"{t:.2f}" for t in ts)
    print(f"system: {py['n']} unknowns")
    print(f"rill run, whole (parse, assembly, solve, writing results): median {dt_rill:.2f} s of {show(rill_times)}, peak RSS {mem_rill:.0f} MB, "
          f"solver {solver.get('linear_solver')} {solver.get('linear_iterations')} iterations "
          f"(relative tolerance 1e-10, tighter than pyamg's 1e-8)")
    print(f"pyamg SA + CG, setup + solve: median {t_py:.2f} s of {show(py_times)}; the median run: setup {py['setup']:.2f} s + solve {py['solve']:.2f} s, "
          f"{py['iterations']} iterations, {py['levels']} levels, operator complexity {py['operator_complexity']:.2f}, "
          f"rel. residual {py['rel_residual']:.1e}, peak RSS {mem_py:.0f} MB (incl. reading the files)")
    print(f"ratio of the medians, rill whole run / pyamg setup+solve: {dt_rill / t_py:.2f}   (target <= 0.6)")
    if a.scaling:
        print("\nscaling of the whole rill run:")
        for nx, ny, nz in ((20, 25, 20), (40, 50, 50), (60, 110, 85), (60, 220, 85)):
            d = os.path.join(work, f"scale-{nx}x{ny}x{nz}")
            os.makedirs(d, exist_ok=True)
            dk = generate(d, nx, ny, nz)
            dt, mem, _ = timed([RILL, "run", dk, "--quiet", "--out", os.path.join(d, "field.out")])
            print(f"  {nx * ny * nz:>9} cells: {dt:6.2f} s, peak RSS {mem:5.0f} MB")


if __name__ == "__main__":
    main()
