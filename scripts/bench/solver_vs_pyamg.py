#!/usr/bin/env python3
"""Benchmark rill's smoothed-aggregation AMG-CG against pyamg on the same system.

Generates (or takes) a heterogeneous 7-point two-point-flux pressure matrix,
writes it as MatrixMarket, then in the same run
  * runs rill's example binary `solve_mtx` (release build) with AMG-CG, and
  * runs pyamg smoothed aggregation + CG in a separate Python process,
both to a relative residual ||b - Ax|| / ||b|| of 1e-8 from x0 = 0, and prints
set-up and solve seconds, iterations, levels, operator complexity, peak
memory of each process, and the time ratio.

The default system is 60 x 220 x 85 = 1 122 000 cells: ln k normal with
sigma 1.5 (spatially correlated over a few cells, then rescaled to sigma),
unit cubic cells, harmonic face averages, five vertical wells (five-spot) as
diagonal terms W_i = 2 pi k_i / ln(re/rw) with the well pressure on the
right-hand side. No Dirichlet boundary: the wells make the matrix SPD.

Usage:
  pip install -r scripts/bench/requirements.txt
  python3 scripts/bench/solver_vs_pyamg.py                # generate + both
  python3 scripts/bench/solver_vs_pyamg.py --dims 30 110 40
  python3 scripts/bench/solver_vs_pyamg.py --matrix A.mtx --rhs b.mtx
  python3 scripts/bench/solver_vs_pyamg.py --rill-args "--smoother l1"

OPENBLAS_CORETYPE and OPENBLAS_L2_SIZE are removed (together) from the
environment of the pyamg process only: they slow a current numpy.
"""

import argparse
import json
import os
import resource
import subprocess
import sys
import time

REPO = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))


def generate(nx, ny, nz, sigma, seed, corr):
    import numpy as np
    from scipy import ndimage, sparse

    rng = np.random.default_rng(seed)
    # array index order [k, j, i] -> cell id (k * ny + j) * nx + i
    g = rng.standard_normal((nz, ny, nx))
    if corr > 0:
        g = ndimage.gaussian_filter(g, sigma=(corr / 2.0, corr, corr), mode="reflect")
    g = (g - g.mean()) / g.std() * sigma
    k = np.exp(g).ravel()
    n = nx * ny * nz
    ids = np.arange(n).reshape(nz, ny, nx)

    rows, cols, vals = [], [], []
    diag = np.zeros(n)
    for axis in (2, 1, 0):  # x, y, z faces (unit cells: T = harmonic mean of k)
        a = np.take(ids, range(0, ids.shape[axis] - 1), axis=axis).ravel()
        b = np.take(ids, range(1, ids.shape[axis]), axis=axis).ravel()
        t = 2.0 * k[a] * k[b] / (k[a] + k[b])
        rows += [a, b]
        cols += [b, a]
        vals += [-t, -t]
        np.add.at(diag, a, t)
        np.add.at(diag, b, t)

    # five-spot: injector in the centre, producers near the corners
    wells = [(nx // 2, ny // 2, 3.0e7), (2, 2, 1.0e7), (nx - 3, 2, 1.0e7), (2, ny - 3, 1.0e7), (nx - 3, ny - 3, 1.0e7)]
    rhs = np.zeros(n)
    wi_factor = 2.0 * np.pi / np.log(0.2 * 1.0 / 0.1)  # Peaceman-like, re = 0.2 dx, rw = 0.1 m
    for (i, j, p) in wells:
        c = ids[:, j, i]
        wi = wi_factor * k[c]
        diag[c] += wi
        rhs[c] += wi * p
    rows.append(np.arange(n))
    cols.append(np.arange(n))
    vals.append(diag)
    A = sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n))
    A.sum_duplicates()
    A.sort_indices()
    return A, rhs, float(k.max() / k.min())


def write_mtx(path, A):
    import numpy as np

    coo = A.tocoo()
    with open(path, "w") as f:
        f.write("%%MatrixMarket matrix coordinate real general\n")
        f.write(f"{A.shape[0]} {A.shape[1]} {A.nnz}\n")
        np.savetxt(f, np.column_stack([coo.row + 1, coo.col + 1, coo.data]), fmt=["%d", "%d", "%.17g"])


def write_vec(path, v):
    import numpy as np

    with open(path, "w") as f:
        f.write("%%MatrixMarket matrix array real general\n")
        f.write(f"{len(v)} 1\n")
        np.savetxt(f, v, fmt="%.17g")


def pyamg_child(npz, tol, max_coarse, sweep):
    """Runs in its own process (own peak memory); prints one JSON line."""
    import numpy as np
    import pyamg
    import scipy
    from scipy import sparse

    t0 = time.perf_counter()
    d = np.load(npz)
    A = sparse.csr_matrix((d["data"], d["indices"], d["indptr"]), shape=tuple(d["shape"]))
    b = d["b"]
    read_s = time.perf_counter() - t0
    smoother = ("gauss_seidel", {"sweep": sweep})
    c0 = time.process_time()
    t0 = time.perf_counter()
    ml = pyamg.smoothed_aggregation_solver(
        A,
        strength=("symmetric", {"theta": 0.0}),
        aggregate="standard",
        smooth=("jacobi", {"omega": 4.0 / 3.0}),
        presmoother=smoother,
        postsmoother=smoother,
        max_coarse=max_coarse,
        coarse_solver="splu",
    )
    setup_s = time.perf_counter() - t0
    res = []
    t0 = time.perf_counter()
    x = ml.solve(b, x0=np.zeros_like(b), tol=tol, accel="cg", maxiter=500, residuals=res)
    solve_s = time.perf_counter() - t0
    cpu_s = time.process_time() - c0
    rel = float(np.linalg.norm(b - A @ x) / np.linalg.norm(b))
    try:
        from threadpoolctl import threadpool_info

        blas = [(i.get("internal_api"), i.get("architecture"), i.get("num_threads")) for i in threadpool_info()]
    except Exception as e:  # noqa: BLE001
        blas = str(e)
    print(json.dumps({
        "solver": "pyamg",
        "pyamg": pyamg.__version__, "numpy": np.__version__, "scipy": scipy.__version__,
        "smoother": f"gauss_seidel sweep={sweep}",
        "n": A.shape[0], "nnz": int(A.nnz), "read_seconds": round(read_s, 3),
        "setup_seconds": round(setup_s, 4), "solve_seconds": round(solve_s, 4),
        "total_seconds": round(setup_s + solve_s, 4), "cpu_seconds": round(cpu_s, 3),
        "iterations": len(res) - 1, "rel_residual": rel,
        "levels": len(ml.levels), "operator_complexity": round(ml.operator_complexity(), 4),
        "level_sizes": [[int(l.A.shape[0]), int(l.A.nnz)] for l in ml.levels],
        "peak_rss_mib": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0, 1),
        "blas": blas,
    }))


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--dims", type=int, nargs=3, default=[60, 220, 85], metavar=("NX", "NY", "NZ"))
    ap.add_argument("--sigma", type=float, default=1.5, help="std of ln k")
    ap.add_argument("--corr", type=float, default=2.0, help="correlation length in cells (0: white noise)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--matrix", help="use this MatrixMarket matrix instead of generating")
    ap.add_argument("--rhs", help="right-hand side for --matrix (default A * ones)")
    ap.add_argument("--out", default=os.path.join(REPO, "bench-data"), help="where to write the system")
    ap.add_argument("--tol", type=float, default=1e-8)
    ap.add_argument("--max-coarse", type=int, default=3000)
    ap.add_argument("--sweep", default="symmetric", choices=["symmetric", "forward"],
                    help="pyamg Gauss-Seidel sweep (symmetric = forward + backward per smoothing step)")
    ap.add_argument("--rill-args", default="", help="extra arguments for solve_mtx")
    ap.add_argument("--repeat", type=int, default=1, help="rill runs (best reported)")
    ap.add_argument("--skip-build", action="store_true")
    ap.add_argument("--skip-pyamg", action="store_true")
    ap.add_argument("--skip-rill", action="store_true")
    ap.add_argument("--pyamg-child", help=argparse.SUPPRESS)
    args = ap.parse_args()

    if args.pyamg_child:
        pyamg_child(args.pyamg_child, args.tol, args.max_coarse, args.sweep)
        return

    import numpy as np
    from scipy import io as sio, sparse

    os.makedirs(args.out, exist_ok=True)
    if args.matrix:
        mtx = args.matrix
        A = sparse.csr_matrix(sio.mmread(mtx))
        b = np.asarray(sio.mmread(args.rhs)).ravel() if args.rhs else A @ np.ones(A.shape[0])
        rhs_path = args.rhs
        info = {"source": mtx}
    else:
        nx, ny, nz = args.dims
        tag = f"het_{nx}x{ny}x{nz}_s{args.sigma}_c{args.corr}_seed{args.seed}"
        mtx = os.path.join(args.out, tag + ".mtx")
        rhs_path = os.path.join(args.out, tag + "_b.mtx")
        t0 = time.perf_counter()
        A, b, contrast = generate(nx, ny, nz, args.sigma, args.seed, args.corr)
        info = {"source": "generated", "dims": [nx, ny, nz], "sigma_lnk": args.sigma, "corr_cells": args.corr,
                "k_contrast": f"{contrast:.3g}", "generate_seconds": round(time.perf_counter() - t0, 2)}
        if not (os.path.exists(mtx) and os.path.exists(rhs_path)):
            t0 = time.perf_counter()
            write_mtx(mtx, A)
            write_vec(rhs_path, b)
            info["write_seconds"] = round(time.perf_counter() - t0, 2)
    npz = os.path.splitext(mtx)[0] + ".npz"
    np.savez(npz, data=A.data, indices=A.indices, indptr=A.indptr, shape=np.array(A.shape), b=b)
    info.update({"n": A.shape[0], "nnz": int(A.nnz)})
    print(json.dumps({"system": info}))
    del A

    results = {}
    if not args.skip_build and not args.skip_rill:
        running = subprocess.run(["pgrep", "-af", "cargo.*release"], capture_output=True, text=True).stdout.strip()
        if running:
            sys.exit(f"another release build is running, not starting one:\n{running}")
        subprocess.run(["cargo", "build", "--release", "-p", "rill-linear", "--example", "solve_mtx"], cwd=REPO, check=True)
    exe = os.path.join(REPO, "target", "release", "examples", "solve_mtx")
    cmd = [exe, mtx] + ([rhs_path] if rhs_path else []) + ["--tol", str(args.tol), "--max-coarse",
                                                          str(args.max_coarse), "--repeat", str(args.repeat)]
    cmd += args.rill_args.split()
    if not args.skip_rill:
        out = subprocess.run(cmd, capture_output=True, text=True)
        if out.returncode != 0:
            sys.exit(f"solve_mtx failed: {out.stderr}")
        results["rill"] = json.loads(out.stdout.strip().splitlines()[-1])
        print(json.dumps(results["rill"]))

    if not args.skip_pyamg:
        env = dict(os.environ)
        env.pop("OPENBLAS_CORETYPE", None)
        env.pop("OPENBLAS_L2_SIZE", None)
        pcmd = [sys.executable, os.path.abspath(__file__), "--pyamg-child", npz, "--tol", str(args.tol),
                "--max-coarse", str(args.max_coarse), "--sweep", args.sweep]
        out = subprocess.run(pcmd, capture_output=True, text=True, env=env)
        if out.returncode != 0:
            sys.exit(f"pyamg failed: {out.stderr}")
        results["pyamg"] = json.loads(out.stdout.strip().splitlines()[-1])
        print(json.dumps(results["pyamg"]))

    if "rill" in results and "pyamg" in results:
        r, p = results["rill"], results["pyamg"]
        print()
        print(f"{'':8} {'setup s':>9} {'solve s':>9} {'total s':>9} {'cpu s':>7} {'iters':>6} {'levels':>6} {'op.cx':>6} {'rel res':>9} {'peak MiB':>9}")
        for name, d in (("rill", r), ("pyamg", p)):
            print(f"{name:8} {d['setup_seconds']:9.3f} {d['solve_seconds']:9.3f} {d['total_seconds']:9.3f} {d['cpu_seconds']:7.2f} "
                  f"{d['iterations']:6d} {d['levels']:6d} {d['operator_complexity']:6.3f} {d['rel_residual']:9.2e} "
                  f"{d['peak_rss_mib']:9.1f}")
        print(f"pyamg / rill: setup {p['setup_seconds'] / r['setup_seconds']:.2f}x, "
              f"solve {p['solve_seconds'] / r['solve_seconds']:.2f}x, total {p['total_seconds'] / r['total_seconds']:.2f}x"
              f", cpu time {p['cpu_seconds'] / r['cpu_seconds']:.2f}x (rill on {r['threads']} threads)")
        load = os.getloadavg()
        print(f"load average during the run: {load[0]:.2f} {load[1]:.2f} {load[2]:.2f} on {os.cpu_count()} cores")


if __name__ == "__main__":
    main()
