//! The schema of a case file: which blocks exist, which keys each takes,
//! what kind of value each key holds, and a sentence on what it means.
//! Lowering, completion, hover and `explain` all read it from here.

use rill_units::Dim;

/// The axis of a spacing key.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Axis {
    /// Along x (`dx`: one width per column).
    X,
    /// Along y (`dy`: one width per row).
    Y,
    /// Along z (`dz`: one thickness per layer or per cell).
    Z,
}

/// The kind of value a key holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ValueKind {
    /// A string.
    Text,
    /// `NX x NY x NZ`.
    Size,
    /// One quantity of this dimension.
    Quantity(Dim),
    /// A dimensionless number (`growth`, `skin`).
    Number,
    /// A per-cell property of this dimension in any value form.
    Property(Dim),
    /// `dx`, `dy`, `dz`: a scalar or one width per column/row/layer (`dz` also per cell).
    Spacing(Axis),
    /// `top`: scalar, `columns [...]` or `file`.
    Top,
    /// `3200 psi at 7150 ft` or, for `initial`, any property form.
    PressureAtDepth,
    /// One of the names.
    Choice(&'static [&'static str]),
    /// `(i, j)`.
    Column,
    /// `1..4` or `2`.
    LayerRange,
    /// `[(i, j, k) ...]`.
    Cells,
    /// `rate <surface rate>` or `bhp <pressure>`.
    Control,
    /// A list of times, `[1 2 6 12] hr` (a unit after `]` or on each item).
    Times,
    /// One column of a saturation table: a list of values of this
    /// dimension, `[0.25 0.35 0.45]` or `[9 3.2 0] psi` (a unit after `]`
    /// or on each item).
    TableColumn(Dim),
    /// The label of a `relperm` block, in quotes: `"channel sand"`.
    RelpermName,
}

/// One key of a block: its name, value kind, whether required, and its meaning.
#[derive(Debug, Clone, Copy)]
pub struct KeyDef {
    /// The key as written.
    pub name: &'static str,
    /// What value it holds.
    pub kind: ValueKind,
    /// Whether the block must give it.
    pub required: bool,
    /// One sentence on what it means (hover, completion, missing-key messages).
    pub doc: &'static str,
}

/// Whether a block takes a string label after its name.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LabelRule {
    /// No label: `grid { ... }`.
    None,
    /// A label may be given: `fluid "brine" { ... }`.
    Optional,
    /// A label must be given: `well "P-1" { ... }`.
    Required,
}

/// One block: its name, label rule, keys, nested blocks and meaning.
#[derive(Debug, Clone, Copy)]
pub struct BlockDef {
    /// The block name as written.
    pub name: &'static str,
    /// Whether it takes a label.
    pub label: LabelRule,
    /// May appear more than once (then labels must differ).
    pub repeatable: bool,
    /// Its keys.
    pub keys: &'static [KeyDef],
    /// Names of blocks allowed inside.
    pub children: &'static [&'static str],
    /// One sentence on what the block is for.
    pub doc: &'static str,
}

impl BlockDef {
    /// The definition of key `name`, if the block has it.
    pub fn key(&self, name: &str) -> Option<&'static KeyDef> {
        self.keys.iter().find(|k| k.name == name)
    }
}

const fn key(name: &'static str, kind: ValueKind, required: bool, doc: &'static str) -> KeyDef {
    KeyDef {
        name,
        kind,
        required,
        doc,
    }
}

/// Values of a well's `role`.
pub const ROLES: &[&str] = &["producer", "injector"];
/// Directions of a completed wellbore.
pub const DIRECTIONS: &[&str] = &["x", "y", "z"];
/// Values of a boundary's `side`.
pub const SIDES: &[&str] = &["west", "east", "south", "north", "top", "bottom"];
/// Values of the timeline's `kind`.
pub const RUN_KINDS: &[&str] = &["transient", "steady"];
/// Choices of `report.maps`.
pub const MAP_SELECTIONS: &[&str] = &["all", "last", "none"];
/// Values of the report's `units`.
pub const SYSTEMS: &[&str] = &["field", "metric", "si"];
/// Modes of a well's `control` that take a value; `shut`, which takes none,
/// is read apart in the lowering of wells. `rate` is the single-phase
/// surface rate; `oil_rate`, `liquid_rate` and `water_rate` belong to
/// oil-water decks.
pub const CONTROL_MODES: &[&str] = &["rate", "bhp", "oil_rate", "liquid_rate", "water_rate"];
/// Every word that may start a `control`: the modes with a value, and `shut`.
pub const CONTROL_WORDS: &[&str] = &[
    "rate",
    "bhp",
    "shut",
    "oil_rate",
    "liquid_rate",
    "water_rate",
];
/// The control words of a single-phase deck.
pub const SINGLE_PHASE_CONTROLS: &[&str] = &["rate", "bhp", "shut"];
/// The control words of a producer in an oil-water deck.
pub const OIL_WATER_PRODUCER_CONTROLS: &[&str] = &["oil_rate", "liquid_rate", "bhp", "shut"];
/// The control words of an injector in an oil-water deck (injectors inject water).
pub const OIL_WATER_INJECTOR_CONTROLS: &[&str] = &["water_rate", "bhp", "shut"];
/// Forms of a `relperm` block.
pub const RELPERM_MODELS: &[&str] = &["corey", "table"];
/// The keys of the Corey form of `relperm`.
pub const COREY_KEYS: &[&str] = &["swc", "sor", "krw_end", "kro_end", "nw", "no", "pc_entry"];
/// The keys of the table form of `relperm`.
pub const TABLE_KEYS: &[&str] = &["sw", "krw", "kro", "pc"];

/// The `case` block: the title of the case.
pub static CASE: BlockDef = BlockDef {
    name: "case",
    label: LabelRule::Optional,
    repeatable: false,
    keys: &[key(
        "title",
        ValueKind::Text,
        false,
        "A one-line description shown in reports.",
    )],
    children: &[],
    doc: "Metadata of the case: its name (the label) and a title.",
};

/// The `grid` block: cell counts, sizes and depth.
pub static GRID: BlockDef = BlockDef {
    name: "grid",
    label: LabelRule::None,
    repeatable: false,
    keys: &[
        key("cells", ValueKind::Size, true, "Number of cells as NX x NY x NZ."),
        key("dx", ValueKind::Spacing(Axis::X), true, "Cell width in x: one value, or a list of NX widths (one per column)."),
        key("dy", ValueKind::Spacing(Axis::Y), true, "Cell width in y: one value, or a list of NY widths (one per row)."),
        key(
            "dz",
            ValueKind::Spacing(Axis::Z),
            true,
            "Cell thickness: one value, a list of NZ thicknesses, or `cells [...]` / `file` for one per cell.",
        ),
        key(
            "top",
            ValueKind::Top,
            true,
            "Depth of the top face of layer 1: one value, `columns [...]` (NX*NY values) or `file`.",
        ),
    ],
    children: &[],
    doc: "The tensor-product grid: cell counts, widths and the depth of its top.",
};

/// The per-cell keys of `rock`, also allowed in its `patch` blocks.
pub static ROCK_KEYS: &[KeyDef] = &[
    key(
        "porosity",
        ValueKind::Property(Dim::NONE),
        true,
        "Pore fraction of the bulk volume (0 to 1, or with %); 0 makes a cell inactive.",
    ),
    key(
        "kx",
        ValueKind::Property(Dim::PERMEABILITY),
        true,
        "Permeability in x (along i).",
    ),
    key(
        "ky",
        ValueKind::Property(Dim::PERMEABILITY),
        false,
        "Permeability in y (along j); defaults to kx.",
    ),
    key(
        "kz",
        ValueKind::Property(Dim::PERMEABILITY),
        false,
        "Vertical permeability (along k); defaults to kx.",
    ),
    key(
        "compressibility",
        ValueKind::Quantity(Dim::COMPRESSIBILITY),
        false,
        "Pore (rock) compressibility; defaults to 0.",
    ),
    key(
        "ref_pressure",
        ValueKind::Quantity(Dim::PRESSURE),
        false,
        "Pressure at which porosity is given; defaults to the initial datum pressure.",
    ),
    key(
        "relperm",
        ValueKind::RelpermName,
        false,
        "Oil-water decks: the `relperm` block whose curves the cells use, by its label; may be omitted when the deck has one.",
    ),
];

/// The `rock` block: porosity, permeability, compressibility.
pub static ROCK: BlockDef = BlockDef {
    name: "rock",
    label: LabelRule::None,
    repeatable: false,
    keys: ROCK_KEYS,
    children: &["patch"],
    doc: "Rock properties per cell: porosity, permeabilities and pore compressibility.",
};

/// A `patch` inside `rock`: override properties over a range of cells.
pub static PATCH: BlockDef = BlockDef {
    name: "patch",
    label: LabelRule::None,
    repeatable: true,
    keys: &[
        key("porosity", ValueKind::Property(Dim::NONE), false, "Porosity inside the patch."),
        key("kx", ValueKind::Property(Dim::PERMEABILITY), false, "kx inside the patch."),
        key("ky", ValueKind::Property(Dim::PERMEABILITY), false, "ky inside the patch."),
        key("kz", ValueKind::Property(Dim::PERMEABILITY), false, "kz inside the patch."),
        key("relperm", ValueKind::RelpermName, false, "Oil-water decks: the `relperm` curves inside the patch, by label."),
    ],
    children: &[],
    doc: "Overrides rock properties in a box of cells: `patch i = 12..14 k = 3 { kz = 0 md }`. Omitted axes mean all; patches apply in order.",
};

/// The keys of `fluid`, also those of `oil` and `water`.
pub static FLUID_KEYS: &[KeyDef] = &[
    key(
        "viscosity",
        ValueKind::Quantity(Dim::VISCOSITY),
        true,
        "Viscosity at reservoir conditions.",
    ),
    key(
        "fvf",
        ValueKind::Quantity(Dim::FVF),
        true,
        "Formation volume factor: reservoir volume per surface volume (rb/stb, rm3/sm3).",
    ),
    key(
        "compressibility",
        ValueKind::Quantity(Dim::COMPRESSIBILITY),
        false,
        "Fluid compressibility; defaults to 0.",
    ),
    key(
        "density",
        ValueKind::Quantity(Dim::DENSITY),
        true,
        "Density at reservoir conditions, used for gravity.",
    ),
    key(
        "ref_pressure",
        ValueKind::Quantity(Dim::PRESSURE),
        false,
        "Pressure at which fvf and density hold; defaults to the initial datum pressure.",
    ),
];

/// The `fluid` block: one slightly compressible liquid.
pub static FLUID: BlockDef = BlockDef {
    name: "fluid",
    label: LabelRule::Optional,
    repeatable: false,
    keys: FLUID_KEYS,
    children: &[],
    doc: "The one slightly compressible liquid of the case.",
};

/// The `oil` block of an oil-water deck.
pub static OIL: BlockDef = BlockDef {
    name: "oil",
    label: LabelRule::None,
    repeatable: false,
    keys: FLUID_KEYS,
    children: &[],
    doc: "The oil of an oil-water deck (with `water`, instead of `fluid`): a slightly compressible liquid; the initial datum pressure and BHPs are oil pressures.",
};

/// The `water` block of an oil-water deck.
pub static WATER: BlockDef = BlockDef {
    name: "water",
    label: LabelRule::None,
    repeatable: false,
    keys: FLUID_KEYS,
    children: &[],
    doc: "The water of an oil-water deck (with `oil`, instead of `fluid`): a slightly compressible liquid.",
};

/// A `relperm "label"` block: water and oil relative permeability and the
/// capillary pressure as functions of water saturation.
pub static RELPERM: BlockDef = BlockDef {
    name: "relperm",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key("model", ValueKind::Choice(RELPERM_MODELS), true, "`corey` (endpoints and exponents) or `table` (lists of sw, krw, kro and optionally pc)."),
        key("swc", ValueKind::Number, false, "Corey: connate water saturation; krw = 0 at and below it."),
        key("sor", ValueKind::Number, false, "Corey: residual oil saturation to water; kro = 0 at and above sw = 1 - sor."),
        key("krw_end", ValueKind::Number, false, "Corey: water relative permeability at sw = 1 - sor, in (0, 1]."),
        key("kro_end", ValueKind::Number, false, "Corey: oil relative permeability at sw = swc, in (0, 1]."),
        key("nw", ValueKind::Number, false, "Corey: exponent of krw on the normalised saturation S = (sw - swc) / (1 - swc - sor)."),
        key("no", ValueKind::Number, false, "Corey: exponent of kro on 1 - S."),
        key("pc_entry", ValueKind::Quantity(Dim::PRESSURE), false, "Corey: capillary pressure p_oil - p_water at sw = swc, falling linearly in S to 0 at 1 - sor; defaults to 0."),
        key("sw", ValueKind::TableColumn(Dim::NONE), false, "Table: water saturations, increasing."),
        key("krw", ValueKind::TableColumn(Dim::NONE), false, "Table: water relative permeability at each sw, not decreasing, starting at 0."),
        key("kro", ValueKind::TableColumn(Dim::NONE), false, "Table: oil relative permeability at each sw, not increasing, ending at 0."),
        key("pc", ValueKind::TableColumn(Dim::PRESSURE), false, "Table: capillary pressure p_oil - p_water at each sw, not increasing, with a pressure unit (`[9 3.2 0] psi`); optional, 0 without it."),
    ],
    children: &[],
    doc: "Saturation functions of an oil-water deck: krw, kro and the capillary pressure as functions of water saturation, in Corey form or as a table. Interpolated linearly and held constant beyond the table's ends.",
};

/// The `initial` block: the initial pressure.
pub static INITIAL: BlockDef = BlockDef {
    name: "initial",
    label: LabelRule::None,
    repeatable: false,
    keys: &[
        key(
            "pressure",
            ValueKind::PressureAtDepth,
            true,
            "Initial pressure: `3200 psi at 7150 ft` sets a datum and fills the grid in hydrostatic equilibrium; a value without `at`, `layers`, `cells` or `file` sets cell pressures directly. In an oil-water deck the datum pressure is the oil pressure.",
        ),
        key(
            "water_contact",
            ValueKind::Quantity(Dim::LENGTH),
            false,
            "Oil-water decks: depth of the oil-water contact (free water level, pc = 0); saturations follow in capillary-gravity equilibrium.",
        ),
        key(
            "water_saturation",
            ValueKind::Property(Dim::NONE),
            false,
            "Oil-water decks: the initial water saturation given directly (a value, `layers`, `cells` or `file`), instead of `water_contact`.",
        ),
    ],
    children: &[],
    doc: "The initial state.",
};

/// A `well` block.
pub static WELL: BlockDef = BlockDef {
    name: "well",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key("role", ValueKind::Choice(ROLES), true, "`producer` or `injector`."),
        key("location", ValueKind::Column, false, "Column `(i, j)` of a vertical well; completed in `layers`."),
        key("layers", ValueKind::LayerRange, false, "Layers completed at `location`, e.g. `1..4`; defaults to all."),
        key("completions", ValueKind::Cells, false, "Explicit completed cells `[(i, j, k) ...]`, instead of location and layers; one index of a cell may be a range, `(28..35, 10, 2)`: the cells along that axis, completed along it."),
        key("direction", ValueKind::Choice(DIRECTIONS), false, "Axis the wellbore runs along in the listed `completions` (x, y or z); defaults to z. A range in a cell sets it for that cell; `location` wells are vertical."),
        key("radius", ValueKind::Quantity(Dim::LENGTH), true, "Wellbore radius."),
        key("skin", ValueKind::Number, false, "Skin factor; defaults to 0."),
        key("control", ValueKind::Control, true, "`rate <surface rate>`, `bhp <pressure>` or `shut`; in an oil-water deck `oil_rate` or `liquid_rate` (producer) and `water_rate` (injector) instead of `rate`."),
        key("bhp_limit", ValueKind::Quantity(Dim::PRESSURE), false, "Producer: lowest bottom-hole pressure; injector: highest. Rate control switches to it."),
        key("max_water_cut", ValueKind::Number, false, "Oil-water decks, producers: the surface water cut above which the well is shut for the rest of the run (0 to 1)."),
    ],
    children: &[],
    doc: "A well with its completions, radius, skin and control.",
};

/// A `boundary` block: a side of the grid held at a pressure.
pub static BOUNDARY: BlockDef = BlockDef {
    name: "boundary",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key("side", ValueKind::Choice(SIDES), true, "Face of the grid: west, east, south, north, top or bottom."),
        key(
            "pressure",
            ValueKind::PressureAtDepth,
            true,
            "Constant pressure; `at <depth>` makes it hydrostatic along the face, without it the value holds at every face centre.",
        ),
        key("i", ValueKind::LayerRange, false, "Columns i of the side it holds, e.g. `3..8`; all by default."),
        key("j", ValueKind::LayerRange, false, "Rows j of the side it holds, e.g. `1..12`; all by default."),
        key("k", ValueKind::LayerRange, false, "Layers k of the side it holds, e.g. `2..3`; all by default."),
    ],
    children: &[],
    doc: "A constant-pressure boundary (an aquifer, a pressure-maintained edge) on one side of the grid.",
};

/// A `fault` block: a transmissibility multiplier on interior faces.
pub static FAULT: BlockDef = BlockDef {
    name: "fault",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key("side", ValueKind::Choice(SIDES), true, "The faces it scales: those on this side (west, east, south, north, top or bottom) of each selected cell; each must have a cell across."),
        key("i", ValueKind::LayerRange, false, "Columns i of the selected cells, e.g. `20` or `3..8`; all by default."),
        key("j", ValueKind::LayerRange, false, "Rows j of the selected cells, e.g. `1..12`; all by default."),
        key("k", ValueKind::LayerRange, false, "Layers k of the selected cells, e.g. `1..3`; all by default."),
        key("multiplier", ValueKind::Number, true, "Transmissibility multiplier of the faces, 0 or more: 0 seals them, 1 leaves them as the rock makes them. Several faults on one face multiply."),
    ],
    children: &[],
    doc: "A fault: scales the transmissibility of the interior faces on one side of a box of cells (0 seals them).",
};

/// An `aquifer` block: a finite aquifer on a side of the grid (Fetkovich).
pub static AQUIFER: BlockDef = BlockDef {
    name: "aquifer",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key("side", ValueKind::Choice(SIDES), true, "Face of the grid the aquifer touches: west, east, south, north, top or bottom."),
        key("water_volume", ValueKind::Quantity(Dim::RESERVOIR_VOLUME), true, "Initial water volume of the aquifer, W_i (reservoir volume, e.g. `2.5e9 rb`)."),
        key("compressibility", ValueKind::Quantity(Dim::COMPRESSIBILITY), true, "Total compressibility of the aquifer, c_t (water plus rock)."),
        key("productivity", ValueKind::Quantity(Dim::RESERVOIR_RATE_PER_PRESSURE), true, "Aquifer productivity index J (e.g. `35 rb/day/psi`): influx = J (aquifer pressure - face pressure), shared by the faces by area."),
        key("i", ValueKind::LayerRange, false, "Columns i of the side it holds, e.g. `3..8`; all by default."),
        key("j", ValueKind::LayerRange, false, "Rows j of the side it holds, e.g. `1..12`; all by default."),
        key("k", ValueKind::LayerRange, false, "Layers k of the side it holds, e.g. `2..3`; all by default."),
    ],
    children: &[],
    doc: "A finite aquifer in the pseudo-steady form of Fetkovich: its pressure falls with the water it gives (material balance), and the influx follows its productivity.",
};

/// The `timeline` block: run length, time steps and events.
pub static TIMELINE: BlockDef = BlockDef {
    name: "timeline",
    label: LabelRule::None,
    repeatable: false,
    keys: &[
        key(
            "kind",
            ValueKind::Choice(RUN_KINDS),
            false,
            "`transient` (default) or `steady`.",
        ),
        key(
            "end",
            ValueKind::Quantity(Dim::TIME),
            false,
            "End of a transient run (required for transient).",
        ),
        key(
            "first_step",
            ValueKind::Quantity(Dim::TIME),
            false,
            "First time step; defaults to 0.1 day or end/10, the smaller.",
        ),
        key(
            "max_step",
            ValueKind::Quantity(Dim::TIME),
            false,
            "Largest time step; defaults to end/10.",
        ),
        key(
            "min_step",
            ValueKind::Quantity(Dim::TIME),
            false,
            "Shortest step a cut may leave; a step that fails at it stops the run. Defaults to 1 s (or first_step, if shorter).",
        ),
        key(
            "max_steps",
            ValueKind::Number,
            false,
            "Most time steps the run may take; defaults to 100000.",
        ),
        key(
            "growth",
            ValueKind::Number,
            false,
            "Factor by which a step may grow after a good one; defaults to 1.5.",
        ),
        key(
            "report_every",
            ValueKind::Quantity(Dim::TIME),
            false,
            "Interval of report times; without it: events and the end.",
        ),
        key(
            "report_at",
            ValueKind::Times,
            false,
            "Report times as a list, e.g. `[1 2 6 12 24 48] hr`; merged with report_every.",
        ),
    ],
    children: &["at"],
    doc: "How the run proceeds in time, and the events that change controls.",
};

/// An event `at TIME { ... }` inside `timeline`.
pub static EVENT: BlockDef = BlockDef {
    name: "at",
    label: LabelRule::None,
    repeatable: true,
    keys: &[],
    children: &["well"],
    doc: "An event: `at 180 day { well \"LE-1\" { control = bhp 1500 psi } }`.",
};

/// A `well` change inside an event.
pub static EVENT_WELL: BlockDef = BlockDef {
    name: "well",
    label: LabelRule::Required,
    repeatable: true,
    keys: &[
        key(
            "control",
            ValueKind::Control,
            false,
            "The new control from the event time on.",
        ),
        key(
            "bhp_limit",
            ValueKind::Quantity(Dim::PRESSURE),
            false,
            "The new BHP limit from the event time on.",
        ),
        key(
            "skin",
            ValueKind::Number,
            false,
            "The new skin factor from the event time on (damage or a stimulation); the well index changes with it.",
        ),
    ],
    children: &[],
    doc: "A change to a well's control, BHP limit or skin at the event time.",
};

/// The `report` block: how results are shown.
pub static REPORT: BlockDef = BlockDef {
    name: "report",
    label: LabelRule::None,
    repeatable: false,
    keys: &[
        key(
            "units",
            ValueKind::Choice(SYSTEMS),
            false,
            "Unit system of the results: field (default), metric or si.",
        ),
        key(
            "maps",
            ValueKind::Choice(MAP_SELECTIONS),
            false,
            "Which report times get a pressure map file: all (default), last or none.",
        ),
    ],
    children: &[],
    doc: "How results are shown.",
};

/// Blocks allowed at the top level, plus the `include` directive.
pub static TOP_LEVEL: &[&BlockDef] = &[
    &CASE, &GRID, &ROCK, &FLUID, &OIL, &WATER, &RELPERM, &INITIAL, &WELL, &BOUNDARY, &FAULT,
    &AQUIFER, &TIMELINE, &REPORT,
];

/// The top-level block definition named `name`, if any.
pub fn top_block(name: &str) -> Option<&'static BlockDef> {
    TOP_LEVEL.iter().copied().find(|b| b.name == name)
}

/// The definition of a block nested in `parent`.
pub fn child_block(parent: &BlockDef, name: &str) -> Option<&'static BlockDef> {
    if !parent.children.contains(&name) {
        return None;
    }
    match (parent.name, name) {
        ("rock", "patch") => Some(&PATCH),
        ("timeline", "at") => Some(&EVENT),
        ("at", "well") => Some(&EVENT_WELL),
        _ => None,
    }
}

/// The nearest of `candidates` to `name`, if it is close enough to be a likely typo.
/// The edit distance is only computed where it can pass: its cost grows with
/// the product of the lengths, and a 50 MB name is no typo of any key.
pub fn nearest<'a>(name: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let lower = name.to_ascii_lowercase();
    candidates
        .into_iter()
        .filter_map(|c| {
            let c_lower = c.to_ascii_lowercase();
            let (n, m) = (lower.len(), c.len());
            if c.starts_with(&lower) || lower.starts_with(c) {
                // A prefix: the distance is the difference in length.
                return Some((n.abs_diff(m), c));
            }
            let allowed = (m.max(n) / 3).max(1);
            if n.abs_diff(m) > allowed {
                return None;
            }
            let d = strsim::damerau_levenshtein(&lower, &c_lower);
            (d <= allowed).then_some((d, c))
        })
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}
