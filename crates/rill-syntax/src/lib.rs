//! `rill-syntax` owns the text-to-tree step for rill case files: the lexer,
//! the `nom` parser with error recovery, the syntax tree with a byte span on
//! every node, and the canonical formatter (a pure function of the tree).
//!
//! It must never know what a key means (that is `rill-model`), never do I/O,
//! and never panic on any input.
//!
//! - [`parse`] / [`parse_bytes`]: text to [`SourceFile`], always a whole
//!   tree, with every syntax error in [`SourceFile::errors`] (sorted by
//!   position). Never panics; time and memory linear in the input.
//! - [`format()`]: the canonical layout (rules in the [`format`](mod@format)
//!   module doc); a pure function of the tree.
//! - [`same_meaning`] / [`strip_spans`]: tree equality up to spans.
//! - [`Expr`]: the arithmetic of a value (`0.1 * kx + 5 md`), held flat as
//!   a sum of products, in [`Value::expr`].
//! - [`LineIndex`]: byte offsets to lines and columns with the language's
//!   line breaks, shared by every front end.
//!
//! # Spans
//! Byte offsets into the parsed text, always on `char` boundaries. The span
//! of a number, a string or a list includes its unit, which has its own
//! span in [`UnitExpr`]; [`AtomKind::List::close`] is the `]` alone. A
//! selector spans `key = value`; a statement `key = value` (to the `=` when
//! the value is empty, whose span is then empty, right after the `=`); a
//! block from its name to `}` (to its last item when left open).
//!
//! # Lexical decisions
//! - Line breaks are `\n`, `\r\n` or a lone `\r`. Whitespace is space and
//!   tab; a byte-order mark at the very start is skipped. Any other
//!   character outside strings and comments (NUL, non-ASCII letters, `@`)
//!   is an error; a run of such characters is one error.
//! - Identifiers start with an ASCII letter. Numbers: `12`, `-3`, `0.25`,
//!   `.5`, `1.5e-6`, `1E6`; `1.` is not a number. `raw` keeps the spelling;
//!   `1e999` has the value infinity.
//! - A unit follows a number, a closed string or `]` after spaces/tabs on
//!   the same line, or glued (`22%`, `250md`), when the text there starts
//!   with a letter, `%`, `(` or `1/` and matches
//!   `term (("*" | "/") term)*`, `term := name ("^" int)? | "1" | "%" | "(" expr ")" ("^" int)?`
//!   (the longest match; `1/(psi*day)` and `(m/s)^2` as `rill-units` takes
//!   them). It is not a unit when it is `at` (`3200 psi at 7150 ft`), when it
//!   is a lone `1` (`300 1/90`), or when `=` follows it (`patch i = 3 k = 3`:
//!   `k` is a selector key).
//! - An unsigned integer, then `x`, then an integer (spaces/tabs optional,
//!   same line) is a size: `30 x 20 x 4`, `30x20x4`, `30 x20 x 4`. Text
//!   glued after a part does not change that (`4x4ft` is a size and a name,
//!   `30 x 2.5` the size `30 x 2` and `.5`), because the formatter puts a
//!   space after every atom and must not turn a size into something else;
//!   the one exception is `..`, which is always written glued: `0 x 1..5` is
//!   `0` with the unit `x`, then the range `1..5`.
//! - An integer glued to `..` and an integer is a range: `1..5`, `-2..-1`.
//!   Integers that do not fit `i64` (ranges) or `u64` (sizes) are errors.
//! - `-` directly followed by a digit (or `.digit`) is a sign, unless it is
//!   glued to a value on its left (a name, number, string, range, size, `]`
//!   or `)` ending right where the `-` starts), where it is the operator.
//!   So `kx - 5`, `kx-5` and `[1]-2` subtract; `kx * -1`, `rate -600 stb/day`,
//!   `(1,-2)` and `[1 -2]` hold negative numbers; `kx -5` is two atoms, which
//!   the model reports. This is the rule of Julia and MATLAB array literals,
//!   applied everywhere; the formatter writes operators spaced on both sides
//!   and signs glued, so it never turns one into the other.
//! - Strings: `\"` and `\\` are the escapes; any other backslash is an error
//!   (kept literally in the value); an unclosed string ends at its line end.
//!
//! # Grammar and recovery
//! - A statement is `key = atoms`, ending at a line break or `;` outside
//!   brackets, at a `}` (which closes the enclosing block:
//!   `well "A" { control = bhp 1500 psi }`), or at the end of the file.
//! - A block is `name args { items }`; header args are atoms and selectors
//!   `key = atom`. `name args` ending without `=` or `{` is a directive.
//!   Items may follow a `}` on the same line.
//! - Inside `[ ]` and `( )`, line breaks are whitespace and items are
//!   separated by whitespace or commas (one trailing comma allowed).
//! - After an unexpected token, the rest of the statement is skipped (brackets
//!   counted); in a block header the skip stops at a `{`, which still opens
//!   the block. Only the first stray token of one list is reported.
//! - A list or tuple left open ends before a line break whose next line starts
//!   a new item (`key =`, a block header line reaching `{`, or `}`), and at
//!   `;`, `}` or the end of the file; the error is on the opening delimiter.
//! - Blocks, lists and tuples nest at most [`MAX_DEPTH`] levels together; a
//!   deeper one is one error and is skipped without recursion.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

pub mod ast;
mod compare;
pub mod expr;
pub mod format;
mod lexer;
pub mod lines;
mod parser;

pub use ast::*;
pub use compare::{same_meaning, strip_spans};
pub use expr::{parse_expr, Expr, ExprError, Factor, OpAt, Term};
pub use format::WIDTH;
pub use lines::LineIndex;
pub use parser::MAX_DEPTH;

/// Parses a case file. Never panics; runs in time linear in the text.
pub fn parse(text: &str) -> SourceFile {
    parser::Parser::new(text).parse_file()
}

/// Decodes bytes as UTF-8, replacing each invalid sequence with U+FFFD and
/// reporting it as `syntax.unexpected` (expected "UTF-8 text", found
/// "invalid byte 0x.."), then parses. Spans refer to the returned string.
pub fn parse_bytes(bytes: &[u8]) -> (String, SourceFile) {
    let mut text = String::with_capacity(bytes.len());
    let mut bad: Vec<SyntaxError> = Vec::new();
    for chunk in bytes.utf8_chunks() {
        text.push_str(chunk.valid());
        let invalid = chunk.invalid();
        if !invalid.is_empty() {
            let start = text.len();
            text.push(char::REPLACEMENT_CHARACTER);
            let hex: Vec<String> = invalid.iter().map(|b| format!("0x{b:02X}")).collect();
            let found = if invalid.len() == 1 {
                format!("invalid byte {}", hex[0])
            } else {
                format!("invalid bytes {}", hex.join(" "))
            };
            bad.push(SyntaxError {
                kind: SyntaxErrorKind::Unexpected,
                span: Span::new(start, text.len()),
                expected: "UTF-8 text".to_string(),
                found,
                fix: None,
            });
        }
    }
    let mut file = parse(&text);
    if !bad.is_empty() {
        // The parser sees a replacement character where the decoder already
        // reported the bytes: keep the decoder's error only.
        let spans: std::collections::HashSet<Span> = bad.iter().map(|e| e.span).collect();
        file.errors
            .retain(|e| !(e.kind == SyntaxErrorKind::Unexpected && spans.contains(&e.span)));
        file.errors.extend(bad);
        file.errors.sort_by_key(|e| (e.span.start, e.span.end));
    }
    (text, file)
}

/// Formats a file in the canonical layout. `text` must be the text that
/// `file` was parsed from; a file with syntax errors is returned unchanged.
pub fn format(file: &SourceFile, text: &str) -> String {
    format::format(file, text)
}
