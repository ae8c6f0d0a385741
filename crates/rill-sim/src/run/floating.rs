//! Cells that no boundary and no BHP well hold at a pressure level: without
//! accumulation (incompressible, or a steady run) their pressure is not
//! determined, so they keep their initial one. In a transient run an
//! aquifer holds its cells' region too (its own compressibility sets the
//! level); in a steady run it supplies nothing and holds nothing.

use rill_model::Control;

use super::controls::WellState;
use super::{RunError, Runner};

impl Runner<'_> {
    /// Cells that nothing can hold at a pressure level when there is no
    /// accumulation: connected regions with no boundary face and no BHP
    /// well. They keep their initial pressure. A region like that with a
    /// rate-controlled well has no solution.
    pub(super) fn floating_cells(&self, wells: &[WellState]) -> Result<Vec<bool>, RunError> {
        let d = &self.d;
        let a = &d.anchors;
        // The regions (whole grid, every process alike: see `disc::regions`)
        // that something holds at a pressure level.
        let mut anchored: Vec<usize> = a.boundaries.clone();
        if self.case.timeline.kind == rill_model::RunKind::Transient {
            anchored.extend(&a.aquifers);
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Bhp(_)) {
                anchored.extend(a.wells[w]);
            }
        }
        anchored.sort_unstable();
        anchored.dedup();
        let held = |root: usize| anchored.binary_search(&root).is_ok();
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Rate(_)) {
                if let Some(root) = a.wells[w] {
                    if !held(root) {
                        return Err(RunError::Setup(format!(
                            "well \"{}\" is on rate control in a region with no boundary and no BHP-controlled well; \
                             without compressibility (or in a steady run) no pressure level exists there",
                            self.case.wells[w].name
                        )));
                    }
                }
            }
        }
        let pinned: Vec<bool> = d.region.iter().map(|&r| !held(r)).collect();
        Ok(if pinned.iter().any(|&p| p) {
            pinned
        } else {
            Vec::new()
        })
    }
}
