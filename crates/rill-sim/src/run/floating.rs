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
        let nc = d.n_cells;
        let mut parent: Vec<usize> = (0..nc).collect();
        fn find(p: &mut [usize], mut i: usize) -> usize {
            while p[i] != i {
                p[i] = p[p[i]];
                i = p[i];
            }
            i
        }
        let union = |p: &mut Vec<usize>, a: usize, b: usize| {
            let (ra, rb) = (find(p, a), find(p, b));
            if ra != rb {
                p[ra.max(rb)] = ra.min(rb);
            }
        };
        for i in 0..nc {
            for k in d.row_ptr[i]..d.row_ptr[i + 1] {
                let j = d.col_idx[k];
                if j < nc && j > i {
                    union(&mut parent, i, j);
                }
            }
        }
        for wg in &d.wells {
            for cp in wg.comps.iter().skip(1) {
                union(&mut parent, wg.comps[0].cell, cp.cell);
            }
        }
        let mut anchored = vec![false; nc];
        for f in &d.bfaces {
            let root = find(&mut parent, f.cell);
            anchored[root] = true;
        }
        if self.case.timeline.kind == rill_model::RunKind::Transient {
            for f in d.aquifers.iter().flat_map(|g| &g.faces) {
                let root = find(&mut parent, f.cell);
                anchored[root] = true;
            }
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Bhp(_)) {
                let root = find(&mut parent, wg.comps[0].cell);
                anchored[root] = true;
            }
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Rate(_)) {
                let root = find(&mut parent, wg.comps[0].cell);
                if !anchored[root] {
                    return Err(RunError::Setup(format!(
                        "well \"{}\" is on rate control in a region with no boundary and no BHP-controlled well; \
                         without compressibility (or in a steady run) no pressure level exists there",
                        self.case.wells[w].name
                    )));
                }
            }
        }
        let mut pinned = vec![false; nc];
        let mut any = false;
        for (i, p) in pinned.iter_mut().enumerate() {
            let root = find(&mut parent, i);
            if !anchored[root] {
                *p = true;
                any = true;
            }
        }
        Ok(if any { pinned } else { Vec::new() })
    }
}
