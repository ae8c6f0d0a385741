//! Semantic tokens from the syntax tree and its comments.

use crate::locate::number_span;
use crate::{SemanticToken, Snapshot, TokenKind};
use rill_model::schema;
use rill_syntax::{Atom, AtomKind, Item, Span};

const KEYWORDS: &[&str] = &["at", "layers", "cells", "file", "columns", "include"];

fn overlaps(a: Span, b: Span) -> bool {
    a.start < b.end && b.start < a.end || (a.start == a.end && b.contains(a.start))
}

struct Out<'a> {
    text: &'a str,
    range: Span,
    tokens: Vec<SemanticToken>,
}

impl Out<'_> {
    fn push(&mut self, span: Span, kind: TokenKind) {
        if span.is_empty() || !overlaps(span, self.range) {
            return;
        }
        self.tokens.push(SemanticToken { span, kind });
    }
}

pub(crate) fn semantic_tokens(snap: &Snapshot, range: Span) -> Vec<SemanticToken> {
    let text = snap.text();
    let tree = snap.tree();
    let mut out = Out {
        text,
        range,
        tokens: Vec::new(),
    };
    items(&mut out, &tree.items);
    let first = tree.comments.partition_point(|c| c.span.end <= range.start);
    for c in &tree.comments[first..] {
        if c.span.start >= range.end {
            break;
        }
        out.push(c.span, TokenKind::Comment);
    }
    let mut tokens = out.tokens;
    tokens.sort_by_key(|t| (t.span.start, t.span.end));
    // Keep them non-overlapping: the first token at a place wins.
    let mut result: Vec<SemanticToken> = Vec::with_capacity(tokens.len());
    for t in tokens {
        if result.last().is_some_and(|l| l.span.end > t.span.start) {
            continue;
        }
        result.push(t);
    }
    result
}

fn items(out: &mut Out, list: &[Item]) {
    let first = list.partition_point(|i| i.span().end <= out.range.start);
    for item in &list[first..] {
        if item.span().start >= out.range.end {
            break;
        }
        match item {
            Item::Statement(s) => {
                out.push(s.key.span, TokenKind::Key);
                out.push(s.eq, TokenKind::Operator);
                match s.value.atoms.as_slice() {
                    // `relperm = "channel sand"` names a block, as its label does.
                    [a @ Atom {
                        kind: AtomKind::Str { unit: None, .. },
                        ..
                    }] if s.key.name == "relperm" => out.push(a.span, TokenKind::Name),
                    list => atoms(out, list),
                }
            }
            Item::Directive(d) => {
                let kind = if d.name.name == "include" {
                    TokenKind::Keyword
                } else {
                    TokenKind::Block
                };
                out.push(d.name.span, kind);
                atoms(out, &d.args);
            }
            Item::Block(b) => {
                let kind = if b.name.name == "at" {
                    TokenKind::Keyword
                } else {
                    TokenKind::Block
                };
                out.push(b.name.span, kind);
                for (n, a) in b.args.iter().enumerate() {
                    match &a.kind {
                        AtomKind::Str { unit: None, .. } if n == 0 => {
                            out.push(a.span, TokenKind::Name)
                        }
                        _ => atom(out, a),
                    }
                }
                items(out, &b.items);
            }
        }
    }
}

fn atoms(out: &mut Out, list: &[Atom]) {
    let first = list.partition_point(|a| a.span.end <= out.range.start);
    for a in &list[first..] {
        if a.span.start >= out.range.end {
            break;
        }
        atom(out, a);
    }
}

fn unit(out: &mut Out, u: &Option<rill_syntax::UnitExpr>) {
    if let Some(u) = u {
        out.push(u.span, TokenKind::Unit);
    }
}

fn atom(out: &mut Out, a: &Atom) {
    match &a.kind {
        AtomKind::Number { unit: u, .. } => {
            out.push(number_span(a), TokenKind::Number);
            unit(out, u);
        }
        AtomKind::Ident(w) => {
            let w = w.as_str();
            let kind = if KEYWORDS.contains(&w) {
                TokenKind::Keyword
            } else if [
                schema::ROLES,
                schema::SIDES,
                schema::RUN_KINDS,
                schema::SYSTEMS,
                schema::CONTROL_WORDS,
                schema::RELPERM_MODELS,
            ]
            .iter()
            .any(|names| names.contains(&w))
            {
                TokenKind::EnumValue
            } else {
                TokenKind::Key
            };
            out.push(a.span, kind);
        }
        AtomKind::Str { unit: u, .. } => {
            let end = u.as_ref().map_or(a.span.end, |u| u.span.start);
            let s = out.text.get(a.span.start..end).unwrap_or("");
            out.push(
                Span::new(a.span.start, a.span.start + s.trim_end().len()),
                TokenKind::String,
            );
            unit(out, u);
        }
        AtomKind::List { items, unit: u, .. } => {
            atoms(out, items);
            unit(out, u);
        }
        AtomKind::Tuple { items, .. } => atoms(out, items),
        AtomKind::Range { .. } => {
            let s = out.text.get(a.span.start..a.span.end).unwrap_or("");
            match s.find("..") {
                Some(p) => {
                    out.push(Span::new(a.span.start, a.span.start + p), TokenKind::Number);
                    out.push(
                        Span::new(a.span.start + p, a.span.start + p + 2),
                        TokenKind::Operator,
                    );
                    out.push(
                        Span::new(a.span.start + p + 2, a.span.end),
                        TokenKind::Number,
                    );
                }
                None => out.push(a.span, TokenKind::Number),
            }
        }
        AtomKind::Size(_) => {
            let s = out.text.get(a.span.start..a.span.end).unwrap_or("");
            let bytes = s.as_bytes();
            let mut i = 0;
            while i < bytes.len() {
                if bytes[i].is_ascii_digit() {
                    let start = i;
                    while i < bytes.len() && bytes[i].is_ascii_digit() {
                        i += 1;
                    }
                    out.push(
                        Span::new(a.span.start + start, a.span.start + i),
                        TokenKind::Number,
                    );
                } else {
                    if bytes[i] == b'x' {
                        out.push(
                            Span::new(a.span.start + i, a.span.start + i + 1),
                            TokenKind::Operator,
                        );
                    }
                    i += 1;
                }
            }
        }
        AtomKind::Op(_) => out.push(a.span, TokenKind::Operator),
        AtomKind::Selector { key, value } => {
            out.push(key.span, TokenKind::Key);
            atom(out, value);
        }
    }
}
