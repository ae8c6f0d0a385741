//! The partition of the cells among the processes of a run: which slab a
//! process owns ([`Part`]), its local numbering with the ghost cells its
//! faces reach ([`Numbering`]), and the connected regions of the whole
//! grid with what holds them at a pressure level ([`Anchors`]).

use rill_model::derived;
use rill_model::Case;

/// Which slab of the active cells a process owns: `rank` of `size` equal
/// slabs in the natural (grid) order. A serial run is rank 0 of 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Part {
    /// This process, from 0.
    pub rank: usize,
    /// The number of processes.
    pub size: usize,
}

impl Part {
    /// The whole grid in one process.
    pub const SERIAL: Part = Part { rank: 0, size: 1 };

    /// The global active indices this part owns, out of `n`.
    pub fn owned(&self, n: usize) -> std::ops::Range<usize> {
        (self.rank * n / self.size)..((self.rank + 1) * n / self.size)
    }
}

/// What holds the connected regions of the grid at a pressure level
/// (regions named by their root, a global active index; see `floating`).
#[derive(Debug, Clone, Default)]
pub(crate) struct Anchors {
    /// Regions touched by a constant-pressure boundary face.
    pub boundaries: Vec<usize>,
    /// Regions touched by an aquifer face.
    pub aquifers: Vec<usize>,
    /// The region of each well's completions (`None`: none active).
    pub wells: Vec<Option<usize>>,
}

/// The centre depth and the reference pore volume of each local cell.
pub(super) fn cell_arrays(
    case: &Case,
    cell_of: &[usize],
    all_depth: &[f64],
) -> (Vec<f64>, Vec<f64>) {
    let depth = cell_of.iter().map(|&c| all_depth[c]).collect();
    let pv_ref = cell_of
        .iter()
        .map(|&c| derived::pore_volume(&case.grid, &case.rock, c))
        .collect();
    (depth, pv_ref)
}

/// A part's local numbering of the cells.
pub(super) struct Numbering {
    /// Grid cell -> local index (`usize::MAX` outside the window or inactive).
    pub(super) active_of: Vec<usize>,
    /// Local index -> grid cell.
    pub(super) cell_of: Vec<usize>,
    /// Global active index of local cell 0.
    pub(super) first: usize,
    pub(super) owned_global: std::ops::Range<usize>,
    pub(super) n_global_cells: usize,
    pub(super) region: Vec<usize>,
    pub(super) anchors: Anchors,
}

impl Numbering {
    /// The owned slab of `part` and every cell a face of it reaches (the
    /// window), from the case's connections.
    pub(super) fn new(case: &Case, part: Part, conns: &[derived::Connection]) -> Numbering {
        let rock = &case.rock;
        let mut global_of = vec![usize::MAX; case.grid.cell_count()];
        let mut n_global_cells = 0;
        for (c, a) in global_of.iter_mut().enumerate() {
            if rock.is_active(c) {
                *a = n_global_cells;
                n_global_cells += 1;
            }
        }
        let owned_global = part.owned(n_global_cells);
        let (mut lo, mut hi) = (owned_global.start, owned_global.end);
        if part.size > 1 {
            for cn in conns {
                let (a, b) = (global_of[cn.a], global_of[cn.b]);
                if owned_global.contains(&a) {
                    hi = hi.max(b + 1);
                }
                if owned_global.contains(&b) {
                    lo = lo.min(a);
                }
            }
        }
        let (region, anchors) = regions(case, conns, &global_of, n_global_cells, lo..hi);
        let mut active_of = global_of;
        let mut cell_of = Vec::with_capacity(hi - lo);
        for (c, a) in active_of.iter_mut().enumerate() {
            if *a != usize::MAX {
                if (lo..hi).contains(a) {
                    *a -= lo;
                    cell_of.push(c);
                } else {
                    *a = usize::MAX;
                }
            }
        }
        Numbering {
            active_of,
            cell_of,
            first: lo,
            owned_global,
            n_global_cells,
            region,
            anchors,
        }
    }
}

/// The connected regions of the active cells of the whole grid (a region
/// is named by its smallest global active index; a well's completions join
/// their cells into one) for the cells of `window`, and the regions that
/// boundaries, aquifers and wells touch. Every part computes this from the
/// connections it builds anyway, so that held cells (module
/// `run::floating`) are the same whatever the partition.
fn regions(
    case: &Case,
    conns: &[derived::Connection],
    global_of: &[usize],
    n: usize,
    window: std::ops::Range<usize>,
) -> (Vec<usize>, Anchors) {
    fn find(p: &mut [usize], mut i: usize) -> usize {
        while p[i] != i {
            p[i] = p[p[i]];
            i = p[i];
        }
        i
    }
    fn union(p: &mut [usize], a: usize, b: usize) {
        let (ra, rb) = (find(p, a), find(p, b));
        if ra != rb {
            p[ra.max(rb)] = ra.min(rb);
        }
    }
    let mut parent: Vec<usize> = (0..n).collect();
    for cn in conns {
        union(&mut parent, global_of[cn.a], global_of[cn.b]);
    }
    let grid = &case.grid;
    let rock = &case.rock;
    let well_cells: Vec<Vec<usize>> = case
        .wells
        .iter()
        .map(|w| {
            w.completions
                .iter()
                .filter(|cp| rock.is_active(cp.cell))
                .map(|cp| global_of[cp.cell])
                .collect()
        })
        .collect();
    for cells in &well_cells {
        for &c in cells.iter().skip(1) {
            union(&mut parent, cells[0], c);
        }
    }
    let mut anchors = Anchors::default();
    for bnd in &case.boundaries {
        for c in bnd.cells(grid) {
            if rock.is_active(c)
                && derived::boundary_face(grid, rock, c, bnd.side).geometric_trans > 0.0
            {
                anchors.boundaries.push(find(&mut parent, global_of[c]));
            }
        }
    }
    for aq in &case.aquifers {
        for f in rill_model::aquifer::faces(case, aq) {
            anchors.aquifers.push(find(&mut parent, global_of[f.cell]));
        }
    }
    anchors.wells = well_cells
        .iter()
        .map(|cells| cells.first().map(|&c| find(&mut parent, c)))
        .collect();
    for list in [&mut anchors.boundaries, &mut anchors.aquifers] {
        list.sort_unstable();
        list.dedup();
    }
    let region = window.map(|a| find(&mut parent, a)).collect();
    (region, anchors)
}
