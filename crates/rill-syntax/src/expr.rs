//! Arithmetic values: `0.1 * kx`, `kx * 2 + 5 md`.
//!
//! The language has two precedence levels (`*` and `/` bind tighter than `+`
//! and `-`), both left associative, and no parentheses in arithmetic (`(`
//! opens a cell tuple). So an expression is held flat: a sum of terms, each
//! a product of operands. Its depth is fixed at two whatever its length, so
//! walking it never recurses in proportion to the text: a 100 000-factor
//! product is one `Vec`, not 100 000 nested nodes.
//!
//! The parser builds an [`Expr`] for every statement value that contains an
//! operator ([`Value::expr`](crate::Value::expr)); what an operand means (a number with a unit,
//! a property name) is for `rill-model` to decide. A value whose atoms do
//! not alternate operand, operator, operand keeps its atoms and carries an
//! [`ExprError`] instead, which the model reports in the words of its key.

use crate::ast::{Atom, AtomKind, Op, Span};

/// An operator with its position.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct OpAt {
    /// Which operator.
    pub op: Op,
    /// Span of the operator character.
    pub span: Span,
}

/// One operand of a product with the operator before it.
#[derive(Debug, Clone, PartialEq)]
pub struct Factor {
    /// `*` or `/` joining this operand to the product so far; `None` for the
    /// first operand of a term.
    pub op: Option<OpAt>,
    /// The operand: a number (with its unit), a name, or any other atom,
    /// which the model rejects with its own words.
    pub operand: Atom,
}

/// A product of operands: `0.1 * kx / 2`.
#[derive(Debug, Clone, PartialEq)]
pub struct Term {
    /// `+` or `-` joining this term to the sum so far; `None` for the first term.
    pub op: Option<OpAt>,
    /// The operands, at least one, left to right.
    pub factors: Vec<Factor>,
    /// From the first operand to the last (without the `op` before it).
    pub span: Span,
}

/// A sum of terms: `kx * 2 + 5 md - ky`.
#[derive(Debug, Clone, PartialEq)]
pub struct Expr {
    /// The terms, at least one, left to right.
    pub terms: Vec<Term>,
    /// The whole expression.
    pub span: Span,
}

/// Why the atoms of a value with an operator do not form an expression.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExprError {
    /// Atom `index` is an operator where an operand belongs (`kx * * 2`,
    /// `* kx`).
    OperatorForOperand {
        /// Index into [`Value::atoms`](crate::Value::atoms).
        index: usize,
    },
    /// The value ends with an operator (`kx *`); `at` is the empty span
    /// right after it.
    MissingOperand {
        /// Where the operand should be.
        at: Span,
    },
    /// Atom `index` follows a complete operand without an operator between
    /// them (`kx * 2 5`).
    Extra {
        /// Index into [`Value::atoms`](crate::Value::atoms).
        index: usize,
    },
}

impl Expr {
    /// Every operand, left to right, with the operator before it (`None`
    /// for the very first).
    pub fn operands(&self) -> impl Iterator<Item = (Option<OpAt>, &Atom)> {
        self.terms.iter().flat_map(|t| {
            t.factors.iter().enumerate().map(move |(i, f)| {
                let op = if i == 0 { t.op } else { f.op };
                (op, &f.operand)
            })
        })
    }
}

/// The expression formed by `atoms`, when they contain an operator; `None`
/// when they contain none (a plain value such as `rate 600 stb/day`).
/// Linear in the number of atoms, without recursion.
pub fn parse_expr(atoms: &[Atom]) -> Option<Result<Expr, ExprError>> {
    if !atoms.iter().any(|a| matches!(a.kind, AtomKind::Op(_))) {
        return None;
    }
    Some(build(atoms))
}

fn build(atoms: &[Atom]) -> Result<Expr, ExprError> {
    let mut terms: Vec<Term> = Vec::new();
    let mut current: Option<Term> = None;
    // The operator waiting for its operand.
    let mut pending: Option<OpAt> = None;
    for (index, atom) in atoms.iter().enumerate() {
        match (&atom.kind, current.as_mut()) {
            (AtomKind::Op(op), Some(_)) if pending.is_none() => {
                let at = OpAt {
                    op: *op,
                    span: atom.span,
                };
                if matches!(op, Op::Add | Op::Sub) {
                    terms.extend(current.take());
                }
                pending = Some(at);
            }
            (AtomKind::Op(_), _) => return Err(ExprError::OperatorForOperand { index }),
            (_, Some(term)) if pending.is_some_and(|p| matches!(p.op, Op::Mul | Op::Div)) => {
                term.factors.push(Factor {
                    op: pending.take(),
                    operand: atom.clone(),
                });
                term.span = term.span.join(atom.span);
            }
            (_, Some(_)) => return Err(ExprError::Extra { index }),
            (_, None) => {
                current = Some(Term {
                    op: pending.take(),
                    factors: vec![Factor {
                        op: None,
                        operand: atom.clone(),
                    }],
                    span: atom.span,
                });
            }
        }
    }
    if let Some(p) = pending {
        return Err(ExprError::MissingOperand {
            at: Span::new(p.span.end, p.span.end),
        });
    }
    terms.extend(current);
    let span = match (terms.first(), terms.last()) {
        (Some(a), Some(b)) => a.span.join(b.span),
        _ => Span::default(),
    };
    Ok(Expr { terms, span })
}
