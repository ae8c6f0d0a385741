//! Block matrices (b x b dense blocks per stored entry, for systems with
//! several unknowns a cell): conversion to and from the scalar form.

use rayon::prelude::*;

use super::csr::{split_rows_mut, CsrMatrix, ROW_CHUNK};

impl CsrMatrix {
    /// Builds a square block matrix of `n_blocks` x `n_blocks` blocks of
    /// size `block` from scalar `(row, col, value)` triplets (scalar indices,
    /// duplicates summed): each touched block is stored whole, entries not
    /// given are explicit zeros.
    ///
    /// # Panics
    /// If an index is `>= n_blocks * block` or `block == 0`.
    pub fn from_block_triplets(
        n_blocks: usize,
        block: usize,
        triplets: &[(usize, usize, f64)],
    ) -> Self {
        assert!(block > 0, "block size must be at least 1");
        CsrMatrix::from_triplets(n_blocks * block, triplets)
            .to_block(block)
            .expect("the order is a multiple of the block size by construction")
    }

    /// The scalar expansion (`block == 1`): every stored block becomes b x b
    /// stored entries, zeros included, so the pattern depends on the block
    /// pattern only. A scalar matrix is returned as a copy.
    pub fn to_scalar(&self) -> CsrMatrix {
        let b = self.block;
        if b == 1 {
            return self.clone();
        }
        let bb = b * b;
        let n = self.rows();
        let mut row_ptr = Vec::with_capacity(n + 1);
        row_ptr.push(0usize);
        for bi in 0..self.n {
            let len = (self.row_ptr[bi + 1] - self.row_ptr[bi]) * b;
            for _ in 0..b {
                row_ptr.push(row_ptr.last().unwrap() + len);
            }
        }
        let nnz = self.values.len();
        let mut col_idx = vec![0usize; nnz];
        let mut values = vec![0.0; nnz];
        // One block row gives b consecutive scalar rows: block rows in parallel.
        let ptr: Vec<usize> = self.row_ptr.iter().map(|p| p * bb).collect();
        let mut cols = split_rows_mut(&mut col_idx, &ptr);
        let mut vals = split_rows_mut(&mut values, &ptr);
        cols.par_iter_mut()
            .zip(vals.par_iter_mut())
            .enumerate()
            .with_min_len(ROW_CHUNK / b)
            .for_each(|(bi, (c, v))| {
                let (bc, bv) = self.row(bi);
                let len = bc.len();
                for r in 0..b {
                    for (k, &bj) in bc.iter().enumerate() {
                        for cj in 0..b {
                            let p = r * len * b + k * b + cj;
                            c[p] = bj * b + cj;
                            v[p] = bv[k * bb + r * b + cj];
                        }
                    }
                }
            });
        CsrMatrix {
            n,
            ncols: self.cols(),
            block: 1,
            row_ptr,
            col_idx,
            values,
        }
    }

    /// The block form with blocks of size `block` of a scalar matrix: a block
    /// is stored when any of its entries is, the others become explicit
    /// zeros. Errors when the matrix is already blocked or its dimensions are
    /// not multiples of `block`.
    pub fn to_block(&self, block: usize) -> Result<CsrMatrix, String> {
        if self.block != 1 {
            return Err(format!("the matrix already has blocks of {}", self.block));
        }
        if self.n.checked_rem(block) != Some(0) || self.ncols.checked_rem(block) != Some(0) {
            return Err(format!(
                "a {} x {} matrix does not divide into blocks of {block}",
                self.n, self.ncols
            ));
        }
        let b = block;
        let bb = b * b;
        let nb = self.n / b;
        // Block columns of each block row: the sorted union of its rows'.
        let rows: Vec<Vec<usize>> = (0..nb)
            .into_par_iter()
            .with_min_len(ROW_CHUNK / b)
            .map(|bi| {
                let mut cols: Vec<usize> = (bi * b..bi * b + b)
                    .flat_map(|i| self.row(i).0.iter().map(|&j| j / b))
                    .collect();
                cols.sort_unstable();
                cols.dedup();
                cols
            })
            .collect();
        let mut row_ptr = Vec::with_capacity(nb + 1);
        row_ptr.push(0usize);
        for r in &rows {
            row_ptr.push(row_ptr.last().unwrap() + r.len());
        }
        let col_idx: Vec<usize> = rows.concat();
        let mut values = vec![0.0; col_idx.len() * bb];
        for bi in 0..nb {
            let cols = &col_idx[row_ptr[bi]..row_ptr[bi + 1]];
            for r in 0..b {
                let (c, v) = self.row(bi * b + r);
                for (&j, &x) in c.iter().zip(v) {
                    let k = row_ptr[bi] + cols.binary_search(&(j / b)).unwrap_or(0);
                    values[k * bb + r * b + j % b] = x;
                }
            }
        }
        Ok(CsrMatrix {
            n: nb,
            ncols: self.ncols / b,
            block: b,
            row_ptr,
            col_idx,
            values,
        })
    }
}
