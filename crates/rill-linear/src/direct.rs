//! Sparse direct solvers through `faer`: supernodal Cholesky for symmetric
//! matrices, LU with partial pivoting otherwise. The symbolic analysis
//! (fill-reducing ordering, elimination tree) is kept so that a matrix with
//! the same sparsity pattern is refactored numerically only.

use faer::linalg::solvers::Solve;
use faer::sparse::linalg::solvers::{Llt, Lu, SymbolicLlt, SymbolicLu};
use faer::sparse::{SparseColMatRef, SymbolicSparseColMatRef};
use faer::{MatMut, Side};

use super::csr::CsrMatrix;
use super::LinearError;

/// Symbolic analysis, reusable for any matrix with the same pattern.
#[derive(Clone)]
pub(crate) enum DirectSymbolic {
    Cholesky(SymbolicLlt<usize>),
    Lu(SymbolicLu<usize>),
}

/// A numeric factorization ready to solve.
pub(crate) enum DirectFactor {
    /// L L^T of A (A symmetric).
    Cholesky(Llt<usize, f64>),
    /// LU of A^T: our CSR arrays of A read as CSC are A^T, so we factor
    /// that without copying and solve with its transpose.
    LuOfTranspose(Lu<usize, f64>),
}

/// CSR of A viewed as CSC, i.e. the matrix A^T.
fn as_csc_of_transpose(a: &CsrMatrix) -> SparseColMatRef<'_, usize, f64> {
    let sym = SymbolicSparseColMatRef::new_checked(a.n, a.n, &a.row_ptr, None, &a.col_idx);
    SparseColMatRef::new(sym, &a.values)
}

impl DirectSymbolic {
    pub(crate) fn analyse(a: &CsrMatrix, symmetric: bool) -> Result<Self, LinearError> {
        let at = as_csc_of_transpose(a);
        if symmetric {
            SymbolicLlt::try_new(at.symbolic(), Side::Lower)
                .map(DirectSymbolic::Cholesky)
                .map_err(|e| LinearError::Internal(format!("sparse Cholesky analysis: {e:?}")))
        } else {
            SymbolicLu::try_new(at.symbolic())
                .map(DirectSymbolic::Lu)
                .map_err(|e| LinearError::Internal(format!("sparse LU analysis: {e:?}")))
        }
    }

    pub(crate) fn is_cholesky(&self) -> bool {
        matches!(self, DirectSymbolic::Cholesky(_))
    }

    /// Numeric factorization of `a`, which must have the pattern analysed.
    pub(crate) fn factor(&self, a: &CsrMatrix) -> Result<DirectFactor, LinearError> {
        let at = as_csc_of_transpose(a);
        match self {
            DirectSymbolic::Cholesky(s) => match Llt::try_new_with_symbolic(s.clone(), at, Side::Lower) {
                Ok(f) => Ok(DirectFactor::Cholesky(f)),
                Err(faer::sparse::linalg::LltError::Numeric(e)) => Err(LinearError::Singular {
                    detail: format!(
                        "sparse Cholesky found a non-positive pivot ({e}): the matrix is singular or not positive definite"
                    ),
                }),
                Err(e) => Err(LinearError::Internal(format!("sparse Cholesky: {e:?}"))),
            },
            DirectSymbolic::Lu(s) => match Lu::try_new_with_symbolic(s.clone(), at) {
                Ok(f) => Ok(DirectFactor::LuOfTranspose(f)),
                Err(faer::sparse::linalg::LuError::SymbolicSingular { index }) => Err(LinearError::Singular {
                    detail: format!("sparse LU found no pivot at step {index}: the matrix is structurally singular"),
                }),
                Err(e) => Err(LinearError::Internal(format!("sparse LU: {e:?}"))),
            },
        }
    }
}

impl DirectFactor {
    /// Overwrites `x` (holding b on entry) with A^{-1} b.
    pub(crate) fn solve_in_place(&self, x: &mut [f64]) {
        let n = x.len();
        let rhs = MatMut::from_column_major_slice_mut(x, n, 1);
        match self {
            DirectFactor::Cholesky(f) => f.solve_in_place(rhs),
            DirectFactor::LuOfTranspose(f) => f.solve_transpose_in_place(rhs),
        }
    }

    pub(crate) fn name(&self) -> &'static str {
        match self {
            DirectFactor::Cholesky(_) => "direct-cholesky",
            DirectFactor::LuOfTranspose(_) => "direct-lu",
        }
    }
}
