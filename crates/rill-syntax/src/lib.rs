//! `rill-syntax` owns the text-to-tree step for rill case files: the lexer,
//! the `nom` parser with error recovery, the syntax tree with a byte span on
//! every node, and the canonical formatter (a pure function of the tree).
//!
//! It must never know what a key means (that is `rill-model`), never do I/O,
//! and never panic on any input.
//!
//! - [`parse`] / [`parse_bytes`]: text to [`SourceFile`], always a tree, with
//!   every syntax error in [`SourceFile::errors`] (sorted by position).
//! - [`format`]: the canonical layout (rules in the [`format`](mod@format) module doc).
//! - [`same_meaning`]: tree equality up to spans.
//!
//! Spans are byte offsets into the parsed text, always on `char`
//! boundaries. The span of a number, a string or a list includes its unit,
//! which has its own span in [`UnitExpr`]. Line breaks are `\n`, `\r\n` or a
//! lone `\r`. A byte-order mark at the start is skipped. Lexical decisions
//! (units, sizes, ranges, the sign of `-`) are documented in `lexer.rs`,
//! recovery rules in `parser.rs`.

pub mod ast;
mod compare;
pub mod format;
mod lexer;
mod parser;

pub use ast::*;
pub use compare::{same_meaning, strip_spans};
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
            });
        }
    }
    let mut file = parse(&text);
    if !bad.is_empty() {
        // The parser sees a replacement character where the decoder already
        // reported the bytes: keep the decoder's error only.
        let spans: std::collections::HashSet<Span> = bad.iter().map(|e| e.span).collect();
        file.errors.retain(|e| !(e.kind == SyntaxErrorKind::Unexpected && spans.contains(&e.span)));
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
