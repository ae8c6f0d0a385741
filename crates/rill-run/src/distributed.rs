//! The distributed engine (`petsc` feature): PETSc over MPI behind the
//! simulator's [`Parallel`]. Every rank runs the same pipeline on the same
//! checked deck; the simulator holds a slab of the cells on each
//! (`rill_sim::run_distributed`), and this module turns its reductions
//! into MPI reductions and its part of each linear system into rows of one
//! distributed PETSc matrix.
//!
//! A failing PETSc or MPI call cannot be recovered on one rank alone (the
//! others wait for it in the next collective call): it prints one message
//! naming the rank and ends every rank (`MPI_Abort`).

use std::cell::RefCell;
use std::time::Instant;

use rill_petsc::{Petsc, System};
use rill_sim::{Parallel, PartSolve, PartSystem};

/// PETSc started in this process, for one or more runs.
pub struct PetscEngine {
    petsc: Petsc,
}

impl PetscEngine {
    /// Starts PETSc and MPI with `options` (PETSc's `-name value` syntax)
    /// over rill's defaults (GMRES, hypre's BoomerAMG with HMIS
    /// coarsening and ext+i interpolation).
    pub fn start(options: &str) -> Result<PetscEngine, String> {
        Petsc::init(options)
            .map(|petsc| PetscEngine { petsc })
            .map_err(|e| e.to_string())
    }

    /// This process's rank.
    pub fn rank(&self) -> usize {
        self.petsc.rank()
    }

    /// The number of ranks.
    pub fn size(&self) -> usize {
        self.petsc.size()
    }

    /// Whether `ok` holds on every rank (collective).
    pub fn all(&self, ok: bool) -> bool {
        let mut v = [if ok { 0.0 } else { 1.0 }];
        self.or_abort(self.petsc.max(&mut v));
        v[0] == 0.0
    }

    /// Every rank's peak resident memory, bytes, on rank 0 (collective;
    /// empty elsewhere).
    pub fn peak_memory_per_rank(&self) -> Vec<f64> {
        let mine = self
            .petsc
            .peak_memory_bytes()
            .map_or(f64::NAN, |b| b as f64);
        self.or_abort(self.petsc.gather(&[mine]))
    }

    fn or_abort<T>(&self, r: Result<T, rill_petsc::Error>) -> T {
        match r {
            Ok(v) => v,
            Err(e) => {
                eprintln!("error: rank {}: {e}; ending every rank", self.rank());
                self.petsc.abort(1)
            }
        }
    }

    /// The simulator's view of the ranks for one run.
    pub(crate) fn parallel(&self) -> PetscParallel<'_> {
        PetscParallel {
            engine: self,
            system: RefCell::new(None),
        }
    }
}

/// One run's distributed system, made at its first solve (the pattern is
/// fixed for a run).
pub(crate) struct PetscParallel<'e> {
    engine: &'e PetscEngine,
    system: RefCell<Option<Distributed<'e>>>,
}

struct Distributed<'e> {
    system: System<'e>,
    /// Global rows this rank owns.
    rows: std::ops::Range<usize>,
    /// Scratch: one row's global columns.
    cols: Vec<i64>,
}

impl<'e> PetscParallel<'e> {
    /// The distributed matrix for `s`'s pattern: this rank owns its cells'
    /// rows, and the last rank also the well and aquifer rows (whose
    /// entries come from every rank; their counts are summed over ranks
    /// for the preallocation, an upper bound).
    fn create(&self, s: &PartSystem) -> Distributed<'e> {
        let e = self.engine;
        let a = s.matrix;
        let n_extra = a.n - s.n_cells;
        let last = e.rank() + 1 == e.size();
        let first_row = s.global(s.owned.start);
        let n_local = s.owned.len() + if last { n_extra } else { 0 };
        let rows = first_row..first_row + n_local;
        let mut d_nnz = Vec::with_capacity(n_local);
        let mut o_nnz = Vec::with_capacity(n_local);
        for i in s.owned.clone() {
            let (mut d, mut o) = (0, 0);
            for k in a.row_ptr[i]..a.row_ptr[i + 1] {
                if rows.contains(&s.global(a.col_idx[k])) {
                    d += 1;
                } else {
                    o += 1;
                }
            }
            d_nnz.push(d);
            o_nnz.push(o);
        }
        let mut extra: Vec<f64> = (s.n_cells..a.n)
            .map(|i| (a.row_ptr[i + 1] - a.row_ptr[i]) as f64)
            .collect();
        e.or_abort(e.petsc.sum(&mut extra));
        if last {
            for &len in &extra {
                let len = len as usize;
                d_nnz.push(len.min(n_local));
                o_nnz.push(len.min(s.n_global() - n_local));
            }
        }
        let mut system = e.or_abort(System::new(&e.petsc, n_local, s.n_global(), &d_nnz, &o_nnz));
        let reads: Vec<usize> = (0..a.n).map(|i| s.global(i)).collect();
        e.or_abort(system.reads(&reads));
        debug_assert_eq!(system.range(), rows);
        Distributed {
            system,
            rows,
            cols: Vec::new(),
        }
    }
}

impl Parallel for PetscParallel<'_> {
    fn rank(&self) -> usize {
        self.engine.rank()
    }

    fn size(&self) -> usize {
        self.engine.size()
    }

    fn sum(&self, values: &mut [f64]) {
        self.engine.or_abort(self.engine.petsc.sum(values));
    }

    fn max(&self, values: &mut [f64]) {
        self.engine.or_abort(self.engine.petsc.max(values));
    }

    fn gather(&self, values: &[f64]) -> Vec<f64> {
        self.engine.or_abort(self.engine.petsc.gather(values))
    }

    fn solve(&self, s: &PartSystem, solution: &mut [f64]) -> Result<PartSolve, String> {
        let started = Instant::now();
        let e = self.engine;
        let mut slot = self.system.borrow_mut();
        let dist = slot.get_or_insert_with(|| self.create(s));
        let a = s.matrix;
        e.or_abort(dist.system.zero());
        // Owned cell rows, then this rank's shares of the well and aquifer
        // rows; their right-hand sides (the same on every rank) once.
        for i in s.owned.clone().chain(s.n_cells..a.n) {
            let range = a.row_ptr[i]..a.row_ptr[i + 1];
            dist.cols.clear();
            dist.cols
                .extend(a.col_idx[range.clone()].iter().map(|&j| s.global(j) as i64));
            e.or_abort(
                dist.system
                    .add_row(s.global(i), &dist.cols, &a.values[range]),
            );
            if i < s.n_cells || e.rank() == 0 {
                e.or_abort(dist.system.add_rhs(s.global(i), s.rhs[i]));
            }
        }
        debug_assert!(dist.rows.start == s.global(s.owned.start));
        let set_up = started.elapsed().as_secs_f64();
        let result = e.or_abort(dist.system.solve(s.rel_tol, s.max_iter));
        let iterations = result?;
        e.or_abort(dist.system.solution(solution));
        Ok(PartSolve {
            iterations,
            method: "PETSc",
            setup_seconds: set_up,
            solve_seconds: started.elapsed().as_secs_f64() - set_up,
        })
    }
}
