//! Discretisation: active-cell numbering, the sparsity pattern (built once),
//! the two-point flux residual and its Jacobian.
//!
//! Unknowns: the pressure of every active cell (in grid order), then one
//! bottom-hole pressure per well. Row `i < n_cells` is the surface-volume
//! balance of active cell `i` over the step; row `n_cells + w` is well `w`'s
//! control equation. One pressure per aquifer follows (module `aquifer`).
//!
//! A distributed run gives each process a contiguous slab of the active
//! cells ([`Part`]): its `Disc` holds those cells plus the ghost cells its
//! faces reach (so local numbering is a window of the global one), only the
//! completions, boundary faces and aquifer faces of owned cells, and every
//! well's and aquifer's unknown. Rows of ghost cells are assembled but never
//! used; the well and aquifer rows hold this process's share of their sums
//! (see [`Disc::lead`]). A serial run is the one-part case.
//!
//! Every geometric number comes from `rill_model::derived`: interior
//! transmissibilities from [`derived::connections`], boundary half-cells
//! from [`derived::boundary_face`], well indices from
//! [`derived::well_index`], depths from [`derived::cell_center_depths`] and
//! pore volumes from [`derived::pore_volume`].
//!
//! Flux from `a` to `b`, surface m^3/s:
//! `F = T_ab * (b_a + b_b) / (2 mu) * (p_a - p_b - rho_ab g (D_a - D_b))`:
//! the mobility `1/(mu B)` is the arithmetic average of the two cells
//! (smooth, second-order, no upwind switch: in single-phase flow the
//! difference from upwinding is O(c_f dp)), and `rho_ab` is the face density
//! of [`Pvt::face_rho`].

use rayon::prelude::*;
use rill_model::derived::{self, GRAVITY};
use rill_model::{Case, Side};

use crate::linear::CsrMatrix;
use crate::pvt::Pvt;

mod part;
pub(crate) use part::Anchors;
pub use part::Part;
use part::{cell_arrays, Numbering};

/// Rows per rayon task.
const CHUNK: usize = 4096;

/// One completion of a well.
#[derive(Debug, Clone)]
pub(crate) struct Comp {
    /// Active cell index.
    pub cell: usize,
    /// Geometric well index, m^3.
    pub wi: f64,
    /// Depth of the cell centre below the well datum, m.
    pub dd: f64,
    /// Position of (cell row, well column).
    pub pos_cw: usize,
    /// Position of (well row, cell column).
    pub pos_wc: usize,
}

#[derive(Debug, Clone)]
pub(crate) struct WellGeom {
    /// The completions in owned active cells.
    pub comps: Vec<Comp>,
    /// Sum of the geometric well indices of every active completion (all
    /// parts).
    pub wi_sum: f64,
    /// Active completions in all parts.
    pub n_comps: usize,
    /// `comps[0]` is the well's first active completion of all parts.
    pub first_here: bool,
    /// For each active completion of all parts: whether it is in `comps`.
    pub owned_mask: Vec<bool>,
    pub diag: usize,
}

/// A cell face on a constant-pressure boundary.
#[derive(Debug, Clone)]
pub(crate) struct BFace {
    pub cell: usize,
    pub boundary: usize,
    /// Half-cell geometric transmissibility, m^3.
    pub t: f64,
    /// Depth of the face centre, m.
    pub face_depth: f64,
    /// Cell centre depth minus face centre depth, m.
    pub dd: f64,
}

/// Everything fixed for a run: numbering, geometry, pattern.
pub(crate) struct Disc {
    pub n_cells: usize,
    pub n_wells: usize,
    /// Active index -> grid cell.
    pub cell_of: Vec<usize>,
    /// Cell centre depths, active cells, m.
    pub depth: Vec<f64>,
    /// Pore volume at the rock reference pressure, active cells, m^3.
    pub pv_ref: Vec<f64>,
    pub row_ptr: Vec<usize>,
    pub col_idx: Vec<usize>,
    /// Geometric transmissibility at each stored cell-cell off-diagonal, 0 elsewhere.
    pub trans: Vec<f64>,
    /// Position of the diagonal of every row.
    pub diag: Vec<usize>,
    /// Sum of the geometric transmissibilities, boundary half-cells and well
    /// indices of each active cell (for residual scaling), m^3.
    pub t_sum: Vec<f64>,
    pub bfaces: Vec<BFace>,
    pub wells: Vec<WellGeom>,
    /// Aquifers, whose unknowns follow the wells'.
    pub aquifers: Vec<crate::aquifer::AqGeom>,
    /// Global active index of local cell 0 (0 in a serial run).
    pub first_global: usize,
    /// Local indices of the cells this part owns (all in a serial run); the
    /// others are ghosts, read but never assembled for.
    pub owned: std::ops::Range<usize>,
    /// Active cells of the whole grid.
    pub n_global_cells: usize,
    /// This part adds the terms of the well and aquifer rows that are not
    /// per completion or per face (rank 0; always in a serial run): the
    /// rows' sums over all parts are then the serial rows.
    pub lead: bool,
    /// The connected region of each local cell (see `floating`).
    pub region: Vec<usize>,
    pub anchors: Anchors,
}

impl Disc {
    /// The whole grid (a serial run).
    #[cfg(test)]
    pub fn new(case: &Case) -> Disc {
        Disc::new_part(case, Part::SERIAL)
    }

    /// The slab `part` of the grid with its ghost cells.
    pub fn new_part(case: &Case, part: Part) -> Disc {
        let grid = &case.grid;
        let conns = derived::case_connections(case);
        let Numbering {
            active_of,
            cell_of,
            first: lo,
            owned_global,
            n_global_cells,
            region,
            anchors,
        } = Numbering::new(case, part, &conns);
        let owned = (owned_global.start - lo)..(owned_global.end - lo);
        let n_cells = cell_of.len();
        let n_wells = case.wells.len();
        let n = n_cells + n_wells + case.aquifers.len();
        let all_depth = derived::cell_center_depths(grid);
        let (depth, pv_ref) = cell_arrays(case, &cell_of, &all_depth);

        let mut lower = vec![0usize; n];
        let mut upper = vec![0usize; n];
        let mut t_sum = vec![0.0; n_cells];
        let conns: Vec<_> = conns
            .into_iter()
            .filter(|cn| active_of[cn.a] != usize::MAX && active_of[cn.b] != usize::MAX)
            .collect();
        for cn in &conns {
            let (a, b) = (active_of[cn.a], active_of[cn.b]);
            debug_assert!(a < b && b < n_cells);
            upper[a] += 1;
            lower[b] += 1;
            t_sum[a] += cn.geometric_trans;
            t_sum[b] += cn.geometric_trans;
        }

        // Wells: geometry and the (cell, well) couplings, deduplicated.
        let ours = |cell: usize| owned.contains(&cell);
        let (mut wells, mut couplings) =
            well_geometry(case, &active_of, &all_depth, &mut t_sum, &ours);
        let (mut aquifers, aq_couplings) =
            crate::aquifer::geometry(case, &active_of, &all_depth, &mut t_sum, &ours);
        couplings.extend(aq_couplings);
        couplings.sort_unstable();
        couplings.dedup();
        let mut well_cols = vec![0usize; n];
        for &(cell, w) in &couplings {
            well_cols[cell] += 1;
            lower[n_cells + w] += 1; // well row: cell columns come before its diagonal
        }

        // Row layout: [lower..., diagonal, upper..., well columns...].
        let mut row_ptr = vec![0usize; n + 1];
        for i in 0..n {
            row_ptr[i + 1] = row_ptr[i] + lower[i] + 1 + upper[i] + well_cols[i];
        }
        let nnz = row_ptr[n];
        let mut col_idx = vec![0usize; nnz];
        let mut trans = vec![0.0; nnz];
        let mut diag = vec![0usize; n];
        let mut next_lower: Vec<usize> = row_ptr[..n].to_vec();
        let mut next_upper = vec![0usize; n];
        for i in 0..n {
            diag[i] = row_ptr[i] + lower[i];
            col_idx[diag[i]] = i;
            next_upper[i] = diag[i] + 1;
        }
        for cn in &conns {
            let (a, b) = (active_of[cn.a], active_of[cn.b]);
            let k = next_lower[b];
            col_idx[k] = a;
            trans[k] = cn.geometric_trans;
            next_lower[b] += 1;
            let k = next_upper[a];
            col_idx[k] = b;
            trans[k] = cn.geometric_trans;
            next_upper[a] += 1;
        }
        drop(conns);
        // `couplings` is sorted by cell then well: well columns of a cell row
        // come out ascending, and so do the cell columns of each well row.
        for &(cell, w) in &couplings {
            let k = next_upper[cell];
            col_idx[k] = n_cells + w;
            next_upper[cell] += 1;
            let r = n_cells + w;
            let k = next_lower[r];
            col_idx[k] = cell;
            next_lower[r] += 1;
        }
        let find = |row: usize, col: usize| -> usize {
            let s = row_ptr[row];
            s + col_idx[s..row_ptr[row + 1]]
                .binary_search(&col)
                .expect("pattern entry")
        };
        for (w, wg) in wells.iter_mut().enumerate() {
            wg.diag = diag[n_cells + w];
            for cp in &mut wg.comps {
                cp.pos_cw = find(cp.cell, n_cells + w);
                cp.pos_wc = find(n_cells + w, cp.cell);
            }
        }
        crate::aquifer::locate(&mut aquifers, n_cells + n_wells, &diag, find);

        let bfaces = boundary_faces(case, &active_of, &all_depth, &mut t_sum, &ours);

        Disc {
            n_cells,
            n_wells,
            cell_of,
            depth,
            pv_ref,
            row_ptr,
            col_idx,
            trans,
            diag,
            t_sum,
            bfaces,
            wells,
            aquifers,
            first_global: lo,
            owned,
            n_global_cells,
            lead: part.rank == 0,
            region,
            anchors,
        }
    }

    pub fn n(&self) -> usize {
        self.n_cells + self.n_wells + self.aquifers.len()
    }

    /// A matrix with this pattern and zero values.
    pub fn new_matrix(&self) -> CsrMatrix {
        CsrMatrix {
            n: self.n(),
            ncols: self.n(),
            block: 1,
            row_ptr: self.row_ptr.clone(),
            col_idx: self.col_idx.clone(),
            values: vec![0.0; self.col_idx.len()],
        }
    }
}

impl Disc {
    /// Gives well `w` the skin `skin` from now on: each completion's well
    /// index is computed again by [`derived::well_index`] (the completions in
    /// owned active cells, in the order [`well_geometry`] keeps them; the sum
    /// over all of them), and the cells' transmissibility sums follow the
    /// change.
    pub fn set_skin(&mut self, case: &Case, w: usize, skin: f64) {
        let (Some(well), Some(geom)) = (case.wells.get(w), self.wells.get_mut(w)) else {
            return;
        };
        let mut comps = geom.comps.iter_mut();
        let mut wi_sum = 0.0;
        let active = well
            .completions
            .iter()
            .filter(|cp| case.rock.is_active(cp.cell));
        for (cp, &ours) in active.zip(&geom.owned_mask) {
            let wi = derived::well_index(&case.grid, &case.rock, cp, well.radius, skin).geometric;
            wi_sum += wi;
            // The owned completions, in the order `well_geometry` kept them.
            if ours {
                if let Some(comp) = comps.next() {
                    self.t_sum[comp.cell] += wi - comp.wi;
                    comp.wi = wi;
                }
            }
        }
        geom.wi_sum = wi_sum;
    }
}

/// Each well's completions in owned active cells (well index, depth below
/// the well's datum, the shallowest completed cell centre), its index sum
/// over all active completions, and the (cell, well) couplings of the
/// pattern, unsorted. Adds each well index to its cell's `t_sum`.
fn well_geometry(
    case: &Case,
    active_of: &[usize],
    all_depth: &[f64],
    t_sum: &mut [f64],
    ours: &dyn Fn(usize) -> bool,
) -> (Vec<WellGeom>, Vec<(usize, usize)>) {
    let grid = &case.grid;
    let rock = &case.rock;
    let mut wells = Vec::with_capacity(case.wells.len());
    let mut couplings: Vec<(usize, usize)> = Vec::new(); // (cell, well)
    for (w, well) in case.wells.iter().enumerate() {
        let active: Vec<_> = well
            .completions
            .iter()
            .filter(|cp| rock.is_active(cp.cell))
            .collect();
        let datum = derived::well_datum_depth(grid, rock, well).unwrap_or(f64::INFINITY);
        let mut comps = Vec::new();
        let mut wi_sum = 0.0;
        let n_comps = active.len();
        let mut first_here = false;
        let mut owned_mask = Vec::with_capacity(n_comps);
        for (k, cp) in active.into_iter().enumerate() {
            let wi = derived::well_index(grid, rock, cp, well.radius, well.skin).geometric;
            wi_sum += wi;
            let cell = active_of[cp.cell];
            owned_mask.push(cell != usize::MAX && ours(cell));
            if cell == usize::MAX || !ours(cell) {
                continue;
            }
            first_here |= k == 0;
            t_sum[cell] += wi;
            comps.push(Comp {
                cell,
                wi,
                dd: all_depth[cp.cell] - datum,
                pos_cw: 0,
                pos_wc: 0,
            });
            couplings.push((cell, w));
        }
        wells.push(WellGeom {
            comps,
            wi_sum,
            n_comps,
            first_here,
            owned_mask,
            diag: 0,
        });
    }
    (wells, couplings)
}

/// The faces of owned active cells on constant-pressure boundaries with a
/// positive half-cell transmissibility, sorted by cell. Adds each face's
/// transmissibility to its cell's `t_sum`.
fn boundary_faces(
    case: &Case,
    active_of: &[usize],
    all_depth: &[f64],
    t_sum: &mut [f64],
    ours: &dyn Fn(usize) -> bool,
) -> Vec<BFace> {
    let grid = &case.grid;
    let rock = &case.rock;
    let mut bfaces = Vec::new();
    for (bi, bnd) in case.boundaries.iter().enumerate() {
        for c in bnd.cells(grid) {
            let a = active_of[c];
            if a == usize::MAX || !ours(a) {
                continue;
            }
            let t = derived::boundary_face(grid, rock, c, bnd.side).geometric_trans;
            if t <= 0.0 {
                continue;
            }
            let half = 0.5 * grid.dz[c];
            let face_depth = match bnd.side {
                Side::Top => all_depth[c] - half,
                Side::Bottom => all_depth[c] + half,
                _ => all_depth[c],
            };
            t_sum[a] += t;
            bfaces.push(BFace {
                cell: a,
                boundary: bi,
                t,
                face_depth,
                dd: all_depth[c] - face_depth,
            });
        }
    }
    bfaces.sort_by_key(|f| f.cell);
    bfaces
}

/// How each well is driven during an assembly.
#[derive(Debug, Clone, Copy)]
pub(crate) struct WellDrive {
    /// True: the BHP is fixed (at `x[n_cells + w]`); false: the surface rate is.
    pub bhp: bool,
    /// Target surface rate (production positive), used when `!bhp`.
    pub rate: f64,
    /// Shut: no completion flows (the BHP row is held; the run reports the
    /// shut-in BHP).
    pub shut: bool,
}

/// Inputs of one assembly besides the unknowns.
pub(crate) struct Ctx<'a> {
    pub pvt: &'a Pvt,
    /// Step length, s (1 for steady runs, where there is no accumulation).
    pub dt: f64,
    /// Accumulation `PV b` at the start of the step; `None` for a steady run.
    pub mass_old: Option<&'a [f64]>,
    pub drive: &'a [WellDrive],
    /// Boundary pressure at each boundary face (same order as `Disc::bfaces`).
    pub bface_p: &'a [f64],
    /// Cells held at their current pressure (floating regions of steady runs).
    pub pinned: &'a [bool],
    /// Diagonal used for pinned cells and dead wells.
    pub pin_scale: f64,
    /// Aquifer pressures at the start of the step; `None`: aquifers held (steady).
    pub aquifer_old: Option<&'a [f64]>,
}

/// Output of an assembly; buffers are reused between calls.
pub(crate) struct Assembly {
    pub jac: CsrMatrix,
    /// Residual, surface m^3 over the step (cells) or rate mismatch times dt (wells).
    pub resid: Vec<f64>,
    /// Accumulation `PV(p) b(p)` of each active cell, surface m^3 (0 in steady runs).
    pub mass: Vec<f64>,
    /// Surface rate of each well (production positive) at the assembled state.
    pub well_rate: Vec<f64>,
    /// Surface rate out through each boundary.
    pub bnd_rate: Vec<f64>,
    /// Surface rate out through each aquifer (negative: influx).
    pub aq_rate: Vec<f64>,
    /// Influx of each aquifer into the reservoir, reservoir m^3/s.
    pub aq_influx: Vec<f64>,
    /// Scratch: 1/B of every cell.
    bcell: Vec<f64>,
}

impl Assembly {
    pub fn new(d: &Disc, n_boundaries: usize) -> Self {
        Assembly {
            jac: d.new_matrix(),
            resid: vec![0.0; d.n()],
            mass: vec![0.0; d.n_cells],
            well_rate: vec![0.0; d.n_wells],
            bnd_rate: vec![0.0; n_boundaries],
            aq_rate: vec![0.0; d.aquifers.len()],
            aq_influx: vec![0.0; d.aquifers.len()],
            bcell: vec![0.0; d.n()],
        }
    }
}

/// Completion rate (production positive) and its derivatives w.r.t. the
/// cell pressure and the BHP: `q = WI b(p_c) / mu * (p_c - H(p_w, dd))`, with
/// the wellbore fluid on the hydrostat from the datum. The cell's mobility
/// is used in both directions (single phase: the injected fluid is the same).
#[inline]
pub(crate) fn completion_rate(pvt: &Pvt, cp: &Comp, p_c: f64, p_w: f64) -> (f64, f64, f64) {
    let (h, dh) = pvt.hydrostat(p_w, cp.dd);
    let (b, db) = pvt.b(p_c);
    let k = cp.wi / pvt.mu;
    let dp = p_c - h;
    (k * b * dp, k * (db * dp + b), -k * b * dh)
}

/// Boundary face outflow and its derivative w.r.t. the cell pressure.
#[inline]
pub(crate) fn boundary_rate(pvt: &Pvt, f: &BFace, p_c: f64, p_b: f64) -> (f64, f64) {
    let (bc, dbc) = pvt.b(p_c);
    let (bb, _) = pvt.b(p_b);
    let (rho, drc, _) = pvt.face_rho(p_c, p_b);
    let rg = rho * GRAVITY;
    let phi = (p_c - p_b) - rg * f.dd;
    let lam = 0.5 * (bc + bb) / pvt.mu;
    let q = f.t * lam * phi;
    let dq = f.t * (0.5 * dbc / pvt.mu * phi + lam * (1.0 - drc * GRAVITY * f.dd));
    (q, dq)
}

/// Only the well and boundary rates at `x` (no residual, no Jacobian).
pub(crate) fn flows(d: &Disc, ctx: &Ctx, x: &[f64], well_rate: &mut [f64], bnd_rate: &mut [f64]) {
    bnd_rate.fill(0.0);
    for (f, &pb) in d.bfaces.iter().zip(ctx.bface_p) {
        bnd_rate[f.boundary] += boundary_rate(ctx.pvt, f, x[f.cell], pb).0;
    }
    for (w, wg) in d.wells.iter().enumerate() {
        let pw = x[d.n_cells + w];
        well_rate[w] = if wg.wi_sum > 0.0 && !ctx.drive[w].shut {
            wg.comps
                .iter()
                .map(|cp| completion_rate(ctx.pvt, cp, x[cp.cell], pw).0)
                .sum()
        } else {
            0.0
        };
    }
}

/// Assembles the residual and the Jacobian at `x`.
///
/// Cells are assembled row by row in parallel (each face is evaluated from
/// both sides, with bit-identical results, so every flux cancels exactly in
/// the global sum); boundaries and wells are added after, serially.
pub(crate) fn assemble(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let nc = d.n_cells;
    let pvt = ctx.pvt;
    let dt = ctx.dt;
    let mu = pvt.mu;
    let rp = &d.row_ptr;
    let ci = &d.col_idx;
    let tr = &d.trans;
    let depth = &d.depth;
    let pinned = ctx.pinned;

    // Split the cell rows into chunks of disjoint value/residual slices.
    let cell_nnz = rp[nc];
    let (cell_vals, _) = out.jac.values.split_at_mut(cell_nnz);
    let (cell_res, _) = out.resid.split_at_mut(nc);
    let mut tasks = Vec::with_capacity(nc / CHUNK + 1);
    {
        let mut vals = cell_vals;
        let mut res = cell_res;
        let mut mass = &mut out.mass[..];
        let mut r0 = 0;
        while r0 < nc {
            let r1 = (r0 + CHUNK).min(nc);
            let (v, vt) = std::mem::take(&mut vals).split_at_mut(rp[r1] - rp[r0]);
            let (r, rt) = std::mem::take(&mut res).split_at_mut(r1 - r0);
            let (m, mt) = std::mem::take(&mut mass).split_at_mut(r1 - r0);
            tasks.push((r0, r1, v, r, m));
            vals = vt;
            res = rt;
            mass = mt;
            r0 = r1;
        }
    }
    // 1/B of every cell, once (density is rho_ref B_ref / B).
    let bcell = &mut out.bcell;
    bcell
        .par_chunks_mut(CHUNK)
        .enumerate()
        .for_each(|(k, chunk)| {
            for (o, v) in chunk.iter_mut().enumerate() {
                *v = pvt.b(x[k * CHUNK + o]).0;
            }
        });
    let bcell = &out.bcell;
    let rho_per_b = pvt.rho_ref * pvt.b_ref;
    let c_f = pvt.c_f;
    tasks.into_par_iter().for_each(|(r0, r1, vals, res, mass)| {
        let base = rp[r0];
        for i in r0..r1 {
            let s = rp[i] - base;
            let e = rp[i + 1] - base;
            let row = &mut vals[s..e];
            if !pinned.is_empty() && pinned[i] {
                row.fill(0.0);
                row[d.diag[i] - rp[i]] = ctx.pin_scale;
                res[i - r0] = 0.0;
                mass[i - r0] = 0.0;
                continue;
            }
            let pi = x[i];
            let bi = bcell[i];
            let dbi = c_f * bi;
            let mut r = 0.0;
            let mut jd = 0.0;
            if let Some(old) = ctx.mass_old {
                let (m, dm) = pvt.mass_factor(pi);
                let m = m * d.pv_ref[i];
                r += m - old[i];
                jd += dm * d.pv_ref[i];
                mass[i - r0] = m;
            } else {
                mass[i - r0] = 0.0;
            }
            let mut flux = 0.0;
            let mut jflux = 0.0;
            for (k, v) in row.iter_mut().enumerate() {
                let pos = rp[i] + k;
                let j = ci[pos];
                if j >= nc || j == i {
                    *v = 0.0;
                    continue;
                }
                let pj = x[j];
                let bj = bcell[j];
                let dbj = c_f * bj;
                let (rho, dri, drj) = if i < j {
                    pvt.face_rho_from(rho_per_b * bi, pi, pj)
                } else {
                    let (r, a, b) = pvt.face_rho_from(rho_per_b * bj, pj, pi);
                    (r, b, a)
                };
                let dd = depth[i] - depth[j];
                let rg = rho * GRAVITY;
                let phi = (pi - pj) - rg * dd;
                let lam = 0.5 * (bi + bj);
                let tl = tr[pos] * lam;
                flux += (tl / mu) * phi;
                let t = tr[pos];
                jflux += t * (0.5 * dbi * phi + lam * (1.0 - dri * GRAVITY * dd));
                *v = dt * t * (0.5 * dbj * phi + lam * (-1.0 - drj * GRAVITY * dd)) / mu;
            }
            r += dt * flux;
            jd += dt * jflux / mu;
            row[d.diag[i] - rp[i]] = jd;
            res[i - r0] = r;
        }
    });

    add_boundaries_and_wells(d, ctx, x, out);
    crate::aquifer::add(d, ctx, x, out);
}

/// Adds the boundary faces and the wells to an assembly whose cell rows
/// are done: their rates, their terms in the cell rows, and the well rows
/// (a fixed BHP, or the surface rate's control equation).
fn add_boundaries_and_wells(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let nc = d.n_cells;
    let pvt = ctx.pvt;
    let dt = ctx.dt;
    let mu = pvt.mu;
    let rp = &d.row_ptr;
    // Boundaries.
    out.bnd_rate.fill(0.0);
    for (f, &pb) in d.bfaces.iter().zip(ctx.bface_p) {
        let (q, dq) = boundary_rate(pvt, f, x[f.cell], pb);
        out.resid[f.cell] += dt * q;
        out.jac.values[d.diag[f.cell]] += dt * dq;
        out.bnd_rate[f.boundary] += q;
    }

    // Wells.
    for (w, wg) in d.wells.iter().enumerate() {
        let row = nc + w;
        let vals = &mut out.jac.values;
        vals[rp[row]..rp[row + 1]].fill(0.0);
        let drive = ctx.drive[w];
        if wg.wi_sum <= 0.0 || drive.shut {
            vals[wg.diag] = if d.lead { ctx.pin_scale } else { 0.0 };
            out.resid[row] = 0.0;
            out.well_rate[w] = 0.0;
            continue;
        }
        let pw = x[row];
        let mut qsum = 0.0;
        let mut dw = 0.0;
        for cp in &wg.comps {
            let (q, dqc, dqw) = completion_rate(pvt, cp, x[cp.cell], pw);
            qsum += q;
            out.resid[cp.cell] += dt * q;
            vals[d.diag[cp.cell]] += dt * dqc;
            if !drive.bhp {
                vals[cp.pos_cw] += dt * dqw;
                vals[cp.pos_wc] -= dt * dqc;
                dw -= dt * dqw;
            }
        }
        out.well_rate[w] = qsum;
        if drive.bhp {
            // BHP fixed at x[row]: no update, no coupling (keeps J symmetric when the rest is).
            vals[wg.diag] = if d.lead {
                dt * wg.wi_sum / (mu * pvt.b_ref)
            } else {
                0.0
            };
            out.resid[row] = 0.0;
        } else {
            // The target once over all parts.
            let target = if d.lead { drive.rate } else { 0.0 };
            vals[wg.diag] = dw;
            out.resid[row] = dt * (target - qsum);
        }
    }
}

#[cfg(test)]
mod tests;
