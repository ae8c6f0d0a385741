//! Steady runs: the incompressible pressure equation, solved once and again
//! only while a well switches control.

use rayon::prelude::*;

use super::controls::WellState;
use super::report::ReportRow;
use super::{Observer, Progress, RunError, Runner};
use crate::disc::{boundary_rate, completion_rate, flows, Assembly, WellDrive};
use crate::results::RunResults;
use rill_model::derived::GRAVITY;

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
        let mut forced = 0;
        let modes: Vec<_> = wells.iter().map(|w| w.mode).collect();
        // The first round solves with the deck's controls: the initial
        // pressures say nothing about the steady state, so no control is
        // judged (switched or shut) before a solution exists.
        // Each round is linearised at the initial cell pressures (with the
        // current BHPs): the problem is linear, so any point gives the same
        // system, and one of the pressure's own size keeps A x - R(x) free of
        // cancellation even when the round before was far off (a round whose
        // only anchor a shut well was).
        let nc = self.d.n_cells;
        let base: Vec<f64> = x[..nc].to_vec();
        loop {
            if self.cancelled(observer) {
                return Err(RunError::Cancelled { time: 0.0 });
            }
            x[..nc].copy_from_slice(&base);
            let drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
            self.assemble_at(1.0, None, &drive, x, &mut asm);
            // The problem is linear: A x - R(x) is the right-hand side of A p = b.
            asm.jac.mul_vec_into(x, &mut rhs);
            // The well and aquifer rows' products are shares, their residuals sums.
            self.sum(&mut rhs[nc..]);
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
            // So do the aquifers, which supply nothing at steady state.
            let first = nc + self.d.n_wells;
            sol[first..].copy_from_slice(&x[first..]);
            *x = sol;
            rounds += 1;
            if self.update_controls(wells, x) && rounds <= 2 * self.opts.newton.max_switches + 1 {
                continue;
            }
            // No backflow in the result: a well still flowing the wrong way
            // is shut and the state solved again (each well at most once).
            if forced < self.d.n_wells && self.shut_reversed(wells, x) {
                forced += 1;
                continue;
            }
            break;
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
        self.sum(&mut asm.well_rate);
        self.sum(&mut asm.bnd_rate);
        let balance = self.steady_balance(x, &drive, &asm.well_rate, &asm.bnd_rate);
        self.stats.steps = 1;
        let zeros_w = vec![0.0; self.d.n_wells];
        let zeros_b = vec![0.0; self.case.boundaries.len()];
        let zeros_a = vec![0.0; self.d.aquifers.len()];
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
                aq_rate: &zeros_a,
                aq_cum: &zeros_a,
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

impl Runner<'_> {
    /// Balance error of a steady state: the net outflow of all wells and
    /// boundaries over a scale that cannot vanish with the flow, the
    /// largest of
    /// - the total inflow (every completion and boundary face that lets
    ///   liquid in),
    /// - the largest single flow through any face (interior, boundary) or
    ///   completion (liquid may circulate through one boundary, in at its
    ///   deep faces and out at its shallow ones, while every total is zero),
    /// - the flow a pressure difference of 1 Pa drives through the largest
    ///   transmissibility sum of a cell (the resolution the Newton test of a
    ///   transient run also floors its scale with): below it, flows are
    ///   round-off.
    ///
    /// So a run in which nothing flows reports round-off against the
    /// resolution, not round-off against round-off.
    fn steady_balance(
        &self,
        x: &[f64],
        drive: &[WellDrive],
        well_rate: &[f64],
        bnd_rate: &[f64],
    ) -> f64 {
        let d = &self.d;
        let nc = d.n_cells;
        let pvt = &self.pvt;
        let lam = pvt.b(pvt.p_f).0 / pvt.mu;
        let rho_g = pvt.rho_ref * GRAVITY;
        let largest_interior = d
            .owned
            .clone()
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                (d.row_ptr[i]..d.row_ptr[i + 1])
                    .filter(|&k| d.col_idx[k] > i && d.col_idx[k] < nc)
                    .map(|k| {
                        let j = d.col_idx[k];
                        let dphi = x[i] - x[j] - rho_g * (d.depth[i] - d.depth[j]);
                        (d.trans[k] * lam * dphi).abs()
                    })
                    .fold(0.0, f64::max)
            })
            .reduce(|| 0.0, f64::max);
        let mut largest = largest_interior;
        let mut inflow = 0.0;
        for (f, &pb) in d.bfaces.iter().zip(&self.bface_p) {
            let q = boundary_rate(pvt, f, x[f.cell], pb).0;
            largest = largest.max(q.abs());
            inflow += (-q).max(0.0);
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if drive[w].shut {
                continue;
            }
            for cp in &wg.comps {
                let q = completion_rate(pvt, cp, x[cp.cell], x[nc + w]).0;
                largest = largest.max(q.abs());
                inflow += (-q).max(0.0);
            }
        }
        let largest = self.max1(largest);
        let inflow = self.sum1(inflow);
        let t_max = self.max_over_owned(&d.t_sum);
        let resolution = lam * t_max * 1.0;
        let scale = inflow.max(largest).max(resolution);
        let net: f64 = well_rate.iter().chain(bnd_rate).sum();
        if scale > 0.0 {
            net.abs() / scale
        } else {
            0.0
        }
    }
}
