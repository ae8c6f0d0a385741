//! Helpers shared by the integration tests and examples.

pub mod two_phase;
