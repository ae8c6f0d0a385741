//! The time loop of the oil-water engine: report times hit exactly,
//! events, step cuts, the step size from the saturation and pressure
//! change of the last step and its Newton count, the water-cut shut-ins.

use rill_model::Role;

use super::assemble::{completion_q, Assembly};
use super::cells::{accumulation, CellProps, OIL, WATER};
use super::newton::{Iterations, StepData, StepFail, WellState};
use super::record::Tally;
use super::Engine;
use crate::results::{RunResults, WellAction, WellEvent};
use crate::run::pace::Pace;
use crate::run::transient::report_stops;
use crate::run::{Observer, Progress, RunError};

/// The saturation change per step the step control aims at.
const DS_TARGET: f64 = 0.2;
/// The pressure change per step the step control aims at, Pa (1000 psi).
const DP_TARGET: f64 = 6.894_757e6;

/// Where a step starts.
struct StepStart<'a> {
    x: &'a [f64],
    mass_old: &'a [[f64; 2]],
    aquifer_old: &'a [f64],
    t: f64,
    /// The step's number, counting from 1.
    step: usize,
}

impl Engine<'_> {
    /// Steps from t = 0 to the end, recording every report time.
    pub(super) fn run_steps(
        &mut self,
        mut x: Vec<f64>,
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Result<(), RunError> {
        let case = self.case;
        let tl = &case.timeline;
        let end = tl.end;
        let stops = report_stops(tl);
        let mut wells: Vec<WellState> = case.wells.iter().map(WellState::new).collect();
        let mut next_event = 0;
        while next_event < tl.events.len() && tl.events[next_event].time <= 0.0 {
            self.apply_event(&mut wells, &tl.events[next_event], 0.0, res);
            next_event += 1;
        }
        self.pins(&wells).map_err(RunError::Setup)?;
        let mut mass_old = self.masses(&x);
        let nc = self.d.n_cells;
        let first_aq = nc + self.d.n_wells;
        let mut aq_old: Vec<f64> = (0..self.d.aquifers.len())
            .map(|a| x[2 * (first_aq + a)])
            .collect();
        let mut tally = Tally::new(self, &mass_old, &x);
        self.mix_from_mobility(&x, &mut wells);
        self.guess_bhps(&mut x, &wells);
        self.record(res, &x, &wells, &tally, 0.0, observer);
        let mut asm = Assembly::new(&self.d, case.boundaries.len());
        let mut want = if tl.first_step > 0.0 {
            tl.first_step
        } else {
            tl.max_step.min(end)
        };
        let max_step = if tl.max_step > 0.0 {
            tl.max_step
        } else {
            f64::INFINITY
        };
        let mut pace = Pace::new(tl);
        let (mut t, mut si, mut step) = (0.0, 0, 0usize);
        let mut x_try = x.clone();
        while si < stops.len() {
            while next_event < tl.events.len()
                && tl.events[next_event].time <= t + 1e-9 * end.max(1.0)
            {
                self.apply_event(&mut wells, &tl.events[next_event], t, res);
                next_event += 1;
            }
            let stop = stops[si];
            let rem = stop - t;
            let mut dt = want.min(max_step);
            let mut hits = false;
            if dt >= rem * (1.0 - 1e-9) {
                dt = rem;
                hits = true;
            } else if dt > 0.5 * rem {
                dt = 0.5 * rem;
            }
            let start = StepStart {
                x: &x,
                mass_old: &mass_old,
                aquifer_old: &aq_old,
                t,
                step: step + 1,
            };
            let (dt, cuts, it) =
                self.attempt(&start, &mut x_try, &mut wells, &mut dt, &mut asm, observer)?;
            if cuts > 0 {
                hits = false;
            }
            step += 1;
            self.stats.steps += 1;
            let (dp, ds) = self.changes(&x, &x_try);
            self.guard(&x_try, t + dt, step)?;
            std::mem::swap(&mut x, &mut x_try);
            tally.close_step(self, &asm, &mass_old, dt, t + dt, &wells);
            for (m, n) in mass_old.iter_mut().zip(&asm.mass) {
                *m = *n;
            }
            for (a, p) in aq_old.iter_mut().enumerate() {
                *p = x[2 * (first_aq + a)];
            }
            t = if hits { stop } else { t + dt };
            self.cut_off_wet_wells(&mut wells, &tally, t, res);
            self.mix_from_rates(&mut wells, &asm);
            observer.progress(&Progress {
                time: t,
                end,
                step_size: dt,
                step,
                newton_iterations: it.newton,
                linear_iterations: it.linear,
            });
            if hits {
                si += 1;
                self.record(res, &x, &wells, &tally, t, observer);
            }
            // The next step: grown by at most `growth`, shrunk to keep the
            // saturation and pressure changes near their targets.
            let growth = if tl.growth >= 1.0 { tl.growth } else { 1.0 };
            let mut factor = growth
                .min(DS_TARGET / ds.max(1e-12))
                .min(DP_TARGET / dp.max(1e-12));
            if cuts > 0 || it.newton > 10 {
                factor = factor.min(1.0);
            }
            let shortened = hits && dt < want && cuts == 0;
            let base = if shortened { want } else { dt };
            want = (base * factor.max(0.1)).min(max_step).max(tl.min_step);
            pace.check(step, t)?;
        }
        Ok(())
    }

    /// One step from `start` by Newton, halved and tried again on failure
    /// up to `max_step_cuts` times and never below `min_step`; the state
    /// reached is in `x_try`, and `asm` holds its assembly.
    fn attempt(
        &mut self,
        start: &StepStart,
        x_try: &mut [f64],
        wells: &mut Vec<WellState>,
        dt: &mut f64,
        asm: &mut Assembly,
        observer: &mut dyn Observer,
    ) -> Result<(f64, usize, Iterations), RunError> {
        let tl = &self.case.timeline;
        let mut cuts = 0;
        let mut it = Iterations::default();
        loop {
            x_try.copy_from_slice(start.x);
            let data = StepData {
                dt: *dt,
                mass_old: start.mass_old,
                aquifer_old: start.aquifer_old,
            };
            let before = wells.clone();
            match self.newton(x_try, wells, &data, asm, &mut it, observer) {
                Ok(()) => return Ok((*dt, cuts, it)),
                Err(StepFail::Cancelled) => return Err(RunError::Cancelled { time: start.t }),
                Err(StepFail::Failed(reason)) => {
                    *wells = before;
                    cuts += 1;
                    self.stats.step_cuts += 1;
                    if *dt * 0.5 < tl.min_step {
                        return Err(RunError::StepTooShort {
                            step: start.step,
                            time: start.t,
                            step_size: *dt,
                            min_step: tl.min_step,
                            reason,
                        });
                    }
                    if cuts > self.opts.max_step_cuts {
                        return Err(RunError::StepFailed {
                            step: start.step,
                            time: start.t,
                            step_size: *dt,
                            cuts: cuts - 1,
                            reason,
                        });
                    }
                    *dt *= 0.5;
                }
            }
        }
    }

    /// Oil and water in place per cell at `x`.
    pub(super) fn masses(&self, x: &[f64]) -> Vec<[f64; 2]> {
        (0..self.d.n_cells)
            .map(|i| {
                let c =
                    CellProps::new(&self.ph, self.curves_of[i] as usize, x[2 * i], x[2 * i + 1]);
                let m = accumulation(&self.ph, &c, x[2 * i + 1], self.d.pv_ref[i]);
                [m[OIL].v, m[WATER].v]
            })
            .collect()
    }

    /// Largest pressure and saturation change of any cell between two states.
    fn changes(&self, a: &[f64], b: &[f64]) -> (f64, f64) {
        let mut dp = 0.0f64;
        let mut ds = 0.0f64;
        for i in 0..self.d.n_cells {
            dp = dp.max((a[2 * i] - b[2 * i]).abs());
            ds = ds.max((a[2 * i + 1] - b[2 * i + 1]).abs());
        }
        (dp, ds)
    }

    /// Stops the run at a state no liquid can have.
    fn guard(&self, x: &[f64], t: f64, step: usize) -> Result<(), RunError> {
        for i in 0..self.d.n_cells {
            let p = x[2 * i];
            if !(p.is_finite() && p > 0.0) {
                let (ci, cj, ck) = self.case.grid.ijk(self.d.cell_of[i]);
                return Err(RunError::Unphysical {
                    step,
                    time: t,
                    reason: format!(
                        "the oil pressure of cell ({}, {}, {}) is {p:.6e} Pa: more fluid left the cell than rock and fluid compressibility can supply; give producers a `bhp_limit`, or check the rates and the compressibilities",
                        ci + 1,
                        cj + 1,
                        ck + 1
                    ),
                });
            }
        }
        for (w, well) in self.case.wells.iter().enumerate() {
            if !x[2 * (self.d.n_cells + w)].is_finite() {
                return Err(RunError::Unphysical {
                    step,
                    time: t,
                    reason: format!(
                        "the bottom-hole pressure of well \"{}\" is not finite: its rate cannot be delivered by its completions",
                        well.name
                    ),
                });
            }
        }
        Ok(())
    }

    /// Applies a timeline event from time `t` on.
    fn apply_event(
        &mut self,
        wells: &mut [WellState],
        ev: &rill_model::Event,
        t: f64,
        res: &mut RunResults,
    ) {
        for ch in &ev.changes {
            let Some(st) = wells.get_mut(ch.well) else {
                continue;
            };
            let was_shut = st.control == rill_model::Control::Shut;
            if let Some(c) = ch.control {
                st.control = c;
                st.on_limit = false;
            }
            if let Some(l) = ch.bhp_limit {
                st.bhp_limit = Some(l);
                st.on_limit = false;
            }
            if let Some(skin) = ch.skin {
                self.d.set_skin(self.case, ch.well, skin);
            }
            let now_shut = st.control == rill_model::Control::Shut;
            if was_shut != now_shut && !st.cut_off {
                res.events.push(WellEvent {
                    time: t,
                    well: self.case.wells[ch.well].name.clone(),
                    action: if now_shut {
                        WellAction::Shut
                    } else {
                        WellAction::Reopened
                    },
                });
            }
        }
    }

    /// Producers whose water cut passed their `max_water_cut` over the
    /// step just taken are shut for the rest of the run from `t`.
    fn cut_off_wet_wells(
        &self,
        wells: &mut [WellState],
        tally: &Tally,
        t: f64,
        res: &mut RunResults,
    ) {
        for (w, well) in self.case.wells.iter().enumerate() {
            let (Some(max), Role::Producer) = (well.max_water_cut, well.role) else {
                continue;
            };
            if wells[w].cut_off {
                continue;
            }
            if tally.water_cut(w) > max {
                wells[w].cut_off = true;
                res.events.push(WellEvent {
                    time: t,
                    well: well.name.clone(),
                    action: WellAction::Shut,
                });
            }
        }
    }

    /// The wellbore column of each producer in the proportion (reservoir
    /// volumes) of what it produced over the last step.
    fn mix_from_rates(&self, wells: &mut [WellState], asm: &Assembly) {
        for (w, st) in wells.iter_mut().enumerate() {
            if st.role == Role::Injector {
                continue;
            }
            let q = asm.well_q[w];
            let vo = q[OIL].max(0.0) * self.ph.pvt[OIL].b_ref;
            let vw = q[WATER].max(0.0) * self.ph.pvt[WATER].b_ref;
            if vo + vw > 0.0 {
                st.mix = [vo / (vo + vw), vw / (vo + vw)];
            }
        }
    }

    /// The wellbore column of each producer at t = 0, in the proportion of
    /// the mobilities of its completed cells.
    fn mix_from_mobility(&self, x: &[f64], wells: &mut [WellState]) {
        for (w, st) in wells.iter_mut().enumerate() {
            if st.role == Role::Injector {
                continue;
            }
            let mut m = [0.0; 2];
            for cp in &self.d.wells[w].comps {
                let i = cp.cell;
                let c =
                    CellProps::new(&self.ph, self.curves_of[i] as usize, x[2 * i], x[2 * i + 1]);
                m[OIL] += cp.wi * c.kr_mu[OIL].v;
                m[WATER] += cp.wi * c.kr_mu[WATER].v;
            }
            if m[OIL] + m[WATER] > 0.0 {
                st.mix = [m[OIL] / (m[OIL] + m[WATER]), m[WATER] / (m[OIL] + m[WATER])];
            }
        }
    }

    /// A first BHP for every rate well: the completions' pressures on the
    /// wellbore's hydrostat, moved by the drawdown its target needs at the
    /// cells' mobilities, kept within its limit.
    fn guess_bhps(&self, x: &mut [f64], wells: &[WellState]) {
        let nc = self.d.n_cells;
        for (w, st) in wells.iter().enumerate() {
            let k = 2 * (nc + w);
            if let Some(p) = st.held_bhp() {
                x[k] = p;
                continue;
            }
            x[k] = self.shut_in_bhp(x, w, st);
            let drive = st.drive();
            let (mut lam, mut q0) = (0.0, 0.0);
            for cp in &self.d.wells[w].comps {
                let i = cp.cell;
                let c =
                    CellProps::new(&self.ph, self.curves_of[i] as usize, x[2 * i], x[2 * i + 1]);
                lam += cp.wi * (c.total_kr_mu().v * c.b[WATER].v).max(1e-30);
                q0 += completion_q(&self.ph, &c, cp.wi, cp.dd, &drive, x[k])
                    .iter()
                    .map(|q| q.v)
                    .sum::<f64>();
            }
            let target = match drive.target {
                super::assemble::Target::Oil(q)
                | super::assemble::Target::Liquid(q)
                | super::assemble::Target::Water(q) => q,
                _ => 0.0,
            };
            if lam > 0.0 {
                let shift = (target - q0.abs()) / lam;
                x[k] += match st.role {
                    Role::Producer => -shift,
                    Role::Injector => shift,
                };
            }
            if let Some(l) = st.limit() {
                x[k] = match st.role {
                    Role::Producer => x[k].max(l),
                    Role::Injector => x[k].min(l),
                };
            }
            x[k] = x[k].max(1.0);
        }
    }

    /// The BHP at which the well would not flow: the completions' oil
    /// pressures moved up the wellbore column to the datum, weighted by
    /// their well indices.
    pub(super) fn shut_in_bhp(&self, x: &[f64], w: usize, st: &WellState) -> f64 {
        let comps = &self.d.wells[w].comps;
        let (mut sum, mut wi) = (0.0, 0.0);
        for cp in comps {
            let p = x[2 * cp.cell];
            let mut rho = 0.0;
            for k in [OIL, WATER] {
                rho += st.mix[k] * self.ph.pvt[k].rho(p).0;
            }
            sum += cp.wi * (p - rho * rill_model::derived::GRAVITY * cp.dd);
            wi += cp.wi;
        }
        if wi > 0.0 {
            sum / wi
        } else {
            x[2 * (self.d.n_cells + w)]
        }
    }
}
