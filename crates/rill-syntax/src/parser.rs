//! The statement and block level, hand-driven on top of the `nom` tokens.
//!
//! Why not `nom` all the way up: error recovery here is about *where to
//! resume* (the end of the statement, a `}` that closes the block, the line
//! before the next `key =`), about reporting every error rather than the
//! first, and about a hard nesting limit that turns 100 000 `[` into one
//! error instead of 100 000 stack frames. `nom` combinators stop at the first
//! failure and backtrack; a recursive-descent loop over a one-token
//! look-ahead says all of that directly, never backtracks (so it stays
//! linear: every token is lexed once by the main run, plus at most one
//! look-ahead line scan per line break inside an open bracket), and keeps the
//! recovery rules in one readable place. Tokens and scalar atoms are `nom`
//! parsers (see `lexer.rs`).
//!
//! Recovery rules:
//! - A statement ends at a line break or `;` outside brackets, at a `}` that
//!   closes the enclosing block, or at the end of the file.
//! - On a token that does not fit, one `syntax.unexpected` error is reported
//!   and the rest of the statement is skipped (counting brackets). In a block
//!   header the skip stops at `{`, which still opens the block.
//! - Inside `[ ]` and `( )` line breaks are whitespace, except that a list or
//!   tuple left open ends (with `syntax.unclosed` on its opening delimiter)
//!   before a line break when the next line starts a new item: `key =`, a
//!   block header (a name, then tokens up to a `{` on the same line, with no
//!   `;` and no `]` or `)` closing a bracket opened before the line), or `}`.
//!   It also ends at `;`, at a `}`, at the end of the file, and at a closing
//!   delimiter of an enclosing bracket (`[(1, 2]` closes the list).
//!   Only the first stray token inside one list is reported.
//! - An unclosed string ends at the end of its line (see the lexer).
//! - A block left open ends at the end of the file.
//! - Blocks, lists and tuples nest at most [`MAX_DEPTH`] levels deep; a
//!   deeper one is reported and skipped without recursing.

use crate::ast::*;
use crate::lexer::{describe, Lexer, Sink, Tok, Token};

/// Deepest nesting of blocks, lists and tuples together.
pub const MAX_DEPTH: usize = 128;

pub(crate) struct Parser<'a> {
    text: &'a str,
    lx: Lexer<'a>,
    tok: Token,
    sink: Sink,
    /// Open brackets of the current statement: `true` for `[`, `false` for `(`.
    open: Vec<bool>,
    /// Number of blocks currently open.
    blocks: usize,
    /// The last answer of [`line_starts_item`], so that nested open lists
    /// ending at the same line break scan the next line once.
    line_memo: Option<(usize, bool)>,
}

fn starts_atom(t: &Tok) -> bool {
    matches!(
        t,
        Tok::Ident(_)
            | Tok::Number { .. }
            | Tok::Range { .. }
            | Tok::Size(_)
            | Tok::Str { .. }
            | Tok::LBracket
            | Tok::LParen
            | Tok::Op(_)
    )
}

/// Does the line starting at `pos` start a new item (`key =`, a block
/// header, or `}`)? Used to end a list or tuple left open.
fn line_starts_item(text: &str, pos: usize) -> bool {
    let mut lx = Lexer::new(text, pos);
    match lx.next(None).tok {
        Tok::RBrace => true,
        Tok::Ident(_) => {
            let mut t = lx.next(None).tok;
            if t == Tok::Eq {
                return true;
            }
            // A block header: `{` reached on this line without `;` and
            // without closing a bracket that the line did not open (which
            // would make it the continuation of the open list).
            let mut depth = 0usize;
            loop {
                match t {
                    Tok::LBrace if depth == 0 => return true,
                    Tok::LBracket | Tok::LParen => depth += 1,
                    Tok::RBracket(_) | Tok::RParen => match depth.checked_sub(1) {
                        Some(d) => depth = d,
                        None => return false,
                    },
                    Tok::Newline | Tok::Eof | Tok::Semi | Tok::RBrace => return false,
                    _ => {}
                }
                t = lx.next(None).tok;
            }
        }
        _ => false,
    }
}

impl<'a> Parser<'a> {
    pub fn new(text: &'a str) -> Self {
        let mut sink = Sink::default();
        let mut lx = Lexer::new(text, 0);
        let tok = lx.next(Some(&mut sink));
        Parser {
            text,
            lx,
            tok,
            sink,
            open: Vec::new(),
            blocks: 0,
            line_memo: None,
        }
    }

    pub fn parse_file(mut self) -> SourceFile {
        let items = self.items(0);
        let mut errors = self.sink.errors;
        errors.sort_by_key(|e| (e.span.start, e.span.end));
        SourceFile {
            items,
            comments: self.sink.comments,
            errors,
            len: self.text.len(),
        }
    }

    /// Does the line after the current line break start a new item?
    fn next_line_starts_item(&mut self) -> bool {
        let pos = self.tok.span.end;
        if let Some((p, answer)) = self.line_memo {
            if p == pos {
                return answer;
            }
        }
        let answer = line_starts_item(self.text, pos);
        self.line_memo = Some((pos, answer));
        answer
    }

    fn bump(&mut self) -> Token {
        let next = self.lx.next(Some(&mut self.sink));
        std::mem::replace(&mut self.tok, next)
    }

    fn peek(&self) -> Tok {
        self.lx.clone().next(None).tok
    }

    fn unexpected(&mut self, expected: impl Into<String>) {
        let found = describe(&self.tok, self.text);
        self.sink
            .error(SyntaxErrorKind::Unexpected, self.tok.span, expected, found);
    }

    fn unclosed(&mut self, open: Span, expected: impl Into<String>) {
        let found = describe(&self.tok, self.text);
        self.sink
            .error(SyntaxErrorKind::Unclosed, open, expected, found);
    }

    /// Skips the rest of a statement: up to a line break or `;` outside
    /// brackets (or a line break inside an open bracket before a line that
    /// starts a new item), a `}` that closes the enclosing block, or the end
    /// of the file; none of these is consumed. With `stop_at_brace`, also
    /// stops before a `{` outside brackets and returns `true`.
    fn skip(&mut self, stop_at_brace: bool) -> bool {
        let mut depth = 0usize;
        loop {
            if self.tok.tok == Tok::Newline && (depth == 0 || self.next_line_starts_item()) {
                return false;
            }
            match &self.tok.tok {
                Tok::Eof | Tok::Semi => return false,
                Tok::RBrace if self.blocks > 0 => return false,
                Tok::LBrace if stop_at_brace && depth == 0 => return true,
                Tok::LBracket | Tok::LParen => depth += 1,
                Tok::RBracket(_) | Tok::RParen => depth = depth.saturating_sub(1),
                _ => {}
            }
            self.bump();
        }
    }

    /// Items up to a `}` that closes the current block (not consumed) or the end of the file.
    fn items(&mut self, depth: usize) -> Vec<Item> {
        let mut items = Vec::new();
        loop {
            match &self.tok.tok {
                Tok::Newline | Tok::Semi => {
                    self.bump();
                }
                Tok::Eof => return items,
                Tok::RBrace => {
                    if self.blocks > 0 {
                        return items;
                    }
                    let span = self.tok.span;
                    self.sink.error(
                        SyntaxErrorKind::Unexpected,
                        span,
                        "a key, a block or a directive",
                        "`}` that closes no block",
                    );
                    self.bump();
                    self.skip(false);
                }
                Tok::Ident(_) => {
                    let item = self.item(depth);
                    items.push(item);
                }
                _ => {
                    // Not a stop token, so `skip` consumes it (and counts it
                    // when it is a bracket).
                    self.unexpected("a key, a block or a directive");
                    self.skip(false);
                }
            }
        }
    }

    fn item(&mut self, depth: usize) -> Item {
        let t = self.bump();
        let name = match t.tok {
            Tok::Ident(name) => Ident { name, span: t.span },
            _ => Ident {
                name: String::new(),
                span: t.span,
            },
        };
        if self.tok.tok == Tok::Eq {
            Item::Statement(self.statement(name, depth))
        } else {
            self.header(name, depth)
        }
    }

    fn statement(&mut self, key: Ident, depth: usize) -> Statement {
        let eq = self.bump().span;
        let mut atoms = Vec::new();
        loop {
            match &self.tok.tok {
                Tok::Newline | Tok::Semi | Tok::Eof | Tok::RBrace => {
                    if atoms.is_empty() {
                        self.unexpected("a value after `=`");
                    }
                    break;
                }
                // `side = east  i = 2`: a second statement on the line
                // without `;`. Said once, and both statements parse.
                Tok::Ident(next) if !atoms.is_empty() && self.peek() == Tok::Eq => {
                    let at = self.tok.span;
                    let value_end = atoms.last().map_or(at.start, |a: &Atom| a.span.end);
                    let found = format!("`{next} =`, a new statement on the same line");
                    self.sink.error_with_fix(
                        at,
                        "`;` or a line break before the next statement",
                        found,
                        SyntaxFix {
                            title: "insert `;`".into(),
                            span: Span::new(value_end, value_end),
                            replacement: ";".into(),
                        },
                    );
                    break;
                }
                t if starts_atom(t) => atoms.push(self.atom(depth)),
                _ => {
                    if atoms.is_empty() {
                        self.unexpected("a value after `=`");
                    } else {
                        self.unexpected("a value, an operator or the end of the statement");
                    }
                    self.skip(false);
                    break;
                }
            }
        }
        let value_span = match (atoms.first(), atoms.last()) {
            (Some(a), Some(b)) => a.span.join(b.span),
            _ => Span::new(eq.end, eq.end),
        };
        let span = key.span.join(eq).join(value_span);
        Statement {
            key,
            eq,
            value: Value {
                expr: crate::expr::parse_expr(&atoms),
                atoms,
                span: value_span,
            },
            span,
        }
    }

    /// A block header or a directive, after its name.
    fn header(&mut self, name: Ident, depth: usize) -> Item {
        let mut args: Vec<Atom> = Vec::new();
        loop {
            match &self.tok.tok {
                Tok::Ident(_) if self.peek() == Tok::Eq => {
                    let t = self.bump();
                    let key = match t.tok {
                        Tok::Ident(name) => Ident { name, span: t.span },
                        _ => Ident {
                            name: String::new(),
                            span: t.span,
                        },
                    };
                    self.bump(); // `=`
                    if starts_atom(&self.tok.tok) {
                        let value = self.atom(depth);
                        let span = key.span.join(value.span);
                        args.push(Atom {
                            kind: AtomKind::Selector {
                                key,
                                value: Box::new(value),
                            },
                            span,
                        });
                    } else {
                        self.unexpected(format!("a value after `{} =`", key.name));
                        if !matches!(
                            self.tok.tok,
                            Tok::LBrace | Tok::Newline | Tok::Semi | Tok::Eof | Tok::RBrace
                        ) && self.skip(true)
                        {
                            return Item::Block(self.block(name, args, depth));
                        }
                    }
                }
                Tok::LBrace => return Item::Block(self.block(name, args, depth)),
                Tok::Newline | Tok::Semi | Tok::Eof | Tok::RBrace => break,
                t if starts_atom(t) => args.push(self.atom(depth)),
                _ => {
                    let expected = if args.is_empty() {
                        format!("`=` or `{{` after `{}`", name.name)
                    } else {
                        format!(
                            "`{{` or the end of the line after the header of `{}`",
                            name.name
                        )
                    };
                    self.unexpected(expected);
                    if self.skip(true) {
                        return Item::Block(self.block(name, args, depth));
                    }
                    break;
                }
            }
        }
        let span = args.iter().fold(name.span, |s, a| s.join(a.span));
        Item::Directive(Directive { name, args, span })
    }

    /// A block from its `{` (the current token).
    fn block(&mut self, name: Ident, args: Vec<Atom>, depth: usize) -> Block {
        let open = self.bump().span;
        let head = args
            .iter()
            .fold(name.span, |s, a| s.join(a.span))
            .join(open);
        if depth + 1 > MAX_DEPTH {
            self.sink.error(
                SyntaxErrorKind::Unexpected,
                open,
                format!("at most {MAX_DEPTH} levels of nesting"),
                "a `{` nested deeper",
            );
            let mut level = 1usize;
            let mut end = open.end;
            let mut close = None;
            loop {
                match &self.tok.tok {
                    Tok::Eof => break,
                    Tok::LBrace => level += 1,
                    Tok::RBrace => {
                        level -= 1;
                        if level == 0 {
                            let t = self.bump();
                            close = Some(t.span);
                            end = t.span.end;
                            break;
                        }
                    }
                    _ => {}
                }
                end = self.bump().span.end;
            }
            return Block {
                name,
                args,
                items: Vec::new(),
                open,
                close,
                span: head.join(Span::new(end, end)),
            };
        }
        self.blocks += 1;
        let items = self.items(depth + 1);
        self.blocks -= 1;
        let close = if self.tok.tok == Tok::RBrace {
            Some(self.bump().span)
        } else {
            self.unclosed(open, format!("`}}` closing the block `{}`", name.name));
            None
        };
        let mut span = head;
        if let Some(last) = items.last() {
            span = span.join(last.span());
        }
        if let Some(c) = close {
            span = span.join(c);
        }
        Block {
            name,
            args,
            items,
            open,
            close,
            span,
        }
    }

    fn atom(&mut self, depth: usize) -> Atom {
        match self.tok.tok {
            Tok::LBracket => self.seq(depth, true),
            Tok::LParen => self.seq(depth, false),
            _ => {
                let t = self.bump();
                let kind = match t.tok {
                    Tok::Ident(n) => AtomKind::Ident(n),
                    Tok::Number { value, raw, unit } => AtomKind::Number { value, raw, unit },
                    Tok::Range { start, end } => AtomKind::Range { start, end },
                    Tok::Size(v) => AtomKind::Size(v),
                    Tok::Str { value, unit } => AtomKind::Str { value, unit },
                    Tok::Op(o) => AtomKind::Op(o),
                    // Not reached: callers check `starts_atom` first.
                    _ => AtomKind::Ident(String::new()),
                };
                Atom { kind, span: t.span }
            }
        }
    }

    /// A list (`is_list`) or a tuple from its opening delimiter.
    fn seq(&mut self, depth: usize, is_list: bool) -> Atom {
        let open = self.bump().span;
        let (open_ch, close_ch) = if is_list { ('[', ']') } else { ('(', ')') };
        let empty = |span: Span| Atom {
            kind: if is_list {
                AtomKind::List {
                    items: Vec::new(),
                    unit: None,
                    close: None,
                }
            } else {
                AtomKind::Tuple {
                    items: Vec::new(),
                    close: None,
                }
            },
            span,
        };
        if depth + 1 > MAX_DEPTH {
            self.sink.error(
                SyntaxErrorKind::Unexpected,
                open,
                format!("at most {MAX_DEPTH} levels of nesting"),
                format!("a `{open_ch}` nested deeper"),
            );
            let end = self.skip_nested(open.end);
            return empty(Span::new(open.start, end));
        }
        self.open.push(is_list);
        let mut items: Vec<Atom> = Vec::new();
        let mut close = None;
        let mut unit = None;
        let mut reported = false;
        let mut after_item = false;
        let mut end = open.end;
        let expected_close = format!("`{close_ch}` closing this `{open_ch}`");
        loop {
            match &self.tok.tok {
                Tok::Newline => {
                    if self.next_line_starts_item() {
                        self.unclosed(open, expected_close.clone());
                        break;
                    }
                    self.bump();
                }
                Tok::Semi | Tok::RBrace | Tok::Eof => {
                    self.unclosed(open, expected_close.clone());
                    break;
                }
                Tok::RBracket(_) | Tok::RParen => {
                    let is_bracket = matches!(self.tok.tok, Tok::RBracket(_));
                    if is_bracket == is_list {
                        let t = self.bump();
                        close = Some(t.span);
                        end = t.span.end;
                        if let Tok::RBracket(Some(u)) = t.tok {
                            end = u.span.end;
                            unit = Some(u);
                        }
                        break;
                    }
                    let outer = &self.open[..self.open.len() - 1];
                    if outer.contains(&is_bracket) {
                        self.unclosed(open, expected_close.clone());
                        break;
                    }
                    if !reported {
                        self.unexpected(format!("an item or `{close_ch}`"));
                        reported = true;
                    }
                    self.bump();
                }
                Tok::Comma => {
                    if !after_item && !reported {
                        self.unexpected(format!("an item or `{close_ch}`"));
                        reported = true;
                    }
                    after_item = false;
                    self.bump();
                }
                t if starts_atom(t) => {
                    let a = self.atom(depth + 1);
                    end = end.max(a.span.end);
                    items.push(a);
                    after_item = true;
                }
                _ => {
                    if !reported {
                        self.unexpected(format!("an item or `{close_ch}`"));
                        reported = true;
                    }
                    self.bump();
                }
            }
        }
        self.open.pop();
        let span = Span::new(open.start, end);
        let kind = if is_list {
            AtomKind::List { items, unit, close }
        } else {
            AtomKind::Tuple { items, close }
        };
        Atom { kind, span }
    }

    /// Skips a list or tuple nested too deep, without recursing: up to its
    /// matching closer, or where an open list would end. Returns the end of
    /// the skipped text.
    fn skip_nested(&mut self, mut end: usize) -> usize {
        let mut level = 1usize;
        loop {
            if self.tok.tok == Tok::Newline && self.next_line_starts_item() {
                return end;
            }
            match &self.tok.tok {
                Tok::Eof | Tok::Semi | Tok::RBrace => return end,
                Tok::LBracket | Tok::LParen => level += 1,
                Tok::RBracket(_) | Tok::RParen => {
                    level -= 1;
                    if level == 0 {
                        let t = self.bump();
                        return match t.tok {
                            Tok::RBracket(Some(u)) => u.span.end,
                            _ => t.span.end,
                        };
                    }
                }
                _ => {}
            }
            let t = self.bump();
            end = match t.tok {
                Tok::RBracket(Some(u)) => u.span.end,
                _ => t.span.end,
            };
        }
    }
}
