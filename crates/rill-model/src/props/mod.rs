//! Per-cell property values in every form of the language: uniform,
//! `layers [...]`, `cells [...]`, `columns [...]`, `file "..."`, and
//! arithmetic on properties of the same block and scalars (`0.1 * kx`,
//! `kx * 2 + 5 md`). Expressions are read first, then evaluated in
//! dependency order so that references see the final (patched) values.
//! The arithmetic itself (lowering, dimensions, evaluation) is in [`expr`].

mod expr;

use expr::Operands;
pub use expr::{check_result_dim, evaluate, evaluate_kept, infer_dim, Expr, Failed};

use crate::arrays;
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::reuse::{kept, Reuse};
use crate::source::Source;
use crate::values::{beyond_message, checked_unit, largest, within, Gauge, Reporter};
use crate::{CellValues, FileInfo};
use rayon::prelude::*;
use rill_syntax::{Atom, AtomKind, Span, UnitExpr, Value};
use rill_units::Dim;
use std::path::PathBuf;
use std::sync::Arc;

/// Values of a property over the grid, SI.
#[derive(Debug, Clone, PartialEq)]
pub enum Field {
    /// The same value in every cell.
    Uniform(f64),
    /// One per layer (NZ).
    Layers(Vec<f64>),
    /// One per column (NX*NY), for `top`.
    Columns(Vec<f64>),
    /// One per cell (NX*NY*NZ).
    Cells(Arc<Vec<f64>>),
}

/// Grid shape needed to count and broadcast values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shape {
    /// Columns in x.
    pub nx: usize,
    /// Rows in y.
    pub ny: usize,
    /// Layers in z.
    pub nz: usize,
}

impl Shape {
    /// Number of cells.
    pub fn cells(&self) -> usize {
        self.nx * self.ny * self.nz
    }
    /// Number of columns (NX*NY).
    pub fn columns(&self) -> usize {
        self.nx * self.ny
    }
}

impl Field {
    /// Value in cell `c` (or column `c` for `Columns`).
    pub fn at(&self, c: usize, shape: Shape) -> f64 {
        match self {
            Field::Uniform(v) => *v,
            Field::Layers(v) => v[c / shape.columns().max(1)],
            Field::Columns(v) => v[c % shape.columns().max(1)],
            Field::Cells(v) => v[c],
        }
    }
    /// One value per cell: a per-cell array as it is (shared, never
    /// copied), any other form spread over the cells, kept in `reuse` for
    /// the next analysis.
    pub fn into_cell_values(self, shape: Shape, reuse: Option<&Reuse>) -> CellValues {
        match self {
            Field::Cells(v) => v.into(),
            other => {
                let (mut arrays, mut params) = (Vec::new(), vec![shape.nx as u64, shape.ny as u64]);
                params.push(shape.nz as u64);
                other.encode(&mut arrays, &mut params);
                kept(reuse, "spread over the cells", &arrays, &params, || {
                    Arc::new(cells_by_index(shape.cells(), reuse, |c| other.at(c, shape)))
                })
                .into()
            }
        }
    }

    /// Append this field to the inputs of a kept result: per-cell arrays by
    /// identity, other forms by value, each behind a tag and a length.
    pub fn encode(&self, arrays: &mut Vec<Arc<Vec<f64>>>, params: &mut Vec<u64>) {
        match self {
            Field::Uniform(v) => params.extend([0, v.to_bits()]),
            Field::Layers(v) | Field::Columns(v) => {
                params.push(if matches!(self, Field::Layers(_)) {
                    1
                } else {
                    2
                });
                params.push(v.len() as u64);
                params.extend(v.iter().map(|x| x.to_bits()));
            }
            Field::Cells(v) => {
                params.extend([3, arrays.len() as u64]);
                arrays.push(v.clone());
            }
        }
    }

    /// One value per cell, copied out.
    pub fn to_cells(&self, shape: Shape) -> Vec<f64> {
        match self {
            Field::Cells(v) => v.as_ref().clone(),
            _ => (0..shape.cells()).map(|c| self.at(c, shape)).collect(),
        }
    }
}

/// What value forms a key accepts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Forms {
    /// `layers [...]` and, for `dz`, a bare list meaning one per layer.
    pub layers: bool,
    /// A bare list with one value per cell, and `cells [...]`.
    pub cells: bool,
    /// `columns [...]`: one value per column.
    pub columns: bool,
    /// `file "name"`: values from an array file.
    pub file: bool,
    /// Arithmetic and references to other properties.
    pub arithmetic: bool,
    /// A bare `[...]` list: how many values and what it means.
    pub bare_list: Option<BareList>,
    /// Count of values in a `file` (cells or columns).
    pub file_columns: bool,
}

/// What a bare `[...]` list means for a key.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BareList {
    /// One per layer (NZ), for `dz`.
    Layers,
    /// One per column (NX*NY).
    Columns,
    /// One per grid line of an axis (`dx`: NX, `dy`: NY).
    Axis(usize),
}

impl Forms {
    /// Rock properties: a value, per layer, per cell or from a file, with arithmetic.
    pub const PROPERTY: Forms = Forms {
        layers: true,
        cells: true,
        columns: false,
        file: true,
        arithmetic: true,
        bare_list: None,
        file_columns: false,
    };
    /// `dz`: a value, per layer, per cell or from a file; no arithmetic.
    pub const THICKNESS: Forms = Forms {
        layers: true,
        cells: true,
        columns: false,
        file: true,
        arithmetic: false,
        bare_list: Some(BareList::Layers),
        file_columns: false,
    };
    /// `top`: a value, per column or from a file.
    pub const TOP: Forms = Forms {
        layers: false,
        cells: false,
        columns: true,
        file: true,
        arithmetic: false,
        bare_list: None,
        file_columns: true,
    };
    /// Initial pressure: a value, per layer, per cell or from a file; no arithmetic.
    pub const PRESSURE: Forms = Forms {
        layers: true,
        cells: true,
        columns: false,
        file: true,
        arithmetic: false,
        bare_list: None,
        file_columns: false,
    };
}

/// Shared state for reading property values: the grid shape, the file
/// source, and the analysis' cache (an array file used twice is parsed once).
pub struct PropReader<'s> {
    /// The grid shape values are counted against.
    pub shape: Shape,
    /// Where array files are read.
    pub source: &'s dyn Source,
    /// The deck the values stand in; array file names are relative to it.
    pub deck_path: PathBuf,
    /// The analysis' cache: parsed array files and kept results.
    pub cache: &'s Reuse,
    /// The analysis' file list; array files read are appended so that
    /// diagnostics can point into them.
    pub files: &'s mut Vec<FileInfo>,
}

fn list_values(
    r: &mut Reporter,
    items: &[Atom],
    list_unit: Option<&UnitExpr>,
    expected: Dim,
    gauge: Gauge,
    key: &str,
) -> Option<Vec<f64>> {
    let mut out = Vec::with_capacity(items.len());
    let mut ok = true;
    // Parse the shared unit once: lists reach a million items.
    let shared = match list_unit {
        Some(u) => {
            let first_span = items.first().map(|a| a.span).unwrap_or(u.span);
            let first_value = match items.first().map(|a| &a.kind) {
                Some(AtomKind::Number { value, .. }) => *value,
                _ => 1.0,
            };
            Some(checked_unit(
                r,
                first_value,
                first_span,
                Some(u),
                expected,
                gauge,
                key,
            )?)
        }
        None => None,
    };
    let mut missing_reported = false;
    let limit = largest(expected);
    let push = |r: &mut Reporter, out: &mut Vec<f64>, si: f64, span: Span| {
        if within(si, limit) {
            out.push(si);
            true
        } else {
            r.push(Diagnostic::error(
                Code::DeckOutOfRange,
                r.loc(span),
                beyond_message(key, si, expected, ""),
            ));
            false
        }
    };
    for item in items {
        match &item.kind {
            AtomKind::Number {
                value,
                unit: Some(u),
                ..
            } => match checked_unit(r, *value, item.span, Some(u), expected, gauge, key) {
                Some(unit) => ok &= push(r, &mut out, unit.to_si(*value), item.span),
                None => ok = false,
            },
            AtomKind::Number {
                value, unit: None, ..
            } if !value.is_finite() => {
                // An overflowing literal: `checked_unit` reports it.
                checked_unit(r, *value, item.span, None, Dim::NONE, gauge, key);
                ok = false;
            }
            AtomKind::Number {
                value, unit: None, ..
            } => match shared {
                Some(unit) => ok &= push(r, &mut out, unit.to_si(*value), item.span),
                None if expected == Dim::NONE => ok &= push(r, &mut out, *value, item.span),
                None => {
                    if !missing_reported {
                        checked_unit(r, *value, item.span, None, expected, gauge, key);
                        missing_reported = true;
                    }
                    ok = false;
                }
            },
            _ => {
                r.push(Diagnostic::error(
                    Code::DeckValue,
                    r.loc(item.span),
                    format!(
                        "`{key}` expects numbers in this list, found {}",
                        atom_words(&item.kind)
                    ),
                ));
                ok = false;
            }
        }
    }
    if missing_reported {
        // One diagnostic for the whole list; say where the unit goes.
        if let Some(d) = r
            .diags
            .iter_mut()
            .rev()
            .find(|d| d.code == Code::UnitMissing)
        {
            d.notes
                .push("a unit after the closing `]` applies to every item".into());
        }
    }
    ok.then_some(out)
}

/// Words for an atom in messages.
pub fn atom_words(kind: &AtomKind) -> String {
    match kind {
        AtomKind::Number {
            raw, unit: Some(u), ..
        } => format!("the quantity `{raw} {}`", u.text),
        AtomKind::Number { raw, .. } => format!("the number `{raw}`"),
        AtomKind::Ident(name) => format!("the name `{name}`"),
        AtomKind::Str { value, .. } => format!("the string \"{value}\""),
        AtomKind::List { .. } => "a list".into(),
        AtomKind::Range { start, end } => format!("the range `{start}..{end}`"),
        AtomKind::Tuple { .. } => "a cell tuple".into(),
        AtomKind::Size(parts) => format!(
            "the size `{}`",
            parts
                .iter()
                .map(|p| p.to_string())
                .collect::<Vec<_>>()
                .join(" x ")
        ),
        AtomKind::Op(op) => format!("the operator `{}`", op.as_char()),
        AtomKind::Selector { key, .. } => format!("the selector `{} = ...`", key.name),
    }
}

fn count_check(
    r: &mut Reporter,
    span: Span,
    key: &str,
    form: &str,
    what: &str,
    expected: usize,
    found: usize,
) -> bool {
    if expected == found {
        return true;
    }
    r.push(
        Diagnostic::error(
            Code::GridArrayLength,
            r.loc(span),
            format!(
                "`{key} = {}` needs {expected} values ({what}), found {found}",
                if form.is_empty() {
                    "[...]".to_string()
                } else {
                    format!("{form} [...]")
                }
            ),
        )
        .with_note(if found < expected {
            format!("{} value(s) missing", expected - found)
        } else {
            format!("{} value(s) too many", found - expected)
        }),
    );
    false
}

/// Report a value form (`layers`, `cells`, ...) that `key` does not take,
/// with the forms it does take.
fn refuse_form(r: &mut Reporter, form: &str, forms: Forms, span: Span, key: &str) {
    let mut accepted = vec!["a single value"];
    if forms.layers {
        accepted.push("`layers [...]`");
    }
    if forms.cells {
        accepted.push("`cells [...]`");
    }
    if forms.columns {
        accepted.push("`columns [...]`");
    }
    if forms.file {
        accepted.push("`file \"...\"`");
    }
    r.push(Diagnostic::error(
        Code::DeckValue,
        r.loc(span),
        format!(
            "`{key}` does not take `{form}`; it takes {}",
            accepted.join(", ")
        ),
    ));
}

impl PropReader<'_> {
    /// Read a property value into an expression.
    pub fn read(
        &mut self,
        r: &mut Reporter,
        value: &Value,
        expected: Dim,
        gauge: Gauge,
        forms: Forms,
        key: &str,
    ) -> Option<Expr> {
        let atoms = &value.atoms;
        let first = atoms.first()?;
        if let AtomKind::Ident(word) = &first.kind {
            let form = word.as_str();
            let is_form = matches!(form, "layers" | "cells" | "columns" | "file");
            if is_form {
                return self.read_form(r, form, atoms, value.span, expected, gauge, forms, key);
            }
        }
        if let (Some(kind), [only]) = (forms.bare_list, atoms.as_slice()) {
            if let AtomKind::List { items, unit, .. } = &only.kind {
                let values = list_values(r, items, unit.as_ref(), expected, gauge, key)?;
                let (want, what, field) = match kind {
                    BareList::Layers => (
                        self.shape.nz,
                        "one per layer",
                        Field::Layers(values.clone()),
                    ),
                    BareList::Columns => (
                        self.shape.columns(),
                        "one per column",
                        Field::Columns(values.clone()),
                    ),
                    BareList::Axis(n) => {
                        (n, "one per column or row", Field::Columns(values.clone()))
                    }
                };
                if !count_check(r, only.span, key, "", what, want, values.len()) {
                    return None;
                }
                return Some(Expr::Data {
                    field,
                    dim: expected,
                    span: only.span,
                });
            }
        }
        Operands {
            expected,
            gauge,
            key,
            arithmetic: forms.arithmetic,
        }
        .lower(r, value)
    }

    #[allow(clippy::too_many_arguments)]
    fn read_form(
        &mut self,
        r: &mut Reporter,
        form: &str,
        atoms: &[Atom],
        span: Span,
        expected: Dim,
        gauge: Gauge,
        forms: Forms,
        key: &str,
    ) -> Option<Expr> {
        let allowed = match form {
            "layers" => forms.layers,
            "cells" => forms.cells,
            "columns" => forms.columns,
            _ => forms.file,
        };
        if !allowed {
            refuse_form(r, form, forms, atoms[0].span, key);
            return None;
        }
        let Some(arg) = atoms.get(1) else {
            r.push(Diagnostic::error(
                Code::DeckValue,
                r.loc(atoms[0].span),
                format!(
                    "`{form}` must be followed by {}",
                    if form == "file" {
                        "a file name in quotes"
                    } else {
                        "a list `[...]`"
                    }
                ),
            ));
            return None;
        };
        if let Some(extra) = atoms.get(2) {
            r.push(Diagnostic::error(
                Code::DeckValue,
                r.loc(extra.span),
                format!("unexpected {} after `{form} ...`", atom_words(&extra.kind)),
            ));
            return None;
        }
        let (want, what) = match form {
            "layers" => (self.shape.nz, "one per layer"),
            "columns" => (self.shape.columns(), "one per column, i fastest"),
            "file" if forms.file_columns => (self.shape.columns(), "one per column, i fastest"),
            _ => (
                self.shape.cells(),
                "one per cell, i fastest, then j, then k",
            ),
        };
        let values: Arc<Vec<f64>> = match (&arg.kind, form) {
            (AtomKind::List { items, unit, .. }, "layers" | "cells" | "columns") => {
                let values = list_values(r, items, unit.as_ref(), expected, gauge, key)?;
                if !count_check(r, arg.span, key, form, what, want, values.len()) {
                    return None;
                }
                Arc::new(values)
            }
            (AtomKind::Str { value: name, unit }, "file") => {
                let unit = checked_unit(r, 1.0, arg.span, unit.as_ref(), expected, gauge, key)?;
                self.file_values(r, name, unit, arg.span, (want, what), key)?
            }
            _ => {
                r.push(Diagnostic::error(
                    Code::DeckValue,
                    r.loc(arg.span),
                    format!(
                        "`{form}` must be followed by {}, found {}",
                        if form == "file" {
                            "a file name in quotes"
                        } else {
                            "a list `[...]`"
                        },
                        atom_words(&arg.kind)
                    ),
                ));
                return None;
            }
        };
        let field = match form {
            "layers" => Field::Layers(values.as_ref().clone()),
            "columns" => Field::Columns(values.as_ref().clone()),
            "file" if forms.file_columns => Field::Columns(values.as_ref().clone()),
            _ => Field::Cells(values),
        };
        Some(Expr::Data {
            field,
            dim: expected,
            span,
        })
    }

    /// The values of array file `name` in SI, `want` of them (`what` says
    /// which), read once per analysis and kept converted between analyses.
    fn file_values(
        &mut self,
        r: &mut Reporter,
        name: &str,
        unit: rill_units::Unit,
        span: Span,
        (want, what): (usize, &str),
        key: &str,
    ) -> Option<Arc<Vec<f64>>> {
        let raw = self.load_file(r, name, span)?;
        if raw.len() != want {
            r.push(Diagnostic::error(
                Code::GridArrayLength,
                r.loc(span),
                format!(
                    "`{key}` file \"{name}\" needs {want} values ({what}), found {}",
                    raw.len()
                ),
            ));
            return None;
        }
        let si = if unit.factor == 1.0 && !unit.gauge {
            raw
        } else {
            self.file_in_si(raw, unit)
        };
        // Every number of the file is finite (the parser refuses the
        // others); in SI and in the units values are shown in it must
        // stay so.
        let limit = largest(unit.dim);
        if let Some(i) = si.iter().position(|v| !within(*v, limit)) {
            r.push(Diagnostic::error(
                Code::DeckOutOfRange,
                r.loc(span),
                beyond_message(
                    key,
                    si[i],
                    unit.dim,
                    &format!("(value {} of file \"{name}\")", i + 1),
                ),
            ));
            return None;
        }
        Some(si)
    }

    /// The values of an array file converted to SI, kept between analyses.
    fn file_in_si(&mut self, raw: Arc<Vec<f64>>, unit: rill_units::Unit) -> Arc<Vec<f64>> {
        let params = [unit.factor.to_bits(), u64::from(unit.gauge)];
        kept(
            Some(self.cache),
            "array file in SI",
            std::slice::from_ref(&raw),
            &params,
            || {
                let reuse = Some(self.cache);
                Arc::new(cells_from(raw.len(), reuse, |start, out| {
                    for (o, v) in out.iter_mut().zip(&raw[start..]) {
                        *o = unit.to_si(*v);
                    }
                }))
            },
        )
    }

    fn load_file(&mut self, r: &mut Reporter, name: &str, span: Span) -> Option<Arc<Vec<f64>>> {
        let path = self.source.resolve(&self.deck_path, name);
        let bytes = match self.source.read(&path) {
            Ok(b) => b,
            Err(e) => {
                // The resolved path only where it says more than the name.
                let resolved = path.display().to_string();
                let at = if resolved == name {
                    String::new()
                } else {
                    format!(" ({resolved})")
                };
                r.push(Diagnostic::error(
                    Code::DeckInclude,
                    r.loc(span),
                    format!("array file \"{name}\"{at} cannot be used: {e}"),
                ));
                return None;
            }
        };
        if let Some(values) = self.cache.parsed_numbers(&path, &bytes) {
            return Some(values);
        }
        let (values, bad) = arrays::parse_numbers(&bytes);
        if !bad.is_empty() {
            let file_index = self.files.len();
            self.files.push(FileInfo {
                path: path.clone(),
                text: String::from_utf8_lossy(&bytes).into(),
                tree: None,
            });
            for b in &bad {
                r.push(
                    Diagnostic::error(
                        Code::SyntaxUnexpected,
                        Location {
                            file: file_index,
                            start: b.start,
                            end: b.end,
                        },
                        format!(
                            "expected a number in array file \"{name}\", found `{}`",
                            b.text
                        ),
                    )
                    .with_label(r.loc(span), "array file used here"),
                );
            }
            return None;
        }
        let values = Arc::new(values);
        self.cache.keep_parsed_numbers(&path, &bytes, &values);
        Some(values)
    }
}

/// Cells per parallel task when filling an array: small grids stay on one thread.
const CHUNK: usize = 1 << 15;

/// A new array of `n` values, filled in parallel by `fill(start, out)`
/// (which writes the values of cells `start..start + out.len()`), sharing
/// the work and the first touch of fresh memory between the cores. The
/// buffer is a spare of `pool` when it has one of that length.
pub(crate) fn cells_from(
    n: usize,
    pool: Option<&Reuse>,
    fill: impl Fn(usize, &mut [f64]) + Sync,
) -> Vec<f64> {
    let mut v = pool
        .and_then(|p| p.spare(n))
        .unwrap_or_else(|| vec![0.0; n]);
    v.par_chunks_mut(CHUNK)
        .enumerate()
        .for_each(|(chunk, out)| fill(chunk * CHUNK, out));
    v
}

/// [`cells_from`] with one value per cell from `value(c)`.
pub(crate) fn cells_by_index(
    n: usize,
    pool: Option<&Reuse>,
    value: impl Fn(usize) -> f64 + Sync,
) -> Vec<f64> {
    cells_from(n, pool, |start, out| {
        for (o, slot) in out.iter_mut().enumerate() {
            *slot = value(start + o);
        }
    })
}
