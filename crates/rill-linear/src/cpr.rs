//! Constrained-pressure-residual (CPR) preconditioning of block systems
//! (Wallis, 1983): the two-stage preconditioner of fully implicit systems
//! with several unknowns a cell, the first of which is a pressure.
//!
//! Owns: the decoupling weights, the scalar pressure matrix taken from a
//! block matrix, the two-stage operator [`Cpr`] (a [`Preconditioner`] for
//! [`crate::pgmres`] through [`Cpr::preconditioner`]) and its set-up
//! reuse. [`crate::CoupledSolver`] and [`crate::solve_coupled`] wrap it in
//! GMRES.
//!
//! Must never: assume what the equations or the unknowns other than the
//! first mean (no saturations, phases, wells or units here), or change the
//! system it is given (the weights act inside the preconditioner only;
//! GMRES minimises the residual of A x = b as given).
//!
//! The unknowns of block row i are `[pressure, others...]` (scalar rows
//! `i b .. i b + b`). With weights w_i (b numbers per block row):
//! * pressure matrix: `Ap[i][j] = w_i^T A_ij e_0`, on the block pattern;
//! * stage 1: `x1 = P Ap^{-1} R r` with `(R r)_i = w_i^T r_i` and P putting
//!   the pressure values in the first unknown of each block (zeros in the
//!   others); `Ap^{-1}` is one V-cycle (or `pressure_cycles` of them) of
//!   the smoothed-aggregation multigrid ([`crate::amg`]), built once per
//!   pattern;
//! * stage 2: `z = x1 + M2^{-1} (r - A x1)`, M2 block ILU(0) or block Jacobi
//!   of the whole A.
//!
//! Weights ([`Decoupling`]):
//! * `QuasiImpes`: w_i^T D_ii e_s = 0 for s > 0, D_ii the diagonal block of
//!   A: the pressure row of the combination does not see the cell's own
//!   other unknowns. w_i^T is row 0 of D_ii^{-1}, scaled so that w_i[0] = 1
//!   (the first equation enters with weight one; for b = 2 and
//!   D = [[a, b], [c, d]], w = (1, -b / d)).
//! * `TrueImpes`: the same with D_ii replaced by the cell's accumulation
//!   block, which the caller passes (a linear crate cannot tell the
//!   accumulation from the fluxes in A); for an accumulation whose
//!   non-pressure derivatives are column sums of ones (equal formation
//!   volume factors), this sums the equations.
//! * `PressureRow`: w_i = e_0, the first equation alone (for comparison).
//!
//! A pressure row whose diagonal comes out negative (the row of a well
//! held to a rate: its equation falls as the BHP rises) is negated with
//! its weights. Stage 1 solves the same system (row i scaled by -1 on
//! both sides), but the multigrid now sees positive diagonals: with one
//! negative diagonal among 280,000 rows, the V-cycle as an iteration on
//! the pressure matrix diverged (residual x 30 a cycle), and converges
//! once that row is turned (measured on an exported mid-run oil-water
//! system, 30 x 110 x 85 cells, and in pyamg's smoothed aggregation
//! alike).
//!
//! The weights solve only the non-pressure columns (w_i[0] = 1 and
//! w_i^T D_ii e_s = 0 for s > 0), so a D_ii singular in its pressure column
//! alone still decouples. A block whose non-pressure part is singular, or
//! whose weights come out huge, takes w_i = e_0.

use std::sync::Mutex;

use rayon::prelude::*;

use super::amg::{AmgHierarchy, AmgOptions};
use super::bilu::{invert_block, BlockIlu0, BlockJacobi};
use super::csr::{split_rows_mut, CsrMatrix, ROW_CHUNK};
use super::krylov::Preconditioner;
use super::LinearError;

/// Decoupling weights of the pressure equation (see the module doc).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Decoupling {
    /// From the diagonal block of A (the default).
    #[default]
    QuasiImpes,
    /// From the accumulation blocks the caller passes.
    TrueImpes,
    /// The first equation of each block row alone.
    PressureRow,
}

/// The second stage, on the whole system.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SecondStage {
    /// Block ILU(0) (the default).
    #[default]
    BlockIlu0,
    /// Inverse of the diagonal blocks.
    BlockJacobi,
}

/// Options of the CPR preconditioner.
#[derive(Debug, Clone, PartialEq)]
pub struct CprOptions {
    /// Decoupling weights (default quasi-IMPES).
    pub decoupling: Decoupling,
    /// Second stage (default block ILU(0)).
    pub second_stage: SecondStage,
    /// False drops stage 1: the second stage alone, for comparisons.
    pub pressure_stage: bool,
    /// Multigrid of the pressure stage (default: [`AmgOptions`] with two
    /// sweeps of pre- and post-smoothing and coarsening down to 500
    /// unknowns).
    pub amg: AmgOptions,
    /// V-cycles of the pressure stage per application (default 2); each
    /// after the first corrects the pressure residual the last one left.
    pub pressure_cycles: usize,
}

impl Default for CprOptions {
    fn default() -> Self {
        CprOptions {
            decoupling: Decoupling::QuasiImpes,
            second_stage: SecondStage::BlockIlu0,
            pressure_stage: true,
            // Two V-cycles of two sweeps each: on layered, anisotropic
            // decks (thin layers, kz a tenth of kx) one V-cycle of one
            // sweep leaves the pressure error that GMRES then spends its
            // iterations on. Measured on a 20 x 70 x 85 waterflood (119,000
            // cells, a year): 16.8 linear iterations a Newton iteration with
            // one cycle of one sweep, 13.7 with two cycles, 14.0 with two
            // sweeps, 10.4 with both, and the run 17% faster; three of
            // either gain little more (9.8 to 9.9).
            // Coarsening on to 500 unknowns (pyamg's default, 3,000 in
            // the single-phase solver): on the first system of the
            // 1.12-million-cell waterflood the fourth level costs less to
            // set up and to cycle than factoring and solving a 2,863-unknown
            // third level with 65 values a row (4.7 to 4.9 s against 5.1 to
            // 5.3 s, 10 iterations each); on 119,000 cells the hierarchy
            // stops below 500 either way.
            amg: AmgOptions {
                sweeps: 2,
                max_coarse: 500,
                ..AmgOptions::default()
            },
            pressure_cycles: 2,
        }
    }
}

enum Stage2 {
    Ilu0(BlockIlu0),
    Jacobi(BlockJacobi),
}

impl Stage2 {
    fn new(a: &CsrMatrix, kind: SecondStage) -> Result<Self, LinearError> {
        Ok(match kind {
            SecondStage::BlockIlu0 => Stage2::Ilu0(BlockIlu0::factor(a)?),
            SecondStage::BlockJacobi => Stage2::Jacobi(BlockJacobi::new(a)?),
        })
    }
    /// New values of the same pattern, in the storage held.
    fn refactor(&mut self, a: &CsrMatrix) -> Result<(), LinearError> {
        match self {
            Stage2::Ilu0(f) => f.refactor(a),
            Stage2::Jacobi(f) => f.refactor(a),
        }
    }
    fn apply(&self, r: &[f64], z: &mut [f64]) {
        match self {
            Stage2::Ilu0(f) => f.apply(r, z),
            Stage2::Jacobi(f) => f.apply(r, z),
        }
    }
}

/// Scratch vectors of one application.
struct Work {
    rp: Vec<f64>,
    xp: Vec<f64>,
    /// Pressure residual and correction of the cycles after the first.
    rp2: Vec<f64>,
    dxp: Vec<f64>,
    x1: Vec<f64>,
    r2: Vec<f64>,
}

/// How much of the multigrid to redo in [`Cpr::update`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AmgRefresh {
    /// Keep the hierarchy; the fine level's smoother from the new matrix.
    Fine,
    /// Keep aggregates and prolongators; recompute the coarse operators.
    Galerkin,
    /// Build the hierarchy anew.
    Rebuild,
}

/// The CPR set-up for one block matrix: weights, pressure matrix, its
/// multigrid and the second-stage factors. Keeps the multigrid across
/// [`Cpr::update`]s of a matrix with the same pattern.
pub struct Cpr {
    opts: CprOptions,
    block: usize,
    weights: Vec<f64>,
    pressure: CsrMatrix,
    hierarchy: Option<AmgHierarchy>,
    stage2: Stage2,
    work: Mutex<Work>,
}

impl Cpr {
    /// Builds the set-up for the square block matrix `a` (any block size;
    /// unknown 0 of each block is the pressure). `accumulation` holds one
    /// b x b row-major block per block row, needed by (and only used for)
    /// [`Decoupling::TrueImpes`].
    pub fn build(
        a: &CsrMatrix,
        accumulation: Option<&[f64]>,
        opts: &CprOptions,
    ) -> Result<Self, LinearError> {
        let mut weights = weights(a, accumulation, opts.decoupling)?;
        let pressure = pressure_matrix(a, &mut weights);
        let hierarchy = if opts.pressure_stage {
            Some(AmgHierarchy::build_with_symmetry(
                &pressure, &opts.amg, false,
            )?)
        } else {
            None
        };
        let stage2 = Stage2::new(a, opts.second_stage)?;
        let (n, rows) = (a.n, a.rows());
        Ok(Cpr {
            opts: opts.clone(),
            block: a.block,
            weights,
            pressure,
            hierarchy,
            stage2,
            work: Mutex::new(Work {
                rp: vec![0.0; n],
                xp: vec![0.0; n],
                // Only a pressure stage of several cycles uses them.
                rp2: vec![0.0; if opts.pressure_cycles > 1 { n } else { 0 }],
                dxp: vec![0.0; if opts.pressure_cycles > 1 { n } else { 0 }],
                x1: vec![0.0; rows],
                r2: vec![0.0; rows],
            }),
        })
    }

    /// Adopts new values of a matrix with the pattern of the one built for
    /// (checked): weights, pressure matrix and second stage are recomputed
    /// in the storage held, the multigrid refreshed as `refresh` says. After
    /// an error the set-up is half updated: build it anew.
    pub fn update(
        &mut self,
        a: &CsrMatrix,
        accumulation: Option<&[f64]>,
        refresh: AmgRefresh,
    ) -> Result<(), LinearError> {
        if !self.same_pattern(a) {
            return Err(LinearError::Dimension {
                detail: "CPR update: the matrix has another pattern than the one set up".into(),
            });
        }
        weights_into(a, accumulation, self.opts.decoupling, &mut self.weights)?;
        pressure_values(a, &mut self.weights, &mut self.pressure.values);
        self.refresh_amg(refresh)?;
        self.stage2.refactor(a)
    }

    /// True when `a` has the block size and block pattern set up for.
    pub fn same_pattern(&self, a: &CsrMatrix) -> bool {
        let p = &self.pressure;
        a.block == self.block
            && a.n == p.n
            && a.ncols == p.ncols
            && a.row_ptr == p.row_ptr
            && a.col_idx == p.col_idx
    }

    /// Redoes only the multigrid part of the set-up, for the matrix last
    /// given to [`Cpr::build`] or [`Cpr::update`].
    pub fn refresh_amg(&mut self, refresh: AmgRefresh) -> Result<(), LinearError> {
        if let Some(h) = self.hierarchy.as_mut() {
            match refresh {
                AmgRefresh::Fine => h.refresh_fine(&self.pressure)?,
                AmgRefresh::Galerkin => h.refresh_galerkin(&self.pressure)?,
                AmgRefresh::Rebuild => {
                    *h = AmgHierarchy::build_with_symmetry(&self.pressure, &self.opts.amg, false)?
                }
            }
        }
        Ok(())
    }

    /// The options it was built with.
    pub fn options(&self) -> &CprOptions {
        &self.opts
    }

    /// Decoupling weights, b per block row.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// The scalar pressure matrix of stage 1.
    pub fn pressure_matrix(&self) -> &CsrMatrix {
        &self.pressure
    }

    /// The multigrid of stage 1 (none without a pressure stage).
    pub fn hierarchy(&self) -> Option<&AmgHierarchy> {
        self.hierarchy.as_ref()
    }

    /// The two-stage operator for `a`, the matrix last given to
    /// [`Cpr::build`] or [`Cpr::update`].
    pub fn preconditioner<'s>(&'s self, a: &'s CsrMatrix) -> CprPreconditioner<'s> {
        CprPreconditioner { cpr: self, a }
    }
}

/// A [`Cpr`] with its matrix: the [`Preconditioner`] given to GMRES.
pub struct CprPreconditioner<'s> {
    cpr: &'s Cpr,
    a: &'s CsrMatrix,
}

impl Preconditioner for CprPreconditioner<'_> {
    fn apply(&self, r: &[f64], z: &mut [f64]) {
        let c = self.cpr;
        let Some(h) = c.hierarchy.as_ref() else {
            c.stage2.apply(r, z);
            return;
        };
        let b = c.block;
        let mut guard = c.work.lock().unwrap_or_else(|e| e.into_inner());
        let Work {
            rp,
            xp,
            rp2,
            dxp,
            x1,
            r2,
        } = &mut *guard;
        // Stage 1: restrict with the weights, V-cycles, prolong.
        rp.par_iter_mut()
            .zip(r.par_chunks(b))
            .zip(c.weights.par_chunks(b))
            .with_min_len(ROW_CHUNK)
            .for_each(|((p, ri), wi)| *p = ri.iter().zip(wi).map(|(x, y)| x * y).sum());
        h.vcycle(&c.pressure, rp, xp);
        for _ in 1..c.opts.pressure_cycles {
            c.pressure.residual_into(rp, xp, rp2);
            h.vcycle(&c.pressure, rp2, dxp);
            xp.par_iter_mut()
                .zip(dxp.par_iter())
                .with_min_len(ROW_CHUNK)
                .for_each(|(x, d)| *x += d);
        }
        x1.par_chunks_mut(b)
            .zip(xp.par_iter())
            .with_min_len(ROW_CHUNK)
            .for_each(|(xi, p)| {
                xi.iter_mut().for_each(|v| *v = 0.0);
                xi[0] = *p;
            });
        // Stage 2 on the residual left by stage 1.
        self.a.residual_into(r, x1, r2);
        c.stage2.apply(r2, z);
        z.par_iter_mut()
            .zip(x1.par_iter())
            .with_min_len(ROW_CHUNK)
            .for_each(|(zi, xi)| *zi += xi);
    }
}

/// The decoupling weights, b per block row, in parallel over block rows.
fn weights(
    a: &CsrMatrix,
    accumulation: Option<&[f64]>,
    kind: Decoupling,
) -> Result<Vec<f64>, LinearError> {
    let mut w = vec![0.0; a.n * a.block];
    weights_into(a, accumulation, kind, &mut w)?;
    Ok(w)
}

/// [`weights`] into storage of `n * b` values held from before: every
/// value is written.
fn weights_into(
    a: &CsrMatrix,
    accumulation: Option<&[f64]>,
    kind: Decoupling,
    w: &mut [f64],
) -> Result<(), LinearError> {
    let (n, b, bb) = (a.n, a.block, a.block * a.block);
    if kind == Decoupling::PressureRow {
        w.par_chunks_mut(b).for_each(|wi| {
            wi.iter_mut().for_each(|x| *x = 0.0);
            wi[0] = 1.0;
        });
        return Ok(());
    }
    let acc = match kind {
        Decoupling::TrueImpes => {
            let acc = accumulation.ok_or_else(|| LinearError::Dimension {
                detail: "true-IMPES weights need the accumulation blocks".into(),
            })?;
            if acc.len() != n * bb {
                return Err(LinearError::Dimension {
                    detail: format!(
                        "accumulation blocks: {} values for {n} blocks of {b} x {b}",
                        acc.len()
                    ),
                });
            }
            Some(acc)
        }
        _ => None,
    };
    let zero = vec![0.0; bb];
    let m = b - 1;
    w.par_chunks_mut(b)
        .enumerate()
        .with_min_len(ROW_CHUNK)
        .for_each_init(
            || (vec![0.0; m * m], vec![0.0; m * m], Vec::new()),
            |(sub, inv, work), (i, wi)| {
                let d = match acc {
                    Some(acc) => &acc[i * bb..i * bb + bb],
                    None => {
                        let (c, v) = a.row(i);
                        c.binary_search(&i)
                            .map(|k| &v[k * bb..k * bb + bb])
                            .unwrap_or(&zero)
                    }
                };
                wi.iter_mut().for_each(|x| *x = 0.0);
                wi[0] = 1.0;
                if m == 0 {
                    return;
                }
                // w_0 = 1 and sum_r w_r D[r][s] = 0 for s >= 1: the other
                // weights solve S^T w' = -D[0][1..], S = D[1..][1..]. The
                // same as row 0 of D^-1 scaled where D is invertible, and
                // still defined where D is not: an accumulation block with
                // no pressure derivative (incompressible phases in a cell
                // full of one of them) keeps its saturation columns.
                for r in 0..m {
                    for s in 0..m {
                        sub[s * m + r] = d[(r + 1) * b + s + 1];
                    }
                }
                if invert_block(sub, m, inv, work) {
                    let mut ok = true;
                    for r in 0..m {
                        let v: f64 = (0..m).map(|s| -inv[r * m + s] * d[s + 1]).sum();
                        // Huge weights would drown the first equation.
                        ok &= v.is_finite() && v.abs() < 1e12;
                        wi[r + 1] = v;
                    }
                    if !ok {
                        wi.iter_mut().skip(1).for_each(|x| *x = 0.0);
                    }
                }
            },
        );
    Ok(())
}

/// Ap[i][j] = w_i^T A_ij e_0 on the block pattern of `a`; a row whose
/// diagonal comes out negative is negated, with its weights (see
/// [`Cpr`]'s module doc: the multigrid's smoothers diverge on it).
fn pressure_matrix(a: &CsrMatrix, w: &mut [f64]) -> CsrMatrix {
    let mut values = vec![0.0; a.col_idx.len()];
    pressure_values(a, w, &mut values);
    CsrMatrix {
        n: a.n,
        ncols: a.ncols,
        block: 1,
        row_ptr: a.row_ptr.clone(),
        col_idx: a.col_idx.clone(),
        values,
    }
}

/// The values of [`pressure_matrix`] into storage of the block pattern's
/// length (turning rows and weights as it does).
fn pressure_values(a: &CsrMatrix, w: &mut [f64], values: &mut [f64]) {
    let (b, bb) = (a.block, a.block * a.block);
    split_rows_mut(values, &a.row_ptr)
        .par_iter_mut()
        .zip(w.par_chunks_mut(b))
        .enumerate()
        .with_min_len(ROW_CHUNK)
        .for_each(|(i, (out, wi))| {
            let (cols, v) = a.row(i);
            for (k, o) in out.iter_mut().enumerate() {
                let blk = &v[k * bb..k * bb + bb];
                *o = (0..b).map(|s| wi[s] * blk[s * b]).sum();
            }
            let diag = cols.binary_search(&i).map_or(0.0, |k| out[k]);
            if diag < 0.0 {
                out.iter_mut().for_each(|o| *o = -*o);
                wi.iter_mut().for_each(|x| *x = -*x);
            }
        });
}
