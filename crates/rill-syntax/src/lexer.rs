//! Tokens of the case language, recognised with `nom` combinators.
//!
//! The token parsers (`ident`, `number`, `unit_expr`, `string_lit`,
//! `size_tail`, `range_tail`) are plain `nom` parsers over `&str`. The
//! [`Lexer`] drives them from a byte position and turns one *scalar atom*
//! (a number with its unit, a range, a size, a string with its unit, an
//! identifier) or one punctuation mark into a [`Token`] with its span.
//!
//! Lexing decisions that depend on context, all made here so that a token is
//! a pure function of (position, "is a value glued to the left"):
//! - A unit follows a number, a string or `]` after spaces/tabs on the same
//!   line (or glued: `10%`, `250md`), when the text there starts with a
//!   letter, `%`, `(` or `1/` and matches the unit grammar. It is not a unit
//!   when it is exactly `at` (`3200 psi at 7150 ft`) or when `=` follows it
//!   (`patch i = 3 k = 3`: `k` is a selector key).
//! - An unsigned integer followed by `x` and another integer (spaces/tabs
//!   optional) is a size: `30 x 20 x 4`, `30x20x4`.
//! - An integer followed directly by `..` and an integer is a range: `1..5`.
//! - `-` directly followed by a digit (or `.digit`) is the sign of a number,
//!   unless a value token ends right where the `-` starts (no whitespace in
//!   between), in which case it is the operator: `kx-5` and `kx - 5` are
//!   `kx`, `-`, `5`; `kx * -1`, `[1 -2]`, `rate -600 stb/day` carry the
//!   negative numbers `-1`, `-2`, `-600`; `kx -5` is two atoms (`kx`, `-5`),
//!   which the model reports as a missing operator. This is the rule of
//!   array literals in Julia and MATLAB, applied everywhere, so that the
//!   formatter (which writes operators with a space on both sides) never
//!   changes a sign into an operator or back.
//! - Runs of characters that start no token are one `Unknown` token, so that
//!   junk produces one error, not one per byte.

use crate::ast::{Comment, Op, Span, SyntaxError, SyntaxErrorKind, SyntaxFix, UnitExpr};
use nom::{
    branch::alt,
    bytes::complete::{is_not, tag, take_till, take_while},
    character::complete::{char, digit1, none_of, one_of, satisfy},
    combinator::{not, opt, recognize},
    error::{Error, ErrorKind},
    multi::{many0, many1},
    sequence::{delimited, pair, preceded, terminated, tuple},
    IResult,
};

/// Deepest nesting of parentheses inside one unit expression.
const MAX_UNIT_DEPTH: u32 = 16;

// ---------------------------------------------------------------------------
// nom token parsers
// ---------------------------------------------------------------------------

/// Spaces and tabs (never newlines).
pub(crate) fn hspace0(i: &str) -> IResult<&str, &str> {
    take_while(|c| c == ' ' || c == '\t')(i)
}

/// An identifier: an ASCII letter, then ASCII letters, digits, `_`.
pub(crate) fn ident(i: &str) -> IResult<&str, &str> {
    recognize(pair(
        satisfy(|c| c.is_ascii_alphabetic()),
        take_while(|c: char| c.is_ascii_alphanumeric() || c == '_'),
    ))(i)
}

/// A number as written: `12`, `-3`, `0.25`, `.5`, `1.5e-6`, `1E6`.
/// A `.` is part of the number only when a digit follows it, so `1..5`
/// lexes as `1`, `..`, `5`.
pub(crate) fn number(i: &str) -> IResult<&str, &str> {
    recognize(tuple((
        opt(char('-')),
        alt((
            recognize(pair(digit1, opt(pair(char('.'), digit1)))),
            recognize(pair(char('.'), digit1)),
        )),
        opt(tuple((one_of("eE"), opt(one_of("+-")), digit1))),
    )))(i)
}

/// An integer with an optional sign, as used in ranges.
pub(crate) fn int_lit(i: &str) -> IResult<&str, &str> {
    recognize(pair(opt(char('-')), digit1))(i)
}

/// `..5` after the start of a range.
pub(crate) fn range_tail(i: &str) -> IResult<&str, &str> {
    preceded(tag(".."), int_lit)(i)
}

/// ` x 20 x 4` after the first integer of a size.
///
/// What follows a part never matters except `..`: the formatter writes a
/// space after every atom (`30x20x4ft` becomes `30 x 20 x 4 ft`), so a
/// lexing decision that looked at glued text after the digits (a name, `.5`,
/// `e3`) would change on the formatted text. Only `..` is looked at, since a
/// range is always written glued: `0 x 1..5` is `0 x` then the range `1..5`.
/// So `30 x 2.5` is the size `30 x 2` then `.5`, which the model reports.
pub(crate) fn size_tail(i: &str) -> IResult<&str, Vec<&str>> {
    many1(preceded(
        tuple((hspace0, char('x'), hspace0)),
        terminated(digit1, not(tag(".."))),
    ))(i)
}

/// `^2`, `^-1`, `^+3`.
fn unit_exponent(i: &str) -> IResult<&str, &str> {
    recognize(tuple((char('^'), opt(one_of("+-")), digit1)))(i)
}

/// `term := name ("^" int)? | "1" | "%" | "(" expr ")" ("^" int)?` (a
/// group may carry an exponent, as `rill-units` accepts: `(m/s)^2`).
fn unit_term(i: &str, depth: u32) -> IResult<&str, &str> {
    alt((
        recognize(pair(ident, opt(unit_exponent))),
        recognize(terminated(
            char('1'),
            not(satisfy(|c: char| {
                c.is_ascii_alphanumeric() || c == '_' || c == '.'
            })),
        )),
        tag("%"),
        recognize(pair(move |i| unit_group(i, depth), opt(unit_exponent))),
    ))(i)
}

fn unit_group(i: &str, depth: u32) -> IResult<&str, &str> {
    if depth >= MAX_UNIT_DEPTH {
        return Err(nom::Err::Error(Error::new(i, ErrorKind::TooLarge)));
    }
    recognize(delimited(
        char('('),
        move |i| unit_expr_at(i, depth + 1),
        char(')'),
    ))(i)
}

fn unit_expr_at(i: &str, depth: u32) -> IResult<&str, &str> {
    recognize(pair(
        move |i| unit_term(i, depth),
        many0(pair(one_of("*/"), move |i| unit_term(i, depth))),
    ))(i)
}

/// A unit expression: `term (("*" | "/") term)*`, e.g. `lb/ft^3`, `1/psi`, `Pa*s`, `%`.
pub(crate) fn unit_expr(i: &str) -> IResult<&str, &str> {
    unit_expr_at(i, 0)
}

/// One piece of a string body.
enum StrPiece<'a> {
    Text(&'a str),
    /// The character after a backslash; `None` when the line ends right after it.
    Escape(Option<char>),
}

fn str_piece(i: &str) -> IResult<&str, StrPiece<'_>> {
    alt((
        nom::combinator::map(is_not("\"\\\r\n"), StrPiece::Text),
        nom::combinator::map(preceded(char('\\'), opt(none_of("\r\n"))), StrPiece::Escape),
    ))(i)
}

/// A string literal as lexed: value with escapes resolved, whether the
/// closing quote was found, and the bad escapes (byte offsets relative to
/// the opening quote, and the text found).
pub(crate) struct StrLit {
    pub value: String,
    pub closed: bool,
    pub bad_escapes: Vec<(usize, usize, String)>,
    pub len: usize,
}

/// `"text"` with `\"` and `\\` escapes. Never fails once `"` is seen: an
/// unclosed string ends at the end of the line.
pub(crate) fn string_lit(i: &str) -> IResult<&str, StrLit> {
    let (mut rest, _) = char('"')(i)?;
    let mut value = String::new();
    let mut bad_escapes = Vec::new();
    loop {
        let at = i.len() - rest.len();
        match str_piece(rest) {
            Ok((r, StrPiece::Text(t))) => {
                value.push_str(t);
                rest = r;
            }
            Ok((r, StrPiece::Escape(c))) => {
                match c {
                    Some('"') => value.push('"'),
                    Some('\\') => value.push('\\'),
                    Some(other) => {
                        value.push('\\');
                        value.push(other);
                        bad_escapes.push((
                            at,
                            at + 1 + other.len_utf8(),
                            format!("`\\{}`", printable(other)),
                        ));
                    }
                    None => {
                        value.push('\\');
                        bad_escapes.push((at, at + 1, "`\\` at the end of the line".to_string()));
                    }
                }
                rest = r;
            }
            Err(_) => break,
        }
    }
    let (rest, close) = opt(char('"'))(rest)?;
    let len = i.len() - rest.len();
    Ok((
        rest,
        StrLit {
            value,
            closed: close.is_some(),
            bad_escapes,
            len,
        },
    ))
}

/// A comment body after `#`, up to (not including) the end of the line.
pub(crate) fn comment_body(i: &str) -> IResult<&str, &str> {
    preceded(char('#'), take_till(|c| c == '\n' || c == '\r'))(i)
}

/// A line break: `\r\n`, `\n` or a lone `\r`.
pub(crate) fn newline(i: &str) -> IResult<&str, &str> {
    alt((tag("\r\n"), tag("\n"), tag("\r")))(i)
}

/// Where a unit starts after a value, if one does: the offset of the unit in
/// `i` (after spaces/tabs) and its text.
pub(crate) fn unit_after(i: &str) -> Option<(usize, &str)> {
    let (r, ws) = hspace0(i).ok()?;
    let starts = r.starts_with(|c: char| c.is_ascii_alphabetic() || c == '%' || c == '(')
        || r.starts_with("1/");
    if !starts {
        return None;
    }
    let (rest, u) = unit_expr(r).ok()?;
    // `at` is a word of the value (`3200 psi at 7150 ft`); a lone `1` is
    // not a unit (`300 1/90` is `300`, `1`, `/`, `90`).
    if u == "at" || u == "1" {
        return None;
    }
    let (after, _) = hspace0(rest).ok()?;
    if after.starts_with('=') {
        return None;
    }
    Some((ws.len(), u))
}

/// Can this character start a token (other than an `Unknown` run)?
fn starts_token(c: char, next: Option<char>) -> bool {
    match c {
        'a'..='z' | 'A'..='Z' | '0'..='9' => true,
        '.' => matches!(next, Some('0'..='9')),
        '"' | '[' | ']' | '(' | ')' | '{' | '}' | '=' | ';' | ',' | '+' | '-' | '*' | '/' | '#' => {
            true
        }
        ' ' | '\t' | '\n' | '\r' => true,
        _ => false,
    }
}

/// A character as shown in a message: control characters escaped.
pub(crate) fn printable(c: char) -> String {
    if c.is_control() || c == '\u{FEFF}' {
        format!("U+{:04X}", c as u32)
    } else {
        c.to_string()
    }
}

/// A piece of source text as shown in a message, shortened when long.
pub(crate) fn quote(text: &str) -> String {
    const MAX: usize = 24;
    let mut s = String::from("`");
    for (n, c) in text.chars().enumerate() {
        if n == MAX {
            s.push('…');
            break;
        }
        s.push_str(&printable(c));
    }
    s.push('`');
    s
}

// ---------------------------------------------------------------------------
// Tokens and the lexer
// ---------------------------------------------------------------------------

#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Tok {
    Ident(String),
    Number {
        value: f64,
        raw: String,
        unit: Option<UnitExpr>,
    },
    Range {
        start: i64,
        end: i64,
    },
    Size(Vec<u64>),
    Str {
        value: String,
        unit: Option<UnitExpr>,
    },
    LBracket,
    /// `]` with the unit that follows it, if any; the token span covers `]` only.
    RBracket(Option<UnitExpr>),
    LParen,
    RParen,
    LBrace,
    RBrace,
    Eq,
    Semi,
    Comma,
    Op(Op),
    Newline,
    Eof,
    /// A run of characters that start no token.
    Unknown,
}

impl Tok {
    /// Tokens after which a glued `-` is an operator, and that can begin an atom.
    fn is_value(&self) -> bool {
        matches!(
            self,
            Tok::Ident(_)
                | Tok::Number { .. }
                | Tok::Range { .. }
                | Tok::Size(_)
                | Tok::Str { .. }
                | Tok::RBracket(_)
                | Tok::RParen
        )
    }
}

#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Token {
    pub tok: Tok,
    /// The token's text; for a number, string or `]` with a unit, up to the end of the unit.
    pub span: Span,
}

/// Where comments and lexical errors go. A lexer run without a sink (a
/// look-ahead) records nothing; the main run records each exactly once.
#[derive(Debug, Default)]
pub(crate) struct Sink {
    pub comments: Vec<Comment>,
    pub errors: Vec<SyntaxError>,
}

impl Sink {
    pub fn error(
        &mut self,
        kind: SyntaxErrorKind,
        span: Span,
        expected: impl Into<String>,
        found: impl Into<String>,
    ) {
        self.errors.push(SyntaxError {
            kind,
            span,
            expected: expected.into(),
            found: found.into(),
            fix: None,
        });
    }

    /// An error with a repair.
    pub fn error_with_fix(
        &mut self,
        span: Span,
        expected: impl Into<String>,
        found: impl Into<String>,
        fix: SyntaxFix,
    ) {
        self.error(SyntaxErrorKind::Unexpected, span, expected, found);
        if let Some(e) = self.errors.last_mut() {
            e.fix = Some(fix);
        }
    }
}

#[derive(Debug, Clone)]
pub(crate) struct Lexer<'a> {
    text: &'a str,
    pos: usize,
    /// End of the last token when it was a value token, else `usize::MAX`.
    last_value_end: usize,
}

impl<'a> Lexer<'a> {
    pub fn new(text: &'a str, pos: usize) -> Self {
        Lexer {
            text,
            pos,
            last_value_end: usize::MAX,
        }
    }

    /// Skips spaces, tabs, a byte-order mark at the very start, and comments
    /// (recorded in the sink). Stops before a line break.
    fn skip_trivia(&mut self, sink: &mut Option<&mut Sink>) {
        loop {
            let rest = &self.text[self.pos..];
            if self.pos == 0 && rest.starts_with('\u{FEFF}') {
                self.pos += '\u{FEFF}'.len_utf8();
                continue;
            }
            let (r, ws) = hspace0(rest).unwrap_or((rest, ""));
            if !ws.is_empty() {
                self.pos += ws.len();
                continue;
            }
            if let Ok((r2, body)) = comment_body(r) {
                let start = self.pos;
                let end = self.pos + (r.len() - r2.len());
                if let Some(s) = sink.as_deref_mut() {
                    if s.comments.last().is_none_or(|c| c.span.start < start) {
                        s.comments.push(Comment {
                            text: body.to_string(),
                            span: Span::new(start, end),
                        });
                    }
                }
                self.pos = end;
                continue;
            }
            return;
        }
    }

    fn unit_at(&self, pos: usize) -> Option<UnitExpr> {
        let (off, u) = unit_after(&self.text[pos..])?;
        let start = pos + off;
        Some(UnitExpr {
            text: u.to_string(),
            span: Span::new(start, start + u.len()),
        })
    }

    /// The next token. Comments and lexical errors go to `sink` when given.
    pub fn next(&mut self, mut sink: Option<&mut Sink>) -> Token {
        self.skip_trivia(&mut sink);
        let start = self.pos;
        let rest = &self.text[start..];
        let mut chars = rest.chars();
        let Some(c) = chars.next() else {
            self.last_value_end = usize::MAX;
            return Token {
                tok: Tok::Eof,
                span: Span::new(start, start),
            };
        };
        let next = chars.next();
        let glued_to_value = self.last_value_end == start;
        let (tok, end) = match c {
            'a'..='z' | 'A'..='Z' => match ident(rest) {
                Ok((_, name)) => (Tok::Ident(name.to_string()), start + name.len()),
                Err(_) => (Tok::Unknown, start + 1),
            },
            '0'..='9' => self.number_token(start, &mut sink),
            '.' if matches!(next, Some('0'..='9')) => self.number_token(start, &mut sink),
            '-' if !glued_to_value
                && (matches!(next, Some('0'..='9'))
                    || (next == Some('.')
                        && rest[2..].starts_with(|c: char| c.is_ascii_digit()))) =>
            {
                self.number_token(start, &mut sink)
            }
            '"' => self.string_token(start, &mut sink),
            '[' => (Tok::LBracket, start + 1),
            ']' => (Tok::RBracket(self.unit_at(start + 1)), start + 1),
            '(' => (Tok::LParen, start + 1),
            ')' => (Tok::RParen, start + 1),
            '{' => (Tok::LBrace, start + 1),
            '}' => (Tok::RBrace, start + 1),
            '=' => (Tok::Eq, start + 1),
            ';' => (Tok::Semi, start + 1),
            ',' => (Tok::Comma, start + 1),
            '+' => (Tok::Op(Op::Add), start + 1),
            '-' => (Tok::Op(Op::Sub), start + 1),
            '*' => (Tok::Op(Op::Mul), start + 1),
            '/' => (Tok::Op(Op::Div), start + 1),
            '\n' | '\r' => {
                let len = newline(rest).map(|(_, n)| n.len()).unwrap_or(1);
                (Tok::Newline, start + len)
            }
            _ => {
                // A run of characters that start no token.
                let mut end = start;
                let mut it = rest.char_indices().peekable();
                while let Some((off, ch)) = it.next() {
                    let nxt = it.peek().map(|&(_, n)| n);
                    if off > 0 && starts_token(ch, nxt) {
                        break;
                    }
                    end = start + off + ch.len_utf8();
                }
                (Tok::Unknown, end)
            }
        };
        // `]` carries its unit in the token but its span is the bracket alone;
        // the position moves past the unit.
        let (span, new_pos) = match &tok {
            Tok::RBracket(Some(u)) => (Span::new(start, end), u.span.end),
            _ => (Span::new(start, end), end),
        };
        self.pos = new_pos;
        self.last_value_end = if tok.is_value() { new_pos } else { usize::MAX };
        Token { tok, span }
    }

    fn number_token(&self, start: usize, sink: &mut Option<&mut Sink>) -> (Tok, usize) {
        let rest = &self.text[start..];
        let Ok((r1, raw)) = number(rest) else {
            return (Tok::Unknown, start + 1);
        };
        let after = start + raw.len();
        let digits = raw.strip_prefix('-').unwrap_or(raw);
        let is_int = digits.bytes().all(|b| b.is_ascii_digit());
        if is_int {
            if let Ok((r2, end_raw)) = range_tail(r1) {
                let end = start + (rest.len() - r2.len());
                let lo = parse_i64(raw, Span::new(start, after), sink);
                let hi = parse_i64(end_raw, Span::new(end - end_raw.len(), end), sink);
                return (Tok::Range { start: lo, end: hi }, end);
            }
            if !raw.starts_with('-') {
                if let Ok((r2, parts)) = size_tail(r1) {
                    let end = start + (rest.len() - r2.len());
                    let mut sizes = vec![parse_u64(raw, Span::new(start, after), sink)];
                    for p in parts {
                        let p_start = start + (p.as_ptr() as usize - rest.as_ptr() as usize);
                        sizes.push(parse_u64(p, Span::new(p_start, p_start + p.len()), sink));
                    }
                    return (Tok::Size(sizes), end);
                }
            }
        }
        let value = raw.parse::<f64>().unwrap_or(f64::INFINITY);
        let unit = self.unit_at(after);
        let end = unit.as_ref().map_or(after, |u| u.span.end);
        (
            Tok::Number {
                value,
                raw: raw.to_string(),
                unit,
            },
            end,
        )
    }

    fn string_token(&self, start: usize, sink: &mut Option<&mut Sink>) -> (Tok, usize) {
        let rest = &self.text[start..];
        let Ok((_, lit)) = string_lit(rest) else {
            return (Tok::Unknown, start + 1);
        };
        let mut end = start + lit.len;
        if let Some(s) = sink.as_deref_mut() {
            for (a, b, found) in &lit.bad_escapes {
                s.error(
                    SyntaxErrorKind::Unexpected,
                    Span::new(start + a, start + b),
                    "`\\\"` or `\\\\` after a backslash in a string",
                    found.clone(),
                );
            }
            if !lit.closed {
                let found = if end >= self.text.len() {
                    "end of file"
                } else {
                    "end of line"
                };
                s.error(
                    SyntaxErrorKind::Unclosed,
                    Span::new(start, start + 1),
                    "`\"` closing the string",
                    found,
                );
            }
        }
        let unit = if lit.closed { self.unit_at(end) } else { None };
        if let Some(u) = &unit {
            end = u.span.end;
        }
        (
            Tok::Str {
                value: lit.value,
                unit,
            },
            end,
        )
    }
}

fn parse_i64(raw: &str, span: Span, sink: &mut Option<&mut Sink>) -> i64 {
    match raw.parse::<i64>() {
        Ok(v) => v,
        Err(_) => {
            if let Some(s) = sink.as_deref_mut() {
                s.error(
                    SyntaxErrorKind::Unexpected,
                    span,
                    "an integer of at most 18 digits in a range",
                    format!("number {}", quote(raw)),
                );
            }
            if raw.starts_with('-') {
                i64::MIN
            } else {
                i64::MAX
            }
        }
    }
}

fn parse_u64(raw: &str, span: Span, sink: &mut Option<&mut Sink>) -> u64 {
    match raw.parse::<u64>() {
        Ok(v) => v,
        Err(_) => {
            if let Some(s) = sink.as_deref_mut() {
                s.error(
                    SyntaxErrorKind::Unexpected,
                    span,
                    "an integer of at most 19 digits in a size",
                    format!("number {}", quote(raw)),
                );
            }
            u64::MAX
        }
    }
}

/// What a token is, in words, for "found" in a message.
pub(crate) fn describe(tok: &Token, text: &str) -> String {
    let slice = text.get(tok.span.start..tok.span.end).unwrap_or("");
    match &tok.tok {
        Tok::Ident(name) => format!("identifier {}", quote(name)),
        Tok::Number { raw, .. } => format!("number {}", quote(raw)),
        Tok::Range { .. } => format!("range {}", quote(slice)),
        Tok::Size(_) => format!("size {}", quote(slice)),
        Tok::Str { .. } => "a string".to_string(),
        Tok::Newline => "end of line".to_string(),
        Tok::Eof => "end of file".to_string(),
        Tok::Unknown => quote(slice),
        Tok::RBracket(_) => "`]`".to_string(),
        _ => quote(slice),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn toks(text: &str) -> Vec<Tok> {
        let mut lx = Lexer::new(text, 0);
        let mut out = vec![];
        loop {
            let t = lx.next(None);
            if t.tok == Tok::Eof {
                return out;
            }
            out.push(t.tok);
        }
    }

    #[test]
    fn numbers_with_nom() {
        for (s, raw) in [
            ("12", "12"),
            ("-3", "-3"),
            ("0.25", "0.25"),
            (".5", ".5"),
            ("1.5e-6", "1.5e-6"),
            ("1E6", "1E6"),
            ("1..5", "1"),
            ("1.x", "1"),
        ] {
            assert_eq!(number(s).unwrap().1, raw, "{s}");
        }
        assert!(number("x").is_err());
        assert!(number("-").is_err());
    }

    #[test]
    fn units_with_nom() {
        for u in [
            "m3",
            "ft^3",
            "lb/ft^3",
            "1/psi",
            "rb/stb",
            "Pa*s",
            "%",
            "stb/day/psi",
            "(m/s)^2",
            "m^-1",
            "m^+2",
            "1/(psi*day)",
        ] {
            assert_eq!(unit_expr(u).unwrap(), ("", u), "{u}");
        }
        assert_eq!(unit_expr("md,").unwrap(), (",", "md"));
        assert_eq!(unit_expr("m/ 2").unwrap(), ("/ 2", "m"));
        assert_eq!(unit_expr("m/12").unwrap(), ("/12", "m"));
        assert!(unit_expr("(m").is_err());
        let deep = format!("{}m{}", "(".repeat(40), ")".repeat(40));
        assert!(unit_expr(&deep).is_err());
    }

    #[test]
    fn sign_rule() {
        let sub = Tok::Op(Op::Sub);
        assert!(matches!(toks("kx - 5")[1], Tok::Op(Op::Sub)));
        assert!(matches!(toks("kx-5")[1], Tok::Op(Op::Sub)));
        assert!(matches!(&toks("kx -5")[1], Tok::Number { raw, .. } if raw == "-5"));
        assert!(matches!(&toks("kx * -1")[2], Tok::Number { raw, .. } if raw == "-1"));
        assert!(matches!(&toks("(1,-2)")[3], Tok::Number { raw, .. } if raw == "-2"));
        assert!(matches!(&toks("]-2")[1], Tok::Op(Op::Sub)));
        assert_eq!(toks("- x")[0], sub);
        assert!(matches!(&toks("-.5")[0], Tok::Number { raw, .. } if raw == "-.5"));
    }

    #[test]
    fn unknown_runs_are_one_token() {
        assert_eq!(toks("@@@ é\u{0}"), vec![Tok::Unknown, Tok::Unknown]);
        assert_eq!(
            toks("a@b"),
            vec![Tok::Ident("a".into()), Tok::Unknown, Tok::Ident("b".into())]
        );
    }
}
