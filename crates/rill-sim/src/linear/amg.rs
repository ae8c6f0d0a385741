//! Smoothed-aggregation algebraic multigrid (placeholder: Jacobi until the
//! hierarchy lands).

use super::csr::CsrMatrix;
use super::krylov::{Jacobi, Preconditioner};
use super::LinearError;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Smoother {
    #[default]
    HybridSymmetricGaussSeidel,
}

#[derive(Debug, Clone, PartialEq)]
pub struct AmgOptions {
    pub strength_threshold: f64,
}

impl Default for AmgOptions {
    fn default() -> Self {
        AmgOptions { strength_threshold: 0.0 }
    }
}

pub struct AmgHierarchy {
    jacobi: Jacobi,
}

impl AmgHierarchy {
    pub fn build(a: &CsrMatrix, _opts: &AmgOptions) -> Result<Self, LinearError> {
        Ok(AmgHierarchy { jacobi: Jacobi { inv_diag: super::inverse_diagonal(a)? } })
    }
    pub fn levels(&self) -> usize {
        1
    }
    pub fn operator_complexity(&self) -> f64 {
        1.0
    }
}

impl Preconditioner for AmgHierarchy {
    fn apply(&self, r: &[f64], z: &mut [f64]) {
        self.jacobi.apply(r, z)
    }
}
