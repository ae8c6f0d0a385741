//! Comparing trees by meaning: equal up to spans.
//!
//! The formatter promises that the tree of its output equals the tree of its
//! input except for byte offsets; [`same_meaning`] checks exactly that (for
//! `rill fmt --check`, tests and fuzzing).

use crate::ast::*;
use crate::expr::{Expr, ExprError, Factor, OpAt, Term};

/// The items with every span set to `0..0`, so that `==` compares meaning.
pub fn strip_spans(items: &[Item]) -> Vec<Item> {
    items.iter().map(strip_item).collect()
}

/// Do two files have the same items, ignoring spans (comments and errors are not compared)?
pub fn same_meaning(a: &SourceFile, b: &SourceFile) -> bool {
    a.items.len() == b.items.len() && strip_spans(&a.items) == strip_spans(&b.items)
}

const Z: Span = Span { start: 0, end: 0 };

fn strip_ident(i: &Ident) -> Ident {
    Ident {
        name: i.name.clone(),
        span: Z,
    }
}

fn strip_unit(u: &Option<UnitExpr>) -> Option<UnitExpr> {
    u.as_ref().map(|u| UnitExpr {
        text: u.text.clone(),
        span: Z,
    })
}

fn strip_item(item: &Item) -> Item {
    match item {
        Item::Statement(s) => Item::Statement(Statement {
            key: strip_ident(&s.key),
            eq: Z,
            value: Value {
                atoms: s.value.atoms.iter().map(strip_atom).collect(),
                span: Z,
                expr: s.value.expr.as_ref().map(|e| match e {
                    Ok(e) => Ok(strip_expr(e)),
                    Err(ExprError::MissingOperand { .. }) => {
                        Err(ExprError::MissingOperand { at: Z })
                    }
                    Err(other) => Err(*other),
                }),
            },
            span: Z,
        }),
        Item::Block(b) => Item::Block(Block {
            name: strip_ident(&b.name),
            args: b.args.iter().map(strip_atom).collect(),
            items: strip_spans(&b.items),
            open: Z,
            close: b.close.map(|_| Z),
            span: Z,
        }),
        Item::Directive(d) => Item::Directive(Directive {
            name: strip_ident(&d.name),
            args: d.args.iter().map(strip_atom).collect(),
            span: Z,
        }),
    }
}

fn strip_atom(a: &Atom) -> Atom {
    let kind = match &a.kind {
        AtomKind::Number { value, raw, unit } => AtomKind::Number {
            value: *value,
            raw: raw.clone(),
            unit: strip_unit(unit),
        },
        AtomKind::Ident(n) => AtomKind::Ident(n.clone()),
        AtomKind::Str { value, unit } => AtomKind::Str {
            value: value.clone(),
            unit: strip_unit(unit),
        },
        AtomKind::List { items, unit, close } => AtomKind::List {
            items: items.iter().map(strip_atom).collect(),
            unit: strip_unit(unit),
            close: close.map(|_| Z),
        },
        AtomKind::Range { start, end } => AtomKind::Range {
            start: *start,
            end: *end,
        },
        AtomKind::Tuple { items, close } => AtomKind::Tuple {
            items: items.iter().map(strip_atom).collect(),
            close: close.map(|_| Z),
        },
        AtomKind::Size(v) => AtomKind::Size(v.clone()),
        AtomKind::Op(o) => AtomKind::Op(*o),
        AtomKind::Selector { key, value } => AtomKind::Selector {
            key: strip_ident(key),
            value: Box::new(strip_atom(value)),
        },
    };
    Atom { kind, span: Z }
}

fn strip_expr(e: &Expr) -> Expr {
    let op = |o: &Option<OpAt>| o.map(|o| OpAt { op: o.op, span: Z });
    Expr {
        terms: e
            .terms
            .iter()
            .map(|t| Term {
                op: op(&t.op),
                factors: t
                    .factors
                    .iter()
                    .map(|f| Factor {
                        op: op(&f.op),
                        operand: strip_atom(&f.operand),
                    })
                    .collect(),
                span: Z,
            })
            .collect(),
        span: Z,
    }
}
