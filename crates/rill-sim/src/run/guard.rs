//! The check on every accepted step: cell pressures positive and finite,
//! bottom-hole pressures finite. A state that fails it cannot describe a
//! liquid, so the run stops with an error naming the cell or the well, the
//! time and the likely cause, rather than writing results built on it.

use rill_model::Role;

use super::{RunError, Runner};

impl Runner<'_> {
    /// `Err` when the state `x` at the end of step `step` (time `t`, s)
    /// has a pressure that is not positive or not finite.
    pub(super) fn guard(&self, x: &[f64], t: f64, step: usize) -> Result<(), RunError> {
        let nc = self.d.n_cells;
        let owned = self.d.owned.clone();
        let bad_cell = x[owned.clone()]
            .iter()
            .position(|p| !(p.is_finite() && *p > 0.0))
            .map(|k| (self.d.cell_of[owned.start + k], x[owned.start + k]));
        if let Some((c, p)) = self.first_bad_cell(bad_cell) {
            let (ci, cj, ck) = self.case.grid.ijk(c);
            let cause = if p.is_finite() {
                format!(
                    "more fluid left the cell than the compressibility of rock and fluid can supply{}; give producers a `bhp_limit`, or check the rates, the pore volumes and the compressibilities",
                    self.rate_wells_without_limit()
                )
            } else {
                "the solution diverged; check the units of permeability, viscosity and compressibility".to_string()
            };
            return Err(RunError::Unphysical {
                step,
                time: t,
                reason: format!(
                    "the pressure of cell ({}, {}, {}) is {:.6e} Pa: {cause}",
                    ci + 1,
                    cj + 1,
                    ck + 1,
                    p
                ),
            });
        }
        for w in 0..self.d.n_wells {
            let p = x[nc + w];
            if !p.is_finite() {
                let well = &self.case.wells[w];
                let cause = if self.d.wells[w].wi_sum <= 0.0 {
                    "it has no productivity (every completion has a zero well index)"
                } else {
                    "its rate cannot be delivered by its completions"
                };
                return Err(RunError::Unphysical {
                    step,
                    time: t,
                    reason: format!(
                        "the bottom-hole pressure of well \"{}\" is not finite: {cause}",
                        well.name
                    ),
                });
            }
        }
        let first = nc + self.d.n_wells;
        for (a, aq) in self.case.aquifers.iter().enumerate() {
            let p = x[first + a];
            if !(p.is_finite() && p > 0.0) {
                return Err(RunError::Unphysical {
                    step,
                    time: t,
                    reason: format!(
                        "the pressure of aquifer \"{}\" is {p:.6e} Pa: it gave more water than its compressibility holds (c_t W_i p_ai); check `water_volume` and `compressibility`, or the rates it supports",
                        aq.name
                    ),
                });
            }
        }
        Ok(())
    }

    /// The bad cell of the lowest grid index over all processes, with its
    /// pressure, from each process's own first one: every process then
    /// reports the same cell.
    fn first_bad_cell(&self, local: Option<(usize, f64)>) -> Option<(usize, f64)> {
        if self.par.is_none() {
            return local;
        }
        // Largest of minus the grid index picks the lowest one.
        let key = local.map_or(f64::NEG_INFINITY, |(c, _)| -(c as f64));
        let lowest = self.max1(key);
        if lowest == f64::NEG_INFINITY {
            return None;
        }
        let c = (-lowest) as usize;
        // Only its holder adds its pressure (a NaN or an infinity passes as
        // such through the sum).
        let p = self.sum1(match local {
            Some((lc, p)) if lc == c => p,
            _ => 0.0,
        });
        Some((c, p))
    }

    /// " (producers on a rate without a BHP limit: A, B)", or nothing.
    fn rate_wells_without_limit(&self) -> String {
        let names: Vec<String> = self
            .case
            .wells
            .iter()
            .filter(|w| {
                w.role == Role::Producer
                    && matches!(w.control, rill_model::Control::Rate(_))
                    && w.bhp_limit.is_none()
            })
            .map(|w| format!("\"{}\"", w.name))
            .collect();
        if names.is_empty() {
            String::new()
        } else {
            format!(
                " (producers on a rate without a BHP limit: {})",
                names.join(", ")
            )
        }
    }
}
