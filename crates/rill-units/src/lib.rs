//! `rill-units` owns the unit registry, dimension vectors over length L,
//! mass M, time T and surface volume S, the parsing of unit expressions
//! (`lb/ft^3`, `1/psi`, `rb/stb`), conversion to SI and to the field and
//! metric display units, and nearest-name suggestions.
//!
//! It must never know about case files, blocks or keys.
//! (INTERFACE DRAFT: bodies are being written.)

use serde::Serialize;

/// Exponents over length, mass, time and surface volume.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub struct Dim {
    pub l: i8,
    pub m: i8,
    pub t: i8,
    pub s: i8,
}

impl Dim {
    pub const fn new(l: i8, m: i8, t: i8, s: i8) -> Dim {
        Dim { l, m, t, s }
    }
    pub const NONE: Dim = Dim::new(0, 0, 0, 0);
    pub const LENGTH: Dim = Dim::new(1, 0, 0, 0);
    pub const AREA: Dim = Dim::new(2, 0, 0, 0);
    /// Permeability is an area.
    pub const PERMEABILITY: Dim = Dim::new(2, 0, 0, 0);
    pub const RESERVOIR_VOLUME: Dim = Dim::new(3, 0, 0, 0);
    pub const SURFACE_VOLUME: Dim = Dim::new(0, 0, 0, 1);
    pub const TIME: Dim = Dim::new(0, 0, 1, 0);
    pub const MASS: Dim = Dim::new(0, 1, 0, 0);
    pub const PRESSURE: Dim = Dim::new(-1, 1, -2, 0);
    pub const VISCOSITY: Dim = Dim::new(-1, 1, -1, 0);
    pub const DENSITY: Dim = Dim::new(-3, 1, 0, 0);
    pub const COMPRESSIBILITY: Dim = Dim::new(1, -1, 2, 0);
    pub const SURFACE_RATE: Dim = Dim::new(0, 0, -1, 1);
    pub const RESERVOIR_RATE: Dim = Dim::new(3, 0, -1, 0);
    /// Formation volume factor: reservoir volume per surface volume.
    pub const FVF: Dim = Dim::new(3, 0, 0, -1);
}

/// How values are shown to the user.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub enum System {
    #[default]
    Field,
    Metric,
    Si,
}
