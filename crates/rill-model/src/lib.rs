//! `rill-model` owns the meaning of a case file: the schema of blocks and
//! keys, lowering of a syntax tree to a checked [`Case`] in SI, include and
//! array files read through the [`source::Source`] trait, every diagnostic
//! with its stable code, and the derived quantities (face transmissibility,
//! well index, pore volume) that the checker, the editor and the simulator
//! all share.
//!
//! It must never do I/O directly (only through `Source`), never print, and
//! never panic on any input.

pub mod case;
pub mod derived;

pub use case::*;
