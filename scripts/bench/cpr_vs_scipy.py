#!/usr/bin/env python3
"""rill's CPR-GMRES against scipy on the same synthetic oil-water Jacobian,
in the same run: `cargo run --release -p rill-linear --example
cpr_vs_scipy` writes the system (MatrixMarket, two unknowns per cell) and
times rill's CPR variants; then scipy's GMRES preconditioned by `spilu`
(an incomplete LU of the whole system) solves the same system to the same
relative residual, and so does a two-stage CPR in Python: pyamg's
smoothed-aggregation V-cycle on the decoupled pressure block (rill's
weights: true-IMPES when the accumulation blocks are there, else
quasi-IMPES), then `spilu` or block Jacobi of the whole system, inside
scipy's GMRES. Prints one table with the ratios (over the best peer time).

With `--system DIR` the system is the first Newton system a run exported
(`rill run DECK --export-system DIR`: `matrix.mtx`, `rhs.mtx` and the
`accumulation.mtx` that rill's true-IMPES variants use) instead.

usage: scripts/bench/cpr_vs_scipy.py [--dims 40 40 20 | --system DIR] [--tol 1e-8] [--repeat 3]
                                     [--fills 10 20 40] [--cpr-fills 1] [--no-pyamg]
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


def pressure_block(a, acc=None):
    """The decoupled pressure block of a 2 x 2 block system (unknowns
    interleaved: pressure, saturation per cell), as rill's CPR builds it:
    row i of Ap is w_i^T A_ij e_0 with w_i = (1, -D_i[0,1] / D_i[1,1]), D_i
    the accumulation block when `acc` is given (rill's true-IMPES weights,
    what its engine uses) or else the diagonal block of A (quasi-IMPES);
    a row whose diagonal comes out negative is negated with its weights.
    Returns Ap and the two weights a row."""
    d01, d11 = (acc[:, 1], acc[:, 3]) if acc is not None else (
        np.asarray(a[0::2, 1::2].diagonal()).ravel(), a.diagonal()[1::2])
    w1 = np.where(d11 != 0.0, -d01 / np.where(d11 != 0.0, d11, 1.0), 0.0)
    ap = (a[0::2, 0::2] + sp.diags(w1) @ a[1::2, 0::2]).tocsr()
    sign = np.where(ap.diagonal() < 0.0, -1.0, 1.0)
    return (sp.diags(sign) @ ap).tocsr(), sign, sign * w1


def block_jacobi(a):
    """The inverse of the 2 x 2 diagonal blocks of `a`, as a function of r
    (numpy, vectorised); a block with a zero determinant falls back to the
    inverse of its diagonal."""
    d = a.diagonal()
    a00, a11 = d[0::2], d[1::2]
    a01 = np.asarray(a[0::2, 1::2].diagonal()).ravel()
    a10 = np.asarray(a[1::2, 0::2].diagonal()).ravel()
    det = a00 * a11 - a01 * a10
    singular = det == 0.0
    det = np.where(singular, 1.0, det)
    i00 = np.where(singular, 1.0 / np.where(a00 != 0.0, a00, 1.0), a11 / det)
    i11 = np.where(singular, 1.0 / np.where(a11 != 0.0, a11, 1.0), a00 / det)
    i01 = np.where(singular, 0.0, -a01 / det)
    i10 = np.where(singular, 0.0, -a10 / det)

    def solve(r):
        z = np.empty_like(r)
        z[0::2] = i00 * r[0::2] + i01 * r[1::2]
        z[1::2] = i10 * r[0::2] + i11 * r[1::2]
        return z

    return solve


def pyamg_cpr(a, b, tol, fill, drop, acc=None):
    """GMRES with a two-stage CPR built from pyamg and, as its second stage,
    spilu (`fill` > 0) or the block Jacobi of `block_jacobi` (`fill` 0)."""
    import pyamg
    second = f"spilu fill {fill}" if fill > 0 else "block Jacobi"
    weights = "true-IMPES" if acc is not None else "quasi-IMPES"
    name = f"scipy gmres + CPR(pyamg SA on {weights} p, {second})"
    t0 = time.perf_counter()
    ap, w0, w1 = pressure_block(a, acc)
    ml = pyamg.smoothed_aggregation_solver(ap, max_coarse=500)
    if fill > 0:
        try:
            stage2 = sla.spilu(a.tocsc(), fill_factor=fill, drop_tol=drop).solve
        except RuntimeError as e:
            return refused(name, t0, e)
    else:
        stage2 = block_jacobi(a)

    def apply(r):
        rp = w0 * r[0::2] + w1 * r[1::2]
        xp = ml.solve(rp, maxiter=1, cycle="V", tol=1e-30)
        x1 = np.zeros_like(r)
        x1[0::2] = xp
        return x1 + stage2(r - a @ x1)

    return timed_gmres(a, b, tol, sla.LinearOperator(a.shape, apply), name, t0)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--dims", type=int, nargs=3, default=[40, 40, 20])
    ap.add_argument("--tol", type=float, default=1e-8)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--system", help="a run's exported first system (matrix.mtx, rhs.mtx)")
    ap.add_argument("--fills", type=int, nargs="*", default=[10, 20, 40],
                    help="spilu fill factors of the scipy peers (10: drop 1e-4, 20: 1e-6, 40: 0)")
    ap.add_argument("--cpr-fills", type=int, nargs="*", default=[1],
                    help="spilu fill factors of the pyamg CPR's second stage, besides its block Jacobi "
                         "(none: block Jacobi only)")
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
    acc_file = os.path.join(a.system or out, "accumulation.mtx")
    acc = (np.asarray(scipy.io.mmread(acc_file)).ravel().reshape(-1, 4)
           if os.path.exists(acc_file) else None)
    peers = []
    drops = {10: 1e-4, 20: 1e-6, 40: 0.0}
    runs = [(scipy_gmres, f, drops.get(f, 1e-4)) for f in a.fills]
    if not a.no_pyamg:
        runs += [(pyamg_cpr, f, 1e-4) for f in a.cpr_fills if f > 0] + [(pyamg_cpr, 0, 0.0)]
    for peer, fill, drop in runs:
        best = None
        for _ in range(a.repeat):
            r = peer(A, b, a.tol, fill, drop) if peer is scipy_gmres else peer(A, b, a.tol, fill, drop, acc)
            if best is None or r["total_seconds"] < best["total_seconds"]:
                best = r
        peers.append(best)
    ok = [p for p in peers if p["converged"]]
    base = min((p["total_seconds"] for p in ok), default=None)
    print(f"system: {A.shape[0]} unknowns, {A.nnz} stored values, relative residual {a.tol}")
    print(f"{'solver':64} {'setup':>7} {'solve':>7} {'total':>7} {'its':>5} {'ratio':>6}")
    for r in rill + peers:
        name = r.get("variant") and f"rill {r['variant']}" or r["solver"]
        ratio = f"{r['total_seconds'] / base:.2f}" if base and r["total_seconds"] < float("inf") else "-"
        conv = "" if r.get("converged", True) else " (did not converge)"
        setup = "-" if r["setup_seconds"] is None else f"{r['setup_seconds']:.2f}"
        print(f"{name:64} {setup:>7} {r['solve_seconds']:7.2f} {r['total_seconds']:7.2f} "
              f"{r['iterations']:5} {ratio:>6}{conv}")


if __name__ == "__main__":
    sys.exit(main())
