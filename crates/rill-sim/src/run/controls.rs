//! Well control state: the control each well is on, switching between a
//! rate target and its BHP limit, timeline events, and the shut-in BHP.
//!
//! No backflow: a well is never allowed to flow against its role. A well
//! held at a BHP (its control, or the limit of a rate control) at which its
//! completions together would flow the wrong way (a producer injecting, an
//! injector producing) is shut instead: it flows nothing, and its BHP is
//! the shut-in one. A shut well is re-tested before each step and after
//! every Newton update, and reopens as soon as its BHP lets it flow its
//! way. Each shut and reopening is recorded in the results' events.

use rill_model::derived;
use rill_model::{Case, Control, Role};

use super::Runner;
use crate::disc::{completion_rate, WellDrive};
use crate::results::ControlMode;

/// Control state of one well.
#[derive(Debug, Clone)]
pub(super) struct WellState {
    /// The control the deck (or the last event) sets.
    pub(super) control: Control,
    /// BHP limit of a rate-controlled well, Pa.
    pub(super) limit: Option<f64>,
    /// The control in force.
    pub(super) mode: ControlMode,
    /// +1 producer, -1 injector.
    sign: f64,
    /// Switches in the current step (see `NewtonOptions::max_switches` and
    /// `NewtonOptions::settle_after_switches`).
    pub(super) switches: usize,
}

impl WellState {
    pub(super) fn drive(&self) -> WellDrive {
        match (self.mode, self.control) {
            (ControlMode::Shut, _) => WellDrive {
                bhp: false,
                rate: 0.0,
                shut: true,
            },
            (ControlMode::Rate, Control::Rate(q)) => WellDrive {
                bhp: false,
                rate: self.sign * q,
                shut: false,
            },
            _ => WellDrive {
                bhp: true,
                rate: 0.0,
                shut: false,
            },
        }
    }
    /// The BHP the well would hold if it were on BHP control: its BHP
    /// control, or the limit of its rate control.
    fn held_bhp(&self) -> Option<f64> {
        match self.control {
            Control::Bhp(p) => Some(p),
            Control::Rate(_) => self.limit,
            Control::Shut => None,
            // Oil-water controls never reach this single-phase engine (`run` sends
            // oil-water cases to the oil-water engine); were one to, the well stays shut.
            Control::OilRate(_) | Control::LiquidRate(_) | Control::WaterRate(_) => None,
        }
    }
    /// The BHP held when the well is on BHP control.
    pub(super) fn bhp_target(&self) -> Option<f64> {
        match (self.mode, self.control) {
            (ControlMode::Bhp, Control::Bhp(p)) => Some(p),
            (ControlMode::Bhp, Control::Rate(_)) => self.limit,
            _ => None,
        }
    }
}

/// The mode a control starts in.
fn mode_of(c: Control) -> ControlMode {
    match c {
        Control::Rate(_) => ControlMode::Rate,
        Control::Bhp(_) => ControlMode::Bhp,
        Control::Shut => ControlMode::Shut,
        // Oil-water controls never reach this single-phase engine (`run` sends
        // oil-water cases to the oil-water engine); were one to, the well stays shut.
        Control::OilRate(_) | Control::LiquidRate(_) | Control::WaterRate(_) => ControlMode::Shut,
    }
}

/// Each well on the control the deck gives it.
pub(super) fn initial_wells(case: &Case) -> Vec<WellState> {
    case.wells
        .iter()
        .map(|w| WellState {
            control: w.control,
            limit: w.bhp_limit,
            mode: mode_of(w.control),
            sign: if w.role == Role::Producer { 1.0 } else { -1.0 },
            switches: 0,
        })
        .collect()
}

/// Applies the well changes of a timeline event.
pub(super) fn apply_event(wells: &mut [WellState], ev: &rill_model::Event) {
    for ch in &ev.changes {
        let Some(st) = wells.get_mut(ch.well) else {
            continue;
        };
        if let Some(c) = ch.control {
            st.control = c;
            st.mode = mode_of(c);
        }
        if let Some(l) = ch.bhp_limit {
            st.limit = Some(l);
        }
    }
}

impl Runner<'_> {
    /// Applies a timeline event: the well changes of [`apply_event`], and a
    /// new skin, which changes the well's indices from the event on.
    pub(super) fn apply_event(&mut self, wells: &mut [WellState], ev: &rill_model::Event) {
        apply_event(wells, ev);
        for ch in &ev.changes {
            if let Some(skin) = ch.skin {
                self.d.set_skin(self.case, ch.well, skin);
            }
        }
    }

    /// First guess of each BHP: its target, or the shut-in BHP moved by the
    /// target rate over the well's total index.
    pub(super) fn guess_bhps(&self, x: &mut [f64], wells: &[WellState]) {
        for w in 0..self.d.n_wells {
            x[self.d.n_cells + w] = match wells[w].bhp_target() {
                Some(p) => p,
                None => {
                    self.shut_in_bhp(x, w)
                        - wells[w].drive().rate
                            / (self.lam_ref * self.d.wells[w].wi_sum.max(1e-300))
                }
            };
        }
    }

    /// The BHP at which well `w` would not flow, given the cell pressures.
    pub(super) fn shut_in_bhp(&self, x: &[f64], w: usize) -> f64 {
        let wg = &self.d.wells[w];
        // The first completion's cell pressure and its hydrostat to the
        // datum, from the process that holds it.
        let first = if wg.first_here {
            let c = &wg.comps[0];
            let p = x[c.cell];
            [p, p - self.pvt.rho(p).0 * derived::GRAVITY * c.dd]
        } else {
            [f64::NEG_INFINITY; 2]
        };
        let [p_first, guess] = if self.par.is_some() {
            let mut b = first;
            self.max(&mut b);
            b
        } else {
            first
        };
        if wg.n_comps == 0 || wg.wi_sum <= 0.0 {
            return if wg.n_comps == 0 { 0.0 } else { p_first };
        }
        let mut pw = guess;
        for _ in 0..20 {
            let (mut q, mut dq) = (0.0, 0.0);
            for cp in &wg.comps {
                let (qc, _, dqw) = completion_rate(&self.pvt, cp, x[cp.cell], pw);
                q += qc;
                dq += dqw;
            }
            let mut sums = [q, dq];
            self.sum(&mut sums);
            let [q, dq] = sums;
            if dq == 0.0 {
                break;
            }
            let step = q / dq;
            pw -= step;
            if step.abs() <= 1e-9 * pw.abs() {
                break;
            }
        }
        pw
    }

    /// The well's surface rate if its BHP were `pw`, at the cell pressures of `x`.
    fn rate_at(&self, w: usize, x: &[f64], pw: f64) -> f64 {
        self.sum1(
            self.d.wells[w]
                .comps
                .iter()
                .map(|cp| completion_rate(&self.pvt, cp, x[cp.cell], pw).0)
                .sum(),
        )
    }

    /// The rate below which well `w` at BHP `pw` is at rest rather than
    /// flowing either way: what a drawdown of 1e-9 of its BHP (the relative
    /// round-off of the solved pressures, and Newton's mass tolerance) drives
    /// through its completions. A well reverses only past it (it reopens as
    /// soon as it would flow its way at all), so round-off cannot flip it,
    /// and a wrong-way rate within it is reported as zero.
    pub(super) fn rest_rate(&self, w: usize, pw: f64) -> f64 {
        self.lam_ref * self.d.wells[w].wi_sum * 1e-9 * pw.abs().max(1.0)
    }

    /// Re-tests a shut well: it reopens when the BHP it would hold lets it
    /// flow its way (on rate control when that BHP gives more than the
    /// target). Returns true when it reopened.
    fn retest_shut(&self, w: usize, st: &mut WellState, x: &mut [f64]) -> bool {
        if st.control == Control::Shut {
            // Shut by the deck: only an event opens it.
            return false;
        }
        let Some(p) = st.held_bhp() else {
            // A rate control without limit never reverses; never shut.
            st.mode = ControlMode::Rate;
            return true;
        };
        let qa = self.rate_at(w, x, p);
        if st.sign * qa <= 0.0 || st.switches >= self.opts.newton.max_switches {
            return false;
        }
        st.switches += 1;
        st.mode = match st.control {
            Control::Rate(q) if st.sign * qa > q => ControlMode::Rate,
            _ => {
                x[self.d.n_cells + w] = p;
                ControlMode::Bhp
            }
        };
        true
    }

    /// Shuts a well on BHP control that would flow against its role at its
    /// BHP. Returns true when it shut. Past `max_switches` only `force`
    /// shuts it (see [`Runner::shut_reversed`]).
    fn shut_if_reversed(&self, w: usize, st: &mut WellState, x: &mut [f64], force: bool) -> bool {
        let xw = self.d.n_cells + w;
        if st.mode != ControlMode::Bhp
            || (st.switches >= self.opts.newton.max_switches && !force)
            || self.d.wells[w].wi_sum <= 0.0
            || st.sign * self.rate_at(w, x, x[xw]) >= -self.rest_rate(w, x[xw])
        {
            return false;
        }
        st.switches += 1;
        st.mode = ControlMode::Shut;
        x[xw] = self.shut_in_bhp(x, w);
        true
    }

    /// At a converged state: shuts every well still flowing against its
    /// role, whatever its switches (a well whose switches ran out during
    /// the iterations is otherwise left open). Returns true when one shut;
    /// it cannot reopen in this step, so this ends.
    pub(super) fn shut_reversed(&self, wells: &mut [WellState], x: &mut [f64]) -> bool {
        let mut shut = false;
        for (w, st) in wells.iter_mut().enumerate() {
            shut |= self.shut_if_reversed(w, st, x, true);
        }
        shut
    }

    /// Applies control switching at `x` and holds BHP-controlled wells at
    /// their targets. Returns true when a control changed.
    ///
    /// A rate-controlled well goes to BHP control when its BHP is past the
    /// limit (producer: below, injector: above); a well held at its limit goes
    /// back to rate control when the limit would deliver more than the
    /// target rate. Checked before each step and after every Newton update.
    pub(super) fn update_controls(&self, wells: &mut [WellState], x: &mut [f64]) -> bool {
        let nc = self.d.n_cells;
        let max_sw = self.opts.newton.max_switches;
        let mut switched = false;
        for (w, st) in wells.iter_mut().enumerate() {
            let xw = nc + w;
            if st.mode == ControlMode::Shut {
                switched |= self.retest_shut(w, st, x);
                continue;
            }
            match st.control {
                Control::Shut => st.mode = ControlMode::Shut,
                Control::Bhp(p) => {
                    st.mode = ControlMode::Bhp;
                    x[xw] = p;
                }
                Control::Rate(q) => match (st.mode, st.limit) {
                    (ControlMode::Rate, Some(lim)) => {
                        // Going to the limit is always allowed (only coming
                        // back is counted): a limit is never passed.
                        if st.sign * (lim - x[xw]) > 0.0 && self.d.wells[w].wi_sum > 0.0 {
                            st.mode = ControlMode::Bhp;
                            st.switches += 1;
                            x[xw] = lim;
                            switched = true;
                        }
                    }
                    (ControlMode::Rate, None) => {}
                    (ControlMode::Bhp, None) => {
                        st.mode = ControlMode::Rate;
                        switched = true;
                    }
                    (ControlMode::Bhp, Some(lim)) => {
                        x[xw] = lim;
                        let qa = self.rate_at(w, x, lim);
                        // A well that has gone there and back in this step
                        // returns only past the hysteresis band.
                        let no = &self.opts.newton;
                        let band = if st.switches >= no.settle_after_switches {
                            1.0 + no.settle_margin
                        } else {
                            1.0
                        };
                        if st.sign * qa > q * band && st.switches < max_sw {
                            st.mode = ControlMode::Rate;
                            st.switches += 1;
                            switched = true;
                        }
                    }
                    (ControlMode::Shut, _) => {}
                },
                // Oil-water controls never reach this single-phase engine (`run` sends
                // oil-water cases to the oil-water engine); were one to, the well stays shut.
                Control::OilRate(_) | Control::LiquidRate(_) | Control::WaterRate(_) => {
                    st.mode = ControlMode::Shut;
                }
            }
            switched |= self.shut_if_reversed(w, st, x, false);
        }
        switched
    }
}
