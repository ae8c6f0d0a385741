//! GMRES with the CPR preconditioner ([`crate::cpr`]) for block systems of
//! coupled unknowns: the entry point a fully implicit simulator calls once
//! per Newton iteration.
//!
//! Owns: [`CoupledOptions`], [`CoupledSolver`] (which keeps the CPR set-up,
//! above all the pressure multigrid, between calls while the block pattern
//! stays) and [`solve_coupled`]. Must never: change the stopping rule of
//! the scalar path: the test is the true relative residual
//! ||b - A x|| / ||b|| of the system as given, recomputed from x.

use std::time::Instant;

use super::cpr::{AmgRefresh, Cpr, CprOptions, SecondStage};
use super::gmres::pgmres;
use super::krylov::KrylovOutcome;
use super::{check_inputs, CsrMatrix, LinearError, LinearStats};

/// Options of [`solve_coupled`] and [`CoupledSolver`].
#[derive(Debug, Clone, PartialEq)]
pub struct CoupledOptions {
    /// Relative residual ||b - A x|| / ||b|| to reach (default 1e-8).
    pub rel_tol: f64,
    /// GMRES iterations allowed, across restarts (default 200).
    pub max_iter: usize,
    /// Krylov vectors kept before GMRES restarts (default 40).
    pub restart: usize,
    /// The preconditioner: decoupling, second stage, multigrid.
    pub cpr: CprOptions,
}

impl Default for CoupledOptions {
    fn default() -> Self {
        CoupledOptions {
            rel_tol: 1e-8,
            max_iter: 200,
            restart: 40,
            cpr: CprOptions::default(),
        }
    }
}

/// Solves the block system A x = b once with CPR-preconditioned GMRES; `x`
/// is the initial guess on entry and the solution on success. Use a
/// [`CoupledSolver`] to keep the set-up across Newton iterations.
pub fn solve_coupled(
    a: &CsrMatrix,
    b: &[f64],
    x: &mut [f64],
    opts: &CoupledOptions,
) -> Result<LinearStats, LinearError> {
    CoupledSolver::new(opts.clone()).solve(a, b, x)
}

/// CPR-GMRES that keeps its set-up between calls.
///
/// Reuse rule (that of [`crate::Solver`] for the multigrid): a matrix with
/// the block pattern of the last one gets new weights, a new pressure matrix
/// and a new second stage (all cheap), while the pressure multigrid is kept
/// with its fine-level smoother refreshed. With k0 the iterations of the
/// first solve after the last full set-up and `cap = max(2 k0, k0 + 4)`,
/// GMRES runs at most `cap` iterations with the kept hierarchy; if that did
/// not converge, it goes on from its iterate with the coarse operators
/// recomputed (kept aggregates), at most `cap` more; then with a rebuilt
/// hierarchy for the rest of `max_iter`. A call that needed more than `cap`
/// iterations makes the next call rebuild; a pattern change always does.
pub struct CoupledSolver {
    opts: CoupledOptions,
    cpr: Option<Cpr>,
    iterations_after_setup: Option<usize>,
    stale: bool,
}

impl CoupledSolver {
    /// A solver with these options and no set-up yet.
    pub fn new(opts: CoupledOptions) -> Self {
        CoupledSolver {
            opts,
            cpr: None,
            iterations_after_setup: None,
            stale: false,
        }
    }

    /// The options in force.
    pub fn options(&self) -> &CoupledOptions {
        &self.opts
    }

    /// Changes the options; drops the set-up when the preconditioner's change.
    pub fn set_options(&mut self, opts: CoupledOptions) {
        if opts.cpr != self.opts.cpr {
            self.invalidate();
        }
        self.opts = opts;
    }

    /// Forgets the set-up: the next call builds it anew.
    pub fn invalidate(&mut self) {
        self.cpr = None;
        self.iterations_after_setup = None;
        self.stale = false;
    }

    /// The set-up kept, if any.
    pub fn cpr(&self) -> Option<&Cpr> {
        self.cpr.as_ref()
    }

    /// Solves A x = b; `x` is the initial guess on entry.
    pub fn solve(
        &mut self,
        a: &CsrMatrix,
        b: &[f64],
        x: &mut [f64],
    ) -> Result<LinearStats, LinearError> {
        self.solve_with(a, None, b, x)
    }

    /// As [`CoupledSolver::solve`], with the accumulation blocks of the
    /// true-IMPES weights (one b x b row-major block per block row).
    pub fn solve_with(
        &mut self,
        a: &CsrMatrix,
        accumulation: Option<&[f64]>,
        b: &[f64],
        x: &mut [f64],
    ) -> Result<LinearStats, LinearError> {
        check_inputs(a, b, x)?;
        let t0 = Instant::now();
        let reusable = !self.stale && self.cpr.as_ref().is_some_and(|c| c.same_pattern(a));
        match self.cpr.as_mut() {
            Some(c) if reusable => {
                if let Err(e) = c.update(a, accumulation, AmgRefresh::Fine) {
                    // A failed update leaves the set-up half new.
                    self.invalidate();
                    return Err(e);
                }
            }
            _ => {
                self.invalidate();
                self.cpr = Some(Cpr::build(a, accumulation, &self.opts.cpr)?);
            }
        }
        let mut setup_seconds = t0.elapsed().as_secs_f64();
        let mut refresh_seconds = 0.0;
        let t1 = Instant::now();
        let o = &self.opts;
        let cpr = self.cpr.as_mut().expect("set up above");
        let run = |cpr: &Cpr, x: &mut [f64], max_iter: usize| -> KrylovOutcome {
            pgmres(
                a,
                b,
                x,
                &cpr.preconditioner(a),
                o.restart,
                o.rel_tol,
                max_iter,
            )
        };
        let mut reused = reusable;
        let mut out;
        if reusable && cpr.hierarchy().is_some() {
            let k0 = self.iterations_after_setup.unwrap_or(o.max_iter);
            let cap = (2 * k0).max(k0 + 4);
            out = run(cpr, x, cap.min(o.max_iter));
            let mut used = out.iterations;
            for refresh in [AmgRefresh::Galerkin, AmgRefresh::Rebuild] {
                if out.converged || used >= o.max_iter {
                    break;
                }
                let ts = Instant::now();
                cpr.refresh_amg(refresh)?;
                refresh_seconds += ts.elapsed().as_secs_f64();
                let left = o.max_iter - used;
                let limit = if refresh == AmgRefresh::Rebuild {
                    self.iterations_after_setup = None;
                    reused = false;
                    left
                } else {
                    cap.min(left)
                };
                out = run(cpr, x, limit);
                used += out.iterations;
            }
            out.iterations = used;
        } else {
            out = run(cpr, x, o.max_iter);
        }
        match self.iterations_after_setup {
            None => self.iterations_after_setup = Some(out.iterations),
            Some(k0) => self.stale = out.iterations > (2 * k0).max(k0 + 4),
        }
        let solve_seconds = t1.elapsed().as_secs_f64() - refresh_seconds;
        setup_seconds += refresh_seconds;
        let cpr = self.cpr.as_ref().expect("set up above");
        let h = cpr.hierarchy();
        let stats = LinearStats {
            method: method_name(&self.opts.cpr),
            iterations: out.iterations,
            rel_residual: out.rel_residual,
            setup_seconds,
            solve_seconds,
            levels: h.map_or(0, |h| h.levels()),
            operator_complexity: h.map_or(0.0, |h| h.operator_complexity()),
            reused_setup: reused,
        };
        if out.converged {
            Ok(stats)
        } else {
            Err(LinearError::NotConverged {
                method: stats.method,
                iterations: out.iterations,
                rel_residual: out.rel_residual,
                rel_tol: self.opts.rel_tol,
                breakdown: out.breakdown,
            })
        }
    }
}

/// The name in [`LinearStats::method`].
fn method_name(o: &CprOptions) -> &'static str {
    match (o.pressure_stage, o.second_stage) {
        (true, SecondStage::BlockIlu0) => "cpr-bilu0-gmres",
        (true, SecondStage::BlockJacobi) => "cpr-bjacobi-gmres",
        (false, SecondStage::BlockIlu0) => "bilu0-gmres",
        (false, SecondStage::BlockJacobi) => "bjacobi-gmres",
    }
}
