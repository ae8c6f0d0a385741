//! Property arithmetic (`0.1 * kx`, `kx * 2 + 5 md`): the syntax tree's
//! expression ([`rill_syntax::Expr`]) lowered to an [`Expr`] with SI
//! constants, its dimension, and its value over the grid.
//!
//! An expression is a sum of products and nothing nests deeper (the
//! language has no parentheses in arithmetic), so a chain of any length is
//! one [`Expr::Chain`] over a `Vec` and every walk here is a loop: a 100 000
//! factor product neither recurses nor overflows the stack.

use super::{atom_words, cells_by_index, cells_from, Field, Shape};
use crate::diagnostic::{Code, Diagnostic};
use crate::reuse::{kept, Reuse};
use crate::values::{
    beyond_message, checked_unit, describe_expected, describe_found, finite_literal, held, largest,
    within, Gauge, Reporter,
};
use rill_syntax::{Atom, AtomKind, ExprError, Op, Span, Value};
use rill_units::Dim;
use std::sync::Arc;

/// A property expression, lowered.
#[derive(Debug, Clone)]
pub enum Expr {
    /// A number with its SI value and dimension; `bare` when written without a unit.
    Const {
        /// The value in SI.
        si: f64,
        /// Its dimension.
        dim: Dim,
        /// Written without a unit.
        bare: bool,
        /// Where it is written.
        span: Span,
    },
    /// Values given directly (`layers [...]`, `file "..."`).
    Data {
        /// The values, SI.
        field: Field,
        /// Their dimension.
        dim: Dim,
        /// Where they are written.
        span: Span,
    },
    /// Another property of the same block.
    Ref {
        /// The property named.
        name: String,
        /// Where the name is written.
        span: Span,
    },
    /// Operands of one precedence level applied left to right: a product
    /// `a * b / c` of leaves, or a sum `a + b - c` of leaves and products.
    Chain {
        /// The first operand.
        first: Box<Expr>,
        /// Each further operator with its operand, in order.
        rest: Vec<(Op, Expr)>,
        /// The whole chain.
        span: Span,
    },
}

impl Expr {
    /// Where the expression is written.
    pub fn span(&self) -> Span {
        match self {
            Expr::Const { span, .. }
            | Expr::Data { span, .. }
            | Expr::Ref { span, .. }
            | Expr::Chain { span, .. } => *span,
        }
    }

    /// Every property referenced, in the order written.
    pub fn refs(&self, out: &mut Vec<(String, Span)>) {
        match self {
            Expr::Ref { name, span } => out.push((name.clone(), *span)),
            // At most two levels: a sum whose terms are leaves or products.
            Expr::Chain { first, rest, .. } => {
                first.refs(out);
                for (_, e) in rest {
                    e.refs(out);
                }
            }
            _ => {}
        }
    }
}

/// How operands are read: the key's expected dimension and gauge rule.
pub(super) struct Operands<'a> {
    pub expected: Dim,
    pub gauge: Gauge,
    pub key: &'a str,
    /// Whether the key takes arithmetic and references.
    pub arithmetic: bool,
}

impl Operands<'_> {
    /// A value that is not one of the list or file forms: a single operand,
    /// or arithmetic.
    pub fn lower(&self, r: &mut Reporter, value: &Value) -> Option<Expr> {
        let atoms = &value.atoms;
        let first = atoms.first()?;
        let in_arithmetic = atoms.len() > 1;
        if in_arithmetic && !self.arithmetic {
            r.push(Diagnostic::error(
                Code::DeckExpression,
                r.loc(first.span),
                format!(
                    "`{}` takes a single value here, not an expression",
                    self.key
                ),
            ));
            return None;
        }
        match &value.expr {
            None => {
                let e = self.operand(r, first, in_arithmetic)?;
                if let Some(extra) = atoms.get(1) {
                    self.extra(r, extra);
                    return None;
                }
                Some(e)
            }
            Some(Err(ExprError::Extra { index })) => {
                self.extra(r, &atoms[*index]);
                None
            }
            Some(Err(ExprError::OperatorForOperand { index })) => {
                // Reported as the operand it stands for.
                self.operand(r, &atoms[*index], true)
            }
            Some(Err(ExprError::MissingOperand { at })) => {
                r.push(Diagnostic::error(
                    Code::DeckExpression,
                    r.loc(*at),
                    format!("`{}` expects a value after the operator", self.key),
                ));
                None
            }
            Some(Ok(expr)) => {
                let mut terms = Vec::with_capacity(expr.terms.len());
                for term in &expr.terms {
                    let mut factors = Vec::with_capacity(term.factors.len());
                    for f in &term.factors {
                        let op = f.op.map_or(Op::Mul, |o| o.op);
                        factors.push((op, self.operand(r, &f.operand, true)?));
                    }
                    let op = term.op.map_or(Op::Add, |o| o.op);
                    terms.push((op, chain(factors)?));
                }
                chain(terms)
            }
        }
    }

    fn extra(&self, r: &mut Reporter, extra: &Atom) {
        r.push(Diagnostic::error(
            Code::DeckValue,
            r.loc(extra.span),
            format!(
                "unexpected {} after the value of `{}`",
                atom_words(&extra.kind),
                self.key
            ),
        ));
    }

    fn operand(&self, r: &mut Reporter, atom: &Atom, in_arithmetic: bool) -> Option<Expr> {
        match &atom.kind {
            AtomKind::Number { value, unit, .. } => {
                if !finite_literal(r, *value, atom.span, self.key) {
                    return None;
                }
                let Some(unit) = unit else {
                    return Some(Expr::Const {
                        si: *value,
                        dim: Dim::NONE,
                        bare: true,
                        span: atom.span,
                    });
                };
                let u = match rill_units::parse(&unit.text) {
                    // A term of another dimension inside arithmetic (`0.5 * kx`, `kx / 2 md`):
                    // its dimension is checked when the whole expression's is inferred.
                    Ok(u) if in_arithmetic && u.dim != self.expected && !u.gauge => u,
                    // A lone value, or a term of the expected dimension: full checks and fixes.
                    _ => {
                        let gauge = if in_arithmetic {
                            Gauge::Refused
                        } else {
                            self.gauge
                        };
                        checked_unit(
                            r,
                            *value,
                            atom.span,
                            Some(unit),
                            self.expected,
                            gauge,
                            self.key,
                        )?
                    }
                };
                Some(Expr::Const {
                    si: held(r, u.to_si(*value), u.dim, atom.span, self.key)?,
                    dim: u.dim,
                    bare: false,
                    span: atom.span,
                })
            }
            AtomKind::Ident(name) if self.arithmetic => Some(Expr::Ref {
                name: name.clone(),
                span: atom.span,
            }),
            other => {
                r.push(Diagnostic::error(
                    Code::DeckValue,
                    r.loc(atom.span),
                    format!(
                        "`{}` expects {}, found {}",
                        self.key,
                        describe_expected(self.expected),
                        atom_words(other)
                    ),
                ));
                None
            }
        }
    }
}

/// One operand alone, or the chain of all of them (the first operator is
/// ignored: it is the neutral one of the level). `None` only when empty,
/// which the syntax tree never gives.
fn chain(items: Vec<(Op, Expr)>) -> Option<Expr> {
    let mut items = items.into_iter();
    let (_, first) = items.next()?;
    let rest: Vec<(Op, Expr)> = items.collect();
    let Some((_, last)) = rest.last() else {
        return Some(first);
    };
    let span = first.span().join(last.span());
    Some(Expr::Chain {
        first: Box::new(first),
        rest,
        span,
    })
}

/// The dimension of an expression, reporting mismatches and exponents out
/// of range. `dims` gives the dimension of each referenced property.
pub fn infer_dim(
    r: &mut Reporter,
    e: &Expr,
    dims: &dyn Fn(&str) -> Option<Dim>,
    key: &str,
) -> Option<Dim> {
    let (first, rest) = match e {
        Expr::Const { dim, .. } | Expr::Data { dim, .. } => return Some(*dim),
        Expr::Ref { name, .. } => return dims(name),
        Expr::Chain { first, rest, .. } => (first, rest),
    };
    // Recursion here is bounded by the two levels of a sum of products.
    let mut acc = infer_dim(r, first, dims, key)?;
    for (i, (op, next)) in rest.iter().enumerate() {
        let b = infer_dim(r, next, dims, key)?;
        let so_far = first.span().join(next.span());
        acc = match op {
            Op::Mul | Op::Div => {
                let product = if *op == Op::Mul {
                    acc.checked_mul(b)
                } else {
                    acc.checked_div(b)
                };
                let Some(d) = product else {
                    r.push(Diagnostic::error(
                        Code::UnitDimension,
                        r.loc(so_far),
                        format!(
                            "the unit power of this expression in `{key}` is out of range: \
                             an exponent of length, mass, time or surface volume leaves \
                             -128..=127 at this factor"
                        ),
                    ));
                    return None;
                };
                d
            }
            Op::Add | Op::Sub if acc == b => acc,
            Op::Add | Op::Sub => {
                let lhs_bare = i == 0 && is_bare(first);
                add_mismatch(r, so_far, acc, b, lhs_bare.then(|| first.span()), next, key);
                return None;
            }
        };
    }
    Some(acc)
}

fn is_bare(e: &Expr) -> bool {
    matches!(e, Expr::Const { bare: true, .. })
}

/// Report `a + b` of different dimensions; a bare number on either side
/// lacks its unit.
fn add_mismatch(
    r: &mut Reporter,
    span: Span,
    a: Dim,
    b: Dim,
    lhs_bare: Option<Span>,
    rhs: &Expr,
    key: &str,
) {
    let (bare, other) = match (lhs_bare, rhs) {
        (Some(s), _) => (Some(s), b),
        (
            None,
            Expr::Const {
                bare: true, span, ..
            },
        ) => (Some(*span), a),
        _ => (None, a),
    };
    if let Some(span) = bare {
        let mut d = Diagnostic::error(
            Code::UnitMissing,
            r.loc(span),
            format!(
                "a bare number is added to {} in `{key}`; give it a unit",
                describe_found(other)
            ),
        );
        d = crate::values::with_unit_fixes(d, r, span, other);
        r.push(d);
    } else {
        r.push(Diagnostic::error(
            Code::UnitDimension,
            r.loc(span),
            format!(
                "cannot add {} and {} in `{key}`",
                describe_found(a),
                describe_found(b)
            ),
        ));
    }
}

fn op_code(op: Op) -> u64 {
    match op {
        Op::Add => 0,
        Op::Sub => 1,
        Op::Mul => 2,
        Op::Div => 3,
    }
}

/// Why an expression has no value.
#[derive(Debug, Clone)]
pub enum Failed {
    /// A referenced property has no value (reported where it is defined).
    Missing,
    /// A value a case cannot hold (see [`crate::values::within`]): where
    /// (the operation or term), in which cell, layer or column, and what.
    Beyond {
        /// The operation or term that gave it.
        span: Span,
        /// "in cell (3, 1, 1)", "in layer 2", or empty for a single value.
        place: String,
        /// The value, SI.
        value: f64,
    },
}

impl Failed {
    /// The diagnostic for this failure of `key` (of dimension `dim`) in
    /// file `file`; none when a property was missing.
    pub fn diagnostic(&self, file: usize, key: &str, dim: Dim) -> Option<Diagnostic> {
        match self {
            Failed::Missing => None,
            Failed::Beyond { span, place, value } => Some(Diagnostic::error(
                Code::DeckOutOfRange,
                crate::diagnostic::Location::new(file, *span),
                beyond_message(key, *value, dim, place),
            )),
        }
    }
}

/// [`evaluate`], kept in `reuse` for the next analysis when the expression
/// computes anything (`0.1 * kx`): the key is the expression's structure
/// with the values it reads, never its position in the text.
pub fn evaluate_kept(
    e: &Expr,
    shape: Shape,
    dim: Dim,
    lookup: &dyn Fn(&str) -> Option<Field>,
    reuse: Option<&Reuse>,
) -> Result<Field, Failed> {
    if reuse.is_none() || !matches!(e, Expr::Chain { .. }) {
        return evaluate_in(e, shape, largest(dim), lookup, reuse);
    }
    fn encode(
        e: &Expr,
        lookup: &dyn Fn(&str) -> Option<Field>,
        arrays: &mut Vec<Arc<Vec<f64>>>,
        params: &mut Vec<u64>,
    ) -> Option<()> {
        match e {
            Expr::Const { si, .. } => params.extend([10, si.to_bits()]),
            Expr::Data { field, .. } => field.encode(arrays, params),
            Expr::Ref { name, .. } => lookup(name)?.encode(arrays, params),
            Expr::Chain { first, rest, .. } => {
                params.extend([12, rest.len() as u64]);
                encode(first, lookup, arrays, params)?;
                for (op, next) in rest {
                    params.push(op_code(*op));
                    encode(next, lookup, arrays, params)?;
                }
            }
        }
        Some(())
    }
    let limit = largest(dim);
    let mut arrays = Vec::new();
    let mut params = vec![
        shape.nx as u64,
        shape.ny as u64,
        shape.nz as u64,
        limit.to_bits(),
    ];
    encode(e, lookup, &mut arrays, &mut params).ok_or(Failed::Missing)?;
    kept(reuse, "expression", &arrays, &params, || {
        evaluate_in(e, shape, limit, lookup, reuse)
    })
}

/// Evaluate an expression of dimension `dim` over the grid; `lookup` gives
/// the final value of a referenced property. Every operation must give
/// finite values, and each term and the result values a case can hold
/// ([`crate::values::within`]), or the evaluation fails there.
pub fn evaluate(
    e: &Expr,
    shape: Shape,
    dim: Dim,
    lookup: &dyn Fn(&str) -> Option<Field>,
) -> Result<Field, Failed> {
    evaluate_in(e, shape, largest(dim), lookup, None)
}

/// The first value of `field` outside `limit` (or not finite), with its place.
fn first_beyond(field: &Field, shape: Shape, limit: f64) -> Option<(String, f64)> {
    let bad = |v: &f64| !within(*v, limit);
    match field {
        Field::Uniform(v) => bad(v).then(|| (String::new(), *v)),
        Field::Layers(v) => v
            .iter()
            .position(bad)
            .map(|k| (format!("in layer {}", k + 1), v[k])),
        Field::Columns(v) => v.iter().position(bad).map(|c| {
            let nx = shape.nx.max(1);
            (format!("in column ({}, {})", c % nx + 1, c / nx + 1), v[c])
        }),
        Field::Cells(v) => v.iter().position(bad).map(|c| {
            let (nx, ny) = (shape.nx.max(1), shape.ny.max(1));
            let place = format!(
                "in cell ({}, {}, {})",
                c % nx + 1,
                c / nx % ny + 1,
                c / (nx * ny) + 1
            );
            (place, v[c])
        }),
    }
}

/// [`evaluate`], writing new per-cell arrays into spare buffers of `pool`
/// and giving it back the intermediate ones. `limit` bounds the terms of a
/// sum and the result (they have the expression's dimension); the factors
/// of a product, of other dimensions, need only be finite.
fn evaluate_in(
    e: &Expr,
    shape: Shape,
    limit: f64,
    lookup: &dyn Fn(&str) -> Option<Field>,
    pool: Option<&Reuse>,
) -> Result<Field, Failed> {
    match e {
        Expr::Const { si, .. } => Ok(Field::Uniform(*si)),
        Expr::Data { field, .. } => Ok(field.clone()),
        Expr::Ref { name, .. } => lookup(name).ok_or(Failed::Missing),
        Expr::Chain { first, rest, span } => {
            let is_sum = matches!(rest.first(), Some((Op::Add | Op::Sub, _)));
            // Within a product only the whole product has the dimension
            // of the expression; a product standing as a term of a sum does too.
            let step_limit = if is_sum { limit } else { f64::MAX };
            let mut acc = evaluate_in(first, shape, limit, lookup, pool)?;
            let mut done = first.span();
            for (op, next) in rest {
                let b = evaluate_in(next, shape, limit, lookup, pool)?;
                let out = apply(*op, &acc, &b, shape, pool);
                if let Some(pool) = pool {
                    for used in [acc, b] {
                        if let Field::Cells(v) = used {
                            if let Ok(v) = Arc::try_unwrap(v) {
                                pool.give_back(v);
                            }
                        }
                    }
                }
                done = done.join(next.span());
                if let Some((place, value)) = first_beyond(&out, shape, step_limit) {
                    return Err(Failed::Beyond {
                        span: done,
                        place,
                        value,
                    });
                }
                acc = out;
            }
            if let Some((place, value)) = first_beyond(&acc, shape, limit) {
                return Err(Failed::Beyond {
                    span: *span,
                    place,
                    value,
                });
            }
            Ok(acc)
        }
    }
}

/// `a op b` value by value; division by zero gives zero.
fn apply(op: Op, a: &Field, b: &Field, shape: Shape, pool: Option<&Reuse>) -> Field {
    let f = |x: f64, y: f64| match op {
        Op::Add => x + y,
        Op::Sub => x - y,
        Op::Mul => x * y,
        Op::Div => {
            if y == 0.0 {
                0.0
            } else {
                x / y
            }
        }
    };
    match (a, b) {
        (Field::Uniform(x), Field::Uniform(y)) => Field::Uniform(f(*x, *y)),
        (Field::Layers(x), Field::Layers(y)) => {
            Field::Layers(x.iter().zip(y).map(|(p, q)| f(*p, *q)).collect())
        }
        (Field::Layers(x), Field::Uniform(y)) => {
            Field::Layers(x.iter().map(|p| f(*p, *y)).collect())
        }
        (Field::Uniform(x), Field::Layers(y)) => {
            Field::Layers(y.iter().map(|q| f(*x, *q)).collect())
        }
        // Per-cell arrays reach a million values and are evaluated
        // again whenever an editor's user types in them: keep the
        // common pairs tight.
        (Field::Cells(x), Field::Uniform(y)) => {
            Field::Cells(Arc::new(cells_from(x.len(), pool, |start, out| {
                for (o, p) in out.iter_mut().zip(&x[start..]) {
                    *o = f(*p, *y);
                }
            })))
        }
        (Field::Uniform(x), Field::Cells(y)) => {
            Field::Cells(Arc::new(cells_from(y.len(), pool, |start, out| {
                for (o, q) in out.iter_mut().zip(&y[start..]) {
                    *o = f(*x, *q);
                }
            })))
        }
        (Field::Cells(x), Field::Cells(y)) => {
            let n = x.len().min(y.len());
            Field::Cells(Arc::new(cells_from(n, pool, |start, out| {
                for ((o, p), q) in out.iter_mut().zip(&x[start..]).zip(&y[start..]) {
                    *o = f(*p, *q);
                }
            })))
        }
        _ => Field::Cells(Arc::new(cells_by_index(shape.cells(), pool, |c| {
            f(a.at(c, shape), b.at(c, shape))
        }))),
    }
}

/// Report a dimension mismatch between a whole expression and the key.
pub fn check_result_dim(r: &mut Reporter, e: &Expr, found: Dim, expected: Dim, key: &str) -> bool {
    if found == expected {
        return true;
    }
    if let Expr::Const {
        bare: true,
        span,
        si,
        ..
    } = e
    {
        checked_unit(r, *si, *span, None, expected, Gauge::Refused, key);
        return false;
    }
    r.push(Diagnostic::error(
        Code::UnitDimension,
        r.loc(e.span()),
        format!(
            "`{key}` expects {}, but this expression is {}",
            describe_expected(expected),
            describe_found(found)
        ),
    ));
    false
}
