//! Regions of an incompressible oil-water run that nothing holds at a
//! pressure level. With rock, oil and water all incompressible, a connected
//! region with no boundary face, no aquifer and no well held at a BHP has
//! its pressure fixed only up to a constant, and its equations carry one
//! redundancy: the sum over the region of `B_o` times the oil rows plus
//! `B_w` times the water rows vanishes identically (the accumulation of
//! `so + sw = 1` does not change and the face fluxes cancel). One cell of
//! each such region keeps its initial oil pressure in place of its oil row;
//! its oil balance then follows from the others. The saturations still move
//! (gravity and capillarity segregate a closed region). A rate well in such
//! a region has no solution: the run says so.

use super::assemble::{Assembly, Target};
use super::newton::WellState;
use super::Engine;

/// One region that may float and the cell that holds its level.
#[derive(Debug, Clone, Copy)]
pub(super) struct FloatRegion {
    /// The region's root (see `Disc::region`).
    root: usize,
    /// Its lowest local cell index.
    cell: usize,
    /// That cell's initial oil pressure, Pa.
    p0: f64,
}

impl Engine<'_> {
    /// The regions of the run that may float: none unless rock, oil and
    /// water are all incompressible; else every region no boundary or
    /// aquifer touches (wells are looked at per iteration, in [`Engine::pins`]).
    pub(super) fn floating_regions(&self, x: &[f64]) -> Vec<FloatRegion> {
        let [oil, water] = &self.ph.pvt;
        if oil.c_f != 0.0 || water.c_f != 0.0 || oil.c_r != 0.0 {
            return Vec::new();
        }
        let a = &self.d.anchors;
        let mut seen = std::collections::BTreeSet::new();
        let mut out: Vec<FloatRegion> = Vec::new();
        for (i, &root) in self.d.region.iter().enumerate().take(self.d.n_cells) {
            if seen.insert(root) && !a.boundaries.contains(&root) && !a.aquifers.contains(&root) {
                out.push(FloatRegion {
                    root,
                    cell: i,
                    p0: x[2 * i],
                });
            }
        }
        out
    }

    /// The cells whose oil row holds their initial pressure this iteration
    /// (`(cell, pressure)`): one per floating region no well holds at a
    /// BHP. A well on a rate target in such a region is an error.
    pub(super) fn pins(&self, wells: &[WellState]) -> Result<Vec<(usize, f64)>, String> {
        let mut pins = Vec::new();
        for r in &self.floating {
            let in_region =
                |w: usize| self.d.wells[w].wi_sum > 0.0 && self.d.anchors.wells[w] == Some(r.root);
            let held = wells
                .iter()
                .enumerate()
                .any(|(w, st)| in_region(w) && st.held_bhp().is_some());
            if held {
                continue;
            }
            if let Some(w) = wells
                .iter()
                .enumerate()
                .position(|(w, st)| in_region(w) && st.target() != Target::Shut)
            {
                return Err(format!(
                    "well \"{}\" is on a rate target in a region with no boundary, no aquifer and no BHP-controlled well; with rock, oil and water all incompressible no pressure level exists there (give a compressibility, or hold a well at a BHP)",
                    self.case.wells[w].name
                ));
            }
            pins.push((r.cell, r.p0));
        }
        Ok(pins)
    }
}

/// Puts the pins into an assembly: the oil row of each pinned cell becomes
/// `hold dt (p - p0)` (zero, since the iterate holds `p0`), and its
/// accumulation block the same row, so CPR's weights keep it.
pub(super) fn apply_pins(asm: &mut Assembly, pins: &[(usize, f64)], rows: PinRows, x: &[f64]) {
    for &(c, p0) in pins {
        for k in rows.row_ptr[c]..rows.row_ptr[c + 1] {
            asm.jac.values[4 * k] = 0.0;
            asm.jac.values[4 * k + 1] = 0.0;
        }
        asm.jac.values[4 * rows.diag[c]] = rows.scale;
        asm.resid[2 * c] = rows.scale * (x[2 * c] - p0);
        asm.acc[4 * c] = rows.scale;
        asm.acc[4 * c + 1] = 0.0;
    }
}

/// Where the pinned rows sit and their diagonal.
#[derive(Clone, Copy)]
pub(super) struct PinRows<'a> {
    pub row_ptr: &'a [usize],
    pub diag: &'a [usize],
    /// `hold dt`.
    pub scale: f64,
}
