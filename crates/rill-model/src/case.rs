//! The checked case: everything in SI (m, kg, s, Pa, surface m^3), indices 0-based.
//!
//! Produced by lowering a syntax tree; consumed by the simulator, the command
//! line and the editor analysis. Derived quantities live in `derived`.

use rill_syntax::Span;
use std::sync::Arc;

/// One value per cell, shared: the case, the parsed array files and the
/// arrays kept for the next analysis (`crate::reuse`) hold the same memory,
/// so an edit that leaves a property alone neither copies nor recomputes it.
/// Writing through it (tests, tools that perturb a property) copies first
/// when the array is shared (copy on write), so other holders never change.
#[derive(Clone, Default, PartialEq)]
pub struct CellValues(Arc<Vec<f64>>);

impl CellValues {
    /// The shared array, for keeping or comparing by identity.
    pub fn shared(&self) -> &Arc<Vec<f64>> {
        &self.0
    }
}

impl std::fmt::Debug for CellValues {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.as_slice().fmt(f)
    }
}

impl std::ops::Deref for CellValues {
    type Target = [f64];
    fn deref(&self) -> &[f64] {
        &self.0
    }
}

impl std::ops::DerefMut for CellValues {
    fn deref_mut(&mut self) -> &mut [f64] {
        Arc::make_mut(&mut self.0).as_mut_slice()
    }
}

impl From<Vec<f64>> for CellValues {
    fn from(v: Vec<f64>) -> Self {
        CellValues(Arc::new(v))
    }
}

impl<'a> IntoIterator for &'a CellValues {
    type Item = &'a f64;
    type IntoIter = std::slice::Iter<'a, f64>;
    fn into_iter(self) -> Self::IntoIter {
        self.0.iter()
    }
}

impl FromIterator<f64> for CellValues {
    fn from_iter<I: IntoIterator<Item = f64>>(iter: I) -> Self {
        CellValues(Arc::new(iter.into_iter().collect()))
    }
}

impl From<Arc<Vec<f64>>> for CellValues {
    fn from(v: Arc<Vec<f64>>) -> Self {
        CellValues(v)
    }
}

/// Where a thing was written: file index (into `Analysis::files`) and byte span.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Origin {
    pub file: usize,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    pub title: Option<String>,
    pub grid: Grid,
    pub rock: Rock,
    pub fluid: Fluid,
    pub initial: Initial,
    pub wells: Vec<Well>,
    pub boundaries: Vec<Boundary>,
    pub timeline: Timeline,
    pub report: ReportSettings,
}

/// Tensor-product grid. Cell index `c = i + nx * (j + ny * k)` (0-based), i fastest.
/// Layer `k = 0` is the top; depth grows downward.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    pub nx: usize,
    pub ny: usize,
    pub nz: usize,
    /// Width of each column in x, `nx` values (m).
    pub dx: Vec<f64>,
    /// Width of each row in y, `ny` values (m).
    pub dy: Vec<f64>,
    /// Thickness of every cell, `nx*ny*nz` values (m).
    pub dz: CellValues,
    /// Depth of the top face of layer 1 for every column, `nx*ny` values (m).
    pub top: Vec<f64>,
}

impl Grid {
    pub fn cell_count(&self) -> usize {
        self.nx * self.ny * self.nz
    }
    pub fn index(&self, i: usize, j: usize, k: usize) -> usize {
        i + self.nx * (j + self.ny * k)
    }
    /// `(i, j, k)` of a cell index, 0-based.
    pub fn ijk(&self, c: usize) -> (usize, usize, usize) {
        let i = c % self.nx;
        let j = (c / self.nx) % self.ny;
        let k = c / (self.nx * self.ny);
        (i, j, k)
    }
    pub fn column(&self, i: usize, j: usize) -> usize {
        i + self.nx * j
    }
}

/// Per-cell rock properties (length `cell_count`), SI.
#[derive(Debug, Clone, PartialEq)]
pub struct Rock {
    /// Fraction; a cell with porosity 0 is inactive.
    pub porosity: CellValues,
    /// m^2
    pub kx: CellValues,
    pub ky: CellValues,
    pub kz: CellValues,
    /// 1/Pa
    pub compressibility: f64,
    /// Pa
    pub ref_pressure: f64,
}

impl Rock {
    pub fn is_active(&self, c: usize) -> bool {
        self.porosity[c] > 0.0
    }
}

/// One slightly compressible liquid.
#[derive(Debug, Clone, PartialEq)]
pub struct Fluid {
    pub name: Option<String>,
    /// Pa*s
    pub viscosity: f64,
    /// Formation volume factor at `ref_pressure`, reservoir m^3 per surface m^3.
    pub fvf: f64,
    /// 1/Pa; B(p) = fvf * exp(-c (p - p_ref)), rho(p) = density * exp(c (p - p_ref)).
    pub compressibility: f64,
    /// Reservoir density at `ref_pressure`, kg/m^3.
    pub density: f64,
    /// Pa
    pub ref_pressure: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Initial {
    /// Pressure at a datum depth; hydrostatic equilibrium from the fluid density.
    Datum { pressure: f64, depth: f64 },
    /// Pressure given per cell (Pa), no equilibration.
    Cells(CellValues),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    Producer,
    Injector,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Control {
    /// Surface rate, surface m^3/s, always positive; the role gives the sign.
    Rate(f64),
    /// Bottom-hole pressure at the well's datum (its top completion centre), Pa.
    Bhp(f64),
}

#[derive(Debug, Clone, PartialEq)]
pub struct Completion {
    /// 0-based `(i, j, k)` and cell index.
    pub i: usize,
    pub j: usize,
    pub k: usize,
    pub cell: usize,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Well {
    pub name: String,
    pub role: Role,
    pub completions: Vec<Completion>,
    /// Wellbore radius, m.
    pub radius: f64,
    pub skin: f64,
    pub control: Control,
    /// Producer: lowest BHP; injector: highest (Pa).
    pub bhp_limit: Option<f64>,
    pub origin: Origin,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Side {
    West,
    East,
    South,
    North,
    Top,
    Bottom,
}

impl Side {
    pub const ALL: [Side; 6] = [
        Side::West,
        Side::East,
        Side::South,
        Side::North,
        Side::Top,
        Side::Bottom,
    ];
    pub fn name(self) -> &'static str {
        match self {
            Side::West => "west",
            Side::East => "east",
            Side::South => "south",
            Side::North => "north",
            Side::Top => "top",
            Side::Bottom => "bottom",
        }
    }
    pub fn from_name(name: &str) -> Option<Side> {
        Side::ALL.into_iter().find(|s| s.name() == name)
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct Boundary {
    pub name: String,
    pub side: Side,
    /// Pa
    pub pressure: f64,
    /// Datum depth (m) for a hydrostatic face; `None`: the pressure holds at every face centre.
    pub datum: Option<f64>,
    pub origin: Origin,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RunKind {
    Transient,
    Steady,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Timeline {
    pub kind: RunKind,
    /// s; 0 for a steady run without `end`.
    pub end: f64,
    pub first_step: f64,
    pub max_step: f64,
    pub growth: f64,
    /// Report interval, s; `None`: report at the end and at events only.
    pub report_every: Option<f64>,
    /// In time order.
    pub events: Vec<Event>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    /// s
    pub time: f64,
    pub changes: Vec<WellChange>,
    pub origin: Origin,
}

#[derive(Debug, Clone, PartialEq)]
pub struct WellChange {
    /// Index into `Case::wells`.
    pub well: usize,
    pub control: Option<Control>,
    pub bhp_limit: Option<f64>,
}

/// How results are shown: `field`, `metric` or `si`.
pub use rill_units::System as UnitSystem;

#[derive(Debug, Clone, PartialEq, Default)]
pub struct ReportSettings {
    pub units: UnitSystem,
}
