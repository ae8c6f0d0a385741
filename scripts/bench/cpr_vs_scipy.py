#!/usr/bin/env python3
"""rill's CPR-GMRES against scipy on the same synthetic oil-water Jacobian,
in the same run: `cargo run --release -p rill-linear --example
cpr_vs_scipy` writes the system (MatrixMarket, two unknowns per cell) and
times rill's CPR variants; then scipy's GMRES preconditioned by `spilu`
(an incomplete LU of the whole system) solves the same system to the same
relative residual, and so does a two-stage CPR in Python: pyamg's
smoothed-aggregation V-cycle on the quasi-IMPES pressure block (the same
weights as rill's default), then `spilu` of the whole system, inside
scipy's GMRES. Prints one table with the ratios (over the best peer time).

With `--system DIR` the system is the first Newton system a run exported
(`rill run DECK --export-system DIR`: `matrix.mtx`, `rhs.mtx`) instead.

usage: scripts/bench/cpr_vs_scipy.py [--dims 40 40 20 | --system DIR] [--tol 1e-8] [--repeat 3]
                                     [--fills 10 20 40] [--no-pyamg]
Needs: pip install -r scripts/bench/requirements.txt
"""
import argparse
import json
import os
import subprocess
import sys
import tempfile
import time

import numpy as np
import scipy.io
import scipy.sparse as sp
import scipy.sparse.linalg as sla

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def refused(name, t0, e):
    """The row of a peer whose factor SuperLU refuses as singular."""
    return {"solver": name + f": {e}", "setup_seconds": time.perf_counter() - t0, "solve_seconds": 0.0,
            "total_seconds": float("inf"), "iterations": 0, "rel_residual_check": float("nan"),
            "converged": False}


def timed_gmres(a, b, tol, m, name, t0):
    """scipy's GMRES (restart 30, at most 500 iterations) preconditioned by
    `m`, set up since `t0`; the row of the table."""
    t1 = time.perf_counter()
    its = [0]

    def count(_):
        its[0] += 1

    x, info = sla.gmres(a, b, rtol=tol, atol=0.0, restart=30, maxiter=500, M=m,
                        callback=count, callback_type="pr_norm")
    t2 = time.perf_counter()
    rel = np.linalg.norm(b - a @ x) / np.linalg.norm(b)
    return {"solver": name, "setup_seconds": t1 - t0,
            "solve_seconds": t2 - t1, "total_seconds": t2 - t0, "iterations": its[0],
            "rel_residual_check": rel, "converged": info == 0 and rel <= 10 * tol}


def scipy_gmres(a, b, tol, fill, drop):
    t0 = time.perf_counter()
    name = f"scipy gmres + spilu(fill {fill}, drop {drop})"
    try:
        ilu = sla.spilu(a.tocsc(), fill_factor=fill, drop_tol=drop)
    except RuntimeError as e:  # SuperLU refuses a factor it finds singular
        return refused(name, t0, e)
    return timed_gmres(a, b, tol, sla.LinearOperator(a.shape, ilu.solve), name, t0)


def quasi_impes_pressure(a):
    """The quasi-IMPES pressure block of a 2 x 2 block system (unknowns
    interleaved: pressure, saturation per cell): row i of Ap is
    w_i^T A_ij e_0 with w_i = (1, -D_i[0,1] / D_i[1,1]), D_i the diagonal
    block, as in rill's `Decoupling::QuasiImpes`."""
    n = a.shape[0] // 2
    d = a.diagonal()
    d01 = np.asarray(a[0::2, 1::2].diagonal()).ravel()
    d11 = d[1::2]
    w1 = np.where(d11 != 0.0, -d01 / np.where(d11 != 0.0, d11, 1.0), 0.0)
    rows_p = a[0::2, 0::2]
    rows_s = a[1::2, 0::2]
    ap = (rows_p + sp.diags(w1) @ rows_s).tocsr()
    return ap, w1, n


def pyamg_cpr(a, b, tol, fill, drop):
    """GMRES with a two-stage CPR built from pyamg and spilu."""
    import pyamg
    name = f"scipy gmres + CPR(pyamg SA on p, spilu fill {fill})"
    t0 = time.perf_counter()
    ap, w1, n = quasi_impes_pressure(a)
    ml = pyamg.smoothed_aggregation_solver(ap, max_coarse=500)
    try:
        ilu = sla.spilu(a.tocsc(), fill_factor=fill, drop_tol=drop)
    except RuntimeError as e:
        return refused(name, t0, e)

    def apply(r):
        rp = r[0::2] + w1 * r[1::2]
        xp = ml.solve(rp, maxiter=1, cycle="V", tol=1e-30)
        x1 = np.zeros_like(r)
        x1[0::2] = xp
        return x1 + ilu.solve(r - a @ x1)

    return timed_gmres(a, b, tol, sla.LinearOperator(a.shape, apply), name, t0)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--dims", type=int, nargs=3, default=[40, 40, 20])
    ap.add_argument("--tol", type=float, default=1e-8)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--system", help="a run's exported first system (matrix.mtx, rhs.mtx)")
    ap.add_argument("--fills", type=int, nargs="*", default=[10, 20, 40],
                    help="spilu fill factors of the scipy peers (10: drop 1e-4, 20: 1e-6, 40: 0)")
    ap.add_argument("--no-pyamg", action="store_true", help="leave out the pyamg CPR peer")
    a = ap.parse_args()
    out = tempfile.mkdtemp(prefix="rill-cpr-")
    cmd = ["cargo", "run", "-q", "--release", "-p", "rill-linear", "--example", "cpr_vs_scipy", "--",
           "--tol", str(a.tol), "--repeat", str(a.repeat)]
    if a.system:
        cmd += ["--system", a.system]
        files = (os.path.join(a.system, "matrix.mtx"), os.path.join(a.system, "rhs.mtx"))
    else:
        cmd += ["--dims", *map(str, a.dims), "--out", out]
        files = (os.path.join(out, "A.mtx"), os.path.join(out, "b.mtx"))
    text = subprocess.run(cmd, cwd=ROOT, check=True, capture_output=True, text=True).stdout
    rill = [json.loads(line) for line in text.splitlines() if line.startswith("{")]
    A = scipy.io.mmread(files[0]).tocsr()
    b = np.asarray(scipy.io.mmread(files[1])).ravel()
    peers = []
    drops = {10: 1e-4, 20: 1e-6, 40: 0.0}
    runs = [(scipy_gmres, f, drops.get(f, 1e-4)) for f in a.fills]
    if not a.no_pyamg:
        runs.append((pyamg_cpr, 1, 1e-4))
    for peer, fill, drop in runs:
        best = None
        for _ in range(a.repeat):
            r = peer(A, b, a.tol, fill, drop)
            if best is None or r["total_seconds"] < best["total_seconds"]:
                best = r
        peers.append(best)
    ok = [p for p in peers if p["converged"]]
    base = min((p["total_seconds"] for p in ok), default=None)
    print(f"system: {A.shape[0]} unknowns, {A.nnz} stored values, relative residual {a.tol}")
    print(f"{'solver':48} {'setup':>7} {'solve':>7} {'total':>7} {'its':>5} {'ratio':>6}")
    for r in rill + peers:
        name = r.get("variant") and f"rill {r['variant']}" or r["solver"]
        ratio = f"{r['total_seconds'] / base:.2f}" if base and r["total_seconds"] < float("inf") else "-"
        conv = "" if r.get("converged", True) else " (did not converge)"
        print(f"{name:48} {r['setup_seconds']:7.2f} {r['solve_seconds']:7.2f} {r['total_seconds']:7.2f} "
              f"{r['iterations']:5} {ratio:>6}{conv}")


if __name__ == "__main__":
    sys.exit(main())
