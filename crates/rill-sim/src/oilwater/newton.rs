//! One backward-Euler step of the oil-water engine by Newton: the well
//! controls and their switching, the convergence test, the damped update.

use rill_model::{Control, Role};

use super::assemble::{assemble, Assembly, Ctx, Drive, Target};
use super::cells::{OIL, WATER};
use super::floating::{apply_pins, PinRows};
use super::{target_of, Engine, BALANCE_TOLERANCE, CELL_TOLERANCE, MAX_DS, MAX_NEWTON};
use crate::results::ControlMode;
use crate::run::Observer;

/// The lowest BHP of a producer with no `bhp_limit`: a well cannot pull
/// its column below the atmosphere.
pub(super) const ATMOSPHERE: f64 = 101_325.0;
/// Relative miss of a rate well's target at convergence.
const WELL_TOLERANCE: f64 = 1e-7;

/// A well's control state during the run.
#[derive(Debug, Clone)]
pub(super) struct WellState {
    pub role: Role,
    /// The deck's control (or the last event's).
    pub control: Control,
    pub bhp_limit: Option<f64>,
    /// A rate well held at its BHP limit.
    pub on_limit: bool,
    /// Shut for the rest of the run by its `max_water_cut`.
    pub cut_off: bool,
    /// Control switches in the current step.
    pub switches: usize,
    /// Oil and water fractions of the wellbore column this step.
    pub mix: [f64; 2],
}

impl WellState {
    pub fn new(w: &rill_model::Well) -> WellState {
        WellState {
            role: w.role,
            control: w.control,
            bhp_limit: w.bhp_limit,
            on_limit: false,
            cut_off: false,
            switches: 0,
            mix: if w.role == Role::Injector {
                [0.0, 1.0]
            } else {
                [1.0, 0.0]
            },
        }
    }

    /// The limit the BHP of a rate well may not pass.
    pub fn limit(&self) -> Option<f64> {
        match self.role {
            Role::Producer => Some(self.bhp_limit.unwrap_or(ATMOSPHERE)),
            Role::Injector => self.bhp_limit,
        }
    }

    pub fn target(&self) -> Target {
        if self.cut_off {
            return Target::Shut;
        }
        let t = target_of(self.control, self.role);
        if self.on_limit && !matches!(t, Target::Shut | Target::Bhp) {
            Target::Bhp
        } else {
            t
        }
    }

    /// The BHP the well is held at, if it is.
    pub fn held_bhp(&self) -> Option<f64> {
        match (self.target(), self.control) {
            (Target::Bhp, Control::Bhp(p)) => Some(p),
            (Target::Bhp, _) => self.limit(),
            _ => None,
        }
    }

    pub fn drive(&self) -> Drive {
        Drive {
            target: self.target(),
            injector: self.role == Role::Injector,
            mix: self.mix,
        }
    }

    pub fn mode(&self) -> ControlMode {
        match self.target() {
            Target::Shut => ControlMode::Shut,
            Target::Bhp => ControlMode::Bhp,
            _ => ControlMode::Rate,
        }
    }

    /// The well's controlled rate out of its phase rates (production
    /// positive), and its target; `None` for a well not on a rate.
    fn rate_and_target(&self, q: [f64; 2]) -> Option<(f64, f64)> {
        match target_of(self.control, self.role) {
            Target::Oil(t) => Some((q[OIL], t)),
            Target::Liquid(t) => Some((q[OIL] + q[WATER], t)),
            Target::Water(t) => Some((-q[WATER], t)),
            Target::Bhp | Target::Shut => None,
        }
    }
}

/// Why a Newton step failed.
pub(super) enum StepFail {
    Cancelled,
    Failed(String),
}

/// Iterations of one attempt.
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct Iterations {
    pub newton: usize,
    pub linear: usize,
}

/// The inputs of a step that stay fixed through its Newton iterations.
pub(super) struct StepData<'a> {
    pub dt: f64,
    pub mass_old: &'a [[f64; 2]],
    pub aquifer_old: &'a [f64],
}

impl Engine<'_> {
    /// Solves one step from `x` (the state at its start, the result on
    /// success); `asm` holds the converged assembly on success.
    pub(super) fn newton(
        &mut self,
        x: &mut [f64],
        wells: &mut [WellState],
        step: &StepData,
        asm: &mut Assembly,
        it: &mut Iterations,
        observer: &mut dyn Observer,
    ) -> Result<(), StepFail> {
        for w in wells.iter_mut() {
            w.switches = 0;
        }
        let nc = self.d.n_cells;
        let mut dx = vec![0.0; x.len()];
        let mut rhs = vec![0.0; x.len()];
        let mut worst = String::new();
        for _ in 0..MAX_NEWTON {
            if observer.cancelled() {
                return Err(StepFail::Cancelled);
            }
            for (w, st) in wells.iter().enumerate() {
                if let Some(p) = st.held_bhp() {
                    x[2 * (nc + w)] = p;
                }
            }
            let pins = self.pins(wells).map_err(StepFail::Failed)?;
            for &(c, p0) in &pins {
                x[2 * c] = p0;
            }
            let drive: Vec<Drive> = wells.iter().map(WellState::drive).collect();
            let t0 = std::time::Instant::now();
            let ctx = Ctx {
                ph: &self.ph,
                dt: step.dt,
                mass_old: step.mass_old,
                drive: &drive,
                outside: &self.outside,
                aquifer_old: step.aquifer_old,
                hold: self.hold,
            };
            assemble(&self.d, &ctx, &self.curves_of, x, asm);
            if !pins.is_empty() {
                let rows = PinRows {
                    row_ptr: &self.d.row_ptr,
                    diag: &self.d.diag,
                    scale: self.hold * step.dt,
                };
                apply_pins(asm, &pins, rows, x);
            }
            self.timings.assembly += t0.elapsed().as_secs_f64();
            let (done, why) = self.converged(asm, x, wells, step.dt);
            if done {
                return Ok(());
            }
            worst = why;
            it.newton += 1;
            self.stats.newton_iterations += 1;
            for (r, v) in rhs.iter_mut().zip(&asm.resid) {
                *r = -v;
            }
            if !self.first_system_sent {
                self.first_system_sent = true;
                observer.first_coupled_system(&asm.jac, &rhs, &asm.acc);
            }
            dx.fill(0.0);
            match self
                .solver
                .solve_with(&asm.jac, Some(&asm.acc), &rhs, &mut dx)
            {
                Ok(st) => {
                    it.linear += st.iterations;
                    self.stats.linear_iterations += st.iterations;
                    self.timings.linear_setup += st.setup_seconds;
                    self.timings.linear_solve += st.solve_seconds;
                }
                Err(e) => return Err(StepFail::Failed(format!("linear solve failed: {e}"))),
            }
            self.update(x, &dx, wells);
            self.switch_controls(x, wells, asm);
        }
        Err(StepFail::Failed(format!(
            "Newton did not converge in {MAX_NEWTON} iterations ({worst})"
        )))
    }

    /// Whether the assembly at the current iterate meets every test, and
    /// if not, which test it misses worst.
    fn converged(&self, asm: &Assembly, x: &[f64], wells: &[WellState], dt: f64) -> (bool, String) {
        let d = &self.d;
        let nc = d.n_cells;
        let mut worst = (0.0f64, 0usize, 0usize);
        let mut sum = [0.0f64; 2];
        let mut in_place = [0.0f64; 2];
        for i in 0..nc {
            for e in 0..2 {
                let pvt = &self.ph.pvt[e];
                let den = d.pv_ref[i] / pvt.b_ref + dt * d.t_sum[i] / (pvt.mu * pvt.b_ref);
                let r = asm.resid[2 * i + e];
                let v = if den > 0.0 { r.abs() / den } else { 0.0 };
                if !(v <= worst.0) {
                    worst = (v, i, e);
                }
                sum[e] += r;
                in_place[e] += asm.mass[i][e];
            }
        }
        let phase = ["oil", "water"];
        if !(worst.0 <= CELL_TOLERANCE) {
            let (ci, cj, ck) = self.case.grid.ijk(d.cell_of[worst.1]);
            return (
                false,
                format!(
                    "the {} balance of cell ({}, {}, {}) is off by {:.3e} of its pore volume",
                    phase[worst.2],
                    ci + 1,
                    cj + 1,
                    ck + 1,
                    worst.0
                ),
            );
        }
        for e in 0..2 {
            let moved: f64 = asm
                .well_q
                .iter()
                .chain(&asm.bnd_q)
                .chain(&asm.aq_q)
                .map(|q| q[e].abs())
                .sum::<f64>()
                * dt;
            let scale = in_place[e].max(moved).max(1e-300);
            let v = sum[e].abs() / scale;
            if !(v <= BALANCE_TOLERANCE) {
                return (
                    false,
                    format!("the field {} balance is off by {v:.3e}", phase[e]),
                );
            }
        }
        for (w, st) in wells.iter().enumerate() {
            if st.target() == Target::Bhp || st.target() == Target::Shut {
                continue;
            }
            if self.past_limit(st, x[2 * (self.d.n_cells + w)]) {
                return (
                    false,
                    format!("well \"{}\" is past its BHP limit", self.case.wells[w].name),
                );
            }
            if let Some((q, t)) = st.rate_and_target(asm.well_q[w]) {
                let v = (q - t).abs() / t.abs().max(1e-300);
                if !(v <= WELL_TOLERANCE) {
                    return (
                        false,
                        format!(
                            "well \"{}\" misses its rate by {v:.3e} of it",
                            self.case.wells[w].name
                        ),
                    );
                }
            }
        }
        (true, String::new())
    }

    /// Applies a Newton update with the saturation damping: at most
    /// `MAX_DS` per cell and iteration, and no crossing of the steepest
    /// point of the cell's fractional flow in one iteration (the next
    /// iteration may go on from it); saturations stay in [0, 1], pressures
    /// move by at most a third of their value.
    fn update(&self, x: &mut [f64], dx: &[f64], wells: &[WellState]) {
        let d = &self.d;
        let nc = d.n_cells;
        for i in 0..nc {
            let p = x[2 * i];
            let cap = (p.abs() / 3.0).max(1e5);
            x[2 * i] = p + dx[2 * i].clamp(-cap, cap);
            let s = x[2 * i + 1];
            let mut s_new = s + dx[2 * i + 1].clamp(-MAX_DS, MAX_DS);
            let knee = self.ph.steepest[self.curves_of[i] as usize];
            if (s - knee) * (s_new - knee) < 0.0 {
                s_new = knee;
            }
            x[2 * i + 1] = s_new.clamp(0.0, 1.0);
        }
        for (w, st) in wells.iter().enumerate() {
            let k = 2 * (nc + w);
            if st.held_bhp().is_some() || st.target() == Target::Shut {
                continue;
            }
            let p = x[k];
            let cap = (p.abs() / 3.0).max(1e5);
            x[k] = (p + dx[k].clamp(-cap, cap)).max(1.0);
        }
        for a in 0..d.aquifers.len() {
            let k = 2 * (nc + d.n_wells + a);
            x[k] += dx[k];
        }
    }

    /// Rate wells whose BHP passed its limit go to the limit, always (the
    /// limit is a hard constraint), and so do oil-rate wells with no mobile
    /// oil in any completed cell; wells on their limit whose rate there is
    /// above the target go back to it, at most `max_switches` times a step,
    /// and after `settle_after_switches` switches only when the limit
    /// delivers more than the target by `settle_margin` (the hysteresis of
    /// the single-phase engine, see `NewtonOptions`).
    fn switch_controls(&self, x: &mut [f64], wells: &mut [WellState], asm: &Assembly) {
        let nc = self.d.n_cells;
        let o = &self.opts.newton;
        for (w, st) in wells.iter_mut().enumerate() {
            if st.cut_off {
                continue;
            }
            let Some((q, target)) = st.rate_and_target(asm.well_q[w]) else {
                continue;
            };
            let Some(limit) = st.limit() else {
                continue;
            };
            let k = 2 * (nc + w);
            if !st.on_limit {
                if self.past_limit(st, x[k]) || self.no_oil_to_take(w, st, asm) {
                    st.on_limit = true;
                    st.switches += 1;
                    x[k] = limit;
                }
            } else {
                let margin = if st.switches >= o.settle_after_switches {
                    o.settle_margin
                } else {
                    0.0
                };
                if st.switches < o.max_switches && q > target * (1.0 + margin) {
                    st.on_limit = false;
                    st.switches += 1;
                }
            }
        }
    }

    /// Whether `st` is an oil-rate well none of whose completed cells holds
    /// mobile oil: no BHP meets its target, so it goes to its limit (and
    /// takes the water there) until oil comes back.
    fn no_oil_to_take(&self, w: usize, st: &WellState, asm: &Assembly) -> bool {
        matches!(target_of(st.control, st.role), Target::Oil(_))
            && self.d.wells[w]
                .comps
                .iter()
                .all(|cp| asm.props[cp.cell].kr_mu[OIL].v <= 0.0)
    }

    /// Whether `bhp` is beyond the limit of the rate well `st`.
    pub(super) fn past_limit(&self, st: &WellState, bhp: f64) -> bool {
        match (st.limit(), st.role) {
            (Some(l), Role::Producer) => bhp < l,
            (Some(l), Role::Injector) => bhp > l,
            (None, _) => false,
        }
    }
}
