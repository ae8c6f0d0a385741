//! `rill-sim` owns the embedded simulator: discretisation with the face
//! transmissibilities of `rill-model`, assembly, Newton, wells and
//! boundaries, time stepping, mass balance checks, and the linear solvers.
//!
//! It must never parse text; it takes a checked `rill_model::Case`. It does
//! no file I/O: the first linear system goes to the [`Observer`], and the
//! caller writes it if it wants to.
//!
//! Entry point: [`run`]. Modelling choices (each documented where it lives):
//! * slightly compressible liquid, exponential `B(p)`, `rho(p)`, `phi(p)`
//!   (module `pvt`);
//! * two-point fluxes with the `derived` geometric transmissibilities, the
//!   mobility `1/(mu B)` averaged arithmetically at the face, and a face
//!   density exactly consistent with the hydrostatic initial state, so a
//!   model at equilibrium stays at rest to rounding (module `disc`);
//! * wells: Peaceman completions, BHP at the centre of the shallowest
//!   completion, wellbore fluid on the same hydrostat, rate control with the
//!   BHP as an unknown, switching to and from the BHP limit after every
//!   Newton update; a well that would flow against its role at its BHP is
//!   shut and reopened when it can flow again (module `run::controls`);
//! * boundaries: half-cell transmissibility to a constant (or hydrostatic)
//!   pressure at the face centre;
//! * aquifers: Fetkovich's pseudo-steady finite aquifer, one pressure
//!   unknown each, its material balance coupled implicitly in Newton;
//!   steady runs hold them (module `aquifer`);
//! * backward Euler, Newton with line search, step halving, report times
//!   hit exactly; steady runs solve the incompressible pressure equation
//!   (`B`, `rho` at their reference values, initial controls; events do not
//!   apply) once, again only if a well switches to or from its limit.
//!
//! Oil-water decks (`Case::oil_water`) run on the fully implicit
//! oil-water engine (module `oilwater`): oil pressure and water saturation
//! per cell, upstream relative mobilities with the same face
//! transmissibilities, Peaceman phase completions, damped Newton with
//! CPR-GMRES; serial only.
//!
//! Acceptance tests against published results are in `tests/` (each names
//! its source); `tests/field_size.rs` has the 1.12 million cell steady case
//! (ignored in debug builds; run it with `--release -- --ignored`).

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

mod aquifer;
mod disc;
mod fluxes;
mod oilwater;
/// The linear algebra, a crate of its own; kept under this name for the front ends.
pub use rill_linear as linear;
mod pvt;
pub mod results;
pub use fluxes::{face_fluxes, last_face_fluxes, FaceFluxes};
mod run;

pub use disc::Part;
pub use results::*;
pub use run::{
    run, run_distributed, KeepPressures, NewtonOptions, NoObserver, Observer, Parallel, PartSolve,
    PartSystem, Progress, RunError, RunOptions, NO_DISTRIBUTED_OIL_WATER,
};
