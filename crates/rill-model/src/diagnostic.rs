//! Diagnostics are data: a stable code, a severity, a primary span, a message
//! that says what was expected and what was found, secondary labels and
//! fixes. The command line renders them with `codespan-reporting`, the
//! language server maps them to the protocol; neither invents wording.

use rill_syntax::Span;
use serde::Serialize;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    Error,
    Warning,
    Info,
}

impl Severity {
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
    pub file: usize,
    pub start: usize,
    pub end: usize,
}

impl Location {
    pub fn new(file: usize, span: Span) -> Self {
        Location {
            file,
            start: span.start,
            end: span.end,
        }
    }
    pub fn span(&self) -> Span {
        Span::new(self.start, self.end)
    }
}

/// One text replacement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Edit {
    pub location: Location,
    pub replacement: String,
}

/// A fix the user can apply: a title and the edits that make it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fix {
    pub title: String,
    pub edits: Vec<Edit>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Label {
    pub location: Location,
    pub message: String,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diagnostic {
    pub code: &'static str,
    pub severity: Severity,
    pub location: Location,
    pub message: String,
    /// Other places that explain the diagnostic (the first definition of a duplicate, ...).
    pub labels: Vec<Label>,
    /// Extra lines of help ("accepted units: md, darcy, m^2").
    pub notes: Vec<String>,
    pub fixes: Vec<Fix>,
}

impl Diagnostic {
    pub fn new(
        code: &'static str,
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
    pub fn error(code: &'static str, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Error, location, message)
    }
    pub fn warning(code: &'static str, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Warning, location, message)
    }
    pub fn info(code: &'static str, location: Location, message: impl Into<String>) -> Self {
        Self::new(code, Severity::Info, location, message)
    }
    pub fn with_label(mut self, location: Location, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            location,
            message: message.into(),
        });
        self
    }
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
    pub fn with_fix(mut self, fix: Fix) -> Self {
        self.fixes.push(fix);
        self
    }
}

/// Every diagnostic code, in the order of the specification. `explain`
/// documents each; tests check that each has a triggering fixture.
pub const CODES: &[&str] = &[
    "syntax.unexpected",
    "syntax.unclosed",
    "deck.unknown-block",
    "deck.unknown-key",
    "deck.missing-key",
    "deck.duplicate-key",
    "deck.duplicate-name",
    "deck.include",
    "deck.reference",
    "deck.value",
    "unit.unknown",
    "unit.missing",
    "unit.dimension",
    "unit.volume-kind",
    "unit.gauge",
    "grid.array-length",
    "grid.spacing",
    "grid.index",
    "sanity.porosity",
    "sanity.permeability",
    "sanity.viscosity",
    "sanity.compressibility",
    "sanity.fvf",
    "sanity.density",
    "sanity.radius",
    "well.completion",
    "well.bhp",
    "well.injection-pressure",
    "flow.isolated",
    "flow.no-drive",
    "timeline.order",
];
