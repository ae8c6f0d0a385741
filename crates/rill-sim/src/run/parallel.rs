//! What a distributed run needs of its processes ([`Parallel`]), and one
//! process's part of a linear system ([`PartSystem`]).

use crate::linear::CsrMatrix;

/// The processes of a distributed run, as the simulator needs them:
/// reductions, a gather to rank 0 and the distributed linear solve.
/// `rill-run` implements it on PETSc over MPI. A failure inside (MPI,
/// PETSc) must end the run on every process (the simulator cannot go on
/// without the numbers); a solve that does not converge is an `Err`, the
/// same on every process.
pub trait Parallel {
    /// This process, from 0.
    fn rank(&self) -> usize;
    /// The number of processes.
    fn size(&self) -> usize;
    /// Sums `values` over all processes, in place.
    fn sum(&self, values: &mut [f64]);
    /// Takes the largest of `values` over all processes, in place.
    fn max(&self, values: &mut [f64]);
    /// Every process's `values` one after the other in rank order, on rank
    /// 0; empty elsewhere.
    fn gather(&self, values: &[f64]) -> Vec<f64>;
    /// Solves the global system this process holds a part of.
    fn solve(&self, system: &PartSystem, solution: &mut [f64]) -> Result<PartSolve, String>;
}

/// One process's part of a linear system, in its local numbering: its
/// window of cells (owned and ghost), then every well's and aquifer's
/// unknown. The global system's rows are the owned cell rows of every
/// process in rank order, then the well and aquifer rows, whose matrix
/// entries are the sums of every process's (each holds its completions'
/// and faces' shares) and whose right-hand side is the same on every
/// process (add it once, from rank 0).
pub struct PartSystem<'a> {
    /// The local matrix (ghost rows are not part of the system).
    pub matrix: &'a CsrMatrix,
    /// The local right-hand side.
    pub rhs: &'a [f64],
    /// Cells in the local window; local unknowns from here on are wells and aquifers.
    pub n_cells: usize,
    /// Global index of local cell 0.
    pub first_global: usize,
    /// Local indices of the owned cells.
    pub owned: std::ops::Range<usize>,
    /// Active cells of the whole grid.
    pub n_global_cells: usize,
    /// Relative residual to reach.
    pub rel_tol: f64,
    /// Iteration limit.
    pub max_iter: usize,
}

impl PartSystem<'_> {
    /// The global index of local unknown `i`.
    pub fn global(&self, i: usize) -> usize {
        if i < self.n_cells {
            self.first_global + i
        } else {
            self.n_global_cells + (i - self.n_cells)
        }
    }

    /// The number of global unknowns.
    pub fn n_global(&self) -> usize {
        self.n_global_cells + (self.matrix.n - self.n_cells)
    }
}

/// What a distributed solve reports.
#[derive(Debug, Clone, Copy)]
pub struct PartSolve {
    /// Krylov iterations.
    pub iterations: usize,
    /// The method's name, for the run's statistics.
    pub method: &'static str,
    /// Seconds in set-up and assembly of the distributed system.
    pub setup_seconds: f64,
    /// Seconds in the solve.
    pub solve_seconds: f64,
}
