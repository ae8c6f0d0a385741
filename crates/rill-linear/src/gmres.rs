//! Restarted, right-preconditioned GMRES(m), for the unsymmetric systems of
//! coupled unknowns where BiCGStab's erratic convergence or breakdowns hurt.
//!
//! Written here because `faer` (0.24) has conjugate gradients and BiCGStab
//! but no GMRES. With right preconditioning, A M^{-1} u = b, x = M^{-1} u,
//! the minimized residual is the true one, ||b - A x||, so the estimate of
//! the rotations tracks our stopping rule; it is still recomputed from `x`
//! at the end of each cycle, and a cycle that claimed convergence falsely
//! is followed by another.
//!
//! Arnoldi with modified Gram-Schmidt and Givens rotations on the
//! Hessenberg matrix.

use rayon::prelude::*;

use super::csr::CsrMatrix;
use super::krylov::{axpy, dot, norm2, KrylovOutcome, Preconditioner, VEC_CHUNK};

/// GMRES(`restart`) with right preconditioner `m`. `x` holds the initial
/// guess on entry and the last iterate on exit. Stops when the true
/// relative residual ||b - A x|| / ||b|| <= `rel_tol` or after `max_iter`
/// iterations (one product with A and one with M^{-1} each; restarts do not
/// reset the count). `b = 0` gives `x = 0` at once.
pub fn pgmres<P: Preconditioner>(
    a: &CsrMatrix,
    b: &[f64],
    x: &mut [f64],
    m: &P,
    restart: usize,
    rel_tol: f64,
    max_iter: usize,
) -> KrylovOutcome {
    let n = a.rows();
    let bnorm = norm2(b);
    if bnorm == 0.0 {
        return KrylovOutcome::zero_rhs(x);
    }
    let k_max = restart.max(1);
    // Basis vectors are allocated as the first cycle needs them: a solve
    // that converges in a few iterations does not pay for `restart` of them.
    let mut v: Vec<Vec<f64>> = vec![vec![0.0; n]];
    // Hessenberg columns (j + 2 entries used in column j), rotated in place.
    let mut h = vec![vec![0.0; k_max + 1]; k_max];
    let (mut cs, mut sn) = (vec![0.0; k_max], vec![0.0; k_max]);
    let mut g = vec![0.0; k_max + 1];
    let mut z = vec![0.0; n];
    let mut w = vec![0.0; n];
    let mut it = 0usize;
    let mut breakdown = false;
    loop {
        a.residual_into(b, x, &mut w);
        let beta = norm2(&w);
        if !beta.is_finite() {
            return KrylovOutcome::non_finite(it);
        }
        let done = beta <= rel_tol * bnorm;
        if done || it >= max_iter || breakdown {
            return KrylovOutcome {
                converged: done,
                breakdown: breakdown && !done,
                iterations: it,
                rel_residual: beta / bnorm,
            };
        }
        scale_into(&w, 1.0 / beta, &mut v[0]);
        g.iter_mut().for_each(|e| *e = 0.0);
        g[0] = beta;
        let mut k = 0;
        while k < k_max && it < max_iter {
            let j = k;
            m.apply(&v[j], &mut z);
            a.mul_vec_into(&z, &mut w);
            for i in 0..=j {
                let hij = dot(&w, &v[i]);
                h[j][i] = hij;
                axpy(-hij, &v[i], &mut w);
            }
            let hnext = norm2(&w);
            h[j][j + 1] = hnext;
            for i in 0..j {
                let (p, q) = (h[j][i], h[j][i + 1]);
                h[j][i] = cs[i] * p + sn[i] * q;
                h[j][i + 1] = -sn[i] * p + cs[i] * q;
            }
            let (p, q) = (h[j][j], h[j][j + 1]);
            let r = p.hypot(q);
            it += 1;
            k = j + 1;
            if !(r > 0.0) || !r.is_finite() {
                // A zero column: A M^{-1} is singular on the Krylov space.
                breakdown = true;
                k = j;
                break;
            }
            cs[j] = p / r;
            sn[j] = q / r;
            h[j][j] = r;
            h[j][j + 1] = 0.0;
            g[j + 1] = -sn[j] * g[j];
            g[j] *= cs[j];
            if g[j + 1].abs() <= rel_tol * bnorm || hnext == 0.0 {
                break;
            }
            if v.len() == j + 1 {
                v.push(vec![0.0; n]);
            }
            scale_into(&w, 1.0 / hnext, &mut v[j + 1]);
        }
        if k == 0 {
            continue;
        }
        // y = H^{-1} g (upper triangular), u = V y, x += M^{-1} u.
        let mut y = vec![0.0; k];
        for i in (0..k).rev() {
            let s: f64 = (i + 1..k).map(|c| h[c][i] * y[c]).sum();
            y[i] = (g[i] - s) / h[i][i];
        }
        w.iter_mut().for_each(|e| *e = 0.0);
        for (yi, vi) in y.iter().zip(&v) {
            axpy(*yi, vi, &mut w);
        }
        m.apply(&w, &mut z);
        axpy(1.0, &z, x);
    }
}

/// out = s * x.
fn scale_into(x: &[f64], s: f64, out: &mut [f64]) {
    out.par_iter_mut()
        .with_min_len(VEC_CHUNK)
        .zip(x.par_iter())
        .for_each(|(o, xi)| *o = s * xi);
}
