//! The rows of the results at report times.

use rayon::prelude::*;
use rill_model::Case;

use super::controls::WellState;
use super::{KeepPressures, Observer, Runner};
use crate::results::*;

/// What one report needs beyond the unknowns.
pub(super) struct ReportRow<'a> {
    pub(super) time: f64,
    pub(super) well_rate: &'a [f64],
    pub(super) well_cum: &'a [f64],
    pub(super) bnd_rate: &'a [f64],
    pub(super) bnd_cum: &'a [f64],
    pub(super) aq_rate: &'a [f64],
    pub(super) aq_cum: &'a [f64],
    pub(super) balance: f64,
}

/// Results with a named, empty series per well and boundary.
pub(crate) fn empty_results(case: &Case) -> RunResults {
    RunResults {
        times: Vec::new(),
        pressure_avg: Vec::new(),
        wells: case
            .wells
            .iter()
            .map(|w| WellSeries {
                name: w.name.clone(),
                bhp: Vec::new(),
                rate: Vec::new(),
                cumulative: Vec::new(),
                mode: Vec::new(),
            })
            .collect(),
        boundaries: case
            .boundaries
            .iter()
            .map(|b| BoundarySeries {
                name: b.name.clone(),
                rate: Vec::new(),
                cumulative: Vec::new(),
            })
            .collect(),
        aquifers: case
            .aquifers
            .iter()
            .map(|a| AquiferSeries {
                name: a.name.clone(),
                rate: Vec::new(),
                cumulative: Vec::new(),
                pressure: Vec::new(),
            })
            .collect(),
        balance_error: Vec::new(),
        pressure: Vec::new(),
        events: Vec::new(),
        stats: SolverStats::default(),
        flow_per_pascal: 0.0,
        oil_water: None,
    }
}

/// Records the wells whose shut state changed between `before` and `after`.
pub(super) fn record_events(
    res: &mut RunResults,
    time: f64,
    before: &[ControlMode],
    after: &[WellState],
) {
    for (w, (b, a)) in before.iter().zip(after).enumerate() {
        let action = match (*b == ControlMode::Shut, a.mode == ControlMode::Shut) {
            (false, true) => WellAction::Shut,
            (true, false) => WellAction::Reopened,
            _ => continue,
        };
        res.events.push(WellEvent {
            time,
            well: res.wells[w].name.clone(),
            action,
        });
    }
}

impl Runner<'_> {
    /// Appends one report row: the average pressure, BHPs and control modes
    /// at `x`, the given rates, cumulatives and balance error, and the cell
    /// pressures, given to the observer and kept as `keep_pressures` says.
    pub(super) fn record(
        &self,
        res: &mut RunResults,
        x: &[f64],
        wells: &[WellState],
        row: ReportRow,
        observer: &mut dyn Observer,
    ) {
        let d = &self.d;
        let nc = d.n_cells;
        let owned = d.owned.clone();
        let pvt = &self.pvt;
        let (spv, spvp) = owned
            .clone()
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let pv = d.pv_ref[i] * pvt.pore_factor(x[i]);
                (pv, pv * x[i])
            })
            .reduce(|| (0.0, 0.0), |p, q| (p.0 + q.0, p.1 + q.1));
        let mut sums = [spv, spvp, x[owned.clone()].iter().sum::<f64>()];
        self.sum(&mut sums);
        let [spv, spvp, sp] = sums;
        res.times.push(row.time);
        res.pressure_avg.push(if spv > 0.0 {
            spvp / spv
        } else {
            sp / d.n_global_cells as f64
        });
        for (w, s) in res.wells.iter_mut().enumerate() {
            // A shut well's BHP is the one at which it would not flow.
            s.bhp.push(if wells[w].mode == ControlMode::Shut {
                self.shut_in_bhp(x, w)
            } else {
                x[nc + w]
            });
            // A well at rest reports zero, not a wrong-way round-off.
            let q = row.well_rate[w];
            let sign = if self.case.wells[w].role == rill_model::Role::Producer {
                1.0
            } else {
                -1.0
            };
            let wrong_way_round_off = sign * q < 0.0 && q.abs() <= self.rest_rate(w, x[nc + w]);
            s.rate.push(if wrong_way_round_off { 0.0 } else { q });
            s.cumulative.push(row.well_cum[w]);
            s.mode.push(wells[w].mode);
        }
        for (b, s) in res.boundaries.iter_mut().enumerate() {
            s.rate.push(row.bnd_rate[b]);
            s.cumulative.push(row.bnd_cum[b]);
        }
        for (a, s) in res.aquifers.iter_mut().enumerate() {
            s.rate.push(row.aq_rate[a]);
            s.cumulative.push(row.aq_cum[a]);
            s.pressure.push(x[nc + d.n_wells + a]);
        }
        res.balance_error.push(row.balance);
        let Some(p) = self.grid_pressures(x) else {
            // Not rank 0 of a distributed run: its series are kept, its
            // cells are on rank 0's map.
            return;
        };
        observer.report_time(row.time, &p);
        if self.opts.keep_pressures == KeepPressures::Last {
            res.pressure.clear();
        }
        res.pressure.push(p);
    }
}

impl Runner<'_> {
    /// The cell pressures of the whole grid in grid order (NaN in inactive
    /// cells): this process's own in a serial run; gathered from every
    /// process's owned slab on rank 0 of a distributed one (`None` on the
    /// other ranks).
    fn grid_pressures(&self, x: &[f64]) -> Option<Vec<f64>> {
        let d = &self.d;
        let mut p = vec![f64::NAN; self.case.grid.cell_count()];
        match self.par {
            None => {
                for (i, &c) in d.cell_of.iter().enumerate() {
                    p[c] = x[i];
                }
            }
            Some(par) => {
                let all = par.gather(&x[d.owned.clone()]);
                if par.rank() != 0 {
                    return None;
                }
                let rock = &self.case.rock;
                let active = (0..p.len()).filter(|&c| rock.is_active(c));
                for (c, v) in active.zip(all) {
                    p[c] = v;
                }
            }
        }
        Some(p)
    }
}
