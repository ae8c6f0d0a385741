//! Diagnostics are data: a stable code, a severity, a primary span, a message
//! that says what was expected and what was found, secondary labels and
//! fixes. The command line renders them with `codespan-reporting`, the
//! language server maps them to the protocol; neither invents wording.

use rill_syntax::Span;
use serde::Serialize;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
/// How serious a diagnostic is.
pub enum Severity {
    /// The deck cannot be run as written.
    Error,
    /// The deck runs, but something is probably wrong.
    Warning,
    /// Worth knowing; nothing is wrong.
    Info,
}

impl Severity {
    /// The lowercase name, as in the command-line and JSON output.
    pub fn name(self) -> &'static str {
        match self {
            Severity::Error => "error",
            Severity::Warning => "warning",
            Severity::Info => "info",
        }
    }
}

/// A place in one of the analysed files (index into `Analysis::files`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub struct Location {
    /// Index of the file in `Analysis::files`.
    pub file: usize,
    /// Byte offset of the start.
    pub start: usize,
    /// Byte offset just past the end.
    pub end: usize,
}

impl Location {
    /// The place of `span` in file `file`.
    pub fn new(file: usize, span: Span) -> Self {
        Location {
            file,
            start: span.start,
            end: span.end,
        }
    }
    /// The byte range within the file.
    pub fn span(&self) -> Span {
        Span::new(self.start, self.end)
    }
}

/// One text replacement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Edit {
    /// The text replaced.
    pub location: Location,
    /// What replaces it.
    pub replacement: String,
}

/// A fix the user can apply: a title and the edits that make it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fix {
    /// What the fix does, as offered to the user ("replace by `md`").
    pub title: String,
    /// The replacements, applied together.
    pub edits: Vec<Edit>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
/// A secondary place with a message, shown next to the primary span.
pub struct Label {
    /// The place.
    pub location: Location,
    /// What it says about the diagnostic ("first given here").
    pub message: String,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
/// One finding about a deck: code, severity, place, message, and what helps.
pub struct Diagnostic {
    /// The stable code.
    pub code: Code,
    /// How serious it is.
    pub severity: Severity,
    /// The primary span.
    pub location: Location,
    /// What was expected and what was found.
    pub message: String,
    /// Other places that explain the diagnostic (the first definition of a duplicate, ...).
    pub labels: Vec<Label>,
    /// Extra lines of help ("accepted units: md, darcy, m^2").
    pub notes: Vec<String>,
    /// Fixes the user can apply.
    pub fixes: Vec<Fix>,
}

impl Diagnostic {
    /// A diagnostic without labels, notes or fixes.
    pub fn new(
        code: Code,
        severity: Severity,
        location: Location,
        message: impl Into<String>,
    ) -> Self {
        Diagnostic {
            code,
            severity,
            location,
            message: message.into(),
            labels: Vec::new(),
            notes: Vec::new(),
            fixes: Vec::new(),
        }
    }
    /// An error.
    pub fn error(code: Code, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Error, location, message)
    }
    /// A warning.
    pub fn warning(code: Code, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Warning, location, message)
    }
    /// An information.
    pub fn info(code: Code, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Info, location, message)
    }
    /// Add a secondary place.
    pub fn with_label(mut self, location: Location, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            location,
            message: message.into(),
        });
        self
    }
    /// Add a line of help.
    pub fn with_note(mut self, note: impl Into<String>) -> Self {
        self.notes.push(note.into());
        self
    }
    /// A fix that replaces the text at `location`.
    pub fn with_replacement(
        mut self,
        title: impl Into<String>,
        location: Location,
        replacement: impl Into<String>,
    ) -> Self {
        self.fixes.push(Fix {
            title: title.into(),
            edits: vec![Edit {
                location,
                replacement: replacement.into(),
            }],
        });
        self
    }
    /// Add a fix made of several edits.
    pub fn with_fix(mut self, fix: Fix) -> Self {
        self.fixes.push(fix);
        self
    }
}

/// Defines [`Code`] from one list of (variant, name, doc) so that the enum,
/// its string forms and [`Code::ALL`] cannot drift apart. (A macro rather
/// than a derive crate: twenty lines, and the list is the point.)
macro_rules! codes {
    ($($(#[doc = $doc:literal])* $variant:ident = $name:literal,)*) => {
        /// A diagnostic code. Its string form (`deck.missing-key`) is the
        /// stable name users see, search for and pass to `rill explain`;
        /// JSON output and the language server carry that string.
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
        pub enum Code {
            $($(#[doc = $doc])* $variant,)*
        }

        impl Code {
            /// Every code, in the order of the specification (extensions
            /// next to their kin). `explain` documents each; tests check
            /// that each has a triggering fixture.
            pub const ALL: &'static [Code] = &[$(Code::$variant,)*];

            /// The stable name, as in `deck.missing-key`.
            pub fn as_str(self) -> &'static str {
                match self {
                    $(Code::$variant => $name,)*
                }
            }
        }
    };
}

codes! {
    /// A token that does not fit where it stands.
    SyntaxUnexpected = "syntax.unexpected",
    /// A bracket, brace or string left open.
    SyntaxUnclosed = "syntax.unclosed",
    /// A block name not in the schema.
    DeckUnknownBlock = "deck.unknown-block",
    /// A key not in the schema of its block.
    DeckUnknownKey = "deck.unknown-key",
    /// A required key or block is absent.
    DeckMissingKey = "deck.missing-key",
    /// A key or block given twice.
    DeckDuplicateKey = "deck.duplicate-key",
    /// Two blocks of one kind with one name.
    DeckDuplicateName = "deck.duplicate-name",
    /// An include or array file missing, unreadable, cyclic or outside the workspace.
    DeckInclude = "deck.include",
    /// A name that refers to nothing, or a cycle of references.
    DeckReference = "deck.reference",
    /// A value of the wrong form for its key.
    DeckValue = "deck.value",
    /// A word that is not one of the key's choices.
    DeckChoice = "deck.choice",
    /// A number outside the range its key allows.
    DeckOutOfRange = "deck.out-of-range",
    /// Arithmetic where the key takes none, or an operator without an operand.
    DeckExpression = "deck.expression",
    /// `fluid` together with `oil` or `water`, only one of `oil` and
    /// `water`, or an oil-water block or key in a single-phase deck.
    DeckPhases = "deck.phases",
    /// A unit name not in the registry.
    UnitUnknown = "unit.unknown",
    /// A dimensional value without a unit.
    UnitMissing = "unit.missing",
    /// A unit of the wrong dimension.
    UnitDimension = "unit.dimension",
    /// Reservoir volume where surface volume is expected, or the reverse.
    UnitVolumeKind = "unit.volume-kind",
    /// A gauge unit inside a compound unit or for a difference.
    UnitGauge = "unit.gauge",
    /// An array with the wrong number of values.
    GridArrayLength = "grid.array-length",
    /// A grid size (`cells`) that is malformed, has a zero count or is too large.
    GridCells = "grid.cells",
    /// A cell size that is zero or negative.
    GridSpacing = "grid.spacing",
    /// A patch range or other index outside the grid.
    GridIndex = "grid.index",
    /// Porosity outside [0, 1], or unusually high.
    SanityPorosity = "sanity.porosity",
    /// Negative or unusually high permeability.
    SanityPermeability = "sanity.permeability",
    /// A viscosity not positive or outside the usual range.
    SanityViscosity = "sanity.viscosity",
    /// A negative or unusually high compressibility.
    SanityCompressibility = "sanity.compressibility",
    /// A formation volume factor not positive or outside the usual range.
    SanityFvf = "sanity.fvf",
    /// A liquid density outside the usual range.
    SanityDensity = "sanity.density",
    /// An endpoint mobility ratio above 10: an unstable displacement.
    SanityMobility = "sanity.mobility",
    /// A wellbore radius too large for its cell, or very small.
    SanityRadius = "sanity.radius",
    /// An absolute pressure (BHP control or limit, boundary) that is zero or negative.
    SanityPressure = "sanity.pressure",
    /// Saturation-function endpoints that cannot hold: a saturation outside
    /// [0, 1], `swc + sor >= 1`, an end-point relative permeability outside
    /// (0, 1], or a table that does not start (krw) or end (kro) at zero.
    RelpermEndpoints = "relperm.endpoints",
    /// A saturation table of the wrong shape: `sw` not increasing, `krw`
    /// decreasing, `kro` or `pc` increasing, lists of different lengths;
    /// a Corey exponent below 1 (a warning).
    RelpermShape = "relperm.shape",
    /// An initial pressure that is zero, negative or below 1 atm somewhere in the grid.
    InitialPressure = "initial.pressure",
    /// A water contact above the top of the grid or below its base.
    InitialContact = "initial.contact",
    /// A completion outside the grid or in an inactive cell.
    WellCompletion = "well.completion",
    /// A BHP on the wrong side of the initial pressure for the well's role.
    WellBhp = "well.bhp",
    /// A well whose every completion has a zero well index.
    WellProductivity = "well.productivity",
    /// A control whose phase does not fit the well's role or the deck
    /// (`oil_rate` on an injector, `water_rate` on a producer,
    /// `max_water_cut` on an injector).
    WellControlPhase = "well.control-phase",
    /// An injector BHP that may exceed fracture pressure.
    WellInjectionPressure = "well.injection-pressure",
    /// Two boundaries hold the same outer face.
    BoundaryOverlap = "boundary.overlap",
    /// A fault that selects faces on the grid's edge, with no cell across.
    FaultFaces = "fault.faces",
    /// An active cell cut off from all flow.
    FlowIsolated = "flow.isolated",
    /// No well and no boundary: nothing moves.
    FlowNoDrive = "flow.no-drive",
    /// Events out of order, or a step or event beyond the end of the run.
    TimelineOrder = "timeline.order",
    /// The run cannot finish within `max_steps`, or `min_step` is above
    /// `first_step` or `max_step`.
    TimelineSteps = "timeline.steps",
}

impl Code {
    /// The code with this stable name, if there is one.
    pub fn parse(name: &str) -> Option<Code> {
        Code::ALL.iter().copied().find(|c| c.as_str() == name)
    }

    /// The area before the dot: `syntax`, `deck`, `unit`, `grid`, ...
    pub fn area(self) -> &'static str {
        self.as_str().split('.').next().unwrap_or("")
    }
}

impl std::fmt::Display for Code {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// Serialised as its stable name, so JSON output reads `"code": "deck.value"`.
impl Serialize for Code {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

/// Ordered by name, so that diagnostics at one place sort as they always have.
impl Ord for Code {
    fn cmp(&self, other: &Self) -> std::cmp::Ordering {
        self.as_str().cmp(other.as_str())
    }
}

impl PartialOrd for Code {
    fn partial_cmp(&self, other: &Self) -> Option<std::cmp::Ordering> {
        Some(self.cmp(other))
    }
}

impl PartialEq<str> for Code {
    fn eq(&self, other: &str) -> bool {
        self.as_str() == other
    }
}

impl PartialEq<&str> for Code {
    fn eq(&self, other: &&str) -> bool {
        self.as_str() == *other
    }
}
