//! MatrixMarket formatting of matrices and vectors (for dumps and for the
//! benchmark against other solvers). Formatting only: the caller opens files.

use std::io::{self, Write};

use super::csr::CsrMatrix;

/// Writes `a` as `%%MatrixMarket matrix coordinate real general`, 1-based,
/// one stored entry a line in row order, values with 17 significant digits
/// (round-trips an f64 exactly).
pub fn write_matrix_market<W: Write>(a: &CsrMatrix, w: W) -> io::Result<()> {
    let mut w = io::BufWriter::with_capacity(1 << 16, w);
    writeln!(w, "%%MatrixMarket matrix coordinate real general")?;
    writeln!(w, "{} {} {}", a.n, a.n, a.nnz())?;
    for i in 0..a.n {
        let (c, v) = a.row(i);
        for (&j, &x) in c.iter().zip(v) {
            writeln!(w, "{} {} {:.16e}", i + 1, j + 1, x)?;
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
