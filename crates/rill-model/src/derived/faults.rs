//! Fault multipliers per interior face: the one place where the `fault`
//! blocks of a case turn into numbers. Assembly (`case_connections`), the
//! cell report of `rill inspect` and hover, the fault hover and the
//! checker's `flow.isolated` all read [`FaceMultipliers`], so they agree.

use super::{connections, neighbor, Axis, Connection};
use crate::case::{Case, Fault, Grid, Rock, Side};
use std::collections::HashMap;

impl Axis {
    /// The axis a face on `side` is normal to.
    pub fn of(side: Side) -> Axis {
        match side {
            Side::West | Side::East => Axis::X,
            Side::South | Side::North => Axis::Y,
            Side::Top | Side::Bottom => Axis::Z,
        }
    }
}

/// The interior face of cell `c` on `side` named from its low side: the
/// cell before it along the axis (west, south, above) and the axis. `None`
/// on the grid's edge. The east face of cell i and the west face of cell
/// i + 1 are the same key.
pub fn face_key(grid: &Grid, c: usize, side: Side) -> Option<(usize, Axis)> {
    let n = neighbor(grid, c, side)?;
    let low = match side {
        Side::East | Side::North | Side::Bottom => c,
        Side::West | Side::South | Side::Top => n,
    };
    Some((low, Axis::of(side)))
}

/// The transmissibility multiplier of every interior face a fault names;
/// the faces no fault names keep 1. The multipliers of several faults on
/// one face multiply.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FaceMultipliers {
    by_face: HashMap<(usize, Axis), f64>,
}

impl FaceMultipliers {
    /// The multipliers of `faults` on `grid`. Faces a fault selects on the
    /// grid's edge have no neighbour and are left out (lowering reports
    /// them as `fault.faces`).
    pub fn new(grid: &Grid, faults: &[Fault]) -> FaceMultipliers {
        let mut by_face: HashMap<(usize, Axis), f64> = HashMap::new();
        for f in faults {
            for c in f.cells(grid) {
                if let Some(key) = face_key(grid, c, f.side) {
                    *by_face.entry(key).or_insert(1.0) *= f.multiplier;
                }
            }
        }
        FaceMultipliers { by_face }
    }

    /// The multipliers of a case's faults.
    pub fn of(case: &Case) -> FaceMultipliers {
        FaceMultipliers::new(&case.grid, &case.faults)
    }

    /// Whether no face is scaled.
    pub fn is_empty(&self) -> bool {
        self.by_face.is_empty()
    }

    /// The multiplier of the face of cell `c` on `side` (1 where no fault
    /// names it, and on the grid's edge).
    pub fn at(&self, grid: &Grid, c: usize, side: Side) -> f64 {
        if self.by_face.is_empty() {
            return 1.0;
        }
        face_key(grid, c, side)
            .and_then(|key| self.by_face.get(&key).copied())
            .unwrap_or(1.0)
    }

    /// The faces a fault seals (multiplier 0), by their low cell and axis.
    pub fn sealed(&self) -> impl Iterator<Item = (usize, Axis)> + '_ {
        self.by_face
            .iter()
            .filter(|(_, m)| **m == 0.0)
            .map(|(key, _)| *key)
    }
}

/// The connections the simulator assembles: [`connections`] with every
/// fault multiplier applied, and the faces a fault seals left out.
pub fn case_connections(case: &Case) -> Vec<Connection> {
    faulted_connections(&case.grid, &case.rock, &FaceMultipliers::of(case))
}

/// [`connections`] scaled by `mults`. The list is ordered by `(a, b)`, so
/// each scaled face is found by a binary search: the cost grows with the
/// faces the faults name, not with the grid.
pub fn faulted_connections(grid: &Grid, rock: &Rock, mults: &FaceMultipliers) -> Vec<Connection> {
    let mut out = connections(grid, rock);
    if mults.is_empty() {
        return out;
    }
    let plane = grid.nx * grid.ny;
    for (&(a, axis), &m) in &mults.by_face {
        let b = a + match axis {
            Axis::X => 1,
            Axis::Y => grid.nx,
            Axis::Z => plane,
        };
        if let Ok(at) = out.binary_search_by(|cn| (cn.a, cn.b).cmp(&(a, b))) {
            out[at].geometric_trans *= m;
        }
    }
    out.retain(|cn| cn.geometric_trans > 0.0);
    out
}

impl Fault {
    /// Whether it names the interior face `key` (from [`face_key`]): the
    /// face lies on its axis and the cell on its side of the face is selected.
    pub fn names_face(&self, grid: &Grid, key: (usize, Axis)) -> bool {
        let (low, axis) = key;
        if Axis::of(self.side) != axis {
            return false;
        }
        let cell = match self.side {
            Side::East | Side::North | Side::Bottom => Some(low),
            Side::West | Side::South | Side::Top => neighbor(grid, low, axis.sides()[1]),
        };
        cell.is_some_and(|c| self.select.contains(grid.ijk(c)))
    }
}
