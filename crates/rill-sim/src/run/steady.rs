//! Steady runs: the incompressible pressure equation, solved once and again
//! only while a well switches control.

use rayon::prelude::*;

use super::controls::WellState;
use super::report::ReportRow;
use super::{Observer, Progress, RunError, Runner};
use crate::disc::{flows, Assembly, WellDrive};
use crate::results::RunResults;

impl Runner<'_> {
    /// Solves `A p = b` (the problem is linear), re-solving after a control
    /// switch, and records the one report row at `timeline.end`.
    pub(super) fn run_steady(
        &mut self,
        x: &mut Vec<f64>,
        wells: &mut [WellState],
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Result<(), RunError> {
        let end = self.case.timeline.end;
        let fail = |reason: String, cuts| RunError::StepFailed {
            step: 1,
            time: end,
            step_size: 0.0,
            cuts,
            reason,
        };
        let mut asm = Assembly::new(&self.d, self.case.boundaries.len());
        let n = self.d.n();
        let mut rhs = vec![0.0; n];
        let mut rounds = 0;
        let modes: Vec<_> = wells.iter().map(|w| w.mode).collect();
        self.update_controls(wells, x);
        loop {
            if observer.cancelled() {
                return Err(RunError::Cancelled { time: 0.0 });
            }
            let drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
            self.assemble_at(1.0, None, &drive, x, &mut asm);
            // The problem is linear: A x - R(x) is the right-hand side of A p = b.
            asm.jac.mul_vec_into(x, &mut rhs);
            rhs.par_iter_mut()
                .zip(&asm.resid)
                .for_each(|(b, r)| *b -= r);
            let mut sol = x.clone();
            self.stats.newton_iterations += 1;
            self.solve_linear(&asm.jac, &rhs, &mut sol, observer)
                .map_err(|e| fail(e, rounds))?;
            // Held cells keep their pressure exactly.
            for (i, _) in self.pinned.iter().enumerate().filter(|(_, p)| **p) {
                sol[i] = x[i];
            }
            *x = sol;
            rounds += 1;
            if !self.update_controls(wells, x) || rounds > 2 * self.opts.newton.max_switches + 1 {
                break;
            }
        }
        self.guard(x, end, 1)?;
        super::report::record_events(res, 0.0, &modes, wells);
        let drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
        flows(
            &self.d,
            &self.ctx(1.0, None, &drive),
            x,
            &mut asm.well_rate,
            &mut asm.bnd_rate,
        );
        let balance = steady_balance(&asm.well_rate, &asm.bnd_rate);
        self.stats.steps = 1;
        let zeros_w = vec![0.0; self.d.n_wells];
        let zeros_b = vec![0.0; self.case.boundaries.len()];
        self.record(
            res,
            x,
            wells,
            ReportRow {
                time: end,
                well_rate: &asm.well_rate,
                well_cum: &zeros_w,
                bnd_rate: &asm.bnd_rate,
                bnd_cum: &zeros_b,
                balance,
            },
            observer,
        );
        observer.progress(&Progress {
            time: end,
            end,
            step_size: 0.0,
            step: 1,
            newton_iterations: rounds,
            linear_iterations: self.stats.linear_iterations,
        });
        Ok(())
    }
}

/// Balance error of a steady state: |net outflow| over half the sum of the
/// absolute rates of all wells and boundaries (0 when nothing flows).
fn steady_balance(well_rate: &[f64], bnd_rate: &[f64]) -> f64 {
    let net: f64 = well_rate.iter().chain(bnd_rate).sum();
    let gross: f64 = 0.5
        * well_rate
            .iter()
            .chain(bnd_rate)
            .map(|q| q.abs())
            .sum::<f64>();
    if gross > 0.0 {
        net.abs() / gross
    } else {
        0.0
    }
}
