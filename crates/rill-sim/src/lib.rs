//! `rill-sim` owns the embedded simulator: discretisation with the face
//! transmissibilities of `rill-model`, assembly, Newton, wells and
//! boundaries, time stepping, mass balance checks, and the linear solvers.
//!
//! It must never parse text; it takes a checked `rill_model::Case`.

pub mod linear;
pub mod results;

pub use results::*;
