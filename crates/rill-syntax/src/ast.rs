//! The syntax tree. Every node carries the byte span of the text it came from.
//!
//! The tree is schema-free: it knows that `kx = layers [1 2] md` is a key with a
//! value of two atoms, not what `kx` means. Meaning is given by `rill-model`.

/// A half-open byte range `start..end` into the source text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct Span {
    pub start: usize,
    pub end: usize,
}

impl Span {
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
    pub fn len(self) -> usize {
        self.end - self.start
    }
    pub fn is_empty(self) -> bool {
        self.end <= self.start
    }
    pub fn contains(self, offset: usize) -> bool {
        self.start <= offset && offset < self.end
    }
}

/// A whole parsed file: its items, its comments (kept aside so that the
/// formatter can put them back) and every syntax error found on the way.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SourceFile {
    pub items: Vec<Item>,
    pub comments: Vec<Comment>,
    pub errors: Vec<SyntaxError>,
    /// Byte length of the parsed text.
    pub len: usize,
}

/// `# text` up to the end of the line; `text` excludes the `#` and the newline.
#[derive(Debug, Clone, PartialEq)]
pub struct Comment {
    pub text: String,
    pub span: Span,
}

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
    pub fn span(&self) -> Span {
        match self {
            Item::Statement(s) => s.span,
            Item::Block(b) => b.span,
            Item::Directive(d) => d.span,
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct Ident {
    pub name: String,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Statement {
    pub key: Ident,
    /// Span of the `=`.
    pub eq: Span,
    pub value: Value,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Block {
    pub name: Ident,
    /// Header arguments between the name and `{`: a label string, a quantity
    /// (`at 180 day`), selectors (`i = 12..14`).
    pub args: Vec<Atom>,
    pub items: Vec<Item>,
    /// Span of `{`.
    pub open: Span,
    /// Span of `}`; `None` when the block was left open (a `syntax.unclosed` error is reported).
    pub close: Option<Span>,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Directive {
    pub name: Ident,
    pub args: Vec<Atom>,
    pub span: Span,
}

/// The right-hand side of a statement: one or more atoms in a row.
/// An empty value (`key =` and then the end of the line) has no atoms and
/// carries a `syntax.unexpected` error.
#[derive(Debug, Clone, PartialEq)]
pub struct Value {
    pub atoms: Vec<Atom>,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    pub kind: AtomKind,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub enum AtomKind {
    /// `12`, `-3`, `0.25`, `1.5e-6`, optionally followed by a unit: `250 md`.
    /// `raw` keeps the number as written, so that the formatter never changes it.
    Number {
        value: f64,
        raw: String,
        unit: Option<UnitExpr>,
    },
    /// `producer`, `kx`, `layers`, `at`.
    Ident(String),
    /// `"text"` (escapes resolved), optionally followed by a unit: `file "kx.txt" md`.
    Str {
        value: String,
        unit: Option<UnitExpr>,
    },
    /// `[ a b, c ]` with an optional unit after `]` that applies to every item.
    List {
        items: Vec<Atom>,
        unit: Option<UnitExpr>,
        close: Option<Span>,
    },
    /// `1..5`, inclusive.
    Range { start: i64, end: i64 },
    /// `(i, j, k)` or `(i, j)`; items may be numbers or ranges.
    Tuple {
        items: Vec<Atom>,
        close: Option<Span>,
    },
    /// `30 x 20 x 4`.
    Size(Vec<u64>),
    /// An arithmetic operator between atoms: `0.1 * kx`.
    Op(Op),
    /// `name = value` inside a block header, e.g. `patch i = 12..14 k = 3`.
    Selector { key: Ident, value: Box<Atom> },
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Op {
    Add,
    Sub,
    Mul,
    Div,
}

impl Op {
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
    pub text: String,
    pub span: Span,
}

#[derive(Debug, Clone, PartialEq)]
pub struct SyntaxError {
    pub kind: SyntaxErrorKind,
    pub span: Span,
    /// What was expected, in words: "a value after `=`", "`}`".
    pub expected: String,
    /// What was found, in words: "end of line", "`)`".
    pub found: String,
}

#[derive(Debug, Clone, PartialEq)]
pub enum SyntaxErrorKind {
    /// A token that does not fit (`syntax.unexpected`).
    Unexpected,
    /// A `{`, `[`, `(` or string left open (`syntax.unclosed`); `span` is the opening delimiter.
    Unclosed,
}
