//! Sparse linear algebra for rill: one sparse matrix type, smoothed-
//! aggregation multigrid, Krylov methods, sparse direct solves (through
//! `faer`) and MatrixMarket output.
//!
//! Owns: [`CsrMatrix`] (compressed sparse rows, rectangular or square,
//! scalar or of dense b x b blocks for several unknowns a cell), its
//! kernels, [`amg`], [`pcg`], [`pbicgstab`], [`pgmres`], the [`Solver`]
//! that picks among them and keeps set-ups, the CPR preconditioner of
//! block systems ([`cpr`], [`CoupledSolver`]) and [`write_matrix_market`].
//!
//! Must never: know about reservoirs, cells, wells or units (a matrix is
//! numbers and indices here), or do I/O beyond writing MatrixMarket to a
//! writer the caller gives.
//!
//! * [`CsrMatrix`]: sparse matrix, built from assembly triplets
//!   ([`CsrMatrix::from_triplets`] sums duplicates, [`CsrMatrix::from_block_triplets`]
//!   for blocks), with a rayon SpMV.
//! * [`solve`] / [`Solver`]: one entry point that picks a method.
//!   - `Method::Direct`: `faer` sparse Cholesky when the matrix is symmetric
//!     (falling back to LU if it is not positive definite), sparse LU with
//!     partial pivoting otherwise.
//!   - `Method::AmgCg`: conjugate gradients preconditioned by one V-cycle of
//!     smoothed-aggregation algebraic multigrid ([`amg`]), for symmetric
//!     positive definite matrices (the pressure equation).
//!   - `Method::AmgBicgstab`: BiCGStab with the same preconditioner, for the
//!     slightly unsymmetric Newton Jacobians (wells, compressibility upwinding).
//!   - `Method::Auto`: direct up to [`SolverOptions::direct_max_n`] unknowns
//!     (and up to [`SolverOptions::direct_max_n_2d`] for matrices with at
//!     most 5.5 entries a row, i.e. 2D / areal grids, whose factors fill in
//!     far less), above that AMG-CG if the matrix is symmetric and
//!     AMG-BiCGStab if not. Measured on heterogeneous pressure matrices on 2
//!     cores (`scripts/bench/README-solver.md`): AMG-CG overtakes the sparse
//!     Cholesky at about 7 000 unknowns in 3D (9x faster at 50 000) but only
//!     at about 100 000 in 2D.
//!   - `Method::AmgGmres`: restarted GMRES right-preconditioned by the same
//!     multigrid, for unsymmetric systems where BiCGStab is erratic.
//!   - `Method::JacobiCg`, `Method::JacobiBicgstab`, `Method::JacobiGmres`:
//!     diagonal preconditioning, for tests and comparisons only.
//!   - A block matrix is solved through its scalar expansion.
//! * [`solve_coupled`] / [`CoupledSolver`]: block systems of coupled
//!   unknowns (pressure first in each block) by GMRES with the two-stage
//!   constrained-pressure-residual preconditioner [`Cpr`] ([`cpr`]):
//!   decoupling weights, one multigrid V-cycle on the pressure matrix, then
//!   block ILU(0) or block Jacobi on the whole system.
//! * [`Solver`] keeps the set-up (the AMG hierarchy, or the symbolic analysis
//!   of the direct solver) between calls while the sparsity pattern does not
//!   change; see its doc for the rebuild rule.
//! * [`write_matrix_market`], [`write_vector_market`]: formatting for dumps.
//!
//! The stopping test of the iterative methods is the relative residual
//! ||b - A x||_2 / ||b||_2 <= `rel_tol`, and the residual reported in
//! [`LinearStats`] is always recomputed from the final `x`, never the
//! recursively updated one.

#![warn(missing_docs)]
// `!(x > 0.0)` is meant: it is also true for NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]
#![allow(clippy::large_enum_variant)]
#![warn(clippy::too_many_lines)]

pub mod amg;
mod bilu;
mod block;
mod coupled;
pub mod cpr;
mod csr;
mod direct;
mod gmres;
mod krylov;
mod market;
mod sparse;
#[cfg(test)]
mod tests;

use std::fmt;
use std::time::Instant;

pub use amg::{AmgHierarchy, AmgOptions, Smoother};
pub use coupled::{solve_coupled, CoupledOptions, CoupledSolver};
pub use cpr::{AmgRefresh, Cpr, CprOptions, CprPreconditioner, Decoupling, SecondStage};
pub use csr::CsrMatrix;
pub use market::{write_matrix_market, write_vector_market};

use direct::DirectSymbolic;
pub use gmres::pgmres;
pub use krylov::{dot, norm2, pbicgstab, pcg, Identity, Jacobi, KrylovOutcome, Preconditioner};

/// Which linear method to use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Method {
    /// Direct for small systems, AMG-CG (symmetric) or AMG-BiCGStab above.
    #[default]
    Auto,
    /// Sparse direct (Cholesky if symmetric, LU otherwise).
    Direct,
    /// Smoothed-aggregation AMG preconditioned conjugate gradients (SPD only).
    AmgCg,
    /// Smoothed-aggregation AMG preconditioned BiCGStab (general).
    AmgBicgstab,
    /// Jacobi preconditioned CG (tests and comparisons).
    JacobiCg,
    /// Jacobi preconditioned BiCGStab (tests and comparisons).
    JacobiBicgstab,
    /// Smoothed-aggregation AMG right-preconditioned restarted GMRES
    /// (general; restart length [`SolverOptions::gmres_restart`]).
    AmgGmres,
    /// Jacobi right-preconditioned restarted GMRES (tests and comparisons).
    JacobiGmres,
}

/// Options of [`solve`] and [`Solver`]. Build with `SolverOptions::default()`
/// or `SolverOptions { method: Method::AmgCg, ..Default::default() }`.
#[derive(Debug, Clone, PartialEq)]
pub struct SolverOptions {
    /// Relative residual ||b - A x|| / ||b|| to reach (default 1e-10).
    pub rel_tol: f64,
    /// Iteration limit of the Krylov methods (default 500).
    pub max_iter: usize,
    /// The method (default [`Method::Auto`]).
    pub method: Method,
    /// `Method::Auto` uses the direct solver up to this many unknowns
    /// (default 10 000, measured: see `scripts/bench/README-solver.md`) ...
    pub direct_max_n: usize,
    /// ... and up to this many (default 100 000) when the matrix has at most
    /// 5.5 stored entries a row (2D five-point stencils).
    pub direct_max_n_2d: usize,
    /// Multigrid parameters.
    pub amg: AmgOptions,
    /// Krylov vectors kept by GMRES before it restarts (default 30).
    pub gmres_restart: usize,
}

impl Default for SolverOptions {
    fn default() -> Self {
        SolverOptions {
            rel_tol: 1e-10,
            max_iter: 500,
            method: Method::Auto,
            direct_max_n: DEFAULT_DIRECT_MAX_N,
            direct_max_n_2d: DEFAULT_DIRECT_MAX_N_2D,
            amg: AmgOptions::default(),
            gmres_restart: 30,
        }
    }
}

/// Threshold of `Method::Auto` between the direct and the AMG solvers.
pub const DEFAULT_DIRECT_MAX_N: usize = 10_000;
/// Threshold of `Method::Auto` for matrices with <= 5.5 entries a row.
pub const DEFAULT_DIRECT_MAX_N_2D: usize = 100_000;

/// What a solve did.
#[derive(Debug, Clone, PartialEq)]
pub struct LinearStats {
    /// "direct-cholesky", "direct-lu", "amg-cg", "amg-bicgstab",
    /// "amg-gmres", "jacobi-cg", "jacobi-bicgstab" or "jacobi-gmres".
    pub method: &'static str,
    /// Krylov iterations (for the direct solver: refinement steps, usually 0).
    pub iterations: usize,
    /// True relative residual ||b - A x|| / ||b|| of the returned x.
    pub rel_residual: f64,
    /// Factorization or multigrid set-up time of this call (0 when reused).
    pub setup_seconds: f64,
    /// Time of the triangular solves or of the Krylov iteration.
    pub solve_seconds: f64,
    /// Multigrid levels (0 when no multigrid was used).
    pub levels: usize,
    /// Multigrid operator complexity sum(nnz of A_l) / nnz(A) (0 without).
    pub operator_complexity: f64,
    /// True when the set-up of an earlier call was reused.
    pub reused_setup: bool,
}

/// Why a solve failed. `x` is left at the last iterate (not converged) or
/// unchanged (other errors).
#[derive(Debug, Clone, PartialEq)]
pub enum LinearError {
    /// The iteration stopped at `max_iter` (or broke down) above the tolerance.
    NotConverged {
        /// The method's name, as in [`LinearStats::method`].
        method: &'static str,
        /// Iterations done.
        iterations: usize,
        /// True relative residual of the last iterate.
        rel_residual: f64,
        /// The tolerance asked for.
        rel_tol: f64,
        /// True when the iteration stopped on a zero denominator rather
        /// than at the iteration limit.
        breakdown: bool,
    },
    /// The matrix is singular (or not positive definite for a Cholesky).
    Singular {
        /// Where and how it showed.
        detail: String,
    },
    /// A NaN or infinity in the matrix, the right-hand side or the initial guess.
    NonFinite {
        /// Which value, where.
        detail: String,
    },
    /// Lengths or structure do not fit.
    Dimension {
        /// What does not fit.
        detail: String,
    },
    /// Memory or another failure of the factorization library.
    Internal(String),
}

impl fmt::Display for LinearError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            LinearError::NotConverged {
                method,
                iterations,
                rel_residual,
                rel_tol,
                breakdown,
            } => {
                write!(
                    f,
                    "linear solver {method} did not converge: relative residual {rel_residual:.3e} after {iterations} iterations (tolerance {rel_tol:.1e})"
                )?;
                if *breakdown {
                    write!(f, "; the iteration broke down (matrix or preconditioner not suited to the method, or singular)")?;
                }
                Ok(())
            }
            LinearError::Singular { detail } => write!(f, "singular matrix: {detail}"),
            LinearError::NonFinite { detail } => write!(f, "non-finite value: {detail}"),
            LinearError::Dimension { detail } => write!(f, "dimension mismatch: {detail}"),
            LinearError::Internal(detail) => write!(f, "linear solver failure: {detail}"),
        }
    }
}

impl std::error::Error for LinearError {}

/// Solves A x = b once. `x` is the initial guess on entry (ignored by the
/// direct solver) and the solution on success. Use a [`Solver`] to reuse the
/// set-up across Newton iterations and time steps.
pub fn solve(
    a: &CsrMatrix,
    b: &[f64],
    x: &mut [f64],
    opts: &SolverOptions,
) -> Result<LinearStats, LinearError> {
    Solver::new(opts.clone()).solve(a, b, x)
}

/// Symmetry tolerance of `Method::Auto` (relative, per entry pair).
const SYMMETRY_TOL: f64 = 1e-12;

enum Setup {
    None,
    Direct {
        pattern: Pattern,
        symbolic: DirectSymbolic,
    },
    Amg {
        pattern: Pattern,
        hierarchy: AmgHierarchy,
        iterations_after_setup: Option<usize>,
        stale: bool,
    },
    Jacobi,
}

/// Sparsity pattern kept to decide whether a set-up can be reused.
struct Pattern {
    row_ptr: Vec<usize>,
    col_idx: Vec<usize>,
}

impl Pattern {
    fn of(a: &CsrMatrix) -> Self {
        Pattern {
            row_ptr: a.row_ptr.clone(),
            col_idx: a.col_idx.clone(),
        }
    }
    fn matches(&self, a: &CsrMatrix) -> bool {
        self.row_ptr == a.row_ptr && self.col_idx == a.col_idx
    }
}

/// A solver that keeps its set-up between calls.
///
/// Reuse rule:
/// * direct: the symbolic analysis (ordering, elimination tree) is reused
///   while the sparsity pattern is unchanged; the numeric factorization is
///   redone on every call, so the solution is always exact.
/// * AMG: while the pattern is unchanged, the hierarchy (aggregates,
///   prolongators, coarse operators, coarse factorization) built for an
///   earlier matrix is reused, with the fine-level smoother taken from the
///   new matrix. It is still a valid (symmetric positive definite)
///   preconditioner, only a less accurate one. With k0 the iteration count
///   of the first solve after the last full set-up and `cap = max(2 k0,
///   k0 + 4)`, a call with a reused hierarchy runs in stages, each going on
///   from the iterate where the last stopped:
///   1. the kept hierarchy, at most `cap` iterations;
///   2. if that did not converge: Galerkin coarse operators recomputed for
///      the new matrix with the kept aggregates and prolongators (about
///      80% of the time of a full set-up), at most `cap` more iterations;
///   3. if still not converged: full rebuild, the rest of `max_iter`.
/// * Stage 1's cap catches changes of the values that move the low end of
///   the spectrum (an accumulation term after a time-step change: +2% on the
///   diagonal of the 1.1M-cell benchmark took 22 -> 71 iterations with the
///   kept hierarchy, 44 + 4 with the staged reuse). After a call that needed
///   more than `cap` iterations in total, the next call rebuilds in full. A
///   pattern change always rebuilds.
/// * [`Solver::invalidate`] forces a rebuild at the next call.
pub struct Solver {
    opts: SolverOptions,
    setup: Setup,
}

impl Solver {
    /// A solver with these options and no set-up yet.
    pub fn new(opts: SolverOptions) -> Self {
        Solver {
            opts,
            setup: Setup::None,
        }
    }

    /// The options in force.
    pub fn options(&self) -> &SolverOptions {
        &self.opts
    }

    /// Changes the options; drops the set-up if the method changes.
    pub fn set_options(&mut self, opts: SolverOptions) {
        if opts.method != self.opts.method || opts.amg != self.opts.amg {
            self.setup = Setup::None;
        }
        self.opts = opts;
    }

    /// Forgets the set-up: the next call builds it anew.
    pub fn invalidate(&mut self) {
        self.setup = Setup::None;
    }

    /// The multigrid hierarchy currently kept, if any.
    pub fn hierarchy(&self) -> Option<&AmgHierarchy> {
        match &self.setup {
            Setup::Amg { hierarchy, .. } => Some(hierarchy),
            _ => None,
        }
    }

    /// Solves A x = b; `x` is the initial guess on entry.
    pub fn solve(
        &mut self,
        a: &CsrMatrix,
        b: &[f64],
        x: &mut [f64],
    ) -> Result<LinearStats, LinearError> {
        check_inputs(a, b, x)?;
        if a.block != 1 {
            // The methods here are scalar (multigrid, direct): a block system
            // is solved through its scalar expansion, whose pattern depends
            // on the block pattern only, so set-ups are still reused.
            return self.solve(&a.to_scalar(), b, x);
        }
        let method = match self.opts.method {
            Method::Auto => {
                let two_d = (a.nnz() as f64) <= 5.5 * a.n as f64;
                if a.n <= self.opts.direct_max_n || (two_d && a.n <= self.opts.direct_max_n_2d) {
                    Method::Direct
                } else if a.is_symmetric(SYMMETRY_TOL) {
                    Method::AmgCg
                } else {
                    Method::AmgBicgstab
                }
            }
            m => m,
        };
        match method {
            Method::Direct => self.solve_direct(a, b, x),
            Method::AmgCg => self.solve_amg(a, b, x, Krylov::Cg),
            Method::AmgBicgstab => self.solve_amg(a, b, x, Krylov::Bicgstab),
            Method::AmgGmres => self.solve_amg(a, b, x, Krylov::Gmres),
            Method::JacobiCg | Method::JacobiBicgstab | Method::JacobiGmres => {
                self.setup = Setup::Jacobi;
                let t0 = Instant::now();
                let inv_diag = inverse_diagonal(a)?;
                let m = Jacobi { inv_diag };
                let setup_seconds = t0.elapsed().as_secs_f64();
                let (kind, name) = match method {
                    Method::JacobiCg => (Krylov::Cg, "jacobi-cg"),
                    Method::JacobiBicgstab => (Krylov::Bicgstab, "jacobi-bicgstab"),
                    _ => (Krylov::Gmres, "jacobi-gmres"),
                };
                let t1 = Instant::now();
                let out = run_krylov(a, b, x, &m, kind, &self.opts);
                let stats = LinearStats {
                    method: name,
                    iterations: out.iterations,
                    rel_residual: out.rel_residual,
                    setup_seconds,
                    solve_seconds: t1.elapsed().as_secs_f64(),
                    levels: 0,
                    operator_complexity: 0.0,
                    reused_setup: false,
                };
                finish(out, stats, &self.opts)
            }
            Method::Auto => unreachable!(),
        }
    }

    fn solve_direct(
        &mut self,
        a: &CsrMatrix,
        b: &[f64],
        x: &mut [f64],
    ) -> Result<LinearStats, LinearError> {
        let t0 = Instant::now();
        let mut reused = false;
        let symbolic = match std::mem::replace(&mut self.setup, Setup::None) {
            Setup::Direct { pattern, symbolic } if pattern.matches(a) => {
                reused = true;
                Some((pattern, symbolic))
            }
            _ => None,
        };
        let (pattern, mut symbolic) = match symbolic {
            Some(p) => p,
            None => {
                let sym = a.is_symmetric(SYMMETRY_TOL);
                (Pattern::of(a), DirectSymbolic::analyse(a, sym)?)
            }
        };
        let factor = match symbolic.factor(a) {
            Ok(f) => f,
            Err(LinearError::Singular { .. }) if symbolic.is_cholesky() => {
                // Symmetric but indefinite (or singular): try LU, which decides.
                symbolic = DirectSymbolic::analyse(a, false)?;
                symbolic.factor(a)?
            }
            Err(e) => return Err(e),
        };
        let setup_seconds = t0.elapsed().as_secs_f64();
        self.setup = Setup::Direct { pattern, symbolic };

        let t1 = Instant::now();
        let bnorm = krylov::norm2(b);
        let mut sol = b.to_vec();
        factor.solve_in_place(&mut sol);
        if sol.iter().any(|v| !v.is_finite()) {
            return Err(LinearError::Singular {
                detail: format!(
                    "{} produced non-finite values: the matrix is numerically singular",
                    factor.name()
                ),
            });
        }
        let mut r = vec![0.0; a.n];
        a.residual_into(b, &sol, &mut r);
        let mut rel = if bnorm > 0.0 {
            krylov::norm2(&r) / bnorm
        } else {
            0.0
        };
        // A few steps of iterative refinement if rounding left us above tol.
        let mut steps = 0;
        while rel > self.opts.rel_tol && steps < 3 {
            factor.solve_in_place(&mut r);
            if r.iter().any(|v| !v.is_finite()) {
                break;
            }
            krylov::axpy(1.0, &r, &mut sol);
            a.residual_into(b, &sol, &mut r);
            let new_rel = krylov::norm2(&r) / bnorm;
            steps += 1;
            if !(new_rel < rel) {
                rel = new_rel.min(rel);
                break;
            }
            rel = new_rel;
        }
        let solve_seconds = t1.elapsed().as_secs_f64();
        if !rel.is_finite() || rel > 1e-6_f64.max(self.opts.rel_tol) {
            return Err(LinearError::Singular {
                detail: format!(
                    "{} left a relative residual of {rel:.3e}: the matrix is numerically singular",
                    factor.name()
                ),
            });
        }
        if rel > self.opts.rel_tol {
            return Err(LinearError::NotConverged {
                method: factor.name(),
                iterations: steps,
                rel_residual: rel,
                rel_tol: self.opts.rel_tol,
                breakdown: false,
            });
        }
        x.copy_from_slice(&sol);
        Ok(LinearStats {
            method: factor.name(),
            iterations: steps,
            rel_residual: rel,
            setup_seconds,
            solve_seconds,
            levels: 0,
            operator_complexity: 0.0,
            reused_setup: reused,
        })
    }

    fn solve_amg(
        &mut self,
        a: &CsrMatrix,
        b: &[f64],
        x: &mut [f64],
        kind: Krylov,
    ) -> Result<LinearStats, LinearError> {
        let name = match kind {
            Krylov::Cg => "amg-cg",
            Krylov::Bicgstab => "amg-bicgstab",
            Krylov::Gmres => "amg-gmres",
        };
        // Only CG needs (and may assume) a symmetric hierarchy.
        let cg = kind == Krylov::Cg;
        let mut setup_seconds = 0.0;
        let reusable = match &self.setup {
            Setup::Amg { pattern, stale, .. } => !*stale && pattern.matches(a),
            _ => false,
        };
        if !reusable {
            let t0 = Instant::now();
            let hierarchy = AmgHierarchy::build_with_symmetry(a, &self.opts.amg, cg)?;
            setup_seconds = t0.elapsed().as_secs_f64();
            self.setup = Setup::Amg {
                pattern: Pattern::of(a),
                hierarchy,
                iterations_after_setup: None,
                stale: false,
            };
        }
        let Setup::Amg {
            hierarchy,
            iterations_after_setup,
            stale,
            ..
        } = &mut self.setup
        else {
            unreachable!()
        };
        let t1 = Instant::now();
        let max_iter = self.opts.max_iter;
        let mut opts = self.opts.clone();
        let mut used = 0usize;
        let mut out;
        let mut reused = reusable;
        if reusable {
            let k0 = iterations_after_setup.unwrap_or(max_iter);
            let cap = (2 * k0).max(k0 + 4);
            // Stage 1: the kept hierarchy, fine level refreshed.
            let t0 = Instant::now();
            hierarchy.refresh_fine(a)?;
            setup_seconds += t0.elapsed().as_secs_f64();
            opts.max_iter = cap.min(max_iter);
            out = run_krylov(a, b, x, &hierarchy.preconditioner(a), kind, &opts);
            used += out.iterations;
            if !out.converged && used < max_iter {
                // Stage 2: same aggregates and prolongators, Galerkin
                // operators recomputed for the new matrix; continue from x.
                let t0 = Instant::now();
                hierarchy.refresh_galerkin(a)?;
                setup_seconds += t0.elapsed().as_secs_f64();
                opts.max_iter = cap.min(max_iter - used);
                out = run_krylov(a, b, x, &hierarchy.preconditioner(a), kind, &opts);
                used += out.iterations;
            }
            if !out.converged && used < max_iter {
                // Stage 3: full rebuild; continue from x.
                let t0 = Instant::now();
                *hierarchy = AmgHierarchy::build_with_symmetry(a, &self.opts.amg, cg)?;
                setup_seconds += t0.elapsed().as_secs_f64();
                *iterations_after_setup = None;
                reused = false;
                opts.max_iter = max_iter - used;
                out = run_krylov(a, b, x, &hierarchy.preconditioner(a), kind, &opts);
                used += out.iterations;
            }
        } else {
            out = run_krylov(a, b, x, &hierarchy.preconditioner(a), kind, &opts);
            used = out.iterations;
        }
        out.iterations = used;
        match *iterations_after_setup {
            None => *iterations_after_setup = Some(out.iterations),
            Some(k0) => {
                if out.iterations > (2 * k0).max(k0 + 4) {
                    *stale = true;
                }
            }
        }
        let stats = LinearStats {
            method: name,
            iterations: out.iterations,
            rel_residual: out.rel_residual,
            setup_seconds,
            solve_seconds: t1.elapsed().as_secs_f64() - if reusable { setup_seconds } else { 0.0 },
            levels: hierarchy.levels(),
            operator_complexity: hierarchy.operator_complexity(),
            reused_setup: reused,
        };
        finish(out, stats, &self.opts)
    }
}

/// The Krylov method of an iterative [`Method`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Krylov {
    Cg,
    Bicgstab,
    Gmres,
}

fn run_krylov<P: Preconditioner>(
    a: &CsrMatrix,
    b: &[f64],
    x: &mut [f64],
    m: &P,
    kind: Krylov,
    opts: &SolverOptions,
) -> KrylovOutcome {
    match kind {
        Krylov::Cg => pcg(a, b, x, m, opts.rel_tol, opts.max_iter),
        Krylov::Bicgstab => pbicgstab(a, b, x, m, opts.rel_tol, opts.max_iter),
        Krylov::Gmres => pgmres(a, b, x, m, opts.gmres_restart, opts.rel_tol, opts.max_iter),
    }
}

fn finish(
    out: KrylovOutcome,
    stats: LinearStats,
    opts: &SolverOptions,
) -> Result<LinearStats, LinearError> {
    if out.converged {
        Ok(stats)
    } else {
        Err(LinearError::NotConverged {
            method: stats.method,
            iterations: out.iterations,
            rel_residual: out.rel_residual,
            rel_tol: opts.rel_tol,
            breakdown: out.breakdown,
        })
    }
}

fn check_inputs(a: &CsrMatrix, b: &[f64], x: &[f64]) -> Result<(), LinearError> {
    if a.block == 0
        || a.row_ptr.len() != a.n + 1
        || a.row_ptr[a.n] != a.col_idx.len()
        || a.col_idx.len() * a.block * a.block != a.values.len()
    {
        return Err(LinearError::Dimension {
            detail: "inconsistent CSR arrays".into(),
        });
    }
    if !a.is_square() {
        return Err(LinearError::Dimension {
            detail: format!("the matrix is {} x {}, not square", a.rows(), a.cols()),
        });
    }
    if b.len() != a.rows() || x.len() != a.rows() {
        return Err(LinearError::Dimension {
            detail: format!(
                "matrix is {n} x {n}, b has {} entries, x has {}",
                b.len(),
                x.len(),
                n = a.rows()
            ),
        });
    }
    if let Some((i, j)) = a.first_non_finite() {
        return Err(LinearError::NonFinite {
            detail: format!("matrix entry ({i}, {j}) is {}", a.get(i, j)),
        });
    }
    if let Some(i) = b.iter().position(|v| !v.is_finite()) {
        return Err(LinearError::NonFinite {
            detail: format!("right-hand side entry {i} is {}", b[i]),
        });
    }
    if let Some(i) = x.iter().position(|v| !v.is_finite()) {
        return Err(LinearError::NonFinite {
            detail: format!("initial guess entry {i} is {}", x[i]),
        });
    }
    Ok(())
}

/// 1 / a_ii, or a `Singular` error naming the first row with a zero diagonal.
pub(crate) fn inverse_diagonal(a: &CsrMatrix) -> Result<Vec<f64>, LinearError> {
    let d = a.diagonal();
    if let Some(i) = d.iter().position(|&v| v == 0.0) {
        return Err(LinearError::Singular {
            detail: format!("row {i} has a zero diagonal (a cell with no connection, well or accumulation term?)"),
        });
    }
    Ok(d.iter().map(|v| 1.0 / v).collect())
}
