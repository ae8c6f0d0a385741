//! Finite aquifers (Fetkovich's pseudo-steady form), coupled implicitly.
//!
//! Each aquifer adds one unknown, its pressure `p_a` at the mean depth of
//! its faces, after the wells' BHPs: unknown `n_cells + n_wells + a`. Its
//! row is the aquifer's material balance over the step,
//! `c_t W_i (p_a - p_a_old) + dt * sum_f q_f = 0`, with the influx of face
//! `f` (reservoir volume into the reservoir)
//! `q_f = J_f (H(p_a, D_f - D_a) - H(p_c, D_f - D_c))`: the aquifer
//! pressure and the cell pressure each moved along the fluid's hydrostat
//! to the face depth (so the initial equilibrium is at rest exactly), and
//! `J_f` the face's area share of `J`. The cell receives `b(p_c) q_f`
//! surface volume: the water enters at the cell's pressure, as a
//! completion's does. The influx goes straight to the cell pressure, with
//! no half-cell resistance in series: an aquifer's `J` is the whole
//! aquifer-to-reservoir productivity, and is small next to a half-cell.
//!
//! Steady runs hold every aquifer at its initial pressure with no influx:
//! a finite aquifer at steady state has equilibrated with the reservoir
//! and supplies nothing, so it neither drives flow nor sets a pressure
//! level (a rate well needs a boundary or a BHP well, as without it).

use rill_model::{aquifer, Case};

use crate::disc::{Assembly, Ctx, Disc};

/// One face of an aquifer on an active cell.
#[derive(Debug, Clone)]
pub(crate) struct AqFace {
    /// Active cell index.
    pub cell: usize,
    /// The face's productivity, reservoir m^3/s per Pa.
    pub j: f64,
    /// Face depth minus the aquifer's mean depth, m.
    pub dd_a: f64,
    /// Face depth minus the cell centre depth, m.
    pub dd_c: f64,
    /// Position of (cell row, aquifer column).
    pub pos_ca: usize,
    /// Position of (aquifer row, cell column).
    pub pos_ac: usize,
}

/// An aquifer as the discretisation sees it.
#[derive(Debug, Clone)]
pub(crate) struct AqGeom {
    pub faces: Vec<AqFace>,
    /// `c_t W_i`, reservoir m^3 per Pa.
    pub capacity: f64,
    /// Initial water volume, m^3 (the scale of its residual).
    pub water_volume: f64,
    /// The sum of its faces' productivities over all parts, reservoir m^3/s per Pa.
    pub j_total: f64,
    /// Initial pressure at the mean face depth, Pa.
    pub p_init: f64,
    /// Position of the diagonal of its row.
    pub diag: usize,
}

/// The aquifers' faces on active cells and their (cell, unknown offset
/// after the cells) couplings for the pattern; adds `J_f mu` (the
/// geometric transmissibility with the same flow at the reference
/// mobility) to each cell's `t_sum`. An aquifer without an active face
/// keeps its row with no coupling.
pub(crate) fn geometry(
    case: &Case,
    active_of: &[usize],
    all_depth: &[f64],
    t_sum: &mut [f64],
    ours: &dyn Fn(usize) -> bool,
) -> (Vec<AqGeom>, Vec<(usize, usize)>) {
    let n_wells = case.wells.len();
    let mut out = Vec::with_capacity(case.aquifers.len());
    let mut couplings = Vec::new();
    for (a, aq) in case.aquifers.iter().enumerate() {
        let faces = aquifer::faces(case, aq);
        let d_a = aquifer::mean_depth(&faces).unwrap_or(0.0);
        let p_init = aquifer::initial_pressure(case, &faces).unwrap_or(0.0);
        let j_total = aq.productivity * faces.iter().map(|f| f.share).sum::<f64>();
        let faces: Vec<AqFace> = faces
            .iter()
            .filter(|f| active_of[f.cell] != usize::MAX && ours(active_of[f.cell]))
            .map(|f| {
                let cell = active_of[f.cell];
                let j = aq.productivity * f.share;
                t_sum[cell] += j * case.fluid.viscosity;
                couplings.push((cell, n_wells + a));
                AqFace {
                    cell,
                    j,
                    dd_a: f.depth - d_a,
                    dd_c: f.depth - all_depth[f.cell],
                    pos_ca: 0,
                    pos_ac: 0,
                }
            })
            .collect();
        out.push(AqGeom {
            faces,
            capacity: aq.compressibility * aq.water_volume,
            water_volume: aq.water_volume,
            j_total,
            p_init,
            diag: 0,
        });
    }
    (out, couplings)
}

/// Finds the pattern positions of the aquifers' rows and couplings;
/// `first` is the unknown of aquifer 0.
pub(crate) fn locate(
    aquifers: &mut [AqGeom],
    first: usize,
    diag: &[usize],
    find: impl Fn(usize, usize) -> usize,
) {
    for (a, g) in aquifers.iter_mut().enumerate() {
        let row = first + a;
        g.diag = diag[row];
        for f in &mut g.faces {
            f.pos_ca = find(f.cell, row);
            f.pos_ac = find(row, f.cell);
        }
    }
}

/// Influx of one face into the reservoir (reservoir m^3/s) and its
/// derivatives with respect to the cell and the aquifer pressure.
#[inline]
pub(crate) fn face_influx(ctx: &Ctx, f: &AqFace, p_c: f64, p_a: f64) -> (f64, f64, f64) {
    let (ha, dha) = ctx.pvt.hydrostat(p_a, f.dd_a);
    let (hc, dhc) = ctx.pvt.hydrostat(p_c, f.dd_c);
    (f.j * (ha - hc), -f.j * dhc, f.j * dha)
}

/// Adds the aquifers to an assembly whose cells, boundaries and wells are
/// done: their terms in the cell rows, their own rows, and their rates.
/// Without `ctx.aquifer_old` (steady runs) each row holds its unknown and
/// nothing flows.
pub(crate) fn add(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let first = d.n_cells + d.n_wells;
    let rp = &d.row_ptr;
    let dt = ctx.dt;
    for (a, g) in d.aquifers.iter().enumerate() {
        let row = first + a;
        out.jac.values[rp[row]..rp[row + 1]].fill(0.0);
        out.aq_rate[a] = 0.0;
        out.aq_influx[a] = 0.0;
        // The storage term once over all parts.
        let lead = if d.lead { 1.0 } else { 0.0 };
        let Some(old) = ctx.aquifer_old else {
            out.jac.values[g.diag] = lead * ctx.pin_scale;
            out.resid[row] = 0.0;
            continue;
        };
        let p_a = x[row];
        let mut r = lead * g.capacity * (p_a - old[a]);
        let mut diag = lead * g.capacity;
        for f in &g.faces {
            let (q, dqc, dqa) = face_influx(ctx, f, x[f.cell], p_a);
            let (b, db) = ctx.pvt.b(x[f.cell]);
            // Cell row: outflow positive, so the influx enters with a minus.
            out.resid[f.cell] -= dt * b * q;
            out.jac.values[d.diag[f.cell]] -= dt * (db * q + b * dqc);
            out.jac.values[f.pos_ca] -= dt * b * dqa;
            // Aquifer row.
            r += dt * q;
            diag += dt * dqa;
            out.jac.values[f.pos_ac] += dt * dqc;
            out.aq_rate[a] -= b * q;
            out.aq_influx[a] += q;
        }
        out.jac.values[g.diag] = diag;
        out.resid[row] = r;
    }
}

#[cfg(test)]
mod tests {
    use crate::disc::{assemble, Assembly, Ctx, Disc, WellDrive};
    use crate::pvt::Pvt;
    use rill_model::*;

    /// Two layers on uneven tops, a compressible liquid, a rate well and
    /// an aquifer on the west side: every face at its own depth.
    fn case() -> Case {
        let (nx, ny, nz) = (3, 2, 2);
        let n = nx * ny * nz;
        Case {
            name: None,
            title: None,
            grid: Grid {
                nx,
                ny,
                nz,
                dx: vec![10.0, 20.0, 15.0],
                dy: vec![12.0, 8.0],
                dz: (0..n).map(|c| 2.0 + c as f64 * 0.1).collect(),
                top: vec![1000.0, 1001.0, 1002.0, 1000.5, 1001.5, 1003.0],
            },
            rock: Rock {
                porosity: vec![0.2; n].into(),
                kx: vec![1e-13; n].into(),
                ky: vec![2e-13; n].into(),
                kz: vec![1e-14; n].into(),
                compressibility: 1e-9,
                ref_pressure: 2e7,
            },
            fluid: Fluid {
                name: None,
                viscosity: 1e-3,
                fvf: 1.0,
                compressibility: 1e-9,
                density: 1000.0,
                ref_pressure: 2e7,
            },
            oil_water: None,
            initial: Initial::Datum {
                pressure: 2e7,
                depth: 1000.0,
            },
            wells: vec![Well {
                name: "P".into(),
                role: Role::Producer,
                completions: vec![Completion {
                    i: 2,
                    j: 1,
                    k: 1,
                    cell: 11,
                    direction: Direction::Z,
                }],
                radius: 0.1,
                skin: 0.0,
                control: Control::Rate(1e-3),
                bhp_limit: None,
                max_water_cut: None,
                origin: Origin::default(),
            }],
            boundaries: Vec::new(),
            faults: Vec::new(),
            aquifers: vec![Aquifer {
                name: "W".into(),
                side: Side::West,
                select: Selection::default(),
                water_volume: 1e6,
                compressibility: 1e-9,
                productivity: 1e-8,
                origin: Origin::default(),
            }],
            timeline: Timeline {
                kind: RunKind::Transient,
                end: 1e5,
                first_step: 1e3,
                max_step: 1e4,
                min_step: Timeline::DEFAULT_MIN_STEP,
                max_steps: Timeline::DEFAULT_MAX_STEPS,
                growth: 1.5,
                report_every: None,
                report_at: Vec::new(),
                events: vec![],
            },
            report: ReportSettings::default(),
        }
    }

    /// The analytic Jacobian of the aquifer terms agrees with central
    /// differences of the residual.
    #[test]
    fn jacobian_matches_finite_differences() {
        let case = case();
        let d = Disc::new(&case);
        assert_eq!(d.aquifers.len(), 1);
        assert_eq!(d.aquifers[0].faces.len(), 4);
        let pvt = Pvt::new(&case.fluid, &case.rock);
        let n = d.n();
        let mut x: Vec<f64> = (0..d.n_cells)
            .map(|i| 2e7 + 1e4 * d.depth[i] + 3e4 * (i as f64).sin())
            .collect();
        x.push(1.95e7);
        x.push(2.03e7);
        let mass_old = vec![0.9 * d.pv_ref.iter().sum::<f64>() / d.n_cells as f64; d.n_cells];
        let drive = [WellDrive {
            shut: false,
            bhp: false,
            rate: 1e-3,
        }];
        let aq_old = [2.05e7];
        let ctx = Ctx {
            pvt: &pvt,
            dt: 1e4,
            mass_old: Some(&mass_old),
            drive: &drive,
            bface_p: &[],
            pinned: &[],
            pin_scale: 1.0,
            aquifer_old: Some(&aq_old),
        };
        let mut a = Assembly::new(&d, 0);
        assemble(&d, &ctx, &x, &mut a);
        assert!(a.aq_influx[0] != 0.0);
        let jac = a.jac.clone();
        let mut ap = Assembly::new(&d, 0);
        let mut am = Assembly::new(&d, 0);
        for j in 0..n {
            let h = 1.0;
            let mut xp = x.clone();
            xp[j] += h;
            let mut xm = x.clone();
            xm[j] -= h;
            assemble(&d, &ctx, &xp, &mut ap);
            assemble(&d, &ctx, &xm, &mut am);
            for i in 0..n {
                let fd = (ap.resid[i] - am.resid[i]) / (2.0 * h);
                let an = jac.get(i, j);
                let scale = jac.get(i, i).abs();
                assert!(
                    (fd - an).abs() <= 1e-6 * scale + 1e-14,
                    "J[{i}][{j}]: analytic {an}, differences {fd}"
                );
            }
        }
    }
}
