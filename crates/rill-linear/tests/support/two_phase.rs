//! Synthetic Jacobians of a fully implicit two-phase (oil-water) step, for
//! the CPR tests and the `cpr_vs_scipy` example: a matrix with the shape
//! and the numbers of the real thing, without a simulator.
//!
//! Grid of unit cells, two unknowns a cell `[p, sw]`, two equations a cell
//! `[oil, water]` (mass balances, outflow positive):
//! * log-normal permeability (`sigma` of ln k, plus a per-layer offset in
//!   3D), clipped to [1e-4, 1e4]; face transmissibility the harmonic mean;
//! * a water-swept region around an injector column at (0, 0) (sw from
//!   0.77 down to 0.5 at a front whose radius grows with the layer's
//!   permeability), connate water 0.2 ahead of it; Corey exponents 2,
//!   viscosities 0.5 (water) and 2 (oil);
//! * the pressure field of that saturation field: an incompressible
//!   pressure solve (total mobility) between the injector (pressure 1) and
//!   a producer column at (nx - 1, ny - 1) (pressure 0), so that the phase
//!   fluxes have the directions and sizes a simulator would see;
//! * time step: 1% of the pore volume injected; compressibility 1e-3 per
//!   unit of pressure (the whole drop is 1): the pressure equations are
//!   elliptic with a small accumulation term;
//! * derivatives: accumulation (both unknowns), two-point fluxes upwinded by
//!   phase potential (pressure columns of both cells, saturation column of
//!   the upstream cell: an unsymmetric transport part), wells by mobility.
//!
//! In the swept region the oil equation has almost no pressure coupling
//! (oil mobility near zero), ahead of the front the water equation has
//! none: neither equation alone is a good pressure equation, which is what
//! the decoupling of the CPR preconditioner is for.

#![allow(dead_code)]

use rill_linear::{solve, CsrMatrix, Method, SolverOptions};

/// Deterministic pseudo-random numbers (xorshift).
pub struct Rng(pub u64);

impl Rng {
    /// Uniform in [0, 1).
    pub fn next(&mut self) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Standard normal (Box-Muller).
    pub fn normal(&mut self) -> f64 {
        let u = self.next().max(1e-300);
        let v = self.next();
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

/// A synthetic system: the 2 x 2 block Jacobian, a right-hand side and the
/// accumulation blocks (for true-IMPES weights).
#[derive(Clone)]
pub struct TwoPhaseSystem {
    /// Block matrix, block = 2, one block row a cell.
    pub a: CsrMatrix,
    /// Right-hand side (random, as a Newton residual has no structure the
    /// solver may rely on).
    pub b: Vec<f64>,
    /// Derivatives of the accumulation terms, a 2 x 2 row-major block a cell.
    pub accumulation: Vec<f64>,
    /// max k / min k of the field.
    pub contrast: f64,
}

const SWC: f64 = 0.2;
const SOR: f64 = 0.2;
const MU_W: f64 = 0.5;
const MU_O: f64 = 2.0;
const COMPRESSIBILITY: f64 = 1e-3;

/// Phase mobilities and their derivatives in sw: (lw, lo, dlw, dlo).
fn mobilities(sw: f64) -> (f64, f64, f64, f64) {
    let span = 1.0 - SWC - SOR;
    let s = ((sw - SWC) / span).clamp(0.0, 1.0);
    (
        0.4 * s * s / MU_W,
        (1.0 - s) * (1.0 - s) / MU_O,
        0.8 * s / span / MU_W,
        -2.0 * (1.0 - s) / span / MU_O,
    )
}

/// The system on an nx x ny x nz grid (see the module doc).
// Long: one assembly, field by field, reads best in order.
#[allow(clippy::too_many_lines)]
pub fn two_phase_system(nx: usize, ny: usize, nz: usize, sigma: f64, seed: u64) -> TwoPhaseSystem {
    let n = nx * ny * nz;
    let idx = |i: usize, j: usize, k: usize| (k * ny + j) * nx + i;
    let mut rng = Rng(seed);
    let layer: Vec<f64> = (0..nz)
        .map(|_| {
            if nz > 1 {
                sigma * (2.0 * rng.next() - 1.0)
            } else {
                0.0
            }
        })
        .collect();
    let mut perm = vec![0.0; n];
    let mut sw = vec![0.0; n];
    let diag_len = ((nx as f64 - 1.0).powi(2) + (ny as f64 - 1.0).powi(2)).sqrt();
    for (k, &lk) in layer.iter().enumerate() {
        let front = 0.45 * (0.3 * lk).exp();
        for j in 0..ny {
            for i in 0..nx {
                let c = idx(i, j, k);
                perm[c] = (sigma * rng.normal() + lk).exp().clamp(1e-4, 1e4);
                let d = (i as f64).hypot(j as f64) / diag_len;
                let g = if d < front {
                    0.95 - 0.45 * d / front
                } else {
                    0.0
                };
                sw[c] = SWC + (1.0 - SWC - SOR) * g;
            }
        }
    }
    let contrast = perm.iter().cloned().fold(0.0, f64::max)
        / perm.iter().cloned().fold(f64::INFINITY, f64::min);
    let mob: Vec<(f64, f64, f64, f64)> = sw.iter().map(|&s| mobilities(s)).collect();
    let lt = |c: usize| mob[c].0 + mob[c].1;
    let injector: Vec<usize> = (0..nz).map(|k| idx(0, 0, k)).collect();
    let producer: Vec<usize> = (0..nz).map(|k| idx(nx - 1, ny - 1, k)).collect();
    let mut faces = Vec::with_capacity(3 * n);
    for k in 0..nz {
        for j in 0..ny {
            for i in 0..nx {
                let c = idx(i, j, k);
                let mut face = |m: usize| {
                    let t = 2.0 * perm[c] * perm[m] / (perm[c] + perm[m]);
                    faces.push((c, m, t));
                };
                if i + 1 < nx {
                    face(idx(i + 1, j, k));
                }
                if j + 1 < ny {
                    face(idx(i, j + 1, k));
                }
                if k + 1 < nz {
                    face(idx(i, j, k + 1));
                }
            }
        }
    }
    // Incompressible pressure of the saturation field.
    let mut t = Vec::with_capacity(4 * faces.len() + 2 * nz);
    for &(c, m, tr) in &faces {
        let w = tr * 0.5 * (lt(c) + lt(m));
        t.extend([(c, c, w), (m, m, w), (c, m, -w), (m, c, -w)]);
    }
    let mut q = vec![0.0; n];
    for &c in injector.iter().chain(&producer) {
        t.push((c, c, perm[c] * lt(c)));
    }
    for &c in &injector {
        q[c] = perm[c] * lt(c);
    }
    let ap = CsrMatrix::from_triplets(n, &t);
    let mut p = vec![0.5; n];
    let opts = SolverOptions {
        rel_tol: 1e-10,
        method: Method::Auto,
        ..Default::default()
    };
    solve(&ap, &q, &mut p, &opts).expect("the pressure of the synthetic field");
    // Time step: 1% of the pore volume injected.
    let porosity = 0.2;
    let rate: f64 = injector
        .iter()
        .map(|&c| perm[c] * lt(c) * (1.0 - p[c]))
        .sum();
    let acc = rate / (0.01 * porosity * n as f64) * porosity;
    let mut t: Vec<(usize, usize, f64)> = Vec::with_capacity(8 * faces.len() + 4 * n);
    let mut accumulation = vec![0.0; 4 * n];
    for c in 0..n {
        let blk = [
            acc * (1.0 - sw[c]) * COMPRESSIBILITY,
            -acc,
            acc * sw[c] * COMPRESSIBILITY,
            acc,
        ];
        for (l, v) in blk.iter().enumerate() {
            t.push((2 * c + l / 2, 2 * c + l % 2, *v));
        }
        accumulation[4 * c..4 * c + 4].copy_from_slice(&blk);
    }
    for &(c, m, tr) in &faces {
        let dp = p[c] - p[m];
        let up = if dp >= 0.0 { c } else { m };
        let (lw, lo, dlw, dlo) = mob[up];
        for (e, l, dl) in [(0, lo, dlo), (1, lw, dlw)] {
            // Flux out of c: tr l(up) (p_c - p_m); into m the same.
            for (row, s) in [(c, 1.0), (m, -1.0)] {
                t.push((2 * row + e, 2 * c, s * tr * l));
                t.push((2 * row + e, 2 * m, -s * tr * l));
                t.push((2 * row + e, 2 * up + 1, s * tr * dl * dp));
            }
        }
    }
    for &c in &injector {
        let (_, _, dlw, dlo) = mob[c];
        let wi = perm[c];
        t.push((2 * c + 1, 2 * c, wi * lt(c)));
        t.push((2 * c + 1, 2 * c + 1, wi * (dlw + dlo) * (p[c] - 1.0)));
    }
    for &c in &producer {
        let (lw, lo, dlw, dlo) = mob[c];
        let wi = perm[c];
        for (e, l, dl) in [(0, lo, dlo), (1, lw, dlw)] {
            t.push((2 * c + e, 2 * c, wi * l));
            t.push((2 * c + e, 2 * c + 1, wi * dl * p[c]));
        }
    }
    let a = CsrMatrix::from_block_triplets(n, 2, &t);
    let b = (0..2 * n).map(|_| rng.next() - 0.5).collect();
    TwoPhaseSystem {
        a,
        b,
        accumulation,
        contrast,
    }
}
