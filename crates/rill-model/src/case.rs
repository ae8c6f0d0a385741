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
    /// Index of the file in `Analysis::files`.
    pub file: usize,
    /// Byte span in that file.
    pub span: Span,
}

/// A checked case in SI units: everything a run needs, lowered from the deck.
#[derive(Debug, Clone, PartialEq)]
pub struct Case {
    /// The `title` of the `case` block, or its name.
    pub title: Option<String>,
    /// The name of the `case` block (`case "Larkspur east lobe" { ... }`),
    /// if it has one; result files show it.
    pub name: Option<String>,
    /// The grid.
    pub grid: Grid,
    /// Rock properties per cell.
    pub rock: Rock,
    /// The one liquid of a single-phase deck. In an oil-water deck
    /// (`oil_water` is `Some`) this is the oil, lowered from the `oil`
    /// block: the phase whose pressure the initial datum, the BHPs and the
    /// boundaries give, so every pressure rule of a single-phase deck reads
    /// the same for it.
    pub fluid: Fluid,
    /// What an oil-water deck adds (`None` for a single-phase deck): the
    /// water, the saturation functions, which cells use which, and the
    /// initial saturation.
    pub oil_water: Option<OilWater>,
    /// The initial pressure.
    pub initial: Initial,
    /// Wells in deck order.
    pub wells: Vec<Well>,
    /// Constant-pressure boundaries in deck order.
    pub boundaries: Vec<Boundary>,
    /// Transmissibility multipliers on interior faces, in deck order
    /// (`derived::FaceMultipliers` combines them per face).
    pub faults: Vec<Fault>,
    /// Finite (Fetkovich) aquifers in deck order.
    pub aquifers: Vec<Aquifer>,
    /// Run length, time steps and events.
    pub timeline: Timeline,
    /// How results are shown.
    pub report: ReportSettings,
}

/// Tensor-product grid. Cell index `c = i + nx * (j + ny * k)` (0-based), i fastest.
/// Layer `k = 0` is the top; depth grows downward.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    /// Number of columns in x.
    pub nx: usize,
    /// Number of rows in y.
    pub ny: usize,
    /// Number of layers in z.
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
    /// `nx * ny * nz`.
    pub fn cell_count(&self) -> usize {
        self.nx * self.ny * self.nz
    }
    /// The cell index of 0-based `(i, j, k)`.
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
    /// The column index of 0-based `(i, j)`, for per-column values such as `top`.
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
    /// m^2
    pub ky: CellValues,
    /// m^2
    pub kz: CellValues,
    /// 1/Pa
    pub compressibility: f64,
    /// Pa
    pub ref_pressure: f64,
}

impl Rock {
    /// Whether cell `c` takes part in flow (porosity above zero).
    pub fn is_active(&self, c: usize) -> bool {
        self.porosity[c] > 0.0
    }
}

/// One slightly compressible liquid.
#[derive(Debug, Clone, PartialEq)]
pub struct Fluid {
    /// The fluid block's name, if it has one.
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

/// The second phase and the saturation functions of an oil-water deck.
/// The oil is [`Case::fluid`].
#[derive(Debug, Clone, PartialEq)]
pub struct OilWater {
    /// The water (the `water` block).
    pub water: Fluid,
    /// The `relperm` blocks in deck order.
    pub relperms: Vec<Relperm>,
    /// For every cell, the index into `relperms` of the curves it uses
    /// (`rock.relperm` with its patches), `cell_count` values.
    pub cell_relperm: CellRelperm,
    /// How the initial water saturation is given.
    pub saturation: InitialSaturation,
}

/// Per-cell indices into [`OilWater::relperms`], shared like [`CellValues`].
#[derive(Clone, Default, PartialEq)]
pub struct CellRelperm(pub Arc<Vec<u32>>);

impl CellRelperm {
    /// The index of the curves of cell `c` (0 outside the grid).
    pub fn of(&self, c: usize) -> usize {
        self.0.get(c).map_or(0, |&r| r as usize)
    }
}

impl std::fmt::Debug for CellRelperm {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.as_slice().fmt(f)
    }
}

/// One `relperm "label"` block: water and oil relative permeability and the
/// oil-water capillary pressure `pc = p_oil - p_water` as functions of the
/// water saturation `sw` (`derived::relperm` evaluates them).
#[derive(Debug, Clone, PartialEq)]
pub struct Relperm {
    /// Its label, unique among relperm blocks.
    pub name: String,
    /// The curves.
    pub curves: Curves,
    /// Where the block's name and label are written.
    pub origin: Origin,
}

/// The two forms of saturation functions.
#[derive(Debug, Clone, PartialEq)]
pub enum Curves {
    /// Corey power laws in the normalised saturation.
    Corey(Corey),
    /// A table interpolated linearly, held constant beyond its ends.
    Table(SatTable),
}

/// Corey curves: with `S = (sw - swc) / (1 - swc - sor)` clipped to
/// [0, 1], `krw = krw_end S^nw`, `kro = kro_end (1 - S)^no`,
/// `pc = pc_entry (1 - S)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Corey {
    /// Connate water saturation, fraction.
    pub swc: f64,
    /// Residual oil saturation to water, fraction.
    pub sor: f64,
    /// krw at `sw = 1 - sor`.
    pub krw_end: f64,
    /// kro at `sw = swc`.
    pub kro_end: f64,
    /// Exponent of krw.
    pub nw: f64,
    /// Exponent of kro.
    pub no: f64,
    /// Capillary pressure at `sw = swc`, Pa (0 when not given).
    pub pc_entry: f64,
}

/// A saturation table: `sw` increasing, one `krw`, `kro` (and `pc`) per row.
#[derive(Debug, Clone, PartialEq)]
pub struct SatTable {
    /// Water saturations, strictly increasing, fractions.
    pub sw: Vec<f64>,
    /// Water relative permeability at each `sw`.
    pub krw: Vec<f64>,
    /// Oil relative permeability at each `sw`.
    pub kro: Vec<f64>,
    /// Capillary pressure at each `sw`, Pa; all zero when the table gives none.
    pub pc: Vec<f64>,
}

/// How the initial water saturation of an oil-water deck is given.
#[derive(Debug, Clone, PartialEq)]
pub enum InitialSaturation {
    /// Capillary-gravity equilibrium from the oil-water contact (free water
    /// level, where `pc = 0`) at this depth, m
    /// (`derived::saturation::equilibrium`).
    Contact {
        /// The depth of the contact, m.
        depth: f64,
    },
    /// Water saturation per cell, given directly (not necessarily in equilibrium).
    Cells(CellValues),
}

/// How the initial pressure is given.
#[derive(Debug, Clone, PartialEq)]
pub enum Initial {
    /// Pressure at a datum depth; hydrostatic equilibrium from the fluid density.
    Datum {
        /// Pa
        pressure: f64,
        /// The datum depth, m.
        depth: f64,
    },
    /// Pressure given per cell (Pa), no equilibration.
    Cells(CellValues),
}

/// Whether a well produces or injects.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// Takes fluid out.
    Producer,
    /// Puts fluid in.
    Injector,
}

/// What a well holds fixed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Control {
    /// Surface rate, surface m^3/s, always positive; the role gives the sign.
    /// Single-phase decks only.
    Rate(f64),
    /// Bottom-hole pressure at the well's datum (its top completion centre), Pa.
    Bhp(f64),
    /// Shut by the deck: the well flows nothing until an event opens it.
    Shut,
    /// Oil-water producers: the surface oil rate, surface m^3/s, positive.
    OilRate(f64),
    /// Oil-water producers: the surface oil plus water rate, surface m^3/s, positive.
    LiquidRate(f64),
    /// Oil-water injectors: the surface water rate, surface m^3/s, positive.
    WaterRate(f64),
}

impl Control {
    /// The word that starts the control in a deck (`rate`, `oil_rate`, ...).
    pub fn word(&self) -> &'static str {
        match self {
            Control::Rate(_) => "rate",
            Control::Bhp(_) => "bhp",
            Control::Shut => "shut",
            Control::OilRate(_) => "oil_rate",
            Control::LiquidRate(_) => "liquid_rate",
            Control::WaterRate(_) => "water_rate",
        }
    }

    /// The surface rate of a rate control of any phase, surface m^3/s.
    pub fn surface_rate(&self) -> Option<f64> {
        match *self {
            Control::Rate(q)
            | Control::OilRate(q)
            | Control::LiquidRate(q)
            | Control::WaterRate(q) => Some(q),
            Control::Bhp(_) | Control::Shut => None,
        }
    }
}

/// The axis a completed stretch of wellbore runs along.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub enum Direction {
    /// Along x (i): a horizontal wellbore east-west.
    X,
    /// Along y (j): a horizontal wellbore south-north.
    Y,
    /// Along z (k): a vertical wellbore.
    #[default]
    Z,
}

impl Direction {
    /// Every direction, in the order x, y, z.
    pub const ALL: [Direction; 3] = [Direction::X, Direction::Y, Direction::Z];
    /// The name as written in decks (`x`, `y`, `z`).
    pub fn name(self) -> &'static str {
        match self {
            Direction::X => "x",
            Direction::Y => "y",
            Direction::Z => "z",
        }
    }
    /// The direction written `name`, if any.
    pub fn from_name(name: &str) -> Option<Direction> {
        Direction::ALL.into_iter().find(|d| d.name() == name)
    }
}

/// One completed cell of a well.
#[derive(Debug, Clone, PartialEq)]
pub struct Completion {
    /// 0-based `(i, j, k)` and cell index.
    pub i: usize,
    /// 0-based j.
    pub j: usize,
    /// 0-based k.
    pub k: usize,
    /// The cell index.
    pub cell: usize,
    /// The axis the wellbore runs along in this cell.
    pub direction: Direction,
}

impl Completion {
    /// The completion of 0-based cell `(i, j, k)` along `direction`.
    pub fn new(grid: &Grid, i: usize, j: usize, k: usize, direction: Direction) -> Completion {
        Completion {
            i,
            j,
            k,
            cell: grid.index(i, j, k),
            direction,
        }
    }
}

/// A well: where it is completed and how it is controlled.
#[derive(Debug, Clone, PartialEq)]
pub struct Well {
    /// Its name, unique among wells.
    pub name: String,
    /// Producer or injector.
    pub role: Role,
    /// Completed cells, each once.
    pub completions: Vec<Completion>,
    /// Wellbore radius, m.
    pub radius: f64,
    /// Skin factor, dimensionless.
    pub skin: f64,
    /// The control from the start of the run.
    pub control: Control,
    /// Producer: lowest BHP; injector: highest (Pa).
    pub bhp_limit: Option<f64>,
    /// Oil-water producers: the surface water cut (fraction) above which
    /// the well is shut for the rest of the run; `None`: no limit.
    pub max_water_cut: Option<f64>,
    /// Where the well block is written.
    pub origin: Origin,
}

/// A side of a cell or of the grid.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Side {
    /// Low x.
    West,
    /// High x.
    East,
    /// Low y.
    South,
    /// High y.
    North,
    /// Low depth (layer 1 side).
    Top,
    /// High depth.
    Bottom,
}

impl Side {
    /// Every side, in the order west, east, south, north, top, bottom.
    pub const ALL: [Side; 6] = [
        Side::West,
        Side::East,
        Side::South,
        Side::North,
        Side::Top,
        Side::Bottom,
    ];
    /// The name as written in decks (`west`, ...).
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
    /// The side written `name`, if any.
    pub fn from_name(name: &str) -> Option<Side> {
        Side::ALL.into_iter().find(|s| s.name() == name)
    }
}

/// A side of the grid held at a constant pressure.
#[derive(Debug, Clone, PartialEq)]
pub struct Boundary {
    /// Its name, unique among boundaries.
    pub name: String,
    /// The side of the grid it covers.
    pub side: Side,
    /// Pa
    pub pressure: f64,
    /// Datum depth (m) for a hydrostatic face; `None`: the pressure holds at every face centre.
    pub datum: Option<f64>,
    /// The cells of the side whose outer faces it holds (`i`, `j`, `k`
    /// selectors; all by default).
    pub select: Selection,
    /// Where the boundary block is written.
    pub origin: Origin,
}

impl Boundary {
    /// Whether it holds the outer face of cell `c` on its side.
    pub fn covers(&self, grid: &Grid, c: usize) -> bool {
        self.select.covers_side(grid, self.side, c)
    }

    /// The cells whose outer face on its side it holds, in grid order.
    pub fn cells(&self, grid: &Grid) -> Vec<usize> {
        self.select.side_cells(grid, self.side)
    }
}

/// A set of interior faces whose transmissibility is scaled: the faces on
/// `side` of the selected cells.
#[derive(Debug, Clone, PartialEq)]
pub struct Fault {
    /// Its name, unique among faults.
    pub name: String,
    /// The side of each selected cell whose face it scales.
    pub side: Side,
    /// The cells whose face on `side` it scales (`i`, `j`, `k` selectors;
    /// all by default).
    pub select: Selection,
    /// Transmissibility multiplier, `>= 0`; 0 seals the faces.
    pub multiplier: f64,
    /// Where the fault block is written.
    pub origin: Origin,
}

impl Fault {
    /// The selected cells, in grid order (each stands for its face on `side`).
    pub fn cells(&self, grid: &Grid) -> Vec<usize> {
        self.select.cells(grid)
    }
}

/// A finite aquifer on a side of the grid, in the pseudo-steady form of
/// Fetkovich: influx `J (p_a - p_face)`, aquifer pressure from its own
/// material balance `p_a = p_ai - W_e / (c_t W_i)`.
#[derive(Debug, Clone, PartialEq)]
pub struct Aquifer {
    /// Its name, unique among aquifers.
    pub name: String,
    /// The side of the grid it touches.
    pub side: Side,
    /// The cells of the side whose outer faces it holds.
    pub select: Selection,
    /// Initial water volume `W_i`, reservoir m^3.
    pub water_volume: f64,
    /// Total compressibility of the aquifer `c_t`, 1/Pa.
    pub compressibility: f64,
    /// Productivity index `J`, reservoir m^3/s per Pa.
    pub productivity: f64,
    /// Where the aquifer block is written.
    pub origin: Origin,
}

impl Aquifer {
    /// Whether it holds the outer face of cell `c` on its side.
    pub fn covers(&self, grid: &Grid, c: usize) -> bool {
        self.select.covers_side(grid, self.side, c)
    }

    /// The cells whose outer face on its side it holds, in grid order.
    pub fn cells(&self, grid: &Grid) -> Vec<usize> {
        self.select.side_cells(grid, self.side)
    }
}

/// Index ranges along i, j and k (0-based, inclusive); `None` on an axis
/// means every index.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Selection {
    /// Range of i.
    pub i: Option<(usize, usize)>,
    /// Range of j.
    pub j: Option<(usize, usize)>,
    /// Range of k.
    pub k: Option<(usize, usize)>,
}

impl Selection {
    /// Whether the cell `(i, j, k)` (0-based) lies in every range.
    pub fn contains(&self, (i, j, k): (usize, usize, usize)) -> bool {
        let within =
            |r: Option<(usize, usize)>, v: usize| r.is_none_or(|(lo, hi)| lo <= v && v <= hi);
        within(self.i, i) && within(self.j, j) && within(self.k, k)
    }

    /// Whether cell `c` lies on the grid's `side` and in every range: a
    /// boundary or an aquifer on that side holds its outer face.
    pub fn covers_side(&self, grid: &Grid, side: Side, c: usize) -> bool {
        crate::derived::is_on_side(grid, c, side) && self.contains(grid.ijk(c))
    }

    /// The cells on the grid's `side` that it selects, in grid order.
    pub fn side_cells(&self, grid: &Grid, side: Side) -> Vec<usize> {
        crate::derived::cells_on_side(grid, side)
            .into_iter()
            .filter(|&c| self.contains(grid.ijk(c)))
            .collect()
    }

    /// The cells of `grid` it selects, in grid order (ranges clamped to the grid).
    pub fn cells(&self, grid: &Grid) -> Vec<usize> {
        let span = |r: Option<(usize, usize)>, n: usize| match r {
            Some((lo, hi)) => lo..(hi + 1).min(n),
            None => 0..n,
        };
        let mut out = Vec::new();
        for k in span(self.k, grid.nz) {
            for j in span(self.j, grid.ny) {
                for i in span(self.i, grid.nx) {
                    out.push(grid.index(i, j, k));
                }
            }
        }
        out
    }
}

/// Whether the run steps in time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RunKind {
    /// Time steps from the initial state to `end`.
    Transient,
    /// The steady state only, no time.
    Steady,
}

/// Run length, time-step control and events.
#[derive(Debug, Clone, PartialEq)]
pub struct Timeline {
    /// Transient or steady.
    pub kind: RunKind,
    /// s; 0 for a steady run without `end`.
    pub end: f64,
    /// The first time step, s.
    pub first_step: f64,
    /// The longest time step, s.
    pub max_step: f64,
    /// The shortest step a cut may leave, s: a step that fails at this
    /// length stops the run (see [`Timeline::DEFAULT_MIN_STEP`]).
    pub min_step: f64,
    /// The most steps the run may take (see [`Timeline::DEFAULT_MAX_STEPS`]).
    pub max_steps: usize,
    /// Factor by which a time step may grow over the last (1 to 10).
    pub growth: f64,
    /// Report interval, s; `None`: report at the end and at events only.
    pub report_every: Option<f64>,
    /// Report times listed in `report_at`, s, increasing, within the run.
    pub report_at: Vec<f64>,
    /// In time order.
    pub events: Vec<Event>,
}

impl Timeline {
    /// `min_step` when the deck gives none: 1 s, or `first_step` when that
    /// is shorter. A step cut below a second is no longer a time step of a
    /// reservoir model but a sign that the case cannot be solved as written.
    pub const DEFAULT_MIN_STEP: f64 = 1.0;
    /// `max_steps` when the deck gives none.
    pub const DEFAULT_MAX_STEPS: usize = 100_000;
}

/// A change of well settings at a time.
#[derive(Debug, Clone, PartialEq)]
pub struct Event {
    /// s
    pub time: f64,
    /// The well changes, in deck order.
    pub changes: Vec<WellChange>,
    /// Where the event is written (`at TIME`).
    pub origin: Origin,
}

/// New settings for one well from an event on.
#[derive(Debug, Clone, PartialEq)]
pub struct WellChange {
    /// Index into `Case::wells`.
    pub well: usize,
    /// The new control, if changed.
    pub control: Option<Control>,
    /// The new BHP limit (Pa), if changed.
    pub bhp_limit: Option<f64>,
    /// The new skin factor (dimensionless), if changed: the well's indices
    /// change with it from the event on.
    pub skin: Option<f64>,
}

/// How results are shown: `field`, `metric` or `si`.
pub use rill_units::System as UnitSystem;

/// How results are reported.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct ReportSettings {
    /// The unit system of reports.
    pub units: UnitSystem,
    /// Which report times get a map file.
    pub maps: MapSelection,
}

/// Which report times get a pressure map file (`report { maps = ... }`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum MapSelection {
    /// Every report time (the default).
    #[default]
    All,
    /// The last report time only.
    Last,
    /// No map files (the report still draws the last layer maps).
    None,
}
