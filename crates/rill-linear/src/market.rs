//! MatrixMarket formatting of matrices and vectors (for dumps and for the
//! benchmark against other solvers). Formatting only: the caller opens files.

use std::io::{self, Write};

use super::csr::CsrMatrix;

/// Writes `a` as `%%MatrixMarket matrix coordinate real general`, 1-based,
/// one stored entry a line in row order, values with 17 significant digits
/// (round-trips an f64 exactly). A block matrix is written as its scalar
/// expansion (every entry of every stored block, zeros included), so that
/// any MatrixMarket reader sees the system it stands for.
pub fn write_matrix_market<W: Write>(a: &CsrMatrix, w: W) -> io::Result<()> {
    let mut w = io::BufWriter::with_capacity(1 << 16, w);
    writeln!(w, "%%MatrixMarket matrix coordinate real general")?;
    writeln!(w, "{} {} {}", a.rows(), a.cols(), a.nnz())?;
    let b = a.block;
    for bi in 0..a.n {
        let (c, v) = a.row(bi);
        for r in 0..b {
            for (k, &bj) in c.iter().enumerate() {
                for cj in 0..b {
                    let x = v[k * b * b + r * b + cj];
                    writeln!(w, "{} {} {:.16e}", bi * b + r + 1, bj * b + cj + 1, x)?;
                }
            }
        }
    }
    w.flush()
}

/// Writes `v` as `%%MatrixMarket matrix array real general` with one column.
pub fn write_vector_market<W: Write>(v: &[f64], w: W) -> io::Result<()> {
    let mut w = io::BufWriter::with_capacity(1 << 16, w);
    writeln!(w, "%%MatrixMarket matrix array real general")?;
    writeln!(w, "{} 1", v.len())?;
    for x in v {
        writeln!(w, "{:.16e}", x)?;
    }
    w.flush()
}
