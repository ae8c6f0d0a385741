//! Compressed sparse row matrices and the parallel kernels on them.

use rayon::prelude::*;

/// Rows per rayon task in the row-parallel kernels. Small enough for load
/// balance on a few cores, large enough that task overhead is negligible.
pub(crate) const ROW_CHUNK: usize = 4096;

/// The one sparse matrix type: compressed sparse rows, optionally of dense
/// b x b blocks (block sparse rows, BSR).
///
/// * `block == 1` (scalar): the plain CSR of the pressure equation, the
///   multigrid operators and the prolongators (which are rectangular:
///   `ncols != n`).
/// * `block == b > 1`: every stored entry (block row `I`, block column `J`)
///   is a dense b x b block, row-major in `values[k * b * b..(k + 1) * b * b]`,
///   coupling the unknowns `I * b..I * b + b` with `J * b..J * b + b` (two
///   unknowns a cell for oil-water: b = 2). The block form multiplies
///   ([`CsrMatrix::mul_vec_into`]), is written to MatrixMarket as its scalar
///   expansion, and converts both ways ([`CsrMatrix::to_scalar`],
///   [`CsrMatrix::to_block`]); [`crate::Solver`] solves it through its scalar
///   expansion.
///
/// Invariants (kept by every constructor): `row_ptr.len() == n + 1`,
/// `row_ptr[0] == 0`, `row_ptr` non-decreasing, `col_idx.len() == row_ptr[n]`,
/// `values.len() == row_ptr[n] * block * block`, and within each row the
/// column indices are strictly increasing (sorted, no duplicates) and
/// `< ncols`. Explicit zeros may be stored.
#[derive(Debug, Clone, PartialEq)]
pub struct CsrMatrix {
    /// Number of (block) rows; the order of a square matrix.
    pub n: usize,
    /// Number of (block) columns; equal to `n` for a square matrix.
    pub ncols: usize,
    /// Block size b: 1 for a scalar matrix.
    pub block: usize,
    /// Start of each (block) row in `col_idx`; `n + 1` entries.
    pub row_ptr: Vec<usize>,
    /// (Block) column of each stored entry, sorted within a row.
    pub col_idx: Vec<usize>,
    /// Stored values: one per entry (scalar) or b * b per block, row-major.
    pub values: Vec<f64>,
}

impl CsrMatrix {
    /// The n x n zero matrix (no stored entries).
    pub fn zeros(n: usize) -> Self {
        CsrMatrix {
            n,
            ncols: n,
            block: 1,
            row_ptr: vec![0; n + 1],
            col_idx: Vec::new(),
            values: Vec::new(),
        }
    }

    /// The n x n identity.
    pub fn identity(n: usize) -> Self {
        CsrMatrix {
            n,
            ncols: n,
            block: 1,
            row_ptr: (0..=n).collect(),
            col_idx: (0..n).collect(),
            values: vec![1.0; n],
        }
    }

    /// Builds the scalar n x n matrix from `(row, col, value)` triplets in any order,
    /// summing duplicates (the natural result of assembling face by face).
    ///
    /// Runs in O(nnz) plus a per-row sort of short rows, row-parallel: 10^7
    /// triplets take a fraction of a second.
    ///
    /// # Panics
    /// If an index is `>= n` (a programming error of the assembler, not a
    /// property of the physics).
    pub fn from_triplets(n: usize, triplets: &[(usize, usize, f64)]) -> Self {
        // Counting sort by row.
        let mut counts = vec![0usize; n + 1];
        for &(i, j, _) in triplets {
            assert!(
                i < n && j < n,
                "triplet ({i}, {j}) out of range for a {n} x {n} matrix"
            );
            counts[i + 1] += 1;
        }
        for i in 0..n {
            counts[i + 1] += counts[i];
        }
        let start = counts; // start[i]..start[i+1] is row i in `tmp`
        let mut next = start.clone();
        let mut tmp: Vec<(usize, f64)> = vec![(0, 0.0); triplets.len()];
        for &(i, j, v) in triplets {
            let k = next[i];
            tmp[k] = (j, v);
            next[i] = k + 1;
        }
        drop(next);
        // Sort and merge duplicates within each row, in parallel over row chunks.
        let mut new_len = vec![0usize; n];
        {
            let mut slices = split_rows_mut(&mut tmp, &start);
            slices
                .par_chunks_mut(ROW_CHUNK)
                .zip(new_len.par_chunks_mut(ROW_CHUNK))
                .for_each(|(rows, lens)| {
                    for (row, len) in rows.iter_mut().zip(lens.iter_mut()) {
                        *len = sort_merge_row(row);
                    }
                });
        }
        let mut row_ptr = vec![0usize; n + 1];
        for i in 0..n {
            row_ptr[i + 1] = row_ptr[i] + new_len[i];
        }
        let nnz = row_ptr[n];
        let mut col_idx = vec![0usize; nnz];
        let mut values = vec![0.0f64; nnz];
        {
            let mut cols = split_rows_mut(&mut col_idx, &row_ptr);
            let mut vals = split_rows_mut(&mut values, &row_ptr);
            cols.par_iter_mut()
                .zip(vals.par_iter_mut())
                .enumerate()
                .with_min_len(ROW_CHUNK)
                .for_each(|(i, (c, v))| {
                    let src = &tmp[start[i]..start[i] + c.len()];
                    for (k, &(j, x)) in src.iter().enumerate() {
                        c[k] = j;
                        v[k] = x;
                    }
                });
        }
        CsrMatrix {
            n,
            ncols: n,
            block: 1,
            row_ptr,
            col_idx,
            values,
        }
    }

    /// Builds a scalar n x n matrix from raw CSR arrays, sorting each row and merging duplicate
    /// columns. Returns an error string if the arrays are inconsistent.
    pub fn from_raw(
        n: usize,
        row_ptr: Vec<usize>,
        col_idx: Vec<usize>,
        values: Vec<f64>,
    ) -> Result<Self, String> {
        if row_ptr.len() != n + 1 || row_ptr[0] != 0 {
            return Err(format!(
                "row_ptr must have n + 1 = {} entries starting at 0",
                n + 1
            ));
        }
        if row_ptr.windows(2).any(|w| w[0] > w[1]) {
            return Err("row_ptr must be non-decreasing".into());
        }
        let nnz = row_ptr[n];
        if col_idx.len() != nnz || values.len() != nnz {
            return Err(format!(
                "col_idx ({}) and values ({}) must have row_ptr[n] = {nnz} entries",
                col_idx.len(),
                values.len()
            ));
        }
        if let Some(&j) = col_idx.iter().find(|&&j| j >= n) {
            return Err(format!("column index {j} out of range for n = {n}"));
        }
        let sorted = (0..n).into_par_iter().with_min_len(ROW_CHUNK).all(|i| {
            col_idx[row_ptr[i]..row_ptr[i + 1]]
                .windows(2)
                .all(|w| w[0] < w[1])
        });
        if sorted {
            return Ok(CsrMatrix {
                n,
                ncols: n,
                block: 1,
                row_ptr,
                col_idx,
                values,
            });
        }
        let mut trip = Vec::with_capacity(nnz);
        for i in 0..n {
            for k in row_ptr[i]..row_ptr[i + 1] {
                trip.push((i, col_idx[k], values[k]));
            }
        }
        Ok(Self::from_triplets(n, &trip))
    }

    /// Number of scalar rows, `n * block` (the length of `A x`).
    pub fn rows(&self) -> usize {
        self.n * self.block
    }

    /// Number of scalar columns, `ncols * block` (the length of `x`).
    pub fn cols(&self) -> usize {
        self.ncols * self.block
    }

    /// True when the matrix is square (`n == ncols`).
    pub fn is_square(&self) -> bool {
        self.n == self.ncols
    }

    /// Number of stored scalar values (b * b per stored block).
    pub fn nnz(&self) -> usize {
        self.values.len()
    }

    /// Number of stored entries (blocks when `block > 1`).
    pub fn nnz_blocks(&self) -> usize {
        self.col_idx.len()
    }

    /// Columns and values of (block) row `i`: `values` holds b * b numbers
    /// per column, row-major.
    #[inline]
    pub fn row(&self, i: usize) -> (&[usize], &[f64]) {
        let (s, e) = (self.row_ptr[i], self.row_ptr[i + 1]);
        let bb = self.block * self.block;
        (&self.col_idx[s..e], &self.values[s * bb..e * bb])
    }

    /// Scalar entry (i, j) (scalar indices, also for a block matrix), zero
    /// when not stored.
    pub fn get(&self, i: usize, j: usize) -> f64 {
        if self.block == 1 {
            // The scalar case, free of the index divisions below: the
            // symmetry test calls this once per stored entry.
            let (c, v) = self.row(i);
            return match c.binary_search(&j) {
                Ok(k) => v[k],
                Err(_) => 0.0,
            };
        }
        let b = self.block;
        let (c, v) = self.row(i / b);
        match c.binary_search(&(j / b)) {
            Ok(k) => v[k * b * b + (i % b) * b + j % b],
            Err(_) => 0.0,
        }
    }

    /// y = A x, returning a new vector.
    pub fn mul_vec(&self, x: &[f64]) -> Vec<f64> {
        let mut y = vec![0.0; self.rows()];
        self.mul_vec_into(x, &mut y);
        y
    }

    /// y = A x into an existing vector, rayon-parallel over rows.
    ///
    /// # Panics
    /// If `x` does not have [`CsrMatrix::cols`] entries or `y`
    /// [`CsrMatrix::rows`].
    pub fn mul_vec_into(&self, x: &[f64], y: &mut [f64]) {
        self.check_lengths(x, y);
        spmv_rows(self, x, y, Store::Set);
    }

    /// y += A x, rayon-parallel over rows.
    ///
    /// # Panics
    /// As [`CsrMatrix::mul_vec_into`].
    pub fn mul_vec_add(&self, x: &[f64], y: &mut [f64]) {
        self.check_lengths(x, y);
        spmv_rows(self, x, y, Store::Add);
    }

    fn check_lengths(&self, x: &[f64], y: &[f64]) {
        assert_eq!(
            x.len(),
            self.cols(),
            "mul_vec: x has length {} for {} columns",
            x.len(),
            self.cols()
        );
        assert_eq!(
            y.len(),
            self.rows(),
            "mul_vec: y has length {} for {} rows",
            y.len(),
            self.rows()
        );
    }

    /// r = b - A x, row-parallel.
    ///
    /// # Panics
    /// If the lengths do not fit the matrix.
    pub fn residual_into(&self, b: &[f64], x: &[f64], r: &mut [f64]) {
        assert_eq!(b.len(), self.rows());
        self.check_lengths(x, r);
        if self.block != 1 {
            spmv_rows(self, x, r, Store::Residual(b));
            return;
        }
        let rp = &self.row_ptr;
        let ci = &self.col_idx;
        let va = &self.values;
        let kernel = |i0: usize, rs: &mut [f64]| {
            for (di, ri) in rs.iter_mut().enumerate() {
                let i = i0 + di;
                let mut s = b[i];
                for k in rp[i]..rp[i + 1] {
                    s -= va[k] * x[ci[k]];
                }
                *ri = s;
            }
        };
        if self.n <= ROW_CHUNK {
            kernel(0, r);
        } else {
            r.par_chunks_mut(ROW_CHUNK)
                .enumerate()
                .for_each(|(c, rs)| kernel(c * ROW_CHUNK, rs));
        }
    }

    /// The scalar diagonal (zero where no diagonal entry is stored).
    pub fn diagonal(&self) -> Vec<f64> {
        (0..self.rows().min(self.cols()))
            .into_par_iter()
            .with_min_len(ROW_CHUNK)
            .map(|i| self.get(i, i))
            .collect()
    }

    /// True when |a_ij - a_ji| <= tol * max(|a_ij|, |a_ji|) for every scalar
    /// pair, with an absent entry counting as zero. `tol = 0` asks for exact
    /// symmetry. A rectangular matrix is not symmetric.
    pub fn is_symmetric(&self, tol: f64) -> bool {
        if !self.is_square() {
            return false;
        }
        let b = self.block;
        let close = |aij: f64, aji: f64| (aij - aji).abs() <= tol * aij.abs().max(aji.abs());
        if b == 1 {
            return (0..self.n)
                .into_par_iter()
                .with_min_len(ROW_CHUNK)
                .all(|i| {
                    let (c, v) = self.row(i);
                    c.iter()
                        .zip(v)
                        .all(|(&j, &aij)| j == i || close(aij, self.get(j, i)))
                });
        }
        (0..self.n)
            .into_par_iter()
            .with_min_len(ROW_CHUNK)
            .all(|bi| {
                let (c, v) = self.row(bi);
                c.iter().enumerate().all(|(k, &bj)| {
                    (0..b * b).all(|l| {
                        let (i, j) = (bi * b + l / b, bj * b + l % b);
                        if i == j {
                            return true;
                        }
                        close(v[k * b * b + l], self.get(j, i))
                    })
                })
            })
    }

    /// The transpose, in O(nnz) by counting sort (rows come out sorted;
    /// blocks are transposed too).
    pub fn transpose(&self) -> CsrMatrix {
        let b = self.block;
        let bb = b * b;
        let nnz = self.nnz_blocks();
        let mut row_ptr = vec![0usize; self.ncols + 1];
        for &j in &self.col_idx {
            row_ptr[j + 1] += 1;
        }
        for j in 0..self.ncols {
            row_ptr[j + 1] += row_ptr[j];
        }
        let mut next = row_ptr[..self.ncols].to_vec();
        let mut col_idx = vec![0usize; nnz];
        let mut values = vec![0.0; nnz * bb];
        for i in 0..self.n {
            for k in self.row_ptr[i]..self.row_ptr[i + 1] {
                let j = self.col_idx[k];
                let d = next[j];
                col_idx[d] = i;
                for l in 0..bb {
                    values[d * bb + (l % b) * b + l / b] = self.values[k * bb + l];
                }
                next[j] = d + 1;
            }
        }
        CsrMatrix {
            n: self.ncols,
            ncols: self.n,
            block: b,
            row_ptr,
            col_idx,
            values,
        }
    }

    /// Same shape and sparsity pattern as `other` (values may differ).
    pub fn same_pattern(&self, other: &CsrMatrix) -> bool {
        self.n == other.n
            && self.ncols == other.ncols
            && self.block == other.block
            && self.row_ptr == other.row_ptr
            && self.col_idx == other.col_idx
    }

    /// Scalar position (row, column) of the first non-finite stored value,
    /// if any.
    pub fn first_non_finite(&self) -> Option<(usize, usize)> {
        let p = self.values.par_iter().position_first(|v| !v.is_finite())?;
        let (b, bb) = (self.block, self.block * self.block);
        let k = p / bb;
        let i = self.row_ptr.partition_point(|&q| q <= k) - 1;
        let l = p % bb;
        Some((i * b + l / b, self.col_idx[k] * b + l % b))
    }

    /// Dense scalar copy, row-major (tests and tiny systems only).
    pub fn to_dense(&self) -> Vec<Vec<f64>> {
        let b = self.block;
        let mut d = vec![vec![0.0; self.cols()]; self.rows()];
        for bi in 0..self.n {
            let (c, v) = self.row(bi);
            for (k, &bj) in c.iter().enumerate() {
                for l in 0..b * b {
                    d[bi * b + l / b][bj * b + l % b] = v[k * b * b + l];
                }
            }
        }
        d
    }
}

/// `y = A x`, `y += A x` or `y = b - A x` (as `into` says), rows in
/// parallel chunks: the one sparse matrix-vector kernel of the solvers. The
/// scalar case has its own loop (the hot path), blocks of 2 and 3 a
/// fixed-size one, other blocks a general b x b loop.
fn spmv_rows(a: &CsrMatrix, x: &[f64], y: &mut [f64], into: Store) {
    let (rp, ci, va, b) = (&a.row_ptr, &a.col_idx, &a.values, a.block);
    let scalar = |i0: usize, ys: &mut [f64]| {
        for (di, yi) in ys.iter_mut().enumerate() {
            let i = i0 + di;
            let mut s = 0.0;
            for k in rp[i]..rp[i + 1] {
                s += va[k] * x[ci[k]];
            }
            into.store(i, yi, s);
        }
    };
    let blocked = |i0: usize, ys: &mut [f64]| {
        let bb = b * b;
        let mut s = vec![0.0; b];
        for (di, yb) in ys.chunks_mut(b).enumerate() {
            let i = i0 + di;
            s.iter_mut().for_each(|v| *v = 0.0);
            for k in rp[i]..rp[i + 1] {
                let xj = &x[ci[k] * b..ci[k] * b + b];
                let blk = &va[k * bb..k * bb + bb];
                for (r, sr) in s.iter_mut().enumerate() {
                    *sr += blk[r * b..r * b + b]
                        .iter()
                        .zip(xj)
                        .map(|(p, q)| p * q)
                        .sum::<f64>();
                }
            }
            for (r, (yr, sr)) in yb.iter_mut().zip(&s).enumerate() {
                into.store(i * b + r, yr, *sr);
            }
        }
    };
    let kernel = |i0: usize, ys: &mut [f64]| match b {
        1 => scalar(i0, ys),
        2 => block_rows::<2>(rp, ci, va, x, i0, ys, into),
        3 => block_rows::<3>(rp, ci, va, x, i0, ys, into),
        _ => blocked(i0, ys),
    };
    if a.n <= ROW_CHUNK {
        kernel(0, y);
    } else {
        y.par_chunks_mut(ROW_CHUNK * b)
            .enumerate()
            .for_each(|(c, ys)| kernel(c * ROW_CHUNK, ys));
    }
}

/// What a product kernel does with row i's sum s: y_i = s, y_i += s or
/// y_i = b_i - s (the residual, in the same pass over the matrix).
#[derive(Clone, Copy)]
enum Store<'b> {
    Set,
    Add,
    Residual(&'b [f64]),
}

impl Store<'_> {
    #[inline(always)]
    fn store(self, i: usize, y: &mut f64, s: f64) {
        match self {
            Store::Set => *y = s,
            Store::Add => *y += s,
            Store::Residual(b) => *y = b[i] - s,
        }
    }
}

/// The block rows from `i0` of y (=, += or b -) A x for blocks of the fixed
/// size B: with the size known at compile time the block product unrolls
/// and its bounds checks go, which halves the time of a product with
/// 2 x 2 blocks (the oil-water systems) against the general loop.
#[inline]
fn block_rows<const B: usize>(
    rp: &[usize],
    ci: &[usize],
    va: &[f64],
    x: &[f64],
    i0: usize,
    ys: &mut [f64],
    into: Store,
) {
    for (di, yb) in ys.chunks_exact_mut(B).enumerate() {
        let i = i0 + di;
        let (s0, e0) = (rp[i], rp[i + 1]);
        let mut s = [0.0; B];
        for (&j, blk) in ci[s0..e0]
            .iter()
            .zip(va[s0 * B * B..e0 * B * B].chunks_exact(B * B))
        {
            let xj: &[f64; B] = x[j * B..j * B + B].try_into().expect("B values");
            for r in 0..B {
                for c in 0..B {
                    s[r] += blk[r * B + c] * xj[c];
                }
            }
        }
        for r in 0..B {
            into.store(i * B + r, &mut yb[r], s[r]);
        }
    }
}

/// Splits `data` into consecutive mutable row slices delimited by `ptr`.
pub(crate) fn split_rows_mut<'a, T>(mut data: &'a mut [T], ptr: &[usize]) -> Vec<&'a mut [T]> {
    let n = ptr.len().saturating_sub(1);
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let len = ptr[i + 1] - ptr[i];
        let (head, tail) = std::mem::take(&mut data).split_at_mut(len);
        out.push(head);
        data = tail;
    }
    out
}

/// Sorts one row's (col, value) pairs by column and sums duplicates in place;
/// returns the number of distinct columns (kept at the front).
fn sort_merge_row(row: &mut [(usize, f64)]) -> usize {
    if row.is_empty() {
        return 0;
    }
    if row.len() <= 32 {
        // insertion sort: rows of a reservoir matrix are short
        for a in 1..row.len() {
            let mut b = a;
            while b > 0 && row[b - 1].0 > row[b].0 {
                row.swap(b - 1, b);
                b -= 1;
            }
        }
    } else {
        row.sort_unstable_by_key(|e| e.0);
    }
    let mut w = 0;
    for r in 1..row.len() {
        if row[r].0 == row[w].0 {
            row[w].1 += row[r].1;
        } else {
            w += 1;
            row[w] = row[r];
        }
    }
    w + 1
}
