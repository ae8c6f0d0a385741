//! Why a unit expression was rejected.

use crate::absolute_counterpart;
use std::fmt;

/// Why a unit expression was rejected, with the byte span (`start..end`
/// into the parsed text) of the offending part.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitError {
    /// What is wrong.
    pub kind: UnitErrorKind,
    /// First byte of the offending part.
    pub start: usize,
    /// One past its last byte.
    pub end: usize,
}

#[derive(Debug, Clone, PartialEq, Eq)]
/// The kinds of [`UnitError`].
pub enum UnitErrorKind {
    /// A name that is not in the registry, with the nearest names.
    Unknown {
        /// The name as written.
        name: String,
        /// The nearest registry names or compounds, best first.
        suggestions: Vec<String>,
    },
    /// Text that does not fit the grammar. Both strings are ready to show:
    /// `expected` is a phrase (``a unit name, `1` or `(` ``), `found` the
    /// offending token in backticks or `end of input`.
    Syntax {
        /// What the grammar allows here.
        expected: String,
        /// What was written.
        found: String,
    },
    /// `psig` or `barg` inside a compound unit or raised to a power.
    GaugeInCompound {
        /// The gauge unit.
        name: String,
    },
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.kind {
            UnitErrorKind::Unknown { name, suggestions } => {
                write!(f, "expected a known unit, found `{name}`")?;
                match suggestions.as_slice() {
                    [] => Ok(()),
                    [one] => write!(f, "; did you mean `{one}`?"),
                    [init @ .., last] => {
                        f.write_str("; did you mean ")?;
                        for (i, s) in init.iter().enumerate() {
                            if i > 0 {
                                f.write_str(", ")?;
                            }
                            write!(f, "`{s}`")?;
                        }
                        write!(f, " or `{last}`?")
                    }
                }
            }
            UnitErrorKind::Syntax { expected, found } => {
                write!(f, "expected {expected} in the unit, found {found}")
            }
            UnitErrorKind::GaugeInCompound { name } => {
                write!(
                    f,
                    "expected the gauge unit `{name}` on its own, for an absolute pressure, \
                     found it inside a compound unit or raised to a power"
                )?;
                if let Some(abs) = absolute_counterpart(name) {
                    write!(f, "; use `{abs}` here")?;
                }
                Ok(())
            }
        }
    }
}

impl std::error::Error for UnitError {}
