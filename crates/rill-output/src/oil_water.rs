//! What an oil-water run adds to a result set beyond its series (those are
//! in `series.rs`): the check of its results against the case, and the
//! water saturations that the report draws, kept at a few report times
//! spread over the run while the maps stream by.
//!
//! # Which report times the report draws
//! The writer sees every report time's saturations once ([`Keeper::offer`])
//! and keeps, of the chosen layers only, their block averages (the same
//! layers as the pressure maps, blocks small enough for
//! [`MAX_SATURATION_TIMES`] sets of maps to draw no more cells than the
//! pressure maps), so memory does not grow with the number of report
//! times. It keeps the first report time and every `stride`-th after it;
//! when more than [`MAX_SATURATION_TIMES`] − 1 are kept, `stride` doubles
//! and every other one goes. The newest is always kept too, so the report
//! shows the start, the end, and up to two report times evenly between.

use rill_model::Case;
use rill_sim::RunResults;

use crate::layers::{block_means, block_size, chosen_layers};
use crate::report::{MAP_CELL_LIMIT, MAX_LAYER_MAPS};
use crate::OutputError;

/// Most report times whose water saturation maps the report shows (the
/// report's wording, "the first and the last and up to two between",
/// follows it).
pub(crate) const MAX_SATURATION_TIMES: usize = 4;

/// The water saturations of one report time, as the report draws them.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Snapshot {
    /// The report time's number, from 0.
    pub index: usize,
    /// The report time, s.
    pub time: f64,
    /// Per chosen layer (0-based), the block-averaged water saturations
    /// (`None` for a block without active cells), row by row from `j = 0`.
    pub layers: Vec<(usize, Vec<Option<f64>>)>,
}

/// Keeps the water saturations of a few report times spread over the run
/// (see the module doc).
pub(crate) struct Keeper {
    nx: usize,
    ny: usize,
    dx: Vec<f64>,
    dy: Vec<f64>,
    /// Layers drawn, 0-based.
    layers: Vec<usize>,
    /// Block edge in columns.
    block: usize,
    /// Per chosen layer, whether each of its columns is active.
    active: Vec<Vec<bool>>,
    stride: usize,
    kept: Vec<Snapshot>,
    newest: Option<Snapshot>,
}

impl Keeper {
    pub fn new(case: &Case) -> Keeper {
        let grid = &case.grid;
        let (nx, ny) = (grid.nx, grid.ny);
        let layers = chosen_layers(grid.nz, MAX_LAYER_MAPS);
        let active = layers
            .iter()
            .map(|&k| {
                (0..nx * ny)
                    .map(|col| case.rock.is_active(col + nx * ny * k))
                    .collect()
            })
            .collect();
        Keeper {
            nx,
            ny,
            dx: grid.dx.clone(),
            dy: grid.dy.clone(),
            block: block_size(nx, ny, saturation_cell_limit()),
            layers,
            active,
            stride: 1,
            kept: Vec::new(),
            newest: None,
        }
    }

    /// Takes report time `index` (at `time`, s) with its cell water
    /// saturations `sw`, one per grid cell (checked by the caller).
    pub fn offer(&mut self, index: usize, time: f64, sw: &[f64]) {
        let plane = self.nx * self.ny;
        let layers = self
            .layers
            .iter()
            .zip(&self.active)
            .map(|(&k, active)| {
                let layer = &sw[plane * k..plane * (k + 1)];
                let means = block_means(
                    self.nx,
                    &self.dx,
                    &self.dy,
                    self.block,
                    |col| active[col] && layer[col].is_finite(),
                    |col| layer[col],
                );
                (k, means)
            })
            .collect();
        let snapshot = Snapshot {
            index,
            time,
            layers,
        };
        if let Some(previous) = self.newest.replace(snapshot) {
            if previous.index % self.stride == 0 {
                self.kept.push(previous);
            }
            while self.kept.len() >= MAX_SATURATION_TIMES {
                self.stride *= 2;
                let stride = self.stride;
                self.kept.retain(|s| s.index % stride == 0);
            }
        }
    }

    /// The report times kept, in time order, the newest last.
    pub fn into_snapshots(self) -> Vec<Snapshot> {
        let mut out = self.kept;
        out.extend(self.newest);
        out
    }
}

/// Most cells (or blocks) drawn per saturation map: the pressure maps'
/// budget shared by [`MAX_SATURATION_TIMES`] report times.
pub(crate) fn saturation_cell_limit() -> usize {
    MAP_CELL_LIMIT / MAX_SATURATION_TIMES
}

/// Checks that an oil-water case has oil-water results and the reverse,
/// and that every oil-water series has one value per report time and
/// every saturation array one value per cell, as many arrays as pressures.
pub(crate) fn validate(case: &Case, results: &RunResults) -> Result<(), OutputError> {
    let bad = |what: String| Err(OutputError::Inconsistent(what));
    let ow = match (&case.oil_water, &results.oil_water) {
        (None, None) => return Ok(()),
        (Some(_), None) => {
            return bad("the case is oil-water but the results hold no oil-water series".into())
        }
        (None, Some(_)) => {
            return bad("the results hold oil-water series but the case is single-phase".into())
        }
        (Some(_), Some(ow)) => ow,
    };
    let n = results.times.len();
    let check = |name: &str, len: usize| -> Result<(), OutputError> {
        if len == n {
            Ok(())
        } else {
            Err(OutputError::Inconsistent(format!(
                "{name} has {len} values for {n} report times"
            )))
        }
    };
    if ow.wells.len() != results.wells.len() {
        return bad(format!(
            "the oil-water results have phase series for {} of {} wells",
            ow.wells.len(),
            results.wells.len()
        ));
    }
    for (w, phases) in results.wells.iter().zip(&ow.wells) {
        for (what, series) in [
            ("oil_rate", &phases.oil_rate),
            ("water_rate", &phases.water_rate),
            ("water_cut", &phases.water_cut),
            ("cumulative_oil", &phases.cumulative_oil),
            ("cumulative_water", &phases.cumulative_water),
        ] {
            check(&format!("well \"{}\" {what}", w.name), series.len())?;
        }
    }
    for (what, series) in [
        ("oil_in_place", &ow.oil_in_place),
        ("water_in_place", &ow.water_in_place),
        ("recovery", &ow.recovery),
        ("pore_volumes_injected", &ow.pore_volumes_injected),
        ("sw_avg", &ow.sw_avg),
        ("balance_error_oil", &ow.balance_error_oil),
        ("balance_error_water", &ow.balance_error_water),
    ] {
        check(what, series.len())?;
    }
    if ow.saturation.len() != results.pressure.len() {
        return bad(format!(
            "water saturations are stored for {} report times and cell pressures for {}",
            ow.saturation.len(),
            results.pressure.len()
        ));
    }
    let cells = case.grid.cell_count();
    if let Some((t, s)) = ow
        .saturation
        .iter()
        .enumerate()
        .find(|(_, s)| s.len() != cells)
    {
        return bad(format!(
            "water saturations at report time {t} have {} values for {cells} cells",
            s.len()
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tests::fixtures::{fixture_sw, oil_water_case};
    use rill_model::UnitSystem;

    fn kept(n: usize) -> Vec<usize> {
        let case = oil_water_case(3, 2, 2, UnitSystem::Field);
        let sw = vec![0.5; case.grid.cell_count()];
        let mut keeper = Keeper::new(&case);
        for t in 0..n {
            keeper.offer(t, t as f64, &sw);
        }
        keeper.into_snapshots().iter().map(|s| s.index).collect()
    }

    #[test]
    fn the_keeper_keeps_the_first_the_last_and_evenly_spaced_times_between() {
        assert_eq!(kept(0), Vec::<usize>::new());
        assert_eq!(kept(1), [0]);
        assert_eq!(kept(3), [0, 1, 2]);
        assert_eq!(kept(4), [0, 1, 2, 3]);
        assert_eq!(kept(13), [0, 4, 8, 12]);
        for n in 1..300 {
            let k = kept(n);
            assert!(k.len() <= MAX_SATURATION_TIMES, "{n}: {k:?}");
            assert_eq!((k[0], *k.last().unwrap()), (0, n - 1), "{n}: {k:?}");
            assert!(k.windows(2).all(|w| w[0] < w[1]), "{n}: {k:?}");
            // All but the newest are one stride apart, and the newest is
            // less than two strides after them.
            let body = &k[..k.len() - 1];
            if body.len() >= 2 {
                let stride = body[1] - body[0];
                assert!(body.windows(2).all(|w| w[1] - w[0] == stride), "{n}: {k:?}");
                assert!(n - 1 - body[body.len() - 1] < 2 * stride, "{n}: {k:?}");
            }
            assert!(k.len() >= n.min(3), "{n}: {k:?}");
        }
    }

    #[test]
    fn a_snapshot_holds_each_chosen_layers_saturations_column_by_column() {
        let case = oil_water_case(4, 3, 2, UnitSystem::Field);
        let sw: Vec<f64> = (0..case.grid.cell_count())
            .map(|c| fixture_sw(&case, 1, c))
            .collect();
        let mut keeper = Keeper::new(&case);
        keeper.offer(0, 0.0, &sw);
        let snaps = keeper.into_snapshots();
        assert_eq!(snaps.len(), 1);
        assert_eq!(snaps[0].layers.len(), 2);
        for (k, values) in &snaps[0].layers {
            for (col, v) in values.iter().enumerate() {
                let c = col + 12 * k;
                match v {
                    // An area-weighted mean of one column: a*v/a.
                    Some(v) => assert!((v - sw[c]).abs() <= 1e-15, "cell {c}: {v}"),
                    None => assert!(sw[c].is_nan(), "cell {c}"),
                }
            }
        }
        assert_eq!(snaps[0].layers[1].1[11], None, "the inactive cell");
    }
}
