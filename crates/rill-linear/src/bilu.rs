//! Block smoothers on b x b block matrices: block ILU(0) and block Jacobi,
//! the second stage of the CPR preconditioner ([`crate::cpr`]).
//!
//! Written here: no maintained Rust crate offers an incomplete
//! factorization of a block sparse (BSR) matrix (`faer` 0.24 and `sprs`
//! have complete factorizations only), and the kernels are short.
//!
//! Block ILU(0) keeps the block pattern of A (no fill), factors A ~ L U
//! with L unit block lower triangular, and stores the inverse of each pivot
//! block of U in its diagonal slot so that the triangular solves only
//! multiply. The factorization and the solves are sequential in the natural
//! order: each block row depends on the rows before it, and level
//! scheduling pays only with more cores than this project's targets share
//! (a 7-point stencil of 10^5 cells has wavefronts of a few hundred rows,
//! each a task of microseconds).

use rayon::prelude::*;

use super::csr::CsrMatrix;
use super::krylov::VEC_CHUNK;
use super::LinearError;

/// Inverts the dense b x b row-major block `m` into `out` by Gauss-Jordan
/// elimination with partial pivoting. Returns false when a pivot is zero or
/// not finite (the block is singular). `work` holds 2 b^2 scratch values.
/// By hand: the blocks are 2 x 2 to a few unknowns, called once per cell,
/// where a general dense library's call overhead dominates.
pub(crate) fn invert_block(m: &[f64], b: usize, out: &mut [f64], work: &mut Vec<f64>) -> bool {
    let w = 2 * b;
    work.clear();
    work.resize(b * w, 0.0);
    for r in 0..b {
        work[r * w..r * w + b].copy_from_slice(&m[r * b..r * b + b]);
        work[r * w + b + r] = 1.0;
    }
    // Scale of the block, to call a pivot negligible relative to it.
    let scale = m.iter().fold(0.0f64, |s, v| s.max(v.abs()));
    for c in 0..b {
        let p = (c..b)
            .max_by(|&i, &j| work[i * w + c].abs().total_cmp(&work[j * w + c].abs()))
            .unwrap_or(c);
        let piv = work[p * w + c];
        if !(piv.abs() > scale * 1e-300) || !piv.is_finite() {
            return false;
        }
        if p != c {
            for k in 0..w {
                work.swap(c * w + k, p * w + k);
            }
        }
        let inv = 1.0 / piv;
        for k in 0..w {
            work[c * w + k] *= inv;
        }
        for r in 0..b {
            let f = work[r * w + c];
            if r != c && f != 0.0 {
                for k in 0..w {
                    work[r * w + k] -= f * work[c * w + k];
                }
            }
        }
    }
    for r in 0..b {
        out[r * b..r * b + b].copy_from_slice(&work[r * w + b..r * w + w]);
    }
    out.iter().all(|v| v.is_finite())
}

/// out = p q for b x b row-major blocks.
#[inline]
fn mul_block(p: &[f64], q: &[f64], b: usize, out: &mut [f64]) {
    for r in 0..b {
        for c in 0..b {
            out[r * b + c] = (0..b).map(|k| p[r * b + k] * q[k * b + c]).sum();
        }
    }
}

/// y -= m x for a b x b block and b-vectors.
#[inline]
fn sub_block_vec(m: &[f64], x: &[f64], y: &mut [f64]) {
    let b = y.len();
    for (r, yr) in y.iter_mut().enumerate() {
        *yr -= m[r * b..r * b + b]
            .iter()
            .zip(x)
            .map(|(p, q)| p * q)
            .sum::<f64>();
    }
}

/// y = m x for a b x b block and b-vectors.
#[inline]
fn block_vec(m: &[f64], x: &[f64], y: &mut [f64]) {
    let b = y.len();
    for (r, yr) in y.iter_mut().enumerate() {
        *yr = m[r * b..r * b + b]
            .iter()
            .zip(x)
            .map(|(p, q)| p * q)
            .sum::<f64>();
    }
}

/// Position of the diagonal block of each block row, or a `Singular` error
/// naming the first row without one.
fn diagonal_positions(a: &CsrMatrix) -> Result<Vec<usize>, LinearError> {
    (0..a.n)
        .map(|i| {
            let s = a.row_ptr[i];
            a.col_idx[s..a.row_ptr[i + 1]]
                .binary_search(&i)
                .map(|k| s + k)
                .map_err(|_| LinearError::Singular {
                    detail: format!("block row {i} stores no diagonal block"),
                })
        })
        .collect()
}

fn singular_pivot(what: &str, i: usize) -> LinearError {
    LinearError::Singular {
        detail: format!("{what}: the pivot block of block row {i} is singular"),
    }
}

/// Block ILU(0) factors of a square block matrix (see the module doc).
#[derive(Debug, Clone)]
pub(crate) struct BlockIlu0 {
    b: usize,
    row_ptr: Vec<usize>,
    col_idx: Vec<usize>,
    diag: Vec<usize>,
    /// L below the diagonal, U above, U's pivot blocks inverted on it.
    lu: Vec<f64>,
}

impl BlockIlu0 {
    pub(crate) fn factor(a: &CsrMatrix) -> Result<Self, LinearError> {
        let (n, b) = (a.n, a.block);
        let bb = b * b;
        let diag = diagonal_positions(a)?;
        let (rp, ci) = (&a.row_ptr, &a.col_idx);
        let mut lu = a.values.clone();
        // Position of each column in the current row (usize::MAX: absent).
        let mut pos = vec![usize::MAX; n];
        let (mut l, mut u, mut t, mut work) =
            (vec![0.0; bb], vec![0.0; bb], vec![0.0; bb], Vec::new());
        for i in 0..n {
            for k in rp[i]..rp[i + 1] {
                pos[ci[k]] = k;
            }
            for k in rp[i]..diag[i] {
                let kk = ci[k];
                // L_ik = A_ik U_kk^{-1}
                u.copy_from_slice(&lu[diag[kk] * bb..diag[kk] * bb + bb]);
                mul_block(&lu[k * bb..k * bb + bb], &u, b, &mut l);
                lu[k * bb..k * bb + bb].copy_from_slice(&l);
                for m in diag[kk] + 1..rp[kk + 1] {
                    let p = pos[ci[m]];
                    if p == usize::MAX {
                        continue;
                    }
                    mul_block(&l, &lu[m * bb..m * bb + bb], b, &mut t);
                    lu[p * bb..p * bb + bb]
                        .iter_mut()
                        .zip(&t)
                        .for_each(|(x, y)| *x -= y);
                }
            }
            let d = diag[i] * bb;
            u.copy_from_slice(&lu[d..d + bb]);
            if !invert_block(&u, b, &mut lu[d..d + bb], &mut work) {
                return Err(singular_pivot("block ILU(0)", i));
            }
            for k in rp[i]..rp[i + 1] {
                pos[ci[k]] = usize::MAX;
            }
        }
        Ok(BlockIlu0 {
            b,
            row_ptr: rp.clone(),
            col_idx: ci.clone(),
            diag,
            lu,
        })
    }

    /// z = U^{-1} L^{-1} r.
    pub(crate) fn apply(&self, r: &[f64], z: &mut [f64]) {
        let (b, bb) = (self.b, self.b * self.b);
        let (rp, ci, lu) = (&self.row_ptr, &self.col_idx, &self.lu);
        z.copy_from_slice(r);
        let n = self.diag.len();
        for (i, &di) in self.diag.iter().enumerate() {
            let (head, tail) = z.split_at_mut(i * b);
            let zi = &mut tail[..b];
            for k in rp[i]..di {
                let j = ci[k] * b;
                sub_block_vec(&lu[k * bb..k * bb + bb], &head[j..j + b], zi);
            }
        }
        let mut t = vec![0.0; b];
        for i in (0..n).rev() {
            let (head, tail) = z.split_at_mut((i + 1) * b);
            let zi = &mut head[i * b..];
            for k in self.diag[i] + 1..rp[i + 1] {
                let j = ci[k] * b - (i + 1) * b;
                sub_block_vec(&lu[k * bb..k * bb + bb], &tail[j..j + b], zi);
            }
            t.copy_from_slice(zi);
            let d = self.diag[i] * bb;
            block_vec(&lu[d..d + bb], &t, zi);
        }
    }
}

/// Inverses of the diagonal blocks (block Jacobi).
#[derive(Debug, Clone)]
pub(crate) struct BlockJacobi {
    b: usize,
    inv: Vec<f64>,
}

impl BlockJacobi {
    pub(crate) fn new(a: &CsrMatrix) -> Result<Self, LinearError> {
        let (b, bb) = (a.block, a.block * a.block);
        let diag = diagonal_positions(a)?;
        let mut inv = vec![0.0; a.n * bb];
        let bad = inv
            .par_chunks_mut(bb)
            .enumerate()
            .with_min_len(VEC_CHUNK / bb)
            .map_init(Vec::new, |work, (i, out)| {
                let d = diag[i] * bb;
                (!invert_block(&a.values[d..d + bb], b, out, work)).then_some(i)
            })
            .flatten()
            .min();
        if let Some(i) = bad {
            return Err(singular_pivot("block Jacobi", i));
        }
        Ok(BlockJacobi { b, inv })
    }

    /// z = D^{-1} r, block rows in parallel.
    pub(crate) fn apply(&self, r: &[f64], z: &mut [f64]) {
        let (b, bb) = (self.b, self.b * self.b);
        z.par_chunks_mut(b)
            .zip(r.par_chunks(b))
            .enumerate()
            .with_min_len(VEC_CHUNK / b)
            .for_each(|(i, (zi, ri))| block_vec(&self.inv[i * bb..i * bb + bb], ri, zi));
    }
}
