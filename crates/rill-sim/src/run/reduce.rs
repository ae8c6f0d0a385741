//! Reductions over the processes of a distributed run.

use rayon::prelude::*;

use super::{Observer, Runner};
use crate::disc::Assembly;

/// Reductions over the processes of a distributed run (no-ops in a serial
/// one, so a serial run computes exactly what it did before).
impl Runner<'_> {
    /// Sums `v` over all processes, in place.
    pub(super) fn sum(&self, v: &mut [f64]) {
        if let Some(p) = self.par {
            p.sum(v);
        }
    }

    /// The largest of `v` over all processes, in place.
    pub(super) fn max(&self, v: &mut [f64]) {
        if let Some(p) = self.par {
            p.max(v);
        }
    }

    pub(super) fn sum1(&self, v: f64) -> f64 {
        let mut b = [v];
        self.sum(&mut b);
        b[0]
    }

    pub(super) fn max1(&self, v: f64) -> f64 {
        let mut b = [v];
        self.max(&mut b);
        b[0]
    }

    /// The largest of a per-cell quantity over the owned cells of all processes.
    pub(super) fn max_over_owned(&self, per_cell: &[f64]) -> f64 {
        let local = per_cell[self.d.owned.clone()]
            .par_iter()
            .copied()
            .reduce(|| 0.0, f64::max);
        self.max1(local)
    }

    /// Makes an assembly's global numbers global: each process assembled
    /// its completions', boundary faces' and aquifer faces' shares of the
    /// well and aquifer residuals and of the rates.
    pub(super) fn reduce_assembly(&self, out: &mut Assembly) {
        let Some(p) = self.par else {
            return;
        };
        let nc = self.d.n_cells;
        let mut buf: Vec<f64> = out.resid[nc..]
            .iter()
            .chain(&out.well_rate)
            .chain(&out.bnd_rate)
            .chain(&out.aq_rate)
            .chain(&out.aq_influx)
            .copied()
            .collect();
        p.sum(&mut buf);
        let mut it = buf.into_iter();
        for v in out.resid[nc..]
            .iter_mut()
            .chain(out.well_rate.iter_mut())
            .chain(out.bnd_rate.iter_mut())
            .chain(out.aq_rate.iter_mut())
            .chain(out.aq_influx.iter_mut())
        {
            *v = it.next().unwrap_or(0.0);
        }
    }

    /// Whether any process's observer asks to stop (every process then stops).
    pub(super) fn cancelled(&self, observer: &dyn Observer) -> bool {
        let c = if observer.cancelled() { 1.0 } else { 0.0 };
        self.max1(c) > 0.0
    }
}
