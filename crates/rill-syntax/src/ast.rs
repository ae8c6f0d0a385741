//! The syntax tree. Every node carries the byte span of the text it came from.
//!
//! The tree is schema-free: it knows that `kx = layers [1 2] md` is a key with a
//! value of two atoms, not what `kx` means. Meaning is given by `rill-model`.

use crate::expr::{Expr, ExprError};

/// A half-open byte range `start..end` into the source text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct Span {
    /// First byte.
    pub start: usize,
    /// One past the last byte.
    pub end: usize,
}

impl Span {
    /// The span `start..end`.
    pub fn new(start: usize, end: usize) -> Self {
        Span { start, end }
    }
    /// The smallest span covering both.
    pub fn join(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
    /// Length in bytes (0 for a reversed span).
    pub fn len(self) -> usize {
        self.end.saturating_sub(self.start)
    }
    /// True when the span covers no byte.
    pub fn is_empty(self) -> bool {
        self.end <= self.start
    }
    /// True when byte `offset` lies inside the span.
    pub fn contains(self, offset: usize) -> bool {
        self.start <= offset && offset < self.end
    }
}

/// A whole parsed file: its items, its comments (kept aside so that the
/// formatter can put them back) and every syntax error found on the way.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SourceFile {
    /// Top-level items in the order written.
    pub items: Vec<Item>,
    /// Every comment, in the order written.
    pub comments: Vec<Comment>,
    /// Every syntax error, sorted by position.
    pub errors: Vec<SyntaxError>,
    /// Byte length of the parsed text.
    pub len: usize,
}

/// `# text` up to the end of the line; `text` excludes the `#` and the newline.
#[derive(Debug, Clone, PartialEq)]
pub struct Comment {
    /// The text after `#`.
    pub text: String,
    /// From `#` to the end of the line (line break excluded).
    pub span: Span,
}

/// One entry of a file or a block.
#[derive(Debug, Clone, PartialEq)]
pub enum Item {
    /// `key = value`
    Statement(Statement),
    /// `name args... { items }`
    Block(Block),
    /// `name args...` on a line of its own without `=` or `{`, e.g. `include "x.rill"`.
    Directive(Directive),
}

impl Item {
    /// The span of the whole item.
    pub fn span(&self) -> Span {
        match self {
            Item::Statement(s) => s.span,
            Item::Block(b) => b.span,
            Item::Directive(d) => d.span,
        }
    }
}

/// A name as written: a key, a block name, a selector key.
#[derive(Debug, Clone, PartialEq)]
pub struct Ident {
    /// The name.
    pub name: String,
    /// Where it is written.
    pub span: Span,
}

/// `key = value`.
#[derive(Debug, Clone, PartialEq)]
pub struct Statement {
    /// The key before `=`.
    pub key: Ident,
    /// Span of the `=`.
    pub eq: Span,
    /// Everything after `=`.
    pub value: Value,
    /// From the key to the end of the value.
    pub span: Span,
}

/// `name args { items }`.
#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    /// The block's name (`grid`, `well`).
    pub name: Ident,
    /// Header arguments between the name and `{`: a label string, a quantity
    /// (`at 180 day`), selectors (`i = 12..14`).
    pub args: Vec<Atom>,
    /// The statements, blocks and directives inside.
    pub items: Vec<Item>,
    /// Span of `{`.
    pub open: Span,
    /// Span of `}`; `None` when the block was left open (a `syntax.unclosed` error is reported).
    pub close: Option<Span>,
    /// From the name to `}`.
    pub span: Span,
}

/// `name args` on a line of its own: `include "more.rill"`.
#[derive(Debug, Clone, PartialEq)]
pub struct Directive {
    /// The directive's name.
    pub name: Ident,
    /// The atoms after the name.
    pub args: Vec<Atom>,
    /// From the name to the last argument.
    pub span: Span,
}

/// The right-hand side of a statement: one or more atoms in a row.
/// An empty value (`key =` and then the end of the line) has no atoms and
/// carries a `syntax.unexpected` error.
#[derive(Debug, Clone, PartialEq)]
pub struct Value {
    /// The atoms in the order written.
    pub atoms: Vec<Atom>,
    /// From the first atom to the last (empty, right after `=`, when there is none).
    pub span: Span,
    /// The arithmetic the atoms form when they contain an operator
    /// (`0.1 * kx + 5 md`), or why they do not; `None` without an operator.
    /// See [`crate::expr`].
    pub expr: Option<Result<Expr, ExprError>>,
}

/// One element of a value or a block header, with its span.
#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    /// What it is.
    pub kind: AtomKind,
    /// Where it is written (a number's span includes its unit).
    pub span: Span,
}

/// The kinds of atoms.
#[derive(Debug, Clone, PartialEq)]
pub enum AtomKind {
    /// `12`, `-3`, `0.25`, `1.5e-6`, optionally followed by a unit: `250 md`.
    /// `raw` keeps the number as written, so that the formatter never changes it.
    Number {
        /// The value (infinity when it overflows `f64`).
        value: f64,
        /// The number as written.
        raw: String,
        /// The unit after it, if any.
        unit: Option<UnitExpr>,
    },
    /// `producer`, `kx`, `layers`, `at`.
    Ident(String),
    /// `"text"` (escapes resolved), optionally followed by a unit: `file "kx.txt" md`.
    Str {
        /// The text with escapes resolved.
        value: String,
        /// The unit after the closing quote, if any.
        unit: Option<UnitExpr>,
    },
    /// `[ a b, c ]` with an optional unit after `]` that applies to every item.
    List {
        /// The items.
        items: Vec<Atom>,
        /// The unit after `]`, if any.
        unit: Option<UnitExpr>,
        /// Span of `]`; `None` when the list was left open.
        close: Option<Span>,
    },
    /// `1..5`, inclusive.
    Range {
        /// First index.
        start: i64,
        /// Last index (inclusive).
        end: i64,
    },
    /// `(i, j, k)` or `(i, j)`; items may be numbers or ranges.
    Tuple {
        /// The items.
        items: Vec<Atom>,
        /// Span of `)`; `None` when the tuple was left open.
        close: Option<Span>,
    },
    /// `30 x 20 x 4`.
    Size(Vec<u64>),
    /// An arithmetic operator between atoms: `0.1 * kx`.
    Op(Op),
    /// `name = value` inside a block header, e.g. `patch i = 12..14 k = 3`.
    Selector {
        /// The key before `=`.
        key: Ident,
        /// The atom after `=`.
        value: Box<Atom>,
    },
}

/// An arithmetic operator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Op {
    /// `+`
    Add,
    /// `-`
    Sub,
    /// `*`
    Mul,
    /// `/`
    Div,
}

impl Op {
    /// The operator as written.
    pub fn as_char(self) -> char {
        match self {
            Op::Add => '+',
            Op::Sub => '-',
            Op::Mul => '*',
            Op::Div => '/',
        }
    }
}

/// A unit expression exactly as written, e.g. `lb/ft^3`, `1/psi`, `rb/stb`.
/// It contains no whitespace; `rill-units` gives it meaning.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitExpr {
    /// The unit as written.
    pub text: String,
    /// Where it is written.
    pub span: Span,
}

/// A syntax error: what was expected and what was found, where.
#[derive(Debug, Clone, PartialEq)]
pub struct SyntaxError {
    /// Which code it reports.
    pub kind: SyntaxErrorKind,
    /// The offending text (for `Unclosed`, the opening delimiter).
    pub span: Span,
    /// What was expected, in words: "a value after `=`", "`}`".
    pub expected: String,
    /// What was found, in words: "end of line", "`)`".
    pub found: String,
    /// A repair where the parser knows one.
    pub fix: Option<SyntaxFix>,
}

/// A repair of a syntax error: replace `span` by `replacement`.
#[derive(Debug, Clone, PartialEq)]
pub struct SyntaxFix {
    /// What it does, as offered to the user ("insert `;`").
    pub title: String,
    /// The text replaced (empty to insert).
    pub span: Span,
    /// What replaces it.
    pub replacement: String,
}

/// The two syntax diagnostic codes.
#[derive(Debug, Clone, PartialEq)]
pub enum SyntaxErrorKind {
    /// A token that does not fit (`syntax.unexpected`).
    Unexpected,
    /// A `{`, `[`, `(` or string left open (`syntax.unclosed`); `span` is the opening delimiter.
    Unclosed,
}
