//! The parallel sparse products of the multigrid set-up: row-blocked
//! Gustavson products (one dense accumulator per block of rows, never one
//! allocation per row), on scalar [`CsrMatrix`]es of any shape.

use rayon::prelude::*;

use super::csr::CsrMatrix;

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

/// Builds a scalar matrix of `nrows` x `ncols` row by row in parallel
/// blocks. `fill` gets each row index and a [`RowBuilder`] to add entries
/// to (in any order, duplicates summed). Rows come out with sorted columns.
pub(crate) fn build_rows<F>(nrows: usize, ncols: usize, fill: F) -> CsrMatrix
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
    CsrMatrix {
        n: nrows,
        ncols,
        block: 1,
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
    /// Adds `v` to entry `j` of the current row.
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

/// C = A * B (Gustavson, row-blocked), for scalar matrices.
pub(crate) fn spgemm(a: &CsrMatrix, b: &CsrMatrix) -> CsrMatrix {
    assert_eq!(a.ncols, b.n);
    assert!(
        a.block == 1 && b.block == 1,
        "spgemm is for scalar matrices"
    );
    build_rows(a.n, b.ncols, |i, rb| {
        let (ac, av) = a.row(i);
        for (&k, &aik) in ac.iter().zip(av) {
            let (bc, bv) = b.row(k);
            for (&j, &bkj) in bc.iter().zip(bv) {
                rb.add(j, aik * bkj);
            }
        }
    })
}
