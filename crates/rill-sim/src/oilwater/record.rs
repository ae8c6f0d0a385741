//! The results of an oil-water run: running sums over the steps (the
//! cumulatives, the balance of each phase, breakthrough) and the rows at
//! report times.

use rill_model::{Case, Role};

use super::assemble::Assembly;
use super::cells::{OIL, WATER};
use super::newton::WellState;
use super::Engine;
use crate::results::*;
use crate::run::{KeepPressures, Observer};

/// The water cut above the well's first one at which water has broken
/// through (common practice, no published source).
const BREAKTHROUGH_RISE: f64 = 0.01;

/// Results with named, empty phase series.
pub(super) fn empty(case: &Case) -> OilWaterResults {
    OilWaterResults {
        wells: vec![PhaseWellSeries::default(); case.wells.len()],
        ..OilWaterResults::default()
    }
}

/// What the steps add up.
pub(super) struct Tally {
    /// Last step's surface rates, production (outflow) positive.
    well_q: Vec<[f64; 2]>,
    bnd_q: Vec<[f64; 2]>,
    aq_q: Vec<[f64; 2]>,
    well_cum: Vec<[f64; 2]>,
    bnd_cum: Vec<[f64; 2]>,
    aq_cum: Vec<[f64; 2]>,
    /// The last step's balance error of oil and water.
    balance: [f64; 2],
    /// Oil in place at t = 0, surface m^3.
    oil_initial: f64,
    /// Pore volume at t = 0, m^3.
    pore_initial: f64,
    /// Per producer: the water cut of its first producing step.
    first_cut: Vec<Option<f64>>,
    /// Per producer: the end time and water cut of its last step.
    last_cut: Vec<Option<(f64, f64)>>,
    breakthrough: Vec<Option<f64>>,
}

impl Tally {
    pub fn new(e: &Engine, mass: &[[f64; 2]], x: &[f64]) -> Tally {
        let nw = e.d.n_wells;
        let nb = e.case.boundaries.len();
        let na = e.d.aquifers.len();
        let pv: f64 = (0..e.d.n_cells)
            .map(|i| e.d.pv_ref[i] * e.ph.pvt[OIL].pore_factor(x[2 * i]))
            .sum();
        Tally {
            well_q: vec![[0.0; 2]; nw],
            bnd_q: vec![[0.0; 2]; nb],
            aq_q: vec![[0.0; 2]; na],
            well_cum: vec![[0.0; 2]; nw],
            bnd_cum: vec![[0.0; 2]; nb],
            aq_cum: vec![[0.0; 2]; na],
            balance: [0.0; 2],
            oil_initial: mass.iter().map(|m| m[OIL]).sum(),
            pore_initial: pv,
            first_cut: vec![None; nw],
            last_cut: vec![None; nw],
            breakthrough: vec![None; nw],
        }
    }

    /// The surface water cut of well `w` over the last step (0 when it
    /// produced nothing).
    pub fn water_cut(&self, w: usize) -> f64 {
        let [o, wat] = self.well_q[w];
        if o + wat > 0.0 && wat > 0.0 {
            wat / (o + wat)
        } else {
            0.0
        }
    }

    /// Adds an accepted step of length `dt` ending at `t_end`: rates,
    /// cumulatives, the balance of each phase, breakthrough.
    pub fn close_step(
        &mut self,
        e: &Engine,
        asm: &Assembly,
        mass_old: &[[f64; 2]],
        dt: f64,
        t_end: f64,
        wells: &[WellState],
    ) {
        self.well_q.clone_from(&asm.well_q);
        self.bnd_q.clone_from(&asm.bnd_q);
        self.aq_q.clone_from(&asm.aq_q);
        for (c, q) in self.well_cum.iter_mut().zip(&asm.well_q) {
            c[0] += q[0] * dt;
            c[1] += q[1] * dt;
        }
        for (c, q) in self.bnd_cum.iter_mut().zip(&asm.bnd_q) {
            c[0] += q[0] * dt;
            c[1] += q[1] * dt;
        }
        for (c, q) in self.aq_cum.iter_mut().zip(&asm.aq_q) {
            c[0] += q[0] * dt;
            c[1] += q[1] * dt;
        }
        for k in [OIL, WATER] {
            let new: f64 = asm.mass.iter().map(|m| m[k]).sum();
            let old: f64 = mass_old.iter().map(|m| m[k]).sum();
            let flows = asm.well_q.iter().chain(&asm.bnd_q).chain(&asm.aq_q);
            let out: f64 = flows.clone().map(|q| q[k]).sum();
            let gross: f64 = flows.map(|q| q[k].abs()).sum();
            let change = new - old;
            let scale = new.max(gross * dt).max(change.abs());
            self.balance[k] = if scale > 0.0 {
                (change + out * dt).abs() / scale
            } else {
                0.0
            };
        }
        for (w, well) in e.case.wells.iter().enumerate() {
            if well.role != Role::Producer || wells[w].cut_off {
                continue;
            }
            let [o, wat] = asm.well_q[w];
            if o + wat <= 0.0 {
                continue;
            }
            let cut = self.water_cut(w);
            let first = *self.first_cut[w].get_or_insert(cut);
            if self.breakthrough[w].is_none() && cut >= first + BREAKTHROUGH_RISE {
                let level = first + BREAKTHROUGH_RISE;
                self.breakthrough[w] = Some(match self.last_cut[w] {
                    Some((t0, c0)) if cut > c0 => t0 + (t_end - t0) * (level - c0) / (cut - c0),
                    _ => t_end,
                });
            }
            self.last_cut[w] = Some((t_end, cut));
        }
    }
}

impl Engine<'_> {
    /// Appends one report row at `time` (the last step's rates; zero at t = 0).
    pub(super) fn record(
        &self,
        res: &mut RunResults,
        x: &[f64],
        wells: &[WellState],
        tally: &Tally,
        time: f64,
        observer: &mut dyn Observer,
    ) {
        let d = &self.d;
        let nc = d.n_cells;
        let at_start = res.times.is_empty();
        let zero = |v: &[[f64; 2]]| {
            if at_start {
                vec![[0.0; 2]; v.len()]
            } else {
                v.to_vec()
            }
        };
        let (well_q, bnd_q, aq_q) = (zero(&tally.well_q), zero(&tally.bnd_q), zero(&tally.aq_q));
        let (mut pv, mut pvp, mut pvs) = (0.0, 0.0, 0.0);
        let mass = self.masses(x);
        for i in 0..nc {
            let v = d.pv_ref[i] * self.ph.pvt[OIL].pore_factor(x[2 * i]);
            pv += v;
            pvp += v * x[2 * i];
            pvs += v * x[2 * i + 1];
        }
        res.times.push(time);
        res.pressure_avg.push(if pv > 0.0 { pvp / pv } else { 0.0 });
        for (w, s) in res.wells.iter_mut().enumerate() {
            let shut = wells[w].mode() == ControlMode::Shut || at_start;
            s.bhp.push(if shut {
                self.shut_in_bhp(x, w, &wells[w])
            } else {
                x[2 * (nc + w)]
            });
            s.rate.push(well_q[w][OIL] + well_q[w][WATER]);
            s.cumulative
                .push(tally.well_cum[w][OIL] + tally.well_cum[w][WATER]);
            s.mode.push(wells[w].mode());
        }
        for (b, s) in res.boundaries.iter_mut().enumerate() {
            s.rate.push(bnd_q[b][OIL] + bnd_q[b][WATER]);
            s.cumulative
                .push(tally.bnd_cum[b][OIL] + tally.bnd_cum[b][WATER]);
        }
        for (a, s) in res.aquifers.iter_mut().enumerate() {
            s.rate.push(aq_q[a][OIL] + aq_q[a][WATER]);
            s.cumulative
                .push(tally.aq_cum[a][OIL] + tally.aq_cum[a][WATER]);
            s.pressure.push(x[2 * (nc + d.n_wells + a)]);
        }
        let balance = if at_start { [0.0; 2] } else { tally.balance };
        res.balance_error.push(balance[OIL].max(balance[WATER]));
        let mut p_map = vec![f64::NAN; self.case.grid.cell_count()];
        let mut s_map = p_map.clone();
        for (i, &c) in d.cell_of.iter().enumerate() {
            p_map[c] = x[2 * i];
            s_map[c] = x[2 * i + 1];
        }
        observer.report_time(time, &p_map);
        observer.report_saturation(time, &s_map);
        let keep_last = self.opts.keep_pressures == KeepPressures::Last;
        if keep_last {
            res.pressure.clear();
        }
        res.pressure.push(p_map);
        let ow = res.oil_water.get_or_insert_with(|| empty(self.case));
        let injected: f64 = self
            .case
            .wells
            .iter()
            .enumerate()
            .filter(|(_, w)| w.role == Role::Injector)
            .map(|(k, _)| -tally.well_cum[k][WATER])
            .sum();
        let produced_oil: f64 = tally.well_cum.iter().map(|c| c[OIL]).sum();
        for (w, s) in ow.wells.iter_mut().enumerate() {
            let [o, wat] = well_q[w];
            s.oil_rate.push(o);
            s.water_rate.push(wat);
            s.water_cut.push(if o + wat > 0.0 && wat > 0.0 {
                wat / (o + wat)
            } else {
                0.0
            });
            s.cumulative_oil.push(tally.well_cum[w][OIL]);
            s.cumulative_water.push(tally.well_cum[w][WATER]);
            s.breakthrough = tally.breakthrough[w];
        }
        ow.oil_in_place.push(mass.iter().map(|m| m[OIL]).sum());
        ow.water_in_place.push(mass.iter().map(|m| m[WATER]).sum());
        ow.recovery.push(if tally.oil_initial > 0.0 {
            produced_oil / tally.oil_initial
        } else {
            0.0
        });
        ow.pore_volumes_injected.push(if tally.pore_initial > 0.0 {
            injected * self.ph.pvt[WATER].b_ref / tally.pore_initial
        } else {
            0.0
        });
        ow.sw_avg.push(if pv > 0.0 { pvs / pv } else { 0.0 });
        ow.balance_error_oil.push(balance[OIL]);
        ow.balance_error_water.push(balance[WATER]);
        if keep_last {
            ow.saturation.clear();
        }
        ow.saturation.push(s_map);
    }
}
