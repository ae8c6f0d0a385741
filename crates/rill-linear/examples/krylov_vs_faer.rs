//! Measures our conjugate gradients and BiCGStab against `faer`'s
//! (`faer::matrix_free`), on the same matrix, preconditioner and stopping
//! rule, to decide which to keep (the figures are in `src/krylov.rs`).
//!
//! ```text
//! cargo run -p rill-linear --example krylov_vs_faer [-- NX NY NZ]
//! ```
//!
//! Both use our sparse product and our preconditioners (AMG V-cycle,
//! Jacobi); what differs is the iteration itself: its vector kernels, its
//! recurrences and its stopping test. faer stops on the recursively updated
//! residual, so to honour our contract (true relative residual
//! ||b - A x|| / ||b|| <= tol) its solve is wrapped: the true residual is
//! recomputed and the solve called again from the iterate while it is above
//! the tolerance, as our own methods do internally.

use std::time::Instant;

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::matrix_free::bicgstab::{bicgstab, bicgstab_scratch, BicgParams};
use faer::matrix_free::conjugate_gradient::{
    conjugate_gradient, conjugate_gradient_scratch, CgParams,
};
use faer::matrix_free::{IdentityPrecond, LinOp, Precond};
use faer::{MatMut, MatRef, Par};
use rill_linear::{
    norm2, pbicgstab, pcg, AmgHierarchy, AmgOptions, CsrMatrix, Jacobi, Preconditioner,
};

/// Our matrix as a faer operator (one right-hand side).
#[derive(Debug)]
struct Op<'a>(&'a CsrMatrix);

impl LinOp<f64> for Op<'_> {
    fn apply_scratch(&self, _: usize, _: Par) -> StackReq {
        StackReq::EMPTY
    }
    fn nrows(&self) -> usize {
        self.0.rows()
    }
    fn ncols(&self) -> usize {
        self.0.cols()
    }
    fn apply(&self, out: MatMut<'_, f64>, rhs: MatRef<'_, f64>, _: Par, _: &mut MemStack) {
        let x = rhs.col(0).try_as_col_major().unwrap().as_slice();
        let y = out
            .col_mut(0)
            .try_as_col_major_mut()
            .unwrap()
            .as_slice_mut();
        self.0.mul_vec_into(x, y);
    }
    fn conj_apply(&self, out: MatMut<'_, f64>, rhs: MatRef<'_, f64>, par: Par, s: &mut MemStack) {
        self.apply(out, rhs, par, s)
    }
}

/// Our preconditioner as a faer one.
struct Pre<'a, P>(&'a P, usize);

impl<P> std::fmt::Debug for Pre<'_, P> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "Pre({})", self.1)
    }
}

impl<P: Preconditioner> LinOp<f64> for Pre<'_, P> {
    fn apply_scratch(&self, _: usize, _: Par) -> StackReq {
        StackReq::EMPTY
    }
    fn nrows(&self) -> usize {
        self.1
    }
    fn ncols(&self) -> usize {
        self.1
    }
    fn apply(&self, out: MatMut<'_, f64>, rhs: MatRef<'_, f64>, _: Par, _: &mut MemStack) {
        let r = rhs.col(0).try_as_col_major().unwrap().as_slice();
        let z = out
            .col_mut(0)
            .try_as_col_major_mut()
            .unwrap()
            .as_slice_mut();
        self.0.apply(r, z);
    }
    fn conj_apply(&self, out: MatMut<'_, f64>, rhs: MatRef<'_, f64>, par: Par, s: &mut MemStack) {
        self.apply(out, rhs, par, s)
    }
}

impl<P: Preconditioner> Precond<f64> for Pre<'_, P> {}

fn true_rel(a: &CsrMatrix, b: &[f64], x: &[f64]) -> f64 {
    let mut r = vec![0.0; b.len()];
    a.residual_into(b, x, &mut r);
    norm2(&r) / norm2(b)
}

/// faer's CG or BiCGStab under our contract; returns the iterations.
fn faer_solve<P: Preconditioner>(
    a: &CsrMatrix,
    b: &[f64],
    x: &mut [f64],
    m: &P,
    cg: bool,
    tol: f64,
    par: Par,
) -> usize {
    let n = a.rows();
    let (op, pre) = (Op(a), Pre(m, n));
    let req = if cg {
        conjugate_gradient_scratch(&pre, &op, 1, par)
    } else {
        bicgstab_scratch(IdentityPrecond { dim: n }, &pre, &op, 1, par)
    };
    let mut buf = MemBuffer::new(req);
    let mut iters = 0;
    while iters < 500 && true_rel(a, b, x) > tol {
        let out = MatMut::from_column_major_slice_mut(x, n, 1);
        let rhs = MatRef::from_column_major_slice(b, n, 1);
        let stack = MemStack::new(&mut buf);
        let got = if cg {
            let p = CgParams {
                rel_tolerance: tol,
                max_iters: 500 - iters,
                ..Default::default()
            };
            conjugate_gradient(out, &pre, &op, rhs, p, |_| {}, par, stack)
                .map(|i| i.iter_count)
                .map_err(|e| format!("{e:?}"))
        } else {
            let p = BicgParams {
                rel_tolerance: tol,
                max_iters: 500 - iters,
                ..Default::default()
            };
            let id = IdentityPrecond { dim: n };
            bicgstab(out, id, &pre, &op, rhs, p, |_| {}, par, stack)
                .map(|i| i.iter_count)
                .map_err(|e| format!("{e:?}"))
        };
        match got {
            Ok(k) => iters += k.max(1),
            Err(e) => {
                eprintln!("faer: {e}");
                break;
            }
        }
    }
    iters
}

/// Two-point-flux matrix of a log-normal permeability field (contrast
/// about 1e4) on unit cells, with wells as diagonal terms; with `upwind`,
/// plus an upwinded transport term along x of that fraction of the face
/// transmissibility (unsymmetric, as a Newton Jacobian with flow is).
fn heterogeneous(nx: usize, ny: usize, nz: usize, upwind: f64) -> CsrMatrix {
    let n = nx * ny * nz;
    let mut s: u64 = 0x2545_F491_4F6C_DD1D;
    let mut uniform = move || {
        s ^= s << 13;
        s ^= s >> 7;
        s ^= s << 17;
        ((s >> 11) as f64 / (1u64 << 53) as f64).max(1e-300)
    };
    let perm: Vec<f64> = (0..n)
        .map(|_| {
            let g = (-2.0 * uniform().ln()).sqrt() * (std::f64::consts::TAU * uniform()).cos();
            (1.5 * g).exp().clamp(1e-2, 1e2)
        })
        .collect();
    let idx = |i: usize, j: usize, k: usize| (k * ny + j) * nx + i;
    let mut t = Vec::with_capacity(7 * n);
    let mut face = |p: usize, q: usize, u: f64| {
        let tr = 2.0 * perm[p] * perm[q] / (perm[p] + perm[q]);
        t.extend([(p, p, tr), (q, q, tr), (p, q, -tr), (q, p, -tr)]);
        t.extend([(q, q, u * tr), (q, p, -u * tr)]);
    };
    for k in 0..nz {
        for j in 0..ny {
            for i in 0..nx {
                if i + 1 < nx {
                    face(idx(i, j, k), idx(i + 1, j, k), upwind);
                }
                if j + 1 < ny {
                    face(idx(i, j, k), idx(i, j + 1, k), 0.0);
                }
                if k + 1 < nz {
                    face(idx(i, j, k), idx(i, j, k + 1), 0.0);
                }
            }
        }
    }
    for (i, j) in [(1, 1), (nx - 2, ny - 2), (nx / 2, ny / 3)] {
        for k in 0..nz {
            t.push((idx(i, j, k), idx(i, j, k), 5.0 * perm[idx(i, j, k)]));
        }
    }
    CsrMatrix::from_triplets(n, &t)
}

/// CPU time of all threads of this process so far, in seconds (from the
/// scheduler's per-thread accounting): the machine is shared, so wall time
/// alone says little.
fn cpu_seconds() -> f64 {
    let mut ns = 0u64;
    if let Ok(dir) = std::fs::read_dir("/proc/self/task") {
        for t in dir.flatten() {
            if let Ok(s) = std::fs::read_to_string(t.path().join("schedstat")) {
                ns += s
                    .split_whitespace()
                    .next()
                    .and_then(|v| v.parse().ok())
                    .unwrap_or(0);
            }
        }
    }
    ns as f64 * 1e-9
}

/// Iterations, best wall time and mean CPU time over `runs` runs.
fn best_of<F: FnMut() -> usize>(runs: usize, mut f: F) -> (usize, f64, f64) {
    let mut best = f64::INFINITY;
    let mut iters = 0;
    let c0 = cpu_seconds();
    for _ in 0..runs {
        let t = Instant::now();
        iters = f();
        best = best.min(t.elapsed().as_secs_f64());
    }
    (iters, best, (cpu_seconds() - c0) / runs as f64)
}

fn main() {
    let dims: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|a| a.parse().ok())
        .collect();
    let (nx, ny, nz) = match dims[..] {
        [a, b, c] => (a, b, c),
        _ => (48, 48, 24),
    };
    for upwind in [0.0, 0.5] {
        compare(&heterogeneous(nx, ny, nz, upwind), (nx, ny, nz), upwind);
    }
}

fn compare(a: &CsrMatrix, (nx, ny, nz): (usize, usize, usize), upwind: f64) {
    let n = a.rows();
    let b: Vec<f64> = (0..n)
        .map(|i| ((i * 7919) % 1009) as f64 / 1009.0 - 0.3)
        .collect();
    let tol = 1e-10;
    let symmetric = upwind == 0.0;
    let h = AmgHierarchy::build(a, &AmgOptions::default()).unwrap();
    let amg = h.preconditioner(a);
    let inv_diag: Vec<f64> = a.diagonal().iter().map(|d| 1.0 / d).collect();
    let jacobi = Jacobi { inv_diag };
    println!(
        "\nheterogeneous 3D, upwind {upwind}, {nx} x {ny} x {nz} = {n} unknowns, nnz {}, tol {tol:e}, rayon threads {}",
        a.nnz(),
        rayon::current_num_threads()
    );
    println!(
        "{:<26} {:>6} {:>9} {:>9} {:>11}",
        "method", "iters", "wall s", "cpu s", "true resid"
    );
    let report = |name: &str, (it, s, c): (usize, f64, f64), x: &[f64]| {
        println!(
            "{name:<26} {it:>6} {s:>9.4} {c:>9.4} {:>11.3e}",
            true_rel(a, &b, x)
        );
    };
    let runs = 7;
    let methods: &[(&str, bool)] = if symmetric {
        &[("cg", true), ("bicgstab", false)]
    } else {
        &[("bicgstab", false)]
    };
    for &(pname, cg) in methods {
        for (mname, m) in [
            ("amg", &amg as &dyn Dispatch),
            ("jacobi", &jacobi as &dyn Dispatch),
        ] {
            let mut x = vec![0.0; n];
            let r = best_of(runs, || {
                x.iter_mut().for_each(|v| *v = 0.0);
                m.ours(a, &b, &mut x, cg, tol)
            });
            report(&format!("ours {mname}-{pname}"), r, &x);
            for (par_name, par) in [("seq", Par::Seq), ("rayon", Par::rayon(0))] {
                let r = best_of(runs, || {
                    x.iter_mut().for_each(|v| *v = 0.0);
                    m.faer(a, &b, &mut x, cg, tol, par)
                });
                report(&format!("faer {mname}-{pname} {par_name}"), r, &x);
            }
        }
    }
}

/// Runs either implementation with a concrete preconditioner type.
trait Dispatch {
    fn ours(&self, a: &CsrMatrix, b: &[f64], x: &mut [f64], cg: bool, tol: f64) -> usize;
    fn faer(&self, a: &CsrMatrix, b: &[f64], x: &mut [f64], cg: bool, tol: f64, par: Par) -> usize;
}

impl<P: Preconditioner> Dispatch for P {
    fn ours(&self, a: &CsrMatrix, b: &[f64], x: &mut [f64], cg: bool, tol: f64) -> usize {
        let out = if cg {
            pcg(a, b, x, self, tol, 500)
        } else {
            pbicgstab(a, b, x, self, tol, 500)
        };
        out.iterations
    }
    fn faer(&self, a: &CsrMatrix, b: &[f64], x: &mut [f64], cg: bool, tol: f64, par: Par) -> usize {
        faer_solve(a, b, x, self, cg, tol, par)
    }
}
