//! The canonical formatter: a pure function of the tree and its comments.
//!
//! The source text is read only for layout facts that the tree does not
//! hold: whether two nodes were on the same line (trailing comments,
//! one-line blocks) and whether the user left a blank line between two
//! items. Everything printed comes from the tree: numbers from `raw`, units
//! from their text, strings re-escaped from their value.
//!
//! Rules:
//! - A file with syntax errors is returned unchanged.
//! - Two spaces of indentation per block level; one item per line; `;`
//!   between statements becomes a line break (except in one-line blocks).
//! - `key = value`; one space between atoms; a number and its unit are
//!   separated by one space (`250 md`, `22 %`), as are a string or `]` and
//!   its unit; operators have a space on both sides (`0.1 * kx`); negative
//!   numbers keep their sign glued (`kx * -1`); ranges `1..5`; sizes
//!   `30 x 20 x 4`; tuples `(15, 10, 1)`; selectors `i = 12..14`.
//! - Lists are `[a b c]` with single spaces and no commas, except that a
//!   comma is kept where, without it, the next item would be read as the
//!   unit of the one before or would make or extend a size (`[1, md]`,
//!   `[30 x 2, x]`, `[0 x, 5]`). For the same reason a one-item tuple
//!   after a number, string or list without a unit gets a trailing comma
//!   outside lists: `12 (m,)`, since `12 (m)` is `12` with the unit `(m)`.
//!   A line longer than 100 columns is wrapped between list or tuple items,
//!   filling each line; continuation lines are indented one level deeper.
//!   A comment inside a list stays where it was, at the end of its line,
//!   and the list goes on on the next line.
//! - Per-cell and per-column arrays (`cells [...]`, `columns [...]`) are
//!   laid out one grid row (NX values) per line, between `[` and `]` on
//!   lines of their own, when the file itself gives the grid size
//!   (`grid { cells = NX x NY x NZ }`) and the list holds more than one row
//!   of plain numbers and no comment. A row too wide for 100 columns is
//!   written [`ROW_CHUNK`] values per line (the i positions of every line
//!   are then the same in every row; ten very long numbers may pass 100
//!   columns), its continuation lines one level deeper; every grid row
//!   still starts a line. Otherwise (an included
//!   fragment without a `grid`, a list with comments) the list wraps as any
//!   other. `layers [...]` (NZ values, usually a few) wraps as any other.
//! - In a `relperm` block, consecutive statements whose values are lists of
//!   plain numbers of one length (a saturation table: `sw`, `krw`, `kro`,
//!   `pc`) are laid out as a table: the keys padded to one width, and each
//!   column of values padded to its widest, so that the values of one row
//!   stand under each other (`kro = [0.7  0.42 0   ]`). A table whose lines
//!   would pass 100 columns, or with a comment inside a list, wraps as any
//!   other list.
//! - A block stays on one line (`well "A" { control = bhp 1500 psi }`, with
//!   `; ` between its items, `name {}` when empty) when it was on one line
//!   and still fits in 100 columns; otherwise it is expanded, one item per
//!   line, with `}` on its own line.
//! - Exactly one blank line before and after every top-level block (a
//!   comment group right above a block stays attached to it); elsewhere at
//!   most one blank line, kept only where the user had at least one. No
//!   blank line at the start or end of a block or of the file.
//! - Comments are kept in order with their text (trailing whitespace
//!   removed): an own-line comment stays on its own line before the next
//!   item, at that item's indentation; a trailing comment stays after its
//!   item on the same line, two spaces after it; a comment after `{` stays
//!   after the `{`.
//! - The output ends with exactly one line break (an empty file stays empty).

use crate::ast::*;

/// Line width that wrapping and one-line blocks respect.
pub const WIDTH: usize = 100;

/// Values per line of a grid row too wide for [`WIDTH`]: a fixed count
/// rather than a fill, so that a line holds the same i positions in every
/// row (10: easy to count along).
pub const ROW_CHUNK: usize = 10;

/// Formats `file`, parsed from `text`, in the canonical layout; a file with
/// syntax errors (or another text) is returned unchanged.
pub fn format(file: &SourceFile, text: &str) -> String {
    if !file.errors.is_empty() || file.len != text.len() {
        return text.to_string();
    }
    let mut f = Fmt {
        text,
        comments: &file.comments,
        next: 0,
        out: String::new(),
        nx: grid_nx(&file.items),
        rows_laid: false,
        level: 0,
        rows: Vec::new(),
    };
    f.container(&file.items, 0, true, text.len());
    // Comments that no container claimed (not reached for a tree from `parse`).
    while f.next < f.comments.len() {
        let c = comment_text(&f.comments[f.next]);
        f.line(0, &c);
        f.next += 1;
    }
    f.out
}

struct Fmt<'a> {
    text: &'a str,
    comments: &'a [Comment],
    /// The first comment not yet printed.
    next: usize,
    out: String,
    /// NX from the file's own `grid { cells = NX x NY x NZ }`, if any.
    nx: Option<usize>,
    /// Set when a list was laid out in grid rows (forced line breaks).
    rows_laid: bool,
    /// Indentation level of the item whose words are being built.
    level: usize,
    /// Statements laid out as rows of a table, by the start of their span
    /// (see [`Fmt::table_rows`]).
    rows: Vec<(usize, String)>,
}

struct Word {
    text: String,
    /// A space before this word (else glued to the one before).
    space: bool,
    /// A line break may replace that space (inside brackets).
    brk: bool,
    comment: bool,
    /// A line break before this word, always, with this many indentation
    /// levels beyond the item's (grid rows of `cells [...]`).
    force: Option<usize>,
}

fn word(text: String, space: bool, brk: bool) -> Word {
    Word {
        text,
        space,
        brk,
        comment: false,
        force: None,
    }
}

/// NX of a top-level `grid { cells = NX x NY x NZ }` in this file. The
/// formatter sees one file: an included fragment has no grid and keeps the
/// plain wrapping.
fn grid_nx(items: &[Item]) -> Option<usize> {
    items.iter().find_map(|item| match item {
        Item::Block(b) if b.name.name == "grid" => b.items.iter().find_map(|i| match i {
            Item::Statement(s) if s.key.name == "cells" => match s.value.atoms.as_slice() {
                [Atom {
                    kind: AtomKind::Size(v),
                    ..
                }] if v.len() == 3 => usize::try_from(v[0]).ok().filter(|&n| n > 0),
                _ => None,
            },
            _ => None,
        }),
        _ => None,
    })
}

/// Is `atom` the list of a `cells [...]` or `columns [...]` form (after
/// `prev`)?
fn is_grid_list(prev: Option<&Atom>, atom: &Atom) -> bool {
    matches!(prev.map(|p| &p.kind), Some(AtomKind::Ident(w)) if w == "cells" || w == "columns")
        && matches!(atom.kind, AtomKind::List { .. })
}

fn comment_text(c: &Comment) -> String {
    format!("#{}", c.text.trim_end())
}

fn indent(level: usize) -> String {
    "  ".repeat(level)
}

pub(crate) fn quote_str(value: &str) -> String {
    let mut s = String::with_capacity(value.len() + 2);
    s.push('"');
    for c in value.chars() {
        if c == '"' || c == '\\' {
            s.push('\\');
        }
        s.push(c);
    }
    s.push('"');
    s
}

fn with_unit(mut s: String, unit: &Option<UnitExpr>) -> String {
    if let Some(u) = unit {
        s.push(' ');
        s.push_str(&u.text);
    }
    s
}

/// Would a unit written right after this atom attach to it?
fn takes_unit(a: &Atom) -> bool {
    match &a.kind {
        AtomKind::Number { unit: None, .. }
        | AtomKind::Str { unit: None, .. }
        | AtomKind::List { unit: None, .. } => true,
        AtomKind::Selector { value, .. } => takes_unit(value),
        _ => false,
    }
}

/// A one-item tuple such as `(m)` written after an atom that takes a unit
/// would be read as that unit; outside lists it gets a trailing comma: `(m,)`.
fn needs_tuple_comma(prev: Option<&Atom>, next: &Atom) -> bool {
    prev.is_some_and(takes_unit)
        && matches!(&next.kind, AtomKind::Tuple { items, .. } if items.len() == 1)
}

/// Would `next`, written after `prev` with only a space between them, be
/// read as `prev`'s unit or as part of a size?
fn needs_comma(prev: &Atom, next: &Atom) -> bool {
    let takes_unit = takes_unit(prev) || matches!(prev.kind, AtomKind::Size(_));
    if takes_unit
        && matches!(
            next.kind,
            AtomKind::Ident(_) | AtomKind::Tuple { .. } | AtomKind::Selector { .. }
        )
    {
        return true;
    }
    // `0 x` (the unit `x`) then `5` would be the size `0 x 5`.
    let int_x = matches!(&prev.kind, AtomKind::Number { raw, unit: Some(u), .. }
        if u.text == "x" && raw.bytes().all(|b| b.is_ascii_digit()));
    let digit_first = match &next.kind {
        AtomKind::Number { raw, .. } => raw.starts_with(|c: char| c.is_ascii_digit()),
        AtomKind::Range { start, .. } => *start >= 0,
        AtomKind::Size(_) => true,
        _ => false,
    };
    int_x && digit_first
}

impl<'a> Fmt<'a> {
    fn line(&mut self, level: usize, content: &str) {
        self.out.push_str(&indent(level));
        self.out.push_str(content);
        self.out.push('\n');
    }

    /// Line breaks in the source between two offsets.
    fn breaks(&self, a: usize, b: usize) -> usize {
        let s = self.text.get(a.min(b)..b).unwrap_or("");
        let bytes = s.as_bytes();
        let mut n = 0;
        for (i, &c) in bytes.iter().enumerate() {
            if c == b'\n' || (c == b'\r' && bytes.get(i + 1) != Some(&b'\n')) {
                n += 1;
            }
        }
        n
    }

    /// Is there a line break in the source between two offsets?
    fn has_break(&self, a: usize, b: usize) -> bool {
        self.text
            .get(a.min(b)..b)
            .unwrap_or("")
            .contains(['\n', '\r'])
    }

    fn peek_comment(&self) -> Option<&'a Comment> {
        self.comments.get(self.next)
    }

    fn separator(&mut self, prev_end: Option<usize>, next_start: usize, force: bool) {
        if let Some(p) = prev_end {
            if force || self.breaks(p, next_start) >= 2 {
                self.out.push('\n');
            }
        }
    }

    /// Prints a comment that starts on the line where `end` is, before
    /// `limit`, after two spaces. Returns the new end.
    fn trailing(&mut self, end: usize, limit: usize) -> usize {
        if let Some(c) = self.peek_comment() {
            if c.span.start >= end && c.span.start < limit && !self.has_break(end, c.span.start) {
                self.out.push_str("  ");
                self.out.push_str(&comment_text(c));
                self.next += 1;
                return c.span.end;
            }
        }
        end
    }

    /// The items of a file (`top`) or of a block body that ends at `end`.
    fn container(&mut self, items: &[Item], level: usize, top: bool, end: usize) {
        let mut prev_end: Option<usize> = None;
        let mut prev_block = false;
        for (idx, item) in items.iter().enumerate() {
            let start = item.span().start;
            let is_block = matches!(item, Item::Block(_));
            let force = top && (prev_block || is_block);
            let mut first = true;
            while let Some(c) = self.peek_comment().filter(|c| c.span.start < start) {
                self.separator(prev_end, c.span.start, force && first);
                first = false;
                self.line(level, &comment_text(c));
                self.next += 1;
                prev_end = Some(c.span.end);
            }
            self.separator(prev_end, start, force && first);
            let limit = items.get(idx + 1).map_or(end, |n| n.span().start);
            prev_end = Some(self.item(item, level, limit));
            prev_block = is_block;
        }
        let mut first = true;
        while let Some(c) = self.peek_comment().filter(|c| c.span.start < end) {
            self.separator(prev_end, c.span.start, top && prev_block && first);
            first = false;
            self.line(level, &comment_text(c));
            self.next += 1;
            prev_end = Some(c.span.end);
        }
    }

    /// Prints one item and its trailing comment; returns its end in the source.
    fn item(&mut self, item: &Item, level: usize, limit: usize) -> usize {
        self.level = level;
        let words = match item {
            Item::Block(b) => return self.block(b, level, limit),
            Item::Statement(s) if self.rows.iter().any(|r| r.0 == s.span.start) => {
                let row = self
                    .rows
                    .iter()
                    .find(|r| r.0 == s.span.start)
                    .map(|r| r.1.clone());
                self.out.push_str(&indent(level));
                self.out.push_str(&row.unwrap_or_default());
                let end = self.trailing(item.span().end, limit);
                self.out.push('\n');
                return end;
            }
            Item::Statement(s) => self.statement_words(s),
            Item::Directive(d) => self.directive_words(d),
        };
        let text = layout(&words, level);
        self.out.push_str(&indent(level));
        self.out.push_str(&text);
        let end = self.trailing(item.span().end, limit);
        self.out.push('\n');
        end
    }

    fn statement_words(&mut self, s: &Statement) -> Vec<Word> {
        let mut words = vec![
            word(s.key.name.clone(), false, false),
            word("=".into(), true, false),
        ];
        self.seq_words(&s.value.atoms, &mut words);
        words
    }

    fn directive_words(&mut self, d: &Directive) -> Vec<Word> {
        let mut words = vec![word(d.name.name.clone(), false, false)];
        self.seq_words(&d.args, &mut words);
        words
    }

    fn block(&mut self, b: &Block, level: usize, limit: usize) -> usize {
        let close_start = b.close.map_or(b.span.end, |c| c.start);
        let close_end = b.close.map_or(b.span.end, |c| c.end);
        if self.one_line_source(b) {
            let saved = self.next;
            let rows_before = std::mem::take(&mut self.rows_laid);
            let s = self.inline_block(b);
            // Grid rows need their own lines: such a block is expanded.
            let rows = std::mem::replace(&mut self.rows_laid, rows_before);
            if self.next == saved && !rows && level * 2 + s.chars().count() <= WIDTH {
                self.out.push_str(&indent(level));
                self.out.push_str(&s);
                let end = self.trailing(close_end, limit);
                self.out.push('\n');
                return end;
            }
            self.next = saved;
        }
        self.level = level;
        let mut words = vec![word(b.name.name.clone(), false, false)];
        self.seq_words(&b.args, &mut words);
        words.push(word("{".into(), true, false));
        let text = layout(&words, level);
        self.out.push_str(&indent(level));
        self.out.push_str(&text);
        let first = b.items.first().map_or(close_start, |i| i.span().start);
        self.trailing(b.open.end, first);
        self.out.push('\n');
        if b.name.name == "relperm" {
            self.table_rows(&b.items, level + 1);
        }
        self.container(&b.items, level + 1, false, close_start);
        self.out.push_str(&indent(level));
        self.out.push('}');
        let end = self.trailing(close_end, limit);
        self.out.push('\n');
        end
    }

    /// Was the whole block, header to `}`, on one line without comments?
    fn one_line_source(&self, b: &Block) -> bool {
        b.close.is_some()
            && !self.has_break(b.span.start, b.span.end)
            && self
                .peek_comment()
                .is_none_or(|c| c.span.start >= b.span.end)
    }

    fn inline_item(&mut self, item: &Item) -> String {
        match item {
            Item::Block(b) => self.inline_block(b),
            Item::Statement(s) => {
                let w = self.statement_words(s);
                inline(&w)
            }
            Item::Directive(d) => {
                let w = self.directive_words(d);
                inline(&w)
            }
        }
    }

    fn inline_block(&mut self, b: &Block) -> String {
        let mut words = vec![word(b.name.name.clone(), false, false)];
        self.seq_words(&b.args, &mut words);
        let mut s = inline(&words);
        if b.items.is_empty() {
            s.push_str(" {}");
            return s;
        }
        s.push_str(" { ");
        for (i, item) in b.items.iter().enumerate() {
            if i > 0 {
                s.push_str("; ");
            }
            s.push_str(&self.inline_item(item));
        }
        s.push_str(" }");
        s
    }

    /// Atoms in a row outside brackets: a value, header or directive arguments.
    fn seq_words(&mut self, atoms: &[Atom], words: &mut Vec<Word>) {
        for (i, a) in atoms.iter().enumerate() {
            let prev = i.checked_sub(1).map(|p| &atoms[p]);
            let guard = needs_tuple_comma(prev, a);
            if is_grid_list(prev, a) && self.grid_rows(a, words) {
                continue;
            }
            self.atom_words(a, words, true, 0);
            if guard {
                // The last word is the tuple's `)`.
                if let Some(w) = words.last_mut() {
                    w.text.insert(0, ',');
                }
            }
        }
    }

    /// Lays out the list of a `cells [...]` or `columns [...]` form one
    /// grid row per line (see the module doc); false, with nothing pushed,
    /// when the rule does not apply.
    fn grid_rows(&mut self, list: &Atom, words: &mut Vec<Word>) -> bool {
        let AtomKind::List { items, unit, close } = &list.kind else {
            return false;
        };
        let Some(nx) = self.nx else {
            return false;
        };
        let end = close.map_or(list.span.end, |c| c.end);
        let commented = self.peek_comment().is_some_and(|c| c.span.start < end);
        if items.len() <= nx || commented {
            return false;
        }
        // Plain numbers only (a nested list or a range keeps the plain wrapping).
        let texts: Option<Vec<String>> = items
            .iter()
            .enumerate()
            .map(|(i, it)| match &it.kind {
                AtomKind::Number { raw, unit, .. } => {
                    let mut t = with_unit(raw.clone(), unit);
                    if items.get(i + 1).is_some_and(|next| needs_comma(it, next)) {
                        t.push(',');
                    }
                    Some(t)
                }
                _ => None,
            })
            .collect();
        let Some(texts) = texts else {
            return false;
        };
        // The widest row, with a space between values, at its indentation.
        let widest = texts
            .chunks(nx)
            .map(|row| row.iter().map(|t| t.chars().count() + 1).sum::<usize>() - 1)
            .max()
            .unwrap_or(0);
        let chunk = if 2 * (self.level + 1) + widest <= WIDTH {
            nx
        } else {
            ROW_CHUNK
        };
        words.push(word("[".into(), true, false));
        for (n, t) in texts.into_iter().enumerate() {
            let mut w = word(t, n % nx != 0, false);
            if n % nx == 0 {
                w.force = Some(1);
            } else if (n % nx) % chunk == 0 {
                w.force = Some(2);
            }
            words.push(w);
        }
        let mut close = word(with_unit("]".into(), unit), false, false);
        close.force = Some(0);
        words.push(close);
        self.rows_laid = true;
        true
    }

    /// Finds the runs of consecutive statements in `items` whose values are
    /// lists of plain numbers of one length (two or more of them), and
    /// records each statement of such a run as a row of an aligned table.
    fn table_rows<'i>(&mut self, items: &'i [Item], level: usize) {
        // One statement's key, its values as text and the text after `]`.
        type Row<'s> = (&'s Statement, Vec<String>, String);
        let comments = self.comments;
        let row_of = |item: &'i Item| -> Option<Row<'i>> {
            let Item::Statement(s) = item else {
                return None;
            };
            let [Atom {
                kind: AtomKind::List { items, unit, close },
                span,
            }] = s.value.atoms.as_slice()
            else {
                return None;
            };
            let end = close.map_or(span.end, |c| c.start);
            if items.is_empty()
                || comments
                    .iter()
                    .any(|c| span.start < c.span.start && c.span.start < end)
            {
                return None;
            }
            let values = items
                .iter()
                .map(|it| match &it.kind {
                    AtomKind::Number {
                        raw, unit: None, ..
                    } => Some(raw.clone()),
                    _ => None,
                })
                .collect::<Option<Vec<String>>>()?;
            Some((s, values, with_unit("]".into(), unit)))
        };
        let mut runs: Vec<Vec<Row>> = Vec::new();
        let mut current: Vec<Row> = Vec::new();
        for item in items {
            match row_of(item) {
                Some(row) if current.first().is_none_or(|f| f.1.len() == row.1.len()) => {
                    current.push(row)
                }
                next => {
                    runs.push(std::mem::take(&mut current));
                    current.extend(next);
                }
            }
        }
        runs.push(current);
        for run in runs.into_iter().filter(|r| r.len() >= 2) {
            let key_width = run
                .iter()
                .map(|r| r.0.key.name.chars().count())
                .max()
                .unwrap_or(0);
            let columns = run[0].1.len();
            let widths: Vec<usize> = (0..columns)
                .map(|c| {
                    run.iter()
                        .map(|r| r.1[c].chars().count())
                        .max()
                        .unwrap_or(0)
                })
                .collect();
            let lines: Vec<(usize, String)> = run
                .iter()
                .map(|(s, values, close)| {
                    let cells: Vec<String> = values
                        .iter()
                        .zip(&widths)
                        .map(|(v, w)| format!("{v:<w$}"))
                        .collect();
                    let key = format!("{:<key_width$}", s.key.name);
                    (s.span.start, format!("{key} = [{}{close}", cells.join(" ")))
                })
                .collect();
            if lines
                .iter()
                .all(|(_, l)| level * 2 + l.chars().count() <= WIDTH)
            {
                self.rows.extend(lines);
            }
        }
    }

    /// Comments before `limit` inside brackets, as words.
    fn stream_comments(&mut self, limit: usize, words: &mut Vec<Word>) {
        while let Some(c) = self.peek_comment().filter(|c| c.span.start < limit) {
            words.push(Word {
                text: comment_text(c),
                space: true,
                brk: true,
                comment: true,
                force: None,
            });
            self.next += 1;
        }
    }

    fn atom_words(&mut self, atom: &Atom, words: &mut Vec<Word>, space: bool, inside: usize) {
        let brk = inside > 0;
        match &atom.kind {
            AtomKind::Number { raw, unit, .. } => {
                words.push(word(with_unit(raw.clone(), unit), space, brk))
            }
            AtomKind::Ident(name) => words.push(word(name.clone(), space, brk)),
            AtomKind::Str { value, unit } => {
                words.push(word(with_unit(quote_str(value), unit), space, brk))
            }
            AtomKind::Range { start, end } => {
                words.push(word(format!("{start}..{end}"), space, brk))
            }
            AtomKind::Size(v) => {
                let parts: Vec<String> = v.iter().map(|n| n.to_string()).collect();
                words.push(word(parts.join(" x "), space, brk));
            }
            AtomKind::Op(op) => words.push(word(op.as_char().to_string(), space, brk)),
            AtomKind::Selector { key, value } => {
                words.push(word(key.name.clone(), space, brk));
                words.push(word("=".into(), true, brk));
                self.atom_words(value, words, true, inside);
            }
            AtomKind::List { items, unit, close } => {
                words.push(word("[".into(), space, brk));
                for (i, it) in items.iter().enumerate() {
                    if i > 0 && needs_comma(&items[i - 1], it) {
                        if let Some(w) = words.last_mut() {
                            w.text.push(',');
                        }
                    }
                    self.stream_comments(it.span.start, words);
                    self.atom_words(it, words, i > 0, inside + 1);
                }
                self.stream_comments(close.map_or(atom.span.end, |c| c.start), words);
                words.push(word(with_unit("]".into(), unit), false, true));
            }
            AtomKind::Tuple { items, close } => {
                words.push(word("(".into(), space, brk));
                for (i, it) in items.iter().enumerate() {
                    if i > 0 {
                        if let Some(w) = words.last_mut() {
                            w.text.push(',');
                        }
                    }
                    self.stream_comments(it.span.start, words);
                    self.atom_words(it, words, i > 0, inside + 1);
                }
                self.stream_comments(close.map_or(atom.span.end, |c| c.start), words);
                words.push(word(")".into(), false, true));
            }
        }
    }
}

/// Words on one line.
fn inline(words: &[Word]) -> String {
    let mut s = String::new();
    for w in words {
        if w.space && !s.is_empty() {
            s.push(' ');
        }
        s.push_str(&w.text);
    }
    s
}

/// Words filled into lines of at most [`WIDTH`] columns where breaks are
/// allowed; continuation lines one level deeper. The first line's
/// indentation is not included.
fn layout(words: &[Word], level: usize) -> String {
    let cont = indent(level + 1);
    let mut s = String::new();
    let mut col = level * 2;
    let mut on_line = 0usize;
    let mut after_comment = false;
    for w in words {
        let len = w.text.chars().count();
        if let Some(extra) = w.force {
            let ind = indent(level + extra);
            s.push('\n');
            s.push_str(&ind);
            col = ind.len();
            on_line = 0;
        } else if after_comment {
            s.push('\n');
            s.push_str(&cont);
            col = cont.len();
            on_line = 0;
        } else if w.comment {
            s.push_str("  ");
            col += 2;
        } else if w.space {
            if w.brk && on_line > 0 && col + 1 + len > WIDTH {
                s.push('\n');
                s.push_str(&cont);
                col = cont.len();
                on_line = 0;
            } else {
                s.push(' ');
                col += 1;
            }
        }
        s.push_str(&w.text);
        col += len;
        on_line += 1;
        after_comment = w.comment;
    }
    s
}
