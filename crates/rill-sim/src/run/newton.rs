//! One backward-Euler step by Newton with a line search on the scaled
//! residual, with well control switching after every update.

use super::controls::WellState;
use super::{Observer, Residual, Runner};
use crate::disc::{Assembly, WellDrive};

/// Newton and linear iterations of a step or an attempt at it.
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct Iterations {
    pub(super) newton: usize,
    pub(super) linear: usize,
}

impl Iterations {
    pub(super) fn add(&mut self, other: Iterations) {
        self.newton += other.newton;
        self.linear += other.linear;
    }
}

/// Why a Newton attempt stopped without a converged step.
pub(super) enum StepFail {
    Cancelled,
    Failed {
        reason: String,
        /// Spent on the failed attempt.
        iterations: Iterations,
    },
}

/// The state the line search accepted.
struct Trial {
    /// A control switched at the trial state.
    switched: bool,
    wells: Vec<WellState>,
    drive: Vec<WellDrive>,
    residual: Residual,
    /// The step length along the Newton update.
    alpha: f64,
}

impl Runner<'_> {
    /// One backward-Euler step by Newton. On success `asm` holds the
    /// converged state (rates, accumulation).
    #[allow(clippy::too_many_arguments)]
    pub(super) fn newton(
        &mut self,
        x: &mut [f64],
        wells: &mut [WellState],
        dt: f64,
        mass_old: &[f64],
        asm: &mut Assembly,
        trial: &mut Assembly,
        observer: &mut dyn Observer,
    ) -> Result<Iterations, StepFail> {
        let no = self.opts.newton.clone();
        let n = self.d.n();
        let nc = self.d.n_cells;
        let mut switched = self.update_controls(wells, x);
        let mut drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
        self.assemble_at(dt, Some(mass_old), &drive, x, asm);
        let mut res = self.measure(asm, dt, &drive);
        let mut last_dp = f64::INFINITY;
        let mut rhs = vec![0.0; n];
        let mut delta = vec![0.0; n];
        let mut xt = x.to_vec();
        let mut lin = 0;
        let failed = |reason: String, newton, linear| StepFail::Failed {
            reason,
            iterations: Iterations { newton, linear },
        };
        for it in 0..=no.max_iterations {
            if self.cancelled(observer) {
                return Err(StepFail::Cancelled);
            }
            let res_ok = res.cells <= no.mass_tolerance && res.wells <= no.well_tolerance;
            if res_ok && !switched && (it == 0 || last_dp <= no.pressure_tolerance) {
                if !self.shut_reversed(wells, x) {
                    return Ok(Iterations {
                        newton: it,
                        linear: lin,
                    });
                }
                // No backflow in an accepted step: one more Newton update
                // with it shut (below), not a return.
                drive = wells.iter().map(WellState::drive).collect();
                self.assemble_at(dt, Some(mass_old), &drive, x, asm);
                res = self.measure(asm, dt, &drive);
            }
            if !res.merit.is_finite() {
                return Err(failed("the residual is not finite".into(), it, lin));
            }
            if it == no.max_iterations {
                let (mc, mw) = (res.cells, res.wells);
                return Err(failed(
                    format!(
                        "Newton did not converge in {it} iterations (scaled residual: cells {mc:.2e}, wells {mw:.2e}; last pressure change {last_dp:.2e} Pa)"
                    ),
                    it,
                    lin,
                ));
            }
            self.stats.newton_iterations += 1;
            for (r, v) in rhs.iter_mut().zip(&asm.resid) {
                *r = -v;
            }
            delta.fill(0.0);
            let li = self
                .solve_linear(&asm.jac, &rhs, &mut delta, observer)
                .map_err(|reason| failed(reason, it + 1, lin))?;
            lin += li;
            for (i, _) in self.pinned.iter().enumerate().filter(|(_, p)| **p) {
                delta[i] = 0.0;
            }
            let accepted = self.line_search(x, wells, &delta, &mut xt, dt, mass_old, trial, res);
            let alpha = accepted.alpha;
            last_dp = self.max1(
                self.d
                    .owned
                    .clone()
                    .map(|k| (alpha * delta[k]).abs())
                    .fold(0.0, f64::max),
            );
            for w in 0..self.d.n_wells {
                if !drive[w].bhp && !accepted.drive[w].bhp {
                    last_dp = last_dp.max((alpha * delta[nc + w]).abs());
                }
            }
            x.copy_from_slice(&xt);
            wells.clone_from_slice(&accepted.wells);
            std::mem::swap(asm, trial);
            drive = accepted.drive;
            switched = accepted.switched;
            res = accepted.residual;
        }
        unreachable!("the loop returns at max_iterations")
    }

    /// Halves the update `delta` while the scaled residual grows (a control
    /// switch or a converged residual is accepted at once; the last cut is
    /// taken whatever it gives). Leaves the accepted state in `xt` and its
    /// assembly in `trial`.
    #[allow(clippy::too_many_arguments)]
    fn line_search(
        &self,
        x: &[f64],
        wells: &[WellState],
        delta: &[f64],
        xt: &mut [f64],
        dt: f64,
        mass_old: &[f64],
        trial: &mut Assembly,
        current: Residual,
    ) -> Trial {
        let no = &self.opts.newton;
        let mut alpha = 1.0;
        for ls in 0..=no.line_search_cuts {
            let mut trial_wells = wells.to_vec();
            for k in 0..x.len() {
                xt[k] = x[k] + alpha * delta[k];
            }
            let sw = self.update_controls(&mut trial_wells, xt);
            let tdrive: Vec<WellDrive> = trial_wells.iter().map(WellState::drive).collect();
            self.assemble_at(dt, Some(mass_old), &tdrive, xt, trial);
            let t = self.measure(trial, dt, &tdrive);
            let good = sw
                || t.merit <= current.merit
                || (t.cells <= no.mass_tolerance && t.wells <= no.well_tolerance);
            if good || ls == no.line_search_cuts {
                return Trial {
                    switched: sw,
                    wells: trial_wells,
                    drive: tdrive,
                    residual: t,
                    alpha,
                };
            }
            alpha *= 0.5;
        }
        unreachable!("the line search accepts on its last cut")
    }
}
