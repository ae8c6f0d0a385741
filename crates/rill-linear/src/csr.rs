//! Compressed sparse row matrices and the parallel kernels on them.

use rayon::prelude::*;

/// Rows per rayon task in the row-parallel kernels. Small enough for load
/// balance on a few cores, large enough that task overhead is negligible.
pub(crate) const ROW_CHUNK: usize = 4096;

/// Square sparse matrix in compressed sparse row form.
///
/// Invariants (kept by every constructor of this module): `row_ptr.len() == n + 1`,
/// `row_ptr[0] == 0`, `row_ptr` non-decreasing, `col_idx.len() == values.len() ==
/// row_ptr[n]`, and within each row the column indices are strictly increasing
/// (sorted, no duplicates) and `< n`. Explicit zeros may be stored.
#[derive(Debug, Clone, PartialEq)]
pub struct CsrMatrix {
    pub n: usize,
    pub row_ptr: Vec<usize>,
    pub col_idx: Vec<usize>,
    pub values: Vec<f64>,
}

impl CsrMatrix {
    /// The n x n zero matrix (no stored entries).
    pub fn zeros(n: usize) -> Self {
        CsrMatrix {
            n,
            row_ptr: vec![0; n + 1],
            col_idx: Vec::new(),
            values: Vec::new(),
        }
    }

    /// The n x n identity.
    pub fn identity(n: usize) -> Self {
        CsrMatrix {
            n,
            row_ptr: (0..=n).collect(),
            col_idx: (0..n).collect(),
            values: vec![1.0; n],
        }
    }

    /// Builds the matrix from `(row, col, value)` triplets in any order,
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
            row_ptr,
            col_idx,
            values,
        }
    }

    /// Builds from raw CSR arrays, sorting each row and merging duplicate
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

    /// Number of stored entries.
    pub fn nnz(&self) -> usize {
        self.values.len()
    }

    /// Column indices and values of row `i`.
    #[inline]
    pub fn row(&self, i: usize) -> (&[usize], &[f64]) {
        let (s, e) = (self.row_ptr[i], self.row_ptr[i + 1]);
        (&self.col_idx[s..e], &self.values[s..e])
    }

    /// Entry (i, j), zero when not stored.
    pub fn get(&self, i: usize, j: usize) -> f64 {
        let (c, v) = self.row(i);
        match c.binary_search(&j) {
            Ok(k) => v[k],
            Err(_) => 0.0,
        }
    }

    /// y = A x, returning a new vector.
    pub fn mul_vec(&self, x: &[f64]) -> Vec<f64> {
        let mut y = vec![0.0; self.n];
        self.mul_vec_into(x, &mut y);
        y
    }

    /// y = A x into an existing vector, rayon-parallel over rows.
    ///
    /// # Panics
    /// If `x` or `y` does not have length `n`.
    pub fn mul_vec_into(&self, x: &[f64], y: &mut [f64]) {
        assert_eq!(
            x.len(),
            self.n,
            "mul_vec: x has length {} for n = {}",
            x.len(),
            self.n
        );
        assert_eq!(
            y.len(),
            self.n,
            "mul_vec: y has length {} for n = {}",
            y.len(),
            self.n
        );
        spmv_rows(&self.row_ptr, &self.col_idx, &self.values, x, y, false);
    }

    /// r = b - A x, row-parallel.
    pub fn residual_into(&self, b: &[f64], x: &[f64], r: &mut [f64]) {
        assert_eq!(b.len(), self.n);
        assert_eq!(x.len(), self.n);
        assert_eq!(r.len(), self.n);
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

    /// The diagonal (zero where no diagonal entry is stored).
    pub fn diagonal(&self) -> Vec<f64> {
        (0..self.n)
            .into_par_iter()
            .with_min_len(ROW_CHUNK)
            .map(|i| self.get(i, i))
            .collect()
    }

    /// True when |a_ij - a_ji| <= tol * max(|a_ij|, |a_ji|) for every pair,
    /// with an absent entry counting as zero. `tol = 0` asks for exact symmetry.
    pub fn is_symmetric(&self, tol: f64) -> bool {
        (0..self.n)
            .into_par_iter()
            .with_min_len(ROW_CHUNK)
            .all(|i| {
                let (c, v) = self.row(i);
                c.iter().zip(v).all(|(&j, &aij)| {
                    if j == i {
                        return true;
                    }
                    let aji = self.get(j, i);
                    (aij - aji).abs() <= tol * aij.abs().max(aji.abs())
                })
            })
    }

    /// The transpose, in O(nnz) by counting sort (rows come out sorted).
    pub fn transpose(&self) -> CsrMatrix {
        let n = self.n;
        let nnz = self.nnz();
        let mut row_ptr = vec![0usize; n + 1];
        for &j in &self.col_idx {
            row_ptr[j + 1] += 1;
        }
        for i in 0..n {
            row_ptr[i + 1] += row_ptr[i];
        }
        let mut next = row_ptr.clone();
        let mut col_idx = vec![0usize; nnz];
        let mut values = vec![0.0; nnz];
        for i in 0..n {
            for k in self.row_ptr[i]..self.row_ptr[i + 1] {
                let j = self.col_idx[k];
                let d = next[j];
                col_idx[d] = i;
                values[d] = self.values[k];
                next[j] = d + 1;
            }
        }
        CsrMatrix {
            n,
            row_ptr,
            col_idx,
            values,
        }
    }

    /// Same sparsity pattern as `other` (values may differ).
    pub fn same_pattern(&self, other: &CsrMatrix) -> bool {
        self.n == other.n && self.row_ptr == other.row_ptr && self.col_idx == other.col_idx
    }

    /// Index of the first non-finite stored value, if any.
    pub fn first_non_finite(&self) -> Option<(usize, usize)> {
        let k = self.values.par_iter().position_first(|v| !v.is_finite())?;
        let i = self.row_ptr.partition_point(|&p| p <= k) - 1;
        Some((i, self.col_idx[k]))
    }

    /// Dense copy, row-major (tests and tiny systems only).
    pub fn to_dense(&self) -> Vec<Vec<f64>> {
        let mut d = vec![vec![0.0; self.n]; self.n];
        for (i, row) in d.iter_mut().enumerate() {
            let (c, v) = self.row(i);
            for (&j, &x) in c.iter().zip(v) {
                row[j] = x;
            }
        }
        d
    }
}

/// Splits `data` into consecutive mutable row slices delimited by `ptr`.
/// `y = A x` (or `y += A x` with `add`) for CSR arrays, rows in parallel
/// chunks: the one sparse matrix-vector kernel of the solvers.
pub(crate) fn spmv_rows(
    rp: &[usize],
    ci: &[usize],
    va: &[f64],
    x: &[f64],
    y: &mut [f64],
    add: bool,
) {
    let kernel = |i0: usize, ys: &mut [f64]| {
        for (di, yi) in ys.iter_mut().enumerate() {
            let i = i0 + di;
            let mut s = 0.0;
            for k in rp[i]..rp[i + 1] {
                s += va[k] * x[ci[k]];
            }
            if add {
                *yi += s;
            } else {
                *yi = s;
            }
        }
    };
    if y.len() <= ROW_CHUNK {
        kernel(0, y);
    } else {
        y.par_chunks_mut(ROW_CHUNK)
            .enumerate()
            .for_each(|(c, ys)| kernel(c * ROW_CHUNK, ys));
    }
}

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
