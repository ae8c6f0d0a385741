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
        let mut f = BlockIlu0 {
            b: a.block,
            row_ptr: a.row_ptr.clone(),
            col_idx: a.col_idx.clone(),
            diag: diagonal_positions(a)?,
            lu: a.values.clone(),
        };
        f.eliminate()?;
        Ok(f)
    }

    /// Factors new values of the matrix factored before (same block size
    /// and pattern, which the caller has checked) in the storage already
    /// held: no allocation, so no fresh pages to fault in for each Newton
    /// iteration of a large system.
    pub(crate) fn refactor(&mut self, a: &CsrMatrix) -> Result<(), LinearError> {
        debug_assert!(a.block == self.b && a.row_ptr == self.row_ptr && a.col_idx == self.col_idx);
        self.lu.copy_from_slice(&a.values);
        self.eliminate()
    }

    fn eliminate(&mut self) -> Result<(), LinearError> {
        match self.b {
            2 => self.eliminate_with::<2>(),
            3 => self.eliminate_with::<3>(),
            _ => self.eliminate_with::<0>(),
        }
    }

    /// The elimination in place of `lu` (holding A on entry), for blocks of
    /// B (0: of the factor's own size). With B fixed the block size is a
    /// constant and the block products unroll.
    fn eliminate_with<const B: usize>(&mut self) -> Result<(), LinearError> {
        let b = if B == 0 { self.b } else { B };
        let bb = b * b;
        let n = self.diag.len();
        let (rp, ci, diag, lu) = (&self.row_ptr, &self.col_idx, &self.diag, &mut self.lu);
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
        Ok(())
    }

    /// z = U^{-1} L^{-1} r.
    pub(crate) fn apply(&self, r: &[f64], z: &mut [f64]) {
        match self.b {
            2 => self.apply_fixed::<2>(r, z),
            3 => self.apply_fixed::<3>(r, z),
            _ => self.apply_general(r, z),
        }
    }

    /// [`BlockIlu0::apply`] for blocks of the fixed size B: the block
    /// products unroll and lose their bounds checks. The solves are
    /// sequential, so this is the kernel the second stage waits on (2 x 2
    /// blocks of 1.12 million cells: 59 ms, against 88 ms in the general
    /// loop).
    fn apply_fixed<const B: usize>(&self, r: &[f64], z: &mut [f64]) {
        let (rp, ci, lu) = (&self.row_ptr, &self.col_idx, &self.lu);
        // s -= sum over the stored blocks k in `range` of block_k z_(col k).
        let subtract = |s: &mut [f64; B], range: std::ops::Range<usize>, z: &[f64]| {
            let blocks = lu[range.start * B * B..range.end * B * B].chunks_exact(B * B);
            for (&j, m) in ci[range].iter().zip(blocks) {
                let xj: &[f64; B] = z[j * B..j * B + B].try_into().expect("B values");
                for (row, sr) in s.iter_mut().enumerate() {
                    for (c, xc) in xj.iter().enumerate() {
                        *sr -= m[row * B + c] * xc;
                    }
                }
            }
        };
        z.copy_from_slice(r);
        for (i, &di) in self.diag.iter().enumerate() {
            let mut s: [f64; B] = z[i * B..i * B + B].try_into().expect("B values");
            subtract(&mut s, rp[i]..di, z);
            z[i * B..i * B + B].copy_from_slice(&s);
        }
        for (i, &di) in self.diag.iter().enumerate().rev() {
            let mut s: [f64; B] = z[i * B..i * B + B].try_into().expect("B values");
            subtract(&mut s, di + 1..rp[i + 1], z);
            let d = &lu[di * B * B..(di + 1) * B * B];
            for (row, zr) in z[i * B..i * B + B].iter_mut().enumerate() {
                *zr = (0..B).map(|c| d[row * B + c] * s[c]).sum();
            }
        }
    }

    fn apply_general(&self, r: &[f64], z: &mut [f64]) {
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
        let mut f = BlockJacobi {
            b: a.block,
            inv: vec![0.0; a.n * a.block * a.block],
        };
        f.refactor(a)?;
        Ok(f)
    }

    /// Inverts the diagonal blocks of new values of a matrix of the same
    /// size, in the storage already held.
    pub(crate) fn refactor(&mut self, a: &CsrMatrix) -> Result<(), LinearError> {
        let (b, bb) = (a.block, a.block * a.block);
        debug_assert!(b == self.b && self.inv.len() == a.n * bb);
        let diag = diagonal_positions(a)?;
        let bad = self
            .inv
            .par_chunks_mut(bb)
            .enumerate()
            .with_min_len(VEC_CHUNK / bb)
            .map_init(Vec::new, |work, (i, out)| {
                let d = diag[i] * bb;
                (!invert_block(&a.values[d..d + bb], b, out, work)).then_some(i)
            })
            .flatten()
            .min();
        match bad {
            Some(i) => Err(singular_pivot("block Jacobi", i)),
            None => Ok(()),
        }
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
