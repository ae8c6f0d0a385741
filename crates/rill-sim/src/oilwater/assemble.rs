//! The oil-water residual and its Jacobian in 2 x 2 blocks.
//!
//! Unknowns, two per block row: each active cell's `(p_oil, s_water)`,
//! then each well's `(bhp, -)` and each aquifer's `(p_aquifer, -)`, whose
//! second unknown is a placeholder held at 0 by an identity row (so every
//! row of the block pattern of [`Disc`] is a block row, and CPR's pressure
//! stage sees the BHPs and aquifer pressures as pressures). Cell rows are
//! the oil and the water balance in surface m^3 over the step; a well row
//! is its control equation times the step; an aquifer row its material
//! balance.
//!
//! Flux of phase `a` out of cell `i` to `j`:
//! `F = T_ij (kr_a / mu_a)_up (b_a,i + b_a,j) / 2 (p_a,i - p_a,j - rho_a,ij g (D_i - D_j))`
//! with `T_ij` the same geometric transmissibility as the single-phase
//! engine (from `rill_model::derived`), the relative mobility taken from
//! the cell upstream in that phase's potential, `1 / B` averaged and the
//! face density of [`Pvt::face_rho`] at the phase pressures (the
//! single-phase choices: a column in capillary-gravity equilibrium is at
//! rest to rounding, and a deck full of water flows as the single-phase
//! engine does). A face is evaluated with its lower-numbered cell first
//! from both rows, so the two rows get the same bits and fluxes cancel
//! exactly in the field balance.

use rayon::prelude::*;
use rill_model::derived::GRAVITY;

use super::ad::Ad;
use super::cells::{accumulation, CellProps, Phases, OIL, WATER};
use crate::disc::Disc;
use crate::linear::CsrMatrix;

/// Block rows per rayon task.
const CHUNK: usize = 2048;

/// What a well holds during an assembly.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Target {
    /// Its BHP, held at the value of its unknown.
    Bhp,
    /// Producer: surface oil rate, m^3/s.
    Oil(f64),
    /// Producer: surface oil plus water rate, m^3/s.
    Liquid(f64),
    /// Injector: surface water rate injected, m^3/s.
    Water(f64),
    /// Shut: nothing flows; the BHP row is held.
    Shut,
}

/// How one well is driven in an assembly.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Drive {
    pub target: Target,
    pub injector: bool,
    /// Fractions of oil and water in the wellbore column (for its
    /// hydrostat below the datum), fixed over a step.
    pub mix: [f64; 2],
}

/// A boundary face's far side: the boundary's pressure and saturation.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Outside {
    pub props: CellProps,
}

/// The inputs of one assembly besides the unknowns.
pub(crate) struct Ctx<'a> {
    pub ph: &'a Phases,
    pub dt: f64,
    /// Oil and water in place per cell at the start of the step.
    pub mass_old: &'a [[f64; 2]],
    pub drive: &'a [Drive],
    /// One per `Disc::bfaces`.
    pub outside: &'a [Outside],
    /// Aquifer pressures at the start of the step.
    pub aquifer_old: &'a [f64],
    /// Diagonal of a held row (shut well, BHP well), per second of step.
    pub hold: f64,
}

/// The output of an assembly; buffers reused between calls.
pub(crate) struct Assembly {
    pub jac: CsrMatrix,
    pub resid: Vec<f64>,
    /// Oil and water in place per cell at the assembled state, surface m^3.
    pub mass: Vec<[f64; 2]>,
    /// Surface oil and water rate of each well, production positive.
    pub well_q: Vec<[f64; 2]>,
    /// Surface oil and water out through each boundary.
    pub bnd_q: Vec<[f64; 2]>,
    /// Surface oil and water out into each aquifer (negative: influx).
    pub aq_q: Vec<[f64; 2]>,
    /// Influx of each aquifer, reservoir m^3/s.
    pub aq_influx: Vec<f64>,
    /// Cell properties at the assembled state.
    pub props: Vec<CellProps>,
    /// The accumulation block of every block row (row-major 2 x 2; zero in
    /// well and aquifer rows), for CPR's true-IMPES weights.
    pub acc: Vec<f64>,
}

impl Assembly {
    pub fn new(d: &Disc, n_boundaries: usize) -> Assembly {
        let n = d.n();
        let nnz = d.col_idx.len();
        Assembly {
            jac: CsrMatrix {
                n,
                ncols: n,
                block: 2,
                row_ptr: d.row_ptr.clone(),
                col_idx: d.col_idx.clone(),
                values: vec![0.0; 4 * nnz],
            },
            resid: vec![0.0; 2 * n],
            mass: vec![[0.0; 2]; d.n_cells],
            well_q: vec![[0.0; 2]; d.n_wells],
            bnd_q: vec![[0.0; 2]; n_boundaries],
            aq_q: vec![[0.0; 2]; d.aquifers.len()],
            aq_influx: vec![0.0; d.aquifers.len()],
            props: Vec::with_capacity(d.n_cells),
            acc: vec![0.0; 4 * n],
        }
    }
}

/// The fluxes of oil and water out of `a` into `b` across a face of
/// geometric transmissibility `t`, `dd = D_a - D_b`, with derivatives in
/// `(p_a, s_a, p_b, s_b)`.
#[inline]
pub(crate) fn face_flux(ph: &Phases, t: f64, dd: f64, a: &CellProps, b: &CellProps) -> [Ad<4>; 2] {
    let mut out = [Ad::c(0.0); 2];
    for (k, f) in out.iter_mut().enumerate() {
        let xa: Ad<4> = a.p[k].widen([0, 1]);
        let xb: Ad<4> = b.p[k].widen([2, 3]);
        let (r, dra, drb) = ph.pvt[k].face_rho_from(a.rho[k], xa.v, xb.v);
        let mut rho = Ad::c(r);
        for m in 0..4 {
            rho.d[m] = dra * xa.d[m] + drb * xb.d[m];
        }
        let dphi = xa - xb - rho.scale(GRAVITY * dd);
        let mob = if dphi.v >= 0.0 {
            a.kr_mu[k].widen([0, 1])
        } else {
            b.kr_mu[k].widen([2, 3])
        };
        let bavg = (a.b[k].widen([0, 1]) + b.b[k].widen([2, 3])).scale(0.5);
        *f = (mob * bavg * dphi).scale(t);
    }
    out
}

/// The pressure in the wellbore at `dd` below the datum, with the BHP as
/// unknown 2 of 3: each phase's hydrostat weighted by the column's mix.
#[inline]
fn wellbore_pressure(ph: &Phases, mix: [f64; 2], bhp: f64, dd: f64) -> Ad<3> {
    let mut v = bhp;
    let mut dv = 1.0;
    for k in [OIL, WATER] {
        if mix[k] > 0.0 {
            let (h, dh) = ph.pvt[k].hydrostat(bhp, dd);
            v += mix[k] * (h - bhp);
            dv += mix[k] * (dh - 1.0);
        }
    }
    let mut out = Ad::c(v);
    out.d[2] = dv;
    out
}

/// Surface oil and water rate of one completion (production positive) with
/// derivatives in `(p_cell, s_cell, bhp)`. Producers take each phase by its
/// mobility in the cell, only while the cell's phase pressure is above the
/// wellbore's; injectors put in water with the cell's total mobility, only
/// while the wellbore is above the cell's water pressure. No completion
/// flows against its well's role.
#[inline]
pub(crate) fn completion_q(
    ph: &Phases,
    c: &CellProps,
    wi: f64,
    dd: f64,
    drive: &Drive,
    bhp: f64,
) -> [Ad<3>; 2] {
    let pwb = wellbore_pressure(ph, drive.mix, bhp, dd);
    let mut q = [Ad::c(0.0); 2];
    if drive.injector {
        let dp = pwb - c.p[WATER].widen([0, 1]);
        if dp.v > 0.0 {
            let lam: Ad<3> = (c.total_kr_mu() * c.b[WATER]).widen([0, 1]);
            q[WATER] = -(lam * dp).scale(wi);
        }
    } else {
        for k in [OIL, WATER] {
            let dp = c.p[k].widen([0, 1]) - pwb;
            if dp.v > 0.0 {
                let lam: Ad<3> = (c.kr_mu[k] * c.b[k]).widen([0, 1]);
                q[k] = (lam * dp).scale(wi);
            }
        }
    }
    q
}

/// The open-completion slope of a well's controlled rate in its BHP, for
/// a rate well none of whose completions flows at the iterate (the row
/// still has to move the BHP toward flow).
fn closed_slope(ph: &Phases, d: &Disc, w: usize, props: &[CellProps], injector: bool) -> f64 {
    let lam_ref = 1.0 / (ph.pvt[WATER].mu * ph.pvt[WATER].b_ref);
    let s: f64 = d.wells[w]
        .comps
        .iter()
        .map(|cp| {
            let c = &props[cp.cell];
            let lam = c.kr_mu[OIL].v * c.b[OIL].v + c.kr_mu[WATER].v * c.b[WATER].v;
            cp.wi * lam.max(lam_ref * 1e-3)
        })
        .sum();
    if injector {
        s
    } else {
        -s
    }
}

/// Assembles the residual and the Jacobian at `x` (two numbers per block row).
pub(crate) fn assemble(d: &Disc, ctx: &Ctx, curves_of: &[u32], x: &[f64], out: &mut Assembly) {
    let nc = d.n_cells;
    let ph = ctx.ph;
    out.props.clear();
    (0..nc)
        .into_par_iter()
        .with_min_len(CHUNK)
        .map(|i| CellProps::new(ph, curves_of[i] as usize, x[2 * i], x[2 * i + 1]))
        .collect_into_vec(&mut out.props);
    cell_rows(d, ctx, x, out);
    boundaries(d, ctx, out);
    wells(d, ctx, x, out);
    aquifers(d, ctx, x, out);
}

/// Accumulation and interior fluxes of every cell row, in parallel.
fn cell_rows(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let nc = d.n_cells;
    let (rp, ci) = (&d.row_ptr, &d.col_idx);
    let ph = ctx.ph;
    let dt = ctx.dt;
    let props = &out.props;
    let (cell_vals, _) = out.jac.values.split_at_mut(4 * rp[nc]);
    let (cell_res, _) = out.resid.split_at_mut(2 * nc);
    let mut tasks = Vec::with_capacity(nc / CHUNK + 1);
    {
        let (mut vals, mut res, mut mass) = (cell_vals, cell_res, &mut out.mass[..]);
        let mut acc_blocks = &mut out.acc[..4 * nc];
        let mut r0 = 0;
        while r0 < nc {
            let r1 = (r0 + CHUNK).min(nc);
            let (v, vt) = std::mem::take(&mut vals).split_at_mut(4 * (rp[r1] - rp[r0]));
            let (r, rt) = std::mem::take(&mut res).split_at_mut(2 * (r1 - r0));
            let (m, mt) = std::mem::take(&mut mass).split_at_mut(r1 - r0);
            let (a, at) = std::mem::take(&mut acc_blocks).split_at_mut(4 * (r1 - r0));
            tasks.push((r0, r1, v, r, m, a));
            (vals, res, mass, acc_blocks) = (vt, rt, mt, at);
            r0 = r1;
        }
    }
    tasks
        .into_par_iter()
        .for_each(|(r0, r1, vals, res, mass, acc_out)| {
            let base = rp[r0];
            for i in r0..r1 {
                let row = &mut vals[4 * (rp[i] - base)..4 * (rp[i + 1] - base)];
                row.fill(0.0);
                let acc = accumulation(ph, &props[i], x[2 * i + 1], d.pv_ref[i]);
                let mut r = [acc[0].v - ctx.mass_old[i][0], acc[1].v - ctx.mass_old[i][1]];
                mass[i - r0] = [acc[0].v, acc[1].v];
                let mut jd = [acc[0].d[0], acc[0].d[1], acc[1].d[0], acc[1].d[1]];
                acc_out[4 * (i - r0)..4 * (i - r0) + 4].copy_from_slice(&jd);
                for k in rp[i]..rp[i + 1] {
                    let j = ci[k];
                    if j >= nc || j == i {
                        continue;
                    }
                    let t = d.trans[k];
                    let (f, own, other) = if i < j {
                        (
                            face_flux(ph, t, d.depth[i] - d.depth[j], &props[i], &props[j]),
                            [0, 1],
                            [2, 3],
                        )
                    } else {
                        let f = face_flux(ph, t, d.depth[j] - d.depth[i], &props[j], &props[i]);
                        (f.map(|v| -v), [2, 3], [0, 1])
                    };
                    let blk = &mut row[4 * (k - rp[i])..4 * (k - rp[i]) + 4];
                    for e in 0..2 {
                        r[e] += dt * f[e].v;
                        for v in 0..2 {
                            jd[2 * e + v] += dt * f[e].d[own[v]];
                            blk[2 * e + v] = dt * f[e].d[other[v]];
                        }
                    }
                }
                let dg = 4 * (d.diag[i] - rp[i]);
                row[dg..dg + 4].copy_from_slice(&jd);
                res[2 * (i - r0)] = r[0];
                res[2 * (i - r0) + 1] = r[1];
            }
        });
}

/// Adds the boundary faces to the cell rows and sums their rates.
fn boundaries(d: &Disc, ctx: &Ctx, out: &mut Assembly) {
    for q in &mut out.bnd_q {
        *q = [0.0; 2];
    }
    for (f, o) in d.bfaces.iter().zip(ctx.outside) {
        let c = f.cell;
        let flux = face_flux(ctx.ph, f.t, f.dd, &out.props[c], &o.props);
        let dg = 4 * d.diag[c];
        for e in 0..2 {
            out.resid[2 * c + e] += ctx.dt * flux[e].v;
            out.jac.values[dg + 2 * e] += ctx.dt * flux[e].d[0];
            out.jac.values[dg + 2 * e + 1] += ctx.dt * flux[e].d[1];
            out.bnd_q[f.boundary][e] += flux[e].v;
        }
    }
}

/// Adds the completions to the cell rows and assembles the well rows.
fn wells(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let nc = d.n_cells;
    let rp = &d.row_ptr;
    let dt = ctx.dt;
    for (w, wg) in d.wells.iter().enumerate() {
        let row = nc + w;
        out.jac.values[4 * rp[row]..4 * rp[row + 1]].fill(0.0);
        out.well_q[w] = [0.0; 2];
        let dg = 4 * wg.diag;
        out.jac.values[dg + 3] = 1.0;
        out.resid[2 * row + 1] = 0.0;
        let drive = &ctx.drive[w];
        if wg.wi_sum <= 0.0 || drive.target == Target::Shut {
            out.jac.values[dg] = ctx.hold * dt;
            out.resid[2 * row] = 0.0;
            continue;
        }
        let held = drive.target == Target::Bhp;
        let bhp = x[2 * row];
        let mut ctrl = Ad::<3>::c(0.0);
        for cp in &wg.comps {
            let c = cp.cell;
            let q = completion_q(ctx.ph, &out.props[c], cp.wi, cp.dd, drive, bhp);
            let cd = 4 * d.diag[c];
            for e in 0..2 {
                out.resid[2 * c + e] += dt * q[e].v;
                out.jac.values[cd + 2 * e] += dt * q[e].d[0];
                out.jac.values[cd + 2 * e + 1] += dt * q[e].d[1];
                if !held {
                    out.jac.values[4 * cp.pos_cw + 2 * e] += dt * q[e].d[2];
                }
                out.well_q[w][e] += q[e].v;
            }
            let part = match drive.target {
                Target::Oil(_) => q[OIL],
                Target::Liquid(_) => q[OIL] + q[WATER],
                Target::Water(_) => -q[WATER],
                Target::Bhp | Target::Shut => Ad::c(0.0),
            };
            ctrl = ctrl + part;
            if !held {
                let wc = 4 * cp.pos_wc;
                out.jac.values[wc] += dt * part.d[0];
                out.jac.values[wc + 1] += dt * part.d[1];
            }
        }
        let target = match drive.target {
            Target::Oil(q) | Target::Liquid(q) | Target::Water(q) => q,
            Target::Bhp | Target::Shut => 0.0,
        };
        if held {
            out.jac.values[dg] = ctx.hold * dt;
            out.resid[2 * row] = 0.0;
        } else {
            let slope = if ctrl.d[2] != 0.0 {
                ctrl.d[2]
            } else {
                closed_slope(ctx.ph, d, w, &out.props, drive.injector)
            };
            out.jac.values[dg] = dt * slope;
            out.resid[2 * row] = dt * (ctrl.v - target);
        }
    }
}

/// Adds the aquifers: their influx in the cell rows, their own rows.
/// Water enters a cell at the cell's water pressure; a cell that loses
/// fluid to its aquifer loses each phase by its share of the mobility.
fn aquifers(d: &Disc, ctx: &Ctx, x: &[f64], out: &mut Assembly) {
    let first = d.n_cells + d.n_wells;
    let rp = &d.row_ptr;
    let dt = ctx.dt;
    let water = &ctx.ph.pvt[WATER];
    for (a, g) in d.aquifers.iter().enumerate() {
        let row = first + a;
        out.jac.values[4 * rp[row]..4 * rp[row + 1]].fill(0.0);
        out.aq_q[a] = [0.0; 2];
        out.aq_influx[a] = 0.0;
        let lead = if d.lead { 1.0 } else { 0.0 };
        let p_a = x[2 * row];
        let mut r = lead * g.capacity * (p_a - ctx.aquifer_old[a]);
        let mut diag = lead * g.capacity;
        for f in &g.faces {
            let c = &out.props[f.cell];
            let (ha, dha) = water.hydrostat(p_a, f.dd_a);
            let pw: Ad<3> = c.p[WATER].widen([0, 1]);
            let (hc, dhc) = water.hydrostat(pw.v, f.dd_c);
            let mut q = pw.chain(hc, dhc).scale(-f.j);
            q.v += f.j * ha;
            q.d[2] = f.j * dha;
            // Surface volumes into the cell.
            let into: [Ad<3>; 2] = if q.v >= 0.0 {
                [Ad::c(0.0), c.b[WATER].widen([0, 1]) * q]
            } else {
                let total = c.total_kr_mu();
                let share = |k: usize| {
                    if total.v > 0.0 {
                        c.kr_mu[k].div(total)
                    } else {
                        Ad::c(if k == WATER { 1.0 } else { 0.0 })
                    }
                };
                [
                    (share(OIL) * c.b[OIL]).widen([0, 1]) * q,
                    (share(WATER) * c.b[WATER]).widen([0, 1]) * q,
                ]
            };
            let cd = 4 * d.diag[f.cell];
            for e in 0..2 {
                out.resid[2 * f.cell + e] -= dt * into[e].v;
                out.jac.values[cd + 2 * e] -= dt * into[e].d[0];
                out.jac.values[cd + 2 * e + 1] -= dt * into[e].d[1];
                out.jac.values[4 * f.pos_ca + 2 * e] -= dt * into[e].d[2];
                out.aq_q[a][e] -= into[e].v;
            }
            r += dt * q.v;
            diag += dt * q.d[2];
            out.jac.values[4 * f.pos_ac] += dt * q.d[0];
            out.jac.values[4 * f.pos_ac + 1] += dt * q.d[1];
            out.aq_influx[a] += q.v;
        }
        let dg = 4 * g.diag;
        out.jac.values[dg] = diag;
        out.jac.values[dg + 3] = 1.0;
        out.resid[2 * row] = r;
        out.resid[2 * row + 1] = 0.0;
    }
}
