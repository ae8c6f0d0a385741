//! Transient runs: report times, step sizes, step cuts, the mass balance of
//! each step and the cumulatives.

use rayon::prelude::*;
use rill_model::Timeline;

use super::controls::WellState;
use super::newton::{Iterations, StepFail};
use super::pace::Pace;
use super::report::ReportRow;
use super::{Observer, Progress, RunError, Runner};
use crate::disc::Assembly;
use crate::results::RunResults;

/// Report times after t = 0: every `report_every`, every `report_at`, the
/// events, the end;
/// sorted, without near-duplicates.
pub(crate) fn report_stops(tl: &Timeline) -> Vec<f64> {
    let end = tl.end;
    let mut stops: Vec<f64> = Vec::new();
    if let Some(every) = tl.report_every.filter(|e| *e > 0.0) {
        let mut k = 1.0;
        while k * every < end * (1.0 - 1e-12) {
            stops.push(k * every);
            k += 1.0;
        }
    }
    stops.extend(
        tl.events
            .iter()
            .map(|e| e.time)
            .chain(tl.report_at.iter().copied())
            .filter(|&t| t > 0.0 && t < end),
    );
    stops.push(end);
    stops.retain(|&t| t > 0.0);
    stops.sort_by(f64::total_cmp);
    stops.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * end.abs().max(1.0));
    stops
}

/// Step-size control: the step wanted next, its cap and its growth.
struct StepSizer {
    want: f64,
    max_step: f64,
    growth: f64,
}

/// The step tried toward the next report time.
#[derive(Debug, Clone, Copy)]
struct Proposal {
    dt: f64,
    /// The step ends exactly at the report time.
    hits: bool,
    /// The step is shorter than wanted because of the report time.
    shortened: bool,
}

/// What an accepted step took.
#[derive(Debug, Clone, Copy)]
struct Taken {
    /// Length of the accepted step, s (after any cuts).
    dt: f64,
    /// The step ended exactly at the report time.
    hits: bool,
    /// Halvings before it was accepted.
    cuts: usize,
    /// Newton and linear iterations, failed attempts included.
    iterations: Iterations,
}

impl StepSizer {
    fn new(tl: &Timeline) -> StepSizer {
        StepSizer {
            want: if tl.first_step > 0.0 {
                tl.first_step
            } else {
                tl.max_step.min(tl.end)
            },
            max_step: if tl.max_step > 0.0 {
                tl.max_step
            } else {
                f64::INFINITY
            },
            growth: if tl.growth >= 1.0 { tl.growth } else { 1.0 },
        }
    }

    /// The step toward a report time `rem` away: the wanted step, taken
    /// whole when it reaches the report time, halved toward it when it
    /// would leave less than half a step before it.
    fn propose(&self, rem: f64) -> Proposal {
        let mut dt = self.want.min(self.max_step);
        let mut hits = false;
        let mut shortened = false;
        if dt >= rem * (1.0 - 1e-9) {
            shortened = dt > rem;
            dt = rem;
            hits = true;
        } else if dt > 0.5 * rem {
            dt = 0.5 * rem;
            shortened = true;
        }
        Proposal {
            dt,
            hits,
            shortened,
        }
    }

    /// Grows the wanted step after an easy step; keeps it after a cut or a
    /// hard step; a step shortened for a report time does not shrink it.
    fn after(&mut self, proposal: Proposal, taken: Taken) {
        let base = if taken.cuts == 0 && proposal.shortened {
            self.want
        } else {
            taken.dt
        };
        let per_step = taken.iterations.newton / (taken.cuts + 1);
        let factor = if taken.cuts > 0 || per_step > 8 {
            1.0
        } else {
            self.growth
        };
        self.want = (base * factor).min(self.max_step);
    }
}

/// The assemblies and running sums of a transient run.
struct Accumulation {
    /// The converged assembly of the last step.
    asm: Assembly,
    /// Scratch for the line search.
    trial: Assembly,
    /// Surface volume in place per cell at the start of the step.
    mass_old: Vec<f64>,
    well_cum: Vec<f64>,
    bnd_cum: Vec<f64>,
    /// Cumulative surface volume out through each aquifer.
    aq_cum: Vec<f64>,
}

impl Runner<'_> {
    /// Steps from t = 0 to `timeline.end`, recording every report time.
    pub(super) fn run_transient(
        &mut self,
        x: &mut [f64],
        wells: &mut [WellState],
        mut next_event: usize,
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Result<(), RunError> {
        let tl = &self.case.timeline;
        let events = &tl.events;
        let end = tl.end;
        let stops = report_stops(tl);
        let mut acc = self.start_transient(x, wells, res, observer);
        let mut sizer = StepSizer::new(tl);
        let mut pace = Pace::new(tl);
        let mut t = 0.0;
        let mut si = 0;
        let mut step = 0;
        while si < stops.len() {
            // Modes before the events, so that a shut or opening by an event is recorded.
            let modes: Vec<_> = wells.iter().map(|w| w.mode).collect();
            while next_event < events.len() && events[next_event].time <= t + 1e-9 * end.max(1.0) {
                self.apply_event(wells, &events[next_event]);
                next_event += 1;
            }
            let stop = stops[si];
            let proposal = sizer.propose(stop - t);
            let taken = self.take_step(x, wells, proposal, &mut acc, t, step, observer)?;
            step += 1;
            self.guard(x, t + taken.dt, step)?;
            super::report::record_events(res, t, &modes, wells);
            self.stats.steps += 1;
            let balance = self.close_step(x, &mut acc, taken.dt);
            t = if taken.hits { stop } else { t + taken.dt };
            observer.progress(&Progress {
                time: t,
                end,
                step_size: taken.dt,
                step,
                newton_iterations: taken.iterations.newton,
                linear_iterations: taken.iterations.linear,
            });
            if taken.hits {
                si += 1;
                self.record(
                    res,
                    x,
                    wells,
                    ReportRow {
                        time: t,
                        well_rate: &acc.asm.well_rate,
                        well_cum: &acc.well_cum,
                        bnd_rate: &acc.asm.bnd_rate,
                        bnd_cum: &acc.bnd_cum,
                        aq_rate: &acc.asm.aq_rate,
                        aq_cum: &acc.aq_cum,
                        balance,
                    },
                    observer,
                );
            }
            sizer.after(proposal, taken);
            pace.check(step, t)?;
        }
        Ok(())
    }

    /// The initial accumulation and the t = 0 report (no flow, shut-in BHPs).
    fn start_transient(
        &self,
        x: &[f64],
        wells: &[WellState],
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Accumulation {
        let nb = self.case.boundaries.len();
        let nw = self.d.n_wells;
        let mut mass_old = vec![0.0; self.d.n_cells];
        self.mass_into(x, &mut mass_old);
        let shut: Vec<f64> = (0..nw).map(|w| self.shut_in_bhp(x, w)).collect();
        let mut x0 = x.to_vec();
        x0[self.d.n_cells..self.d.n_cells + nw].copy_from_slice(&shut);
        let zw = vec![0.0; nw];
        let zb = vec![0.0; nb];
        let za = vec![0.0; self.d.aquifers.len()];
        self.record(
            res,
            &x0,
            wells,
            ReportRow {
                time: 0.0,
                well_rate: &zw,
                well_cum: &zw,
                bnd_rate: &zb,
                bnd_cum: &zb,
                aq_rate: &za,
                aq_cum: &za,
                balance: 0.0,
            },
            observer,
        );
        Accumulation {
            asm: Assembly::new(&self.d, nb),
            trial: Assembly::new(&self.d, nb),
            mass_old,
            well_cum: vec![0.0; nw],
            bnd_cum: vec![0.0; nb],
            aq_cum: za,
        }
    }

    /// One step by Newton, halved and retried from the state before it on
    /// failure, up to `max_step_cuts` times and never below `min_step`.
    #[allow(clippy::too_many_arguments)]
    fn take_step(
        &mut self,
        x: &mut [f64],
        wells: &mut [WellState],
        proposal: Proposal,
        acc: &mut Accumulation,
        t: f64,
        step: usize,
        observer: &mut dyn Observer,
    ) -> Result<Taken, RunError> {
        let x_before = x.to_vec();
        let first = self.d.n_cells + self.d.n_wells;
        self.aq_old.copy_from_slice(&x[first..]);
        let wells_before = wells.to_vec();
        let mut taken = Taken {
            dt: proposal.dt,
            hits: proposal.hits,
            cuts: 0,
            iterations: Iterations::default(),
        };
        loop {
            for st in wells.iter_mut() {
                st.switches = 0;
            }
            let attempt = self.newton(
                x,
                wells,
                taken.dt,
                &acc.mass_old,
                &mut acc.asm,
                &mut acc.trial,
                observer,
            );
            match attempt {
                Ok(its) => {
                    taken.iterations.add(its);
                    return Ok(taken);
                }
                Err(StepFail::Cancelled) => return Err(RunError::Cancelled { time: t }),
                Err(StepFail::Failed { reason, iterations }) => {
                    taken.iterations.add(iterations);
                    let min_step = self.case.timeline.min_step;
                    if taken.dt <= min_step * (1.0 + 1e-12) {
                        // A failure at the shortest length allowed (after
                        // cuts, or a step that short to reach a report time).
                        return Err(RunError::StepTooShort {
                            step: step + 1,
                            time: t,
                            step_size: taken.dt,
                            min_step,
                            reason,
                        });
                    }
                    taken.cuts += 1;
                    self.stats.step_cuts += 1;
                    if taken.cuts > self.opts.max_step_cuts {
                        return Err(RunError::StepFailed {
                            step: step + 1,
                            time: t,
                            step_size: taken.dt,
                            cuts: taken.cuts - 1,
                            reason,
                        });
                    }
                    // Never below min_step: the last try is at min_step itself.
                    taken.dt = (taken.dt * 0.5).max(min_step);
                    taken.hits = false;
                    x.copy_from_slice(&x_before);
                    wells.clone_from_slice(&wells_before);
                }
            }
        }
    }

    /// Closes an accepted step: its mass balance error, the cumulatives,
    /// and the accumulation the next step starts from.
    ///
    /// The balance error is |accumulation change + net outflow over the
    /// step| over a scale that cannot vanish: the largest of the surface
    /// volume in place, the gross throughput of the step (every well and
    /// boundary, each counted by its size) and the accumulation change. The
    /// volume in place is never zero in an active grid, so a step in which
    /// almost nothing flows reports round-off against it.
    fn close_step(&self, x: &[f64], acc: &mut Accumulation, dt: f64) -> f64 {
        let asm = &acc.asm;
        let mass_old = &acc.mass_old;
        let (dm, fip) = self
            .d
            .owned
            .clone()
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| (asm.mass[i] - mass_old[i], asm.mass[i]))
            .reduce(|| (0.0, 0.0), |p, q| (p.0 + q.0, p.1 + q.1));
        let mut sums = [dm, fip];
        self.sum(&mut sums);
        let [dm, fip] = sums;
        let out: f64 = asm
            .well_rate
            .iter()
            .chain(&asm.bnd_rate)
            .chain(&asm.aq_rate)
            .sum::<f64>()
            * dt;
        let gross: f64 = asm
            .well_rate
            .iter()
            .chain(&asm.bnd_rate)
            .chain(&asm.aq_rate)
            .map(|q| q.abs())
            .sum::<f64>()
            * dt;
        let scale = fip.max(gross).max(dm.abs());
        let balance = if scale > 0.0 {
            (dm + out).abs() / scale
        } else {
            0.0
        };
        for (c, q) in acc.well_cum.iter_mut().zip(&asm.well_rate) {
            *c += q * dt;
        }
        for (c, q) in acc.bnd_cum.iter_mut().zip(&asm.bnd_rate) {
            *c += q * dt;
        }
        for (c, q) in acc.aq_cum.iter_mut().zip(&asm.aq_rate) {
            *c += q * dt;
        }
        acc.mass_old.copy_from_slice(&acc.asm.mass);
        if self.pvt.c_f + self.pvt.c_r == 0.0 {
            // Incompressible: the accumulation is the reference one.
            self.mass_into(x, &mut acc.mass_old);
        }
        balance
    }
}
