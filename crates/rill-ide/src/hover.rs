//! Hover: cells behind list items, tuples and patches (the numbers of
//! `rill_model::inspect::cell_report`), wells (Peaceman radius, well index,
//! productivity), relperm blocks (mobility ratio, Buckley-Leverett front), quantities in SI and the other systems, units, keys and
//! blocks from the schema, and the `rill explain` summary of a diagnostic
//! under the cursor.

use crate::locate::{block_def, locate, patch_box, Hit, Node, Step};
use crate::present::{cell_markdown, escape_md, is_perm_unit, kind_of, show, well_markdown};
use crate::run_values::RunValues;
use crate::{Hover, Snapshot};
use rill_model::schema::{self, KeyDef, ValueKind};
use rill_model::Case;
use rill_syntax::{Atom, AtomKind, Block, Item, Span, Statement};
use rill_units::{format_number, Dim, System};

pub(crate) fn hover(snap: &Snapshot, offset: usize, run: Option<&RunValues>) -> Option<Hover> {
    let off = snap.clamp(offset);
    let mut found = hover_at(snap, off, run);
    if found.is_none() && off > 0 {
        // The cursor right after a word (`250 md|`) still means that word.
        let prev = crate::floor_boundary(snap.text(), off - 1);
        found = hover_at(snap, prev, run);
    }
    let range = found.as_ref().map(|h| h.range);
    let diags = diagnostic_notes(snap, off, range);
    match (found, diags) {
        (Some(mut h), Some((_, notes))) => {
            h.markdown.push_str("\n\n---\n\n");
            h.markdown.push_str(&notes);
            Some(h)
        }
        (Some(h), None) => Some(h),
        (None, Some((span, notes))) => Some(Hover {
            range: span,
            markdown: notes,
        }),
        (None, None) => None,
    }
}

/// The `rill explain` summaries of the diagnostics of the open document at `off`.
fn diagnostic_notes(snap: &Snapshot, off: usize, range: Option<Span>) -> Option<(Span, String)> {
    let mut out = String::new();
    let mut span: Option<Span> = None;
    let mut seen: Vec<rill_model::Code> = Vec::new();
    for d in snap
        .diagnostics()
        .iter()
        .filter(|d| d.location.file == snap.focus())
    {
        let s = d.location.span();
        let hit = s.contains(off)
            || (s.is_empty() && s.start == off)
            || range.is_some_and(|r| s.start < r.end && r.start < s.end);
        if !hit || seen.contains(&d.code) {
            continue;
        }
        seen.push(d.code);
        span = Some(span.map_or(s, |x| x.join(s)));
        if !out.is_empty() {
            out.push('\n');
        }
        match rill_model::explain::explain(d.code) {
            Some(e) => out.push_str(&format!(
                "`{}`: {} (`rill explain {}`)\n",
                d.code, e.summary, d.code
            )),
            None => out.push_str(&format!("`{}`\n", d.code)),
        }
        if seen.len() >= 4 {
            break;
        }
    }
    span.map(|s| (s, out))
}

fn hover_at(snap: &Snapshot, off: usize, run: Option<&RunValues>) -> Option<Hover> {
    let hit = locate(&snap.tree().items, off);
    let case = snap.analysis().case.as_ref();
    match &hit.node {
        Node::Gap => None,
        Node::BlockName => {
            let b = hit.block()?;
            header_hover(snap, &hit, b, None, run).or_else(|| {
                let def = block_def(&hit.blocks)?;
                Some(Hover { range: b.name.span, markdown: block_doc(def) })
            })
        }
        Node::BlockArg(steps) => {
            let b = hit.block()?;
            if let Some(h) = header_hover(snap, &hit, b, steps.first(), run) {
                return Some(h);
            }
            let atom = steps.last()?.atom;
            if let Some((unit, _)) = hit.unit(off) {
                return Some(Hover { range: unit.span, markdown: unit_markdown(&unit.text, off - unit.span.start) });
            }
            quantity_hover(atom, false)
        }
        Node::Key(stmt) => {
            let def = block_def(&hit.blocks)?;
            let key = def.key(&stmt.key.name)?;
            Some(Hover { range: stmt.key.span, markdown: key_doc(def.name, key) })
        }
        Node::Value(stmt, steps) => value_hover(snap, case, &hit, stmt, steps, off, run),
        Node::DirectiveName(d) => (d.name.name == "include").then(|| Hover {
            range: d.name.span,
            markdown: "**include** — reads the blocks of another deck, relative to this file; top level only.".into(),
        }),
        Node::DirectiveArg(d, steps) => {
            let atom = steps.first()?.atom;
            let AtomKind::Str { value, .. } = &atom.kind else { return None };
            if d.name.name != "include" {
                return None;
            }
            let path = rill_model::source::resolve(snap.path(), value);
            let included = snap.analysis().files.iter().any(|f| f.path == path);
            Some(Hover {
                range: atom.span,
                markdown: format!(
                    "**include** `{}`{}",
                    path.display(),
                    if included { "" } else { " — not read (see the diagnostic)" }
                ),
            })
        }
    }
}

/// Hover on the name or an argument of a well or patch block header.
fn header_hover(
    snap: &Snapshot,
    hit: &Hit,
    b: &Block,
    arg: Option<&Step>,
    run: Option<&RunValues>,
) -> Option<Hover> {
    let case = snap.analysis().case.as_ref();
    match b.name.name.as_str() {
        "well" => {
            let label = b.args.first()?;
            let AtomKind::Str { value, .. } = &label.kind else {
                return None;
            };
            let range = arg.map_or(b.name.span, |s| s.atom.span);
            let event = hit.blocks.len() > 1;
            let mut md = match case.and_then(|c| well_markdown(c, value, run)) {
                Some(m) => m,
                None => format!("**well \"{}\"**\n\n{}", escape_md(value), schema::WELL.doc),
            };
            if event {
                md = format!("{}\n\n{md}", schema::EVENT_WELL.doc);
            }
            Some(Hover {
                range,
                markdown: md,
            })
        }
        name @ ("boundary" | "aquifer" | "fault" | "relperm") if hit.blocks.len() == 1 => {
            let label = b.args.first()?;
            let AtomKind::Str { value, .. } = &label.kind else {
                return None;
            };
            let case = case?;
            let md = match name {
                "aquifer" => crate::aquifer::aquifer_markdown(case, value, run)?,
                "boundary" => crate::present::boundary_markdown(case, value, run)?,
                "fault" => crate::present::fault_markdown(case, value)?,
                _ => crate::relperm::relperm_markdown(case, value)?,
            };
            Some(Hover {
                range: arg.map_or(b.name.span, |s| s.atom.span),
                markdown: md,
            })
        }
        "patch" => {
            let case = case?;
            let (lo, hi) = patch_box(&b.args, (case.grid.nx, case.grid.ny, case.grid.nz));
            let (nx, ny, nz) = (hi.0 - lo.0 + 1, hi.1 - lo.1 + 1, hi.2 - lo.2 + 1);
            let heading = format!(
                "first cell of the patch; box {nx} x {ny} x {nz} = {} cells",
                nx * ny * nz
            );
            let range = arg.map_or(b.name.span, |s| s.atom.span);
            let md = cell_markdown(case, lo.0 - 1, lo.1 - 1, lo.2 - 1, &heading, run)?;
            Some(Hover {
                range,
                markdown: md,
            })
        }
        _ => None,
    }
}

fn value_hover(
    snap: &Snapshot,
    case: Option<&Case>,
    hit: &Hit,
    stmt: &Statement,
    steps: &[Step],
    off: usize,
    run: Option<&RunValues>,
) -> Option<Hover> {
    let def = block_def(&hit.blocks);
    let key = def.and_then(|d| d.key(&stmt.key.name));
    let innermost = steps.last()?.atom;
    if let Some((unit, _)) = hit.unit(off) {
        return Some(Hover {
            range: unit.span,
            markdown: unit_markdown(&unit.text, off - unit.span.start),
        });
    }
    let perm =
        key.is_some_and(|k| matches!(k.kind, ValueKind::Property(d) if d == Dim::PERMEABILITY));
    // A value that stands for a cell: list items, cell tuples.
    if let Some(h) = cell_hover(snap, case, stmt, steps, perm, run) {
        return Some(h);
    }
    // `layers = 1..4` of a well: the completions it makes.
    if let (Some(c), [well]) = (case, hit.blocks.as_slice()) {
        if well.name.name == "well" && stmt.key.name == "layers" {
            if let Some(AtomKind::Str { value, .. }) = well.args.first().map(|a| &a.kind) {
                if let Some(md) = well_markdown(c, value, run) {
                    return Some(Hover {
                        range: innermost.span,
                        markdown: md,
                    });
                }
            }
        }
    }
    match &innermost.kind {
        // `relperm = "channel sand"` in the rock or a patch: the curves it names.
        AtomKind::Str { value, .. } if stmt.key.name == "relperm" => Some(Hover {
            range: innermost.span,
            markdown: crate::relperm::relperm_markdown(case?, value)?,
        }),
        AtomKind::Str { value, .. } => {
            let is_file = steps.len() == 1
                && steps[0].index == 1
                && matches!(&stmt.value.atoms[0].kind, AtomKind::Ident(w) if w == "file");
            if !is_file {
                return None;
            }
            let unit = match &innermost.kind {
                AtomKind::Str { unit: Some(u), .. } => u.text.as_str(),
                _ => "",
            };
            let md = match snap.arrays.get(&(snap.focus(), innermost.span)) {
                Some(Ok(st)) => {
                    let mut s = format!(
                        "**file \"{}\"** — {} values\n\n| min | mean | max |\n|---:|---:|---:|\n| {} | {} | {} |\n",
                        escape_md(value),
                        st.count,
                        format_number(st.min),
                        format_number(st.mean),
                        format_number(st.max)
                    );
                    if !unit.is_empty() {
                        s.push_str(&format!("\nin `{unit}`"));
                    }
                    if let Some(c) = case {
                        let want = if stmt.key.name == "top" {
                            c.grid.nx * c.grid.ny
                        } else {
                            c.grid.cell_count()
                        };
                        s.push_str(&format!(
                            "{}the grid needs {want}",
                            if unit.is_empty() { "\n" } else { "; " }
                        ));
                    }
                    s
                }
                Some(Err(e)) => format!(
                    "**file \"{}\"** — cannot be used: {}",
                    escape_md(value),
                    escape_md(e)
                ),
                None => format!("**file \"{}\"**", escape_md(value)),
            };
            Some(Hover {
                range: innermost.span,
                markdown: md,
            })
        }
        AtomKind::Number { unit: Some(_), .. } => quantity_hover(innermost, perm),
        AtomKind::Size(parts) => {
            let count = parts.iter().try_fold(1u64, |a, b| a.checked_mul(*b));
            let md = match count {
                Some(n) => format!(
                    "**{}** = {n} cells",
                    parts
                        .iter()
                        .map(|p| p.to_string())
                        .collect::<Vec<_>>()
                        .join(" x ")
                ),
                None => "a size too large to count".to_string(),
            };
            Some(Hover {
                range: innermost.span,
                markdown: md,
            })
        }
        AtomKind::Ident(word) => {
            let md = ident_doc(word, key, def.map(|d| d.name).unwrap_or(""))?;
            Some(Hover {
                range: innermost.span,
                markdown: md,
            })
        }
        // A plain number (`porosity = 0.2`, `skin = 1.5`): what the key means.
        AtomKind::Number { unit: None, .. } => {
            let (def, key) = (def?, key?);
            Some(Hover {
                range: innermost.span,
                markdown: key_doc(def.name, key),
            })
        }
        _ => None,
    }
}

/// The cell a list item, tuple or per-layer value stands for.
fn cell_hover(
    snap: &Snapshot,
    case: Option<&Case>,
    stmt: &Statement,
    steps: &[Step],
    perm: bool,
    run: Option<&RunValues>,
) -> Option<Hover> {
    let atoms = &stmt.value.atoms;
    let grid = case
        .map(|c| (c.grid.nx, c.grid.ny, c.grid.nz))
        .or_else(|| grid_size(snap))
        .filter(|(x, y, z)| *x > 0 && *y > 0 && *z > 0);
    // `form [ ... ]` or a bare list, with the cursor on an item.
    let list_form = match (atoms.first().map(|a| &a.kind), steps) {
        (Some(AtomKind::Ident(form)), [list, item, ..])
            if list.index == 1 && matches!(list.atom.kind, AtomKind::List { .. }) =>
        {
            Some((form.as_str(), list.atom, item))
        }
        (Some(AtomKind::List { .. }), [list, item, ..]) if list.index == 0 && atoms.len() == 1 => {
            Some(("", list.atom, item))
        }
        _ => None,
    };
    if let (Some((form, list, item)), Some((nx, ny, nz))) = (list_form, grid) {
        if let Some((cell, what)) = list_cell(form, &stmt.key.name, item.index, (nx, ny, nz)) {
            let heading = match item_value_line(item.atom, list, perm) {
                Some(v) => format!("{v}; {what}"),
                None => what,
            };
            let md = match case {
                Some(c) => cell_markdown(c, cell.0, cell.1, cell.2, &heading, run)?,
                None => format!(
                    "**cell ({}, {}, {})** — {heading}",
                    cell.0 + 1,
                    cell.1 + 1,
                    cell.2 + 1
                ),
            };
            return Some(Hover {
                range: item.atom.span,
                markdown: md,
            });
        }
    }
    // A cell tuple `(i, j, k)` or column `(i, j)`.
    let pos = steps
        .iter()
        .rposition(|s| matches!(s.atom.kind, AtomKind::Tuple { .. }))?;
    let tuple = steps[pos].atom;
    let AtomKind::Tuple { items, .. } = &tuple.kind else {
        return None;
    };
    let idx: Vec<usize> = items
        .iter()
        .map(|a| match a.kind {
            AtomKind::Number { value, .. }
                if value.fract() == 0.0 && (1.0..1e9).contains(&value) =>
            {
                Some(value as usize - 1)
            }
            _ => None,
        })
        .collect::<Option<Vec<_>>>()?;
    let (nx, ny, nz) = grid?;
    let (cell, heading) = match idx.as_slice() {
        [i, j, k] => ((*i, *j, *k), String::new()),
        [i, j] => (
            (*i, *j, 0),
            format!("column ({}, {}); the top layer is shown", i + 1, j + 1),
        ),
        _ => return None,
    };
    if cell.0 >= nx || cell.1 >= ny || cell.2 >= nz {
        return Some(Hover {
            range: tuple.span,
            markdown: format!("outside the grid ({nx} x {ny} x {nz})"),
        });
    }
    let md = match case {
        Some(c) => cell_markdown(c, cell.0, cell.1, cell.2, &heading, run)?,
        None => format!(
            "**cell ({}, {}, {})** {heading}",
            cell.0 + 1,
            cell.1 + 1,
            cell.2 + 1
        ),
    };
    Some(Hover {
        range: tuple.span,
        markdown: md,
    })
}

/// The cell (0-based) that item `n` of a `form` list of `key` stands for, and how.
fn list_cell(
    form: &str,
    key: &str,
    n: usize,
    (nx, ny, nz): (usize, usize, usize),
) -> Option<((usize, usize, usize), String)> {
    match (form, key) {
        ("cells", _) => {
            let cells = nx * ny * nz;
            (n < cells).then(|| {
                (
                    (n % nx, (n / nx) % ny, n / (nx * ny)),
                    format!("item {} of {cells} (i fastest)", n + 1),
                )
            })
        }
        ("layers", _) | ("", "dz") => (n < nz).then(|| {
            (
                (nx / 2, ny / 2, n),
                format!("layer {}; the cell at the middle column is shown", n + 1),
            )
        }),
        ("columns", _) => (n < nx * ny).then(|| {
            (
                (n % nx, n / nx, 0),
                format!(
                    "column ({}, {}); the top layer is shown",
                    n % nx + 1,
                    n / nx + 1
                ),
            )
        }),
        ("", "dx") => (n < nx).then(|| {
            (
                (n, ny / 2, 0),
                format!(
                    "column i = {}; the cell at the middle row, top layer is shown",
                    n + 1
                ),
            )
        }),
        ("", "dy") => (n < ny).then(|| {
            (
                (nx / 2, n, 0),
                format!(
                    "row j = {}; the cell at the middle column, top layer is shown",
                    n + 1
                ),
            )
        }),
        _ => None,
    }
}

/// `150 md = 1.48e-13 m^2` for a list item, with the list's unit.
fn item_value_line(item: &Atom, list: &Atom, perm: bool) -> Option<String> {
    let AtomKind::Number { value, raw, unit } = &item.kind else {
        return None;
    };
    let list_unit = match &list.kind {
        AtomKind::List { unit, .. } => unit.as_ref(),
        _ => None,
    };
    let Some(u) = unit.as_ref().or(list_unit) else {
        return Some(format!("value {raw}"));
    };
    let parsed = rill_units::parse(&u.text).ok()?;
    let kind = kind_of(parsed.dim, perm || is_perm_unit(&u.text))?;
    Some(format!(
        "value {raw} {} = {}",
        u.text,
        show(parsed.to_si(*value), kind, System::Si)
    ))
}

/// `cells = NX x NY x NZ` of the grid block in any deck of the analysis.
fn grid_size(snap: &Snapshot) -> Option<(usize, usize, usize)> {
    for f in &snap.analysis().files {
        let Some(tree) = &f.tree else { continue };
        for item in &tree.items {
            let Item::Block(b) = item else { continue };
            if b.name.name != "grid" {
                continue;
            }
            let s = rill_model::lower::find(b, "cells")?;
            if let Some(AtomKind::Size(p)) = s.value.atoms.first().map(|a| &a.kind) {
                if let [x, y, z] = p.as_slice() {
                    let (x, y, z) = (
                        usize::try_from(*x).ok()?,
                        usize::try_from(*y).ok()?,
                        usize::try_from(*z).ok()?,
                    );
                    if x > 0 && y > 0 && z > 0 && x.checked_mul(y)?.checked_mul(z).is_some() {
                        return Some((x, y, z));
                    }
                }
            }
            return None;
        }
    }
    None
}

fn quantity_hover(atom: &Atom, perm: bool) -> Option<Hover> {
    let AtomKind::Number {
        value,
        raw,
        unit: Some(u),
    } = &atom.kind
    else {
        return None;
    };
    Some(Hover {
        range: atom.span,
        markdown: quantity_markdown(*value, raw, &u.text, perm)?,
    })
}

/// A quantity in SI and in the field and metric systems.
pub(crate) fn quantity_markdown(value: f64, raw: &str, unit: &str, perm: bool) -> Option<String> {
    let u = rill_units::parse(unit).ok()?;
    let si = u.to_si(value);
    let what = u.dim.describe();
    let mut s = format!("**{raw} {unit}**");
    if !what.is_empty() {
        s.push_str(&format!(" — {what}"));
    }
    s.push_str("\n\n");
    match kind_of(u.dim, perm || is_perm_unit(unit)) {
        Some(kind) => {
            let mut head = Vec::new();
            let mut cells = Vec::new();
            let mut names: Vec<&str> = Vec::new();
            for sys in [System::Si, System::Field, System::Metric] {
                let du = rill_units::display_unit(kind, sys);
                if sys != System::Si && names.contains(&du.name) {
                    continue;
                }
                names.push(du.name);
                head.push(sys.name());
                cells.push(show(si, kind, sys));
            }
            s.push_str(&format!(
                "| {} |\n|{}|\n| {} |\n",
                head.join(" | "),
                head.iter().map(|_| "---").collect::<Vec<_>>().join("|"),
                cells.join(" | ")
            ));
        }
        None => s.push_str(&format!(
            "= {} in SI base units ({})",
            format_number(si),
            u.dim
        )),
    }
    if u.gauge {
        s.push_str("\n\ngauge pressure: one standard atmosphere (101325 Pa) is added");
    }
    Some(s)
}

/// The definition of the unit name at byte `at` of `unit`, and of the whole expression.
pub(crate) fn unit_markdown(unit: &str, at: usize) -> String {
    let bytes = unit.as_bytes();
    let at = at.min(bytes.len());
    let is_name = |b: u8| b.is_ascii_alphanumeric() || b == b'_' || b == b'%';
    let mut start = at;
    while start > 0 && is_name(bytes[start - 1]) {
        start -= 1;
    }
    let mut end = at;
    while end < bytes.len() && is_name(bytes[end]) {
        end += 1;
    }
    let name = &unit[start..end];
    let mut s = String::new();
    if let Some(def) = rill_units::lookup(name) {
        s.push_str(&format!(
            "**{}** — {}\n\n{} ({}), 1 {} = {} {}{}",
            def.name,
            def.description,
            if def.dim.describe().is_empty() {
                "dimension"
            } else {
                def.dim.describe()
            },
            def.dim,
            def.name,
            format_number(def.factor),
            si_name(def.dim),
            if def.gauge {
                " plus one standard atmosphere"
            } else {
                ""
            }
        ));
    }
    if name != unit || s.is_empty() {
        if !s.is_empty() {
            s.push_str("\n\n");
        }
        match rill_units::parse(unit) {
            Ok(u) => s.push_str(&format!(
                "`{unit}`: {} ({}), 1 {unit} = {} {}",
                if u.dim.describe().is_empty() {
                    "dimension"
                } else {
                    u.dim.describe()
                },
                u.dim,
                format_number(u.factor),
                si_name(u.dim)
            )),
            Err(e) => {
                s.push_str(&format!("`{unit}`: {e}"));
                let sugg = rill_units::suggest(name);
                if !sugg.is_empty() {
                    s.push_str(&format!(
                        "; did you mean {}?",
                        sugg.iter()
                            .take(3)
                            .map(|x| format!("`{x}`"))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ));
                }
            }
        }
    }
    s
}

/// The SI unit a dimension is shown in (`Pa`, `m^2`), or "SI" without a display kind.
fn si_name(dim: Dim) -> &'static str {
    kind_of(dim, true).map_or("SI", |k| rill_units::display_unit(k, System::Si).name)
}

pub(crate) fn block_doc(def: &schema::BlockDef) -> String {
    let mut s = format!("**{}** — {}\n\n", def.name, def.doc);
    let keys: Vec<String> = def
        .keys
        .iter()
        .map(|k| {
            if k.required {
                format!("`{}` (required)", k.name)
            } else {
                format!("`{}`", k.name)
            }
        })
        .collect();
    if !keys.is_empty() {
        s.push_str(&format!("keys: {}", keys.join(", ")));
    }
    if !def.children.is_empty() {
        s.push_str(&format!("; blocks: {}", def.children.join(", ")));
    }
    s
}

/// The dimension a key's values carry, if it has one.
pub(crate) fn key_dim(kind: ValueKind) -> Option<Dim> {
    match kind {
        ValueKind::Quantity(d) | ValueKind::Property(d) => Some(d),
        ValueKind::Spacing(_) | ValueKind::Top => Some(Dim::LENGTH),
        ValueKind::PressureAtDepth => Some(Dim::PRESSURE),
        ValueKind::Times => Some(Dim::TIME),
        ValueKind::TableColumn(d) => Some(d),
        _ => None,
    }
}

/// What a key takes, in words.
pub(crate) fn value_words(kind: ValueKind) -> String {
    match kind {
        ValueKind::Text => "a string".into(),
        ValueKind::Size => "a size NX x NY x NZ".into(),
        ValueKind::Quantity(d) => rill_model::values::describe_expected(d),
        ValueKind::Number => "a number".into(),
        ValueKind::Property(d) => format!(
            "{}, per cell in any value form",
            rill_model::values::describe_expected(d)
        ),
        ValueKind::Spacing(_) => "a length, or a list of lengths".into(),
        ValueKind::Top => "a depth, `columns [...]` or `file`".into(),
        ValueKind::PressureAtDepth => "a pressure, optionally `at` a datum depth".into(),
        ValueKind::Choice(names) => format!("one of {}", names.join(", ")),
        ValueKind::Column => "a column (i, j)".into(),
        ValueKind::LayerRange => "a layer range like 1..4".into(),
        ValueKind::Cells => "a list of cells [(i, j, k) ...]".into(),
        ValueKind::Control => "`rate <surface rate>` or `bhp <pressure>` (oil-water: `oil_rate`, `liquid_rate`, `water_rate`)".into(),
        ValueKind::Times => "a list of times, e.g. `[1 2 6 12] hr`".into(),
        ValueKind::TableColumn(d) if d == Dim::NONE => {
            "a list with one number per row of the table, e.g. `[0.2 0.5 0.8]`".into()
        }
        ValueKind::TableColumn(d) => format!(
            "a list with one value per row of the table, {} (a unit after `]`)",
            rill_model::values::describe_expected(d)
        ),
        ValueKind::RelpermName => "the label of a `relperm` block in quotes".into(),
    }
}

pub(crate) fn key_doc(block: &str, key: &KeyDef) -> String {
    let mut s = format!(
        "**{}** ({block}, {}) — {}\n\ntakes {}",
        key.name,
        if key.required { "required" } else { "optional" },
        key.doc,
        value_words(key.kind)
    );
    if let Some(d) = key_dim(key.kind) {
        let units = rill_units::accepted_units(d);
        if d != Dim::NONE && !units.is_empty() {
            s.push_str(&format!(
                "\n\naccepted units: {}",
                units
                    .iter()
                    .map(|u| format!("`{u}`"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        }
    }
    s
}

fn ident_doc(word: &str, key: Option<&KeyDef>, block: &str) -> Option<String> {
    let form = match word {
        "layers" => Some("one value per layer (NZ values), top layer first"),
        "cells" => Some("one value per cell (NX*NY*NZ), i fastest, then j, then k"),
        "columns" => Some("one value per column (NX*NY), i fastest"),
        "file" => {
            Some("values read from a file of whitespace-separated numbers, in the order of `cells`")
        }
        "at" => Some("the depth at which the pressure holds (a datum)"),
        _ => None,
    };
    if let Some(f) = form {
        return Some(format!("**{word}** — {f}"));
    }
    let key = key?;
    match key.kind {
        ValueKind::Choice(names) => Some(choice_doc(word, names, key)),
        ValueKind::Control if schema::CONTROL_WORDS.contains(&word) => {
            Some(choice_doc(word, schema::CONTROL_WORDS, key))
        }
        ValueKind::Property(_) => Some(format!(
            "**{word}** — the value of `{word}` in this `{block}` block (after patches)"
        )),
        _ => None,
    }
}

fn choice_doc(word: &str, names: &[&str], key: &KeyDef) -> String {
    format!(
        "**{word}** — one of {} for `{}`\n\n{}",
        names.join(" | "),
        key.name,
        key.doc
    )
}
