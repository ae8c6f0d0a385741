//! Derived quantities, computed here once and reused by the checker, `rill
//! inspect`, the editor hover and the simulator's assembly: face
//! permeability (length-weighted harmonic average), geometric and fluid
//! transmissibility, half-cell transmissibility to a boundary, pore volume,
//! Peaceman's equivalent radius and the well index.
//!
//! All in SI. Geometric transmissibility is `k_face * A / L` (m^3); dividing
//! by viscosity times formation volume factor gives surface m^3 per second per
//! pascal.

use crate::case::{Case, Completion, Direction, Grid, Rock, Side, Well};

mod faults;
pub mod relperm;
pub mod saturation;
pub use faults::{case_connections, face_key, faulted_connections, FaceMultipliers};

/// Standard gravity, m/s^2 (NIST SP 811, exact).
pub const GRAVITY: f64 = 9.80665;

/// The neighbouring cell across `side`, if it is inside the grid.
pub fn neighbor(grid: &Grid, c: usize, side: Side) -> Option<usize> {
    let (i, j, k) = grid.ijk(c);
    let (ni, nj, nk) = match side {
        Side::West => (i.checked_sub(1)?, j, k),
        Side::East => (i + 1, j, k),
        Side::South => (i, j.checked_sub(1)?, k),
        Side::North => (i, j + 1, k),
        Side::Top => (i, j, k.checked_sub(1)?),
        Side::Bottom => (i, j, k + 1),
    };
    (ni < grid.nx && nj < grid.ny && nk < grid.nz).then(|| grid.index(ni, nj, nk))
}

/// Cell sizes `(dx, dy, dz)` in m.
pub fn cell_size(grid: &Grid, c: usize) -> (f64, f64, f64) {
    let (i, j, _) = grid.ijk(c);
    (grid.dx[i], grid.dy[j], grid.dz[c])
}

/// Bulk volume of cell `c`, m^3.
pub fn cell_volume(grid: &Grid, c: usize) -> f64 {
    let (dx, dy, dz) = cell_size(grid, c);
    dx * dy * dz
}

/// Depth of the cell centre, m: column top plus the layers above plus half the cell.
pub fn cell_center_depth(grid: &Grid, c: usize) -> f64 {
    let (i, j, k) = grid.ijk(c);
    let mut depth = grid.top[grid.column(i, j)];
    for layer in 0..k {
        depth += grid.dz[grid.index(i, j, layer)];
    }
    depth + 0.5 * grid.dz[c]
}

/// Depth of the cell centres of the whole grid, computed column by column in one pass.
pub fn cell_center_depths(grid: &Grid) -> Vec<f64> {
    let mut depth = vec![0.0; grid.cell_count()];
    for j in 0..grid.ny {
        for i in 0..grid.nx {
            let mut top = grid.top[grid.column(i, j)];
            for k in 0..grid.nz {
                let c = grid.index(i, j, k);
                depth[c] = top + 0.5 * grid.dz[c];
                top += grid.dz[c];
            }
        }
    }
    depth
}

/// Depth of a well's datum, m: the centre of its shallowest completed
/// active cell, where its bottom-hole pressure is reported and controlled.
/// `None` when no completion is active. The checker and the simulator both
/// use this, so a BHP checked against the initial pressure is the BHP the
/// run applies.
pub fn well_datum_depth(grid: &Grid, rock: &Rock, well: &Well) -> Option<f64> {
    well.completions
        .iter()
        .filter(|c| rock.is_active(c.cell))
        .map(|c| cell_center_depth(grid, c.cell))
        .min_by(f64::total_cmp)
}

/// Depths of the shallowest and the deepest cell centre of the grid, m.
pub fn depth_range(grid: &Grid) -> (f64, f64) {
    let mut range = (f64::INFINITY, f64::NEG_INFINITY);
    let plane = grid.nx * grid.ny;
    for col in 0..plane {
        let mut top = grid.top[col];
        for k in 0..grid.nz {
            let dz = grid.dz[col + plane * k];
            let centre = top + 0.5 * dz;
            range = (range.0.min(centre), range.1.max(centre));
            top += dz;
        }
    }
    range
}

/// Depths of the shallowest top face and the deepest bottom face of the
/// grid, m: the grid's top and its base.
pub fn grid_extent(grid: &Grid) -> (f64, f64) {
    let mut range = (f64::INFINITY, f64::NEG_INFINITY);
    let plane = grid.nx * grid.ny;
    for col in 0..plane {
        let top = grid.top[col];
        let bottom = top + (0..grid.nz).map(|k| grid.dz[col + plane * k]).sum::<f64>();
        range = (range.0.min(top), range.1.max(bottom));
    }
    range
}

/// Depth of the deepest bottom face of the grid, m.
pub fn grid_base(grid: &Grid) -> f64 {
    grid_extent(grid).1
}

/// Pore volume at the rock reference pressure, reservoir m^3.
pub fn pore_volume(grid: &Grid, rock: &Rock, c: usize) -> f64 {
    rock.porosity[c] * cell_volume(grid, c)
}

/// Area of the face on `side`, m^2.
pub fn face_area(grid: &Grid, c: usize, side: Side) -> f64 {
    let (dx, dy, dz) = cell_size(grid, c);
    match side {
        Side::West | Side::East => dy * dz,
        Side::South | Side::North => dx * dz,
        Side::Top | Side::Bottom => dx * dy,
    }
}

/// Distance from the cell centre to the face on `side`, m.
pub fn half_length(grid: &Grid, c: usize, side: Side) -> f64 {
    let (dx, dy, dz) = cell_size(grid, c);
    0.5 * match side {
        Side::West | Side::East => dx,
        Side::South | Side::North => dy,
        Side::Top | Side::Bottom => dz,
    }
}

/// Permeability of the cell in the direction normal to `side`, m^2.
pub fn normal_perm(rock: &Rock, c: usize, side: Side) -> f64 {
    match side {
        Side::West | Side::East => rock.kx[c],
        Side::South | Side::North => rock.ky[c],
        Side::Top | Side::Bottom => rock.kz[c],
    }
}

/// Face permeability between two cells in series: the length-weighted
/// harmonic average `(L_a + L_b) / (L_a / k_a + L_b / k_b)`. A zero on either
/// side gives zero: the face carries no flow.
pub fn harmonic_face_perm(k_a: f64, len_a: f64, k_b: f64, len_b: f64) -> f64 {
    if k_a <= 0.0 || k_b <= 0.0 {
        return 0.0;
    }
    (len_a + len_b) / (len_a / k_a + len_b / k_b)
}

/// The side across the cell from `side`.
pub fn opposite(side: Side) -> Side {
    match side {
        Side::West => Side::East,
        Side::East => Side::West,
        Side::South => Side::North,
        Side::North => Side::South,
        Side::Top => Side::Bottom,
        Side::Bottom => Side::Top,
    }
}

/// A face between two cells, or between a cell and the outside.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Face {
    /// Which side of the cell the face is on.
    pub side: Side,
    /// The cell across the face; `None` on the outer boundary of the grid.
    pub neighbor: Option<usize>,
    /// Face permeability, m^2 (for a boundary face: the cell's own normal permeability).
    pub perm: f64,
    /// `k_face * A / L`, m^3. Zero when either cell is inactive.
    pub geometric_trans: f64,
}

/// The face of cell `c` on `side` towards its neighbour, if there is one.
/// Inactive cells (porosity 0) carry no flow.
pub fn interior_face(grid: &Grid, rock: &Rock, c: usize, side: Side) -> Option<Face> {
    face_at(grid, rock, c, grid.ijk(c), side)
}

/// [`interior_face`] with the cell's `(i, j, k)` already known: the one
/// place where the two half-cells of a face are combined. Hot in assembly
/// and in the checker, so it avoids recomputing indices.
#[inline]
fn face_at(
    grid: &Grid,
    rock: &Rock,
    c: usize,
    (i, j, k): (usize, usize, usize),
    side: Side,
) -> Option<Face> {
    let plane = grid.nx * grid.ny;
    let (n, la, lb, area_a, area_b, ka, kb) = match side {
        Side::West | Side::East => {
            let ni = if side == Side::West {
                i.checked_sub(1)?
            } else {
                i + 1
            };
            if ni >= grid.nx {
                return None;
            }
            let n = if side == Side::West { c - 1 } else { c + 1 };
            let dy = grid.dy[j];
            (
                n,
                0.5 * grid.dx[i],
                0.5 * grid.dx[ni],
                dy * grid.dz[c],
                dy * grid.dz[n],
                rock.kx[c],
                rock.kx[n],
            )
        }
        Side::South | Side::North => {
            let nj = if side == Side::South {
                j.checked_sub(1)?
            } else {
                j + 1
            };
            if nj >= grid.ny {
                return None;
            }
            let n = if side == Side::South {
                c - grid.nx
            } else {
                c + grid.nx
            };
            let dx = grid.dx[i];
            (
                n,
                0.5 * grid.dy[j],
                0.5 * grid.dy[nj],
                dx * grid.dz[c],
                dx * grid.dz[n],
                rock.ky[c],
                rock.ky[n],
            )
        }
        Side::Top | Side::Bottom => {
            let nk = if side == Side::Top {
                k.checked_sub(1)?
            } else {
                k + 1
            };
            if nk >= grid.nz {
                return None;
            }
            let n = if side == Side::Top {
                c - plane
            } else {
                c + plane
            };
            let area = grid.dx[i] * grid.dy[j];
            (
                n,
                0.5 * grid.dz[c],
                0.5 * grid.dz[n],
                area,
                area,
                rock.kz[c],
                rock.kz[n],
            )
        }
    };
    let active = rock.porosity[c] > 0.0 && rock.porosity[n] > 0.0;
    let (perm, geometric_trans) = join_halves((ka, la, area_a), (kb, lb, area_b), active);
    Some(Face {
        side,
        neighbor: Some(n),
        perm,
        geometric_trans,
    })
}

/// Face permeability and geometric transmissibility from the two half
/// cells `(k, half length, face area)` of a face: the one formula for both,
/// used by [`interior_face`] and the per-axis flow passes.
#[inline]
fn join_halves(a: (f64, f64, f64), b: (f64, f64, f64), active: bool) -> (f64, f64) {
    let ((ka, la, area_a), (kb, lb, area_b)) = (a, b);
    let perm = harmonic_face_perm(ka, la, kb, lb);
    // On a tensor-product grid the two faces coincide laterally except for
    // per-cell `dz`, where the overlap is taken as the smaller thickness
    // (cells are stacked with their own tops, so the shared extent cannot
    // exceed the thinner one).
    let area = area_a.min(area_b);
    let geometric_trans = if active { perm * area / (la + lb) } else { 0.0 };
    (perm, geometric_trans)
}

/// Half-cell transmissibility from the centre of `c` to its face on `side`:
/// `k * A / (L / 2)`, m^3. Used for constant-pressure boundaries.
pub fn boundary_face(grid: &Grid, rock: &Rock, c: usize, side: Side) -> Face {
    let perm = normal_perm(rock, c, side);
    let geometric_trans = if rock.is_active(c) {
        perm * face_area(grid, c, side) / half_length(grid, c, side)
    } else {
        0.0
    };
    Face {
        side,
        neighbor: None,
        perm,
        geometric_trans,
    }
}

/// Fluid transmissibility at reference conditions: surface m^3 / (s Pa).
pub fn fluid_trans(case: &Case, geometric_trans: f64) -> f64 {
    geometric_trans / (case.fluid.viscosity * case.fluid.fvf)
}

/// The six faces of a cell as `rill inspect` and hover show them: an
/// interior face towards a neighbour, a boundary half-cell face where a
/// `boundary` lies on that side, and `None` on a closed outer face.
pub fn cell_faces(case: &Case, c: usize) -> [(Side, Option<Face>); 6] {
    Side::ALL.map(|side| {
        let face = interior_face(&case.grid, &case.rock, c, side).or_else(|| {
            case.boundaries
                .iter()
                .any(|b| b.side == side && b.covers(&case.grid, c))
                .then(|| boundary_face(&case.grid, &case.rock, c, side))
        });
        (side, face)
    })
}

/// One connection between two active cells for assembly: `a < b`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Connection {
    /// The first cell (the smaller index).
    pub a: usize,
    /// The second cell.
    pub b: usize,
    /// m^3
    pub geometric_trans: f64,
}

/// Every interior connection with a positive transmissibility, each once
/// (east, north and bottom faces), in cell order, before fault
/// multipliers: the simulator assembles [`case_connections`], this list
/// scaled by the case's faults. Layers are
/// done in parallel: a million-cell grid is checked on every keystroke.
pub fn connections(grid: &Grid, rock: &Rock) -> Vec<Connection> {
    use rayon::prelude::*;
    let per_layer: Vec<Vec<Connection>> = (0..grid.nz)
        .into_par_iter()
        .map(|k| {
            let mut out = Vec::with_capacity(3 * grid.nx * grid.ny);
            for j in 0..grid.ny {
                for i in 0..grid.nx {
                    let c = grid.index(i, j, k);
                    for side in [Side::East, Side::North, Side::Bottom] {
                        if let Some(face) = face_at(grid, rock, c, (i, j, k), side) {
                            if face.geometric_trans > 0.0 {
                                out.push(Connection {
                                    a: c,
                                    b: face.neighbor.unwrap_or(c),
                                    geometric_trans: face.geometric_trans,
                                });
                            }
                        }
                    }
                }
            }
            out
        })
        .collect();
    let mut out = Vec::with_capacity(per_layer.iter().map(Vec::len).sum());
    for layer in per_layer {
        out.extend(layer);
    }
    out
}

/// For every cell, whether one of its interior faces has a positive
/// transmissibility (the checker's `flow.isolated`).
pub fn cells_with_flow(grid: &Grid, rock: &Rock) -> Vec<bool> {
    let plus =
        [Axis::X, Axis::Y, Axis::Z].map(|axis| (axis, plus_faces_with_flow(grid, rock, axis)));
    (0..grid.cell_count())
        .map(|c| {
            plus.iter()
                .any(|(axis, faces)| flows_across(grid, faces, *axis, c))
        })
        .collect()
}

/// A direction of the grid, with the two sides of a cell across it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Axis {
    /// West and east faces; these depend on `kx`.
    X,
    /// South and north faces; `ky`.
    Y,
    /// Top and bottom faces; `kz`.
    Z,
}

impl Axis {
    /// The two sides whose faces are normal to this axis (low, high).
    pub fn sides(self) -> [Side; 2] {
        match self {
            Axis::X => [Side::West, Side::East],
            Axis::Y => [Side::South, Side::North],
            Axis::Z => [Side::Top, Side::Bottom],
        }
    }
}

/// For every cell, whether its face towards the next cell along `axis`
/// (east, north, below) has a positive transmissibility; false on the last
/// cell of a row. Each face is computed once, over whole rows of the
/// arrays (about three times faster than asking [`interior_face`] for
/// both faces of every cell, which the tests compare it with), layers in
/// parallel. One pass per axis, so that the checker, which keeps each pass
/// between edits, redoes only the axis whose permeability changed.
pub fn plus_faces_with_flow(grid: &Grid, rock: &Rock, axis: Axis) -> Vec<bool> {
    plus_faces_with_flow_in(grid, rock, axis, Vec::new())
}

/// [`plus_faces_with_flow`] written into `buffer` (any contents; a spare
/// one whose memory is already touched).
pub fn plus_faces_with_flow_in(
    grid: &Grid,
    rock: &Rock,
    axis: Axis,
    mut buffer: Vec<bool>,
) -> Vec<bool> {
    use rayon::prelude::*;
    let (nx, ny, nz) = (grid.nx, grid.ny, grid.nz);
    let plane = nx * ny;
    let n = grid.cell_count();
    let k_axis: &[f64] = match axis {
        Axis::X => &rock.kx,
        Axis::Y => &rock.ky,
        Axis::Z => &rock.kz,
    };
    buffer.clear();
    buffer.resize(n, false);
    if plane == 0
        || [rock.porosity.len(), grid.dz.len(), k_axis.len()]
            .iter()
            .any(|l| *l < n)
    {
        return buffer;
    }
    let (phi, dz) = (&rock.porosity[..], &grid.dz[..]);
    let mut plus = buffer;
    // The face between `c` and `m` from their halves `(k, half length, area)`.
    let flows = |c: usize, m: usize, a: (f64, f64, f64), b: (f64, f64, f64)| {
        join_halves(a, b, phi[c] > 0.0 && phi[m] > 0.0).1 > 0.0
    };
    // One loop nest per axis, so that the innermost loop has no branch on it.
    plus.par_chunks_mut(plane)
        .enumerate()
        .for_each(|(k, layer)| {
            let base = k * plane;
            match axis {
                Axis::X => {
                    for j in 0..ny {
                        let dy = grid.dy[j];
                        for i in 0..nx.saturating_sub(1) {
                            let (c, m) = (base + i + nx * j, base + i + 1 + nx * j);
                            layer[i + nx * j] = flows(
                                c,
                                m,
                                (k_axis[c], 0.5 * grid.dx[i], dy * dz[c]),
                                (k_axis[m], 0.5 * grid.dx[i + 1], dy * dz[m]),
                            );
                        }
                    }
                }
                Axis::Y => {
                    for j in 0..ny.saturating_sub(1) {
                        let (dy_c, dy_m) = (grid.dy[j], grid.dy[j + 1]);
                        for i in 0..nx {
                            let (c, m) = (base + i + nx * j, base + i + nx * (j + 1));
                            let dx = grid.dx[i];
                            layer[i + nx * j] = flows(
                                c,
                                m,
                                (k_axis[c], 0.5 * dy_c, dx * dz[c]),
                                (k_axis[m], 0.5 * dy_m, dx * dz[m]),
                            );
                        }
                    }
                }
                Axis::Z if k + 1 < nz => {
                    for j in 0..ny {
                        let dy = grid.dy[j];
                        for i in 0..nx {
                            let c = base + i + nx * j;
                            let m = c + plane;
                            let area = grid.dx[i] * dy;
                            layer[i + nx * j] = flows(
                                c,
                                m,
                                (k_axis[c], 0.5 * dz[c], area),
                                (k_axis[m], 0.5 * dz[m], area),
                            );
                        }
                    }
                }
                Axis::Z => {}
            }
        });
    plus
}

/// Whether cell `c` has a face with flow across `axis`, given
/// [`plus_faces_with_flow`] for that axis: its own plus face, or the plus
/// face of the cell before it.
#[inline]
pub fn flows_across(grid: &Grid, plus: &[bool], axis: Axis, c: usize) -> bool {
    let (i, j, k) = grid.ijk(c);
    let before = match axis {
        Axis::X => (i > 0).then(|| c - 1),
        Axis::Y => (j > 0).then(|| c - grid.nx),
        Axis::Z => (k > 0).then(|| c - grid.nx * grid.ny),
    };
    plus[c] || before.is_some_and(|b| plus[b])
}

/// Peaceman's equivalent radius for an anisotropic, non-square block
/// (Peaceman 1983): `0.28 sqrt(sqrt(ky/kx) dx^2 + sqrt(kx/ky) dy^2) / ((ky/kx)^(1/4) + (kx/ky)^(1/4))`.
/// For a square isotropic block this is `0.1980 dx` (Peaceman 1978).
pub fn peaceman_radius(dx: f64, dy: f64, kx: f64, ky: f64) -> f64 {
    if kx <= 0.0 || ky <= 0.0 {
        // No flow to the well either way; fall back to the isotropic form so
        // the radius stays finite for display.
        return 0.28 * (dx * dx + dy * dy).sqrt() / 2.0;
    }
    let r = ky / kx;
    0.28 * (r.sqrt() * dx * dx + (1.0 / r).sqrt() * dy * dy).sqrt()
        / (r.powf(0.25) + (1.0 / r).powf(0.25))
}

/// Peaceman well index of one completion.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WellIndex {
    /// Equivalent radius, m.
    pub r_eq: f64,
    /// Geometric well index `2 pi sqrt(k1 k2) L / (ln(r_eq / r_w) + s)`, m^3,
    /// with `k1`, `k2` the permeabilities normal to the wellbore and `L` the
    /// cell length along it (for a vertical completion: kx, ky and dz).
    pub geometric: f64,
}

/// A cell seen from a wellbore through it: the permeabilities and cell
/// sizes along the two axes normal to the wellbore, and the cell length
/// along it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WellboreFrame {
    /// Names of the two normal permeabilities (`("ky", "kz")` along x).
    pub names: (&'static str, &'static str),
    /// Permeability along the first normal axis, m^2.
    pub k1: f64,
    /// Permeability along the second normal axis, m^2.
    pub k2: f64,
    /// Cell size along the first normal axis, m.
    pub d1: f64,
    /// Cell size along the second normal axis, m.
    pub d2: f64,
    /// Cell length along the wellbore, m.
    pub length: f64,
}

/// The [`WellboreFrame`] of a completion along its direction: x has the
/// normal axes (y, z), y has (x, z), z has (x, y). Peaceman (1983) derives
/// the radius for a vertical well; applying it to a horizontal wellbore by
/// rotating the axes is common practice, no published source.
pub fn wellbore_frame(grid: &Grid, rock: &Rock, completion: &Completion) -> WellboreFrame {
    let c = completion.cell;
    let (dx, dy, dz) = cell_size(grid, c);
    let (kx, ky, kz) = (rock.kx[c], rock.ky[c], rock.kz[c]);
    match completion.direction {
        Direction::X => WellboreFrame {
            names: ("ky", "kz"),
            k1: ky,
            k2: kz,
            d1: dy,
            d2: dz,
            length: dx,
        },
        Direction::Y => WellboreFrame {
            names: ("kx", "kz"),
            k1: kx,
            k2: kz,
            d1: dx,
            d2: dz,
            length: dy,
        },
        Direction::Z => WellboreFrame {
            names: ("kx", "ky"),
            k1: kx,
            k2: ky,
            d1: dx,
            d2: dy,
            length: dz,
        },
    }
}

/// Well index of the completion in cell `completion.cell` along its
/// direction (Peaceman 1983, with the axes of [`wellbore_frame`]).
pub fn well_index(
    grid: &Grid,
    rock: &Rock,
    completion: &Completion,
    radius: f64,
    skin: f64,
) -> WellIndex {
    let f = wellbore_frame(grid, rock, completion);
    let r_eq = peaceman_radius(f.d1, f.d2, f.k1, f.k2);
    let denom = (r_eq / radius).ln() + skin;
    let geometric = if rock.is_active(completion.cell) && denom > 0.0 && f.k1 > 0.0 && f.k2 > 0.0 {
        2.0 * std::f64::consts::PI * (f.k1 * f.k2).sqrt() * f.length / denom
    } else {
        0.0
    };
    WellIndex { r_eq, geometric }
}

/// Why completion `completion` has a zero well index, if it does: the cell
/// is inactive, or a permeability normal to the wellbore is zero, or the
/// radius and skin leave no positive denominator.
pub fn zero_index_reason(
    grid: &Grid,
    rock: &Rock,
    completion: &Completion,
    radius: f64,
    skin: f64,
) -> Option<String> {
    let c = completion.cell;
    if !rock.is_active(c) {
        return Some("the cell is inactive (porosity 0)".into());
    }
    let f = wellbore_frame(grid, rock, completion);
    let zero: Vec<&str> = [(f.names.0, f.k1), (f.names.1, f.k2)]
        .into_iter()
        .filter(|(_, k)| *k <= 0.0)
        .map(|(name, _)| name)
        .collect();
    if !zero.is_empty() {
        return Some(format!(
            "{} {} zero normal to the wellbore (along {})",
            zero.join(" and "),
            if zero.len() == 1 { "is" } else { "are" },
            completion.direction.name()
        ));
    }
    let wi = well_index(grid, rock, completion, radius, skin);
    (wi.geometric <= 0.0).then(|| "ln(r_eq / r_w) + skin is not positive".into())
}

/// Pressure at `depth` in a static column of the case's liquid, given
/// `p_datum` at `datum_depth`: dp/dz = rho(p) g with
/// rho(p) = rho_ref exp(c (p - p_ref)), integrated exactly.
pub fn hydrostatic_pressure(
    fluid: &crate::case::Fluid,
    p_datum: f64,
    datum_depth: f64,
    depth: f64,
) -> f64 {
    let dz = depth - datum_depth;
    let c = fluid.compressibility;
    let g_rho = GRAVITY * fluid.density;
    if c <= 0.0 {
        return p_datum + g_rho * dz;
    }
    // exp(-c (p - p_ref)) falls linearly with depth: e(z) = e(z0) - c rho_ref g (z - z0).
    let e0 = (-c * (p_datum - fluid.ref_pressure)).exp();
    let e = e0 - c * g_rho * dz;
    if e <= 0.0 {
        // Beyond any physical column; fall back to the linear form.
        return p_datum + g_rho * dz;
    }
    fluid.ref_pressure - e.ln() / c
}

/// The cells whose face on `side` is on the outside of the grid.
/// Whether cell `c` lies on `side` of the grid (one of [`cells_on_side`]).
pub fn is_on_side(grid: &Grid, c: usize, side: Side) -> bool {
    let (i, j, k) = grid.ijk(c);
    match side {
        Side::West => i == 0,
        Side::East => i + 1 == grid.nx,
        Side::South => j == 0,
        Side::North => j + 1 == grid.ny,
        Side::Top => k == 0,
        Side::Bottom => k + 1 == grid.nz,
    }
}

/// The cells with a face on `side` of the grid (the outer boundary there).
pub fn cells_on_side(grid: &Grid, side: Side) -> Vec<usize> {
    let (nx, ny, nz) = (grid.nx, grid.ny, grid.nz);
    let mut out = Vec::new();
    match side {
        Side::West | Side::East => {
            let i = if side == Side::West { 0 } else { nx - 1 };
            for k in 0..nz {
                for j in 0..ny {
                    out.push(grid.index(i, j, k));
                }
            }
        }
        Side::South | Side::North => {
            let j = if side == Side::South { 0 } else { ny - 1 };
            for k in 0..nz {
                for i in 0..nx {
                    out.push(grid.index(i, j, k));
                }
            }
        }
        Side::Top | Side::Bottom => {
            let k = if side == Side::Top { 0 } else { nz - 1 };
            for j in 0..ny {
                for i in 0..nx {
                    out.push(grid.index(i, j, k));
                }
            }
        }
    }
    out
}
