//! `rill-petsc` owns rill's bridge to PETSc over MPI: starting and ending
//! PETSc, the reductions and gathers a distributed run needs, and a
//! distributed sparse system (rows owned in contiguous ranges, values added
//! from any rank, solved by a PETSc Krylov method with hypre's BoomerAMG by
//! default) whose solution each rank reads back at the indices it asks for.
//!
//! Everything lives behind the `petsc` cargo feature, off by default:
//! without it this crate is empty, so the default build needs neither PETSc
//! nor MPI. With it, `build.rs` finds both with pkg-config and compiles the
//! C shim `src/shim.c`, which keeps PETSc's and MPI's ABI details (index and
//! communicator widths, handle spellings) on the C side.
//!
//! It must never know about cases, grids or wells: it moves numbers. The
//! simulator's distributed run is in `rill-sim` (`run_distributed`), wired to
//! this crate by `rill-run`.
//!
//! Hand-written because no PETSc crate on crates.io builds against the
//! Debian packages without libclang; the shim is a few dozen calls.

#![warn(missing_docs)]

#[cfg(feature = "petsc")]
mod bind;
#[cfg(feature = "petsc")]
pub use bind::*;

/// Whether this build can run on PETSc (the `petsc` feature).
pub const AVAILABLE: bool = cfg!(feature = "petsc");
