//! Rectangular CSR matrices and the parallel sparse kernels of the multigrid
//! set-up: row-blocked Gustavson products (one dense accumulator per block of
//! rows, never one allocation per row), transposes, and SpMV.

use rayon::prelude::*;

use super::csr::CsrMatrix;

/// Rectangular CSR (prolongators, restrictions, intermediate products).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct SpMat {
    pub nrows: usize,
    pub ncols: usize,
    pub row_ptr: Vec<usize>,
    pub col_idx: Vec<usize>,
    pub values: Vec<f64>,
}

impl SpMat {
    pub fn view(&self) -> SpView<'_> {
        SpView {
            nrows: self.nrows,
            ncols: self.ncols,
            row_ptr: &self.row_ptr,
            col_idx: &self.col_idx,
            values: &self.values,
        }
    }

    pub fn into_square(self) -> CsrMatrix {
        debug_assert_eq!(self.nrows, self.ncols);
        CsrMatrix {
            n: self.nrows,
            row_ptr: self.row_ptr,
            col_idx: self.col_idx,
            values: self.values,
        }
    }

    pub fn nnz(&self) -> usize {
        self.values.len()
    }

    /// Transpose by counting sort; rows of the result are sorted.
    pub fn transpose(&self) -> SpMat {
        let mut row_ptr = vec![0usize; self.ncols + 1];
        for &j in &self.col_idx {
            row_ptr[j + 1] += 1;
        }
        for j in 0..self.ncols {
            row_ptr[j + 1] += row_ptr[j];
        }
        let mut next = row_ptr[..self.ncols].to_vec();
        let nnz = self.nnz();
        let mut col_idx = vec![0usize; nnz];
        let mut values = vec![0.0; nnz];
        for i in 0..self.nrows {
            for k in self.row_ptr[i]..self.row_ptr[i + 1] {
                let j = self.col_idx[k];
                let d = next[j];
                col_idx[d] = i;
                values[d] = self.values[k];
                next[j] = d + 1;
            }
        }
        SpMat {
            nrows: self.ncols,
            ncols: self.nrows,
            row_ptr,
            col_idx,
            values,
        }
    }

    /// y = self * x
    pub fn mul_vec_into(&self, x: &[f64], y: &mut [f64]) {
        debug_assert_eq!(x.len(), self.ncols);
        debug_assert_eq!(y.len(), self.nrows);
        super::csr::spmv_rows(&self.row_ptr, &self.col_idx, &self.values, x, y, false);
    }

    /// y += self * x
    pub fn mul_vec_add(&self, x: &[f64], y: &mut [f64]) {
        debug_assert_eq!(x.len(), self.ncols);
        debug_assert_eq!(y.len(), self.nrows);
        super::csr::spmv_rows(&self.row_ptr, &self.col_idx, &self.values, x, y, true);
    }
}

/// Splits `0..n` into at most `4 * threads` contiguous blocks of at least
/// `min_rows` rows.
pub(crate) fn row_blocks(n: usize, min_rows: usize) -> Vec<(usize, usize)> {
    let want = (4 * rayon::current_num_threads()).max(1);
    let nb = (n / min_rows.max(1)).clamp(1, want);
    (0..nb)
        .map(|b| (b * n / nb, (b + 1) * n / nb))
        .filter(|(s, e)| e > s)
        .collect()
}

/// Builds a matrix of `nrows` x `ncols` row by row in parallel blocks. For
/// each block `fill` gets the row range, a dense accumulator (`acc`, zeroed
/// on entry and to be left zeroed), a marker array of `ncols` entries and
/// the output column/value vectors to append to; it pushes one row at a time
/// and calls `end_row`. Rows come out with sorted columns.
pub(crate) fn build_rows<F>(nrows: usize, ncols: usize, fill: F) -> SpMat
where
    F: Fn(usize, &mut RowBuilder) + Sync,
{
    let blocks = row_blocks(nrows, 2048);
    let parts: Vec<(Vec<usize>, Vec<usize>, Vec<f64>)> = blocks
        .par_iter()
        .map(|&(s, e)| {
            let mut rb = RowBuilder {
                acc: vec![0.0; ncols],
                pos: vec![usize::MAX; ncols],
                touched: Vec::new(),
                counts: Vec::with_capacity(e - s),
                cols: Vec::new(),
                vals: Vec::new(),
            };
            for i in s..e {
                fill(i, &mut rb);
                rb.end_row();
            }
            (rb.counts, rb.cols, rb.vals)
        })
        .collect();
    let mut row_ptr = Vec::with_capacity(nrows + 1);
    row_ptr.push(0usize);
    let total: usize = parts.iter().map(|p| p.1.len()).sum();
    let mut col_idx = Vec::with_capacity(total);
    let mut values = Vec::with_capacity(total);
    for (counts, cols, vals) in parts {
        for c in counts {
            let last = *row_ptr.last().unwrap();
            row_ptr.push(last + c);
        }
        col_idx.extend_from_slice(&cols);
        values.extend_from_slice(&vals);
    }
    SpMat {
        nrows,
        ncols,
        row_ptr,
        col_idx,
        values,
    }
}

/// Sparse accumulator of one row (see [`build_rows`]).
pub(crate) struct RowBuilder {
    acc: Vec<f64>,
    pos: Vec<usize>,
    touched: Vec<usize>,
    counts: Vec<usize>,
    cols: Vec<usize>,
    vals: Vec<f64>,
}

impl RowBuilder {
    #[inline]
    pub fn add(&mut self, j: usize, v: f64) {
        if self.pos[j] == usize::MAX {
            self.pos[j] = 0;
            self.touched.push(j);
        }
        self.acc[j] += v;
    }

    fn end_row(&mut self) {
        self.touched.sort_unstable();
        for &j in &self.touched {
            self.cols.push(j);
            self.vals.push(self.acc[j]);
            self.acc[j] = 0.0;
            self.pos[j] = usize::MAX;
        }
        self.counts.push(self.touched.len());
        self.touched.clear();
    }
}

/// Borrowed CSR (of an [`SpMat`] or a square [`CsrMatrix`]).
#[derive(Clone, Copy)]
pub(crate) struct SpView<'a> {
    pub nrows: usize,
    pub ncols: usize,
    pub row_ptr: &'a [usize],
    pub col_idx: &'a [usize],
    pub values: &'a [f64],
}

impl<'a> From<&'a CsrMatrix> for SpView<'a> {
    fn from(a: &'a CsrMatrix) -> Self {
        SpView {
            nrows: a.n,
            ncols: a.n,
            row_ptr: &a.row_ptr,
            col_idx: &a.col_idx,
            values: &a.values,
        }
    }
}

/// C = A * B (Gustavson, row-blocked).
pub(crate) fn spgemm(a: SpView<'_>, b: SpView<'_>) -> SpMat {
    assert_eq!(a.ncols, b.nrows);
    build_rows(a.nrows, b.ncols, |i, rb| {
        for ka in a.row_ptr[i]..a.row_ptr[i + 1] {
            let k = a.col_idx[ka];
            let aik = a.values[ka];
            for kb in b.row_ptr[k]..b.row_ptr[k + 1] {
                rb.add(b.col_idx[kb], aik * b.values[kb]);
            }
        }
    })
}
