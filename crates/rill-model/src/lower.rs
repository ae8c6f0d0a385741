//! Lowering: from syntax trees (the main deck and its includes) to a
//! checked [`Case`] in SI, with a diagnostic for everything that does not fit
//! the schema. Physical sanity checks run afterwards in `checks`.

use crate::case::*;
use crate::diagnostic::{Diagnostic, Location};
use crate::props::{
    check_result_dim, evaluate, evaluate_kept, infer_dim, Expr, Field, Forms, PropReader, Shape,
};
use crate::reuse::kept;
use crate::schema::{self, BlockDef, KeyDef, LabelRule, ValueKind};
use crate::source::{resolve, Source};
use crate::values::{describe_expected, to_si, Gauge, Reporter};
use crate::FileInfo;
use rill_syntax::{Atom, AtomKind, Block, Item, Span, Statement, Value};
use rill_units::Dim;
use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::Arc;

/// Largest grid checked: a slip such as `600 x 2200 x 850` would otherwise
/// allocate gigabytes per property, on every keystroke in an editor.
const MAX_CELLS: u64 = 20_000_000;

/// Deepest chain of includes followed.
const MAX_INCLUDE_DEPTH: usize = 16;

/// A block found in some file.
struct Found<'t> {
    file: usize,
    block: &'t Block,
}

pub(crate) struct Lowerer<'s> {
    pub source: &'s dyn Source,
    pub files: Vec<FileInfo>,
    pub diags: Vec<Diagnostic>,
    pub array_cache: HashMap<PathBuf, Arc<Vec<f64>>>,
}

/// What lowering found beyond the case itself: spans of the definitions,
/// for checks that point back at the text.
#[derive(Debug, Clone, Default)]
pub struct Spans {
    /// Value span of each rock property definition (base and patches), by key.
    pub rock: HashMap<&'static str, Vec<Location>>,
    pub dx: Option<Location>,
    pub dy: Option<Location>,
    pub dz: Option<Location>,
    pub viscosity: Option<Location>,
    pub fvf: Option<Location>,
    pub density: Option<Location>,
    pub fluid_compressibility: Option<Location>,
    pub rock_compressibility: Option<Location>,
    /// Per well: (radius, control, bhp_limit, completions) spans.
    pub wells: Vec<WellSpans>,
    pub timeline: Option<Location>,
    pub first_step: Option<Location>,
    pub end: Option<Location>,
    pub main: Location,
}

#[derive(Debug, Clone, Default)]
pub struct WellSpans {
    pub radius: Option<Location>,
    pub control: Option<Location>,
    pub bhp_limit: Option<Location>,
    pub completions: Option<Location>,
    /// Event controls: (event index, location).
    pub event_controls: Vec<(usize, Location)>,
}

impl<'s> Lowerer<'s> {
    fn reporter(&mut self, file: usize) -> Reporter<'_> {
        Reporter {
            file,
            diags: &mut self.diags,
        }
    }

    pub fn lower(&mut self, main_path: PathBuf, main_text: &str) -> (Option<Case>, Spans) {
        // Load the main deck and, depth first, every include.
        let mut trees: Vec<Arc<rill_syntax::SourceFile>> = Vec::new();
        let main_tree = Arc::new(rill_syntax::parse(main_text));
        self.files.push(FileInfo {
            path: main_path.clone(),
            text: main_text.into(),
            tree: Some(main_tree.clone()),
        });
        trees.push(main_tree);
        let mut order: Vec<(usize, usize)> = Vec::new(); // (file, item index) of top-level items in deck order
        let mut stack = vec![main_path.clone()];
        self.expand(0, &mut trees, &mut stack, &mut order, 0);
        for (file, tree) in trees.iter().enumerate() {
            for e in &tree.errors {
                let code = match e.kind {
                    rill_syntax::SyntaxErrorKind::Unexpected => "syntax.unexpected",
                    rill_syntax::SyntaxErrorKind::Unclosed => "syntax.unclosed",
                };
                let msg = match e.kind {
                    rill_syntax::SyntaxErrorKind::Unexpected => {
                        format!("expected {}, found {}", e.expected, e.found)
                    }
                    rill_syntax::SyntaxErrorKind::Unclosed => {
                        format!("unclosed: expected {}, found {}", e.expected, e.found)
                    }
                };
                self.diags
                    .push(Diagnostic::error(code, Location::new(file, e.span), msg));
            }
        }

        // Sort the top-level blocks by kind.
        let mut blocks: HashMap<&'static str, Vec<Found>> = HashMap::new();
        for &(file, idx) in &order {
            let item = &trees[file].items[idx];
            match item {
                Item::Block(b) => match schema::top_block(&b.name.name) {
                    Some(def) => {
                        if let Some(prev) = blocks.get(def.name).and_then(|v| v.first()) {
                            if !def.repeatable {
                                let d = Diagnostic::error(
                                    "deck.duplicate-key",
                                    Location::new(file, b.name.span),
                                    format!(
                                        "the block `{}` is given twice; write one `{}` block",
                                        def.name, def.name
                                    ),
                                )
                                .with_label(
                                    Location::new(prev.file, prev.block.name.span),
                                    "first given here",
                                );
                                self.diags.push(d);
                                continue;
                            }
                        }
                        blocks
                            .entry(def.name)
                            .or_default()
                            .push(Found { file, block: b });
                    }
                    None => {
                        let names = schema::TOP_LEVEL.iter().map(|d| d.name).chain(["include"]);
                        let mut d = Diagnostic::error(
                            "deck.unknown-block",
                            Location::new(file, b.name.span),
                            format!("unknown block `{}`", b.name.name),
                        );
                        if let Some(near) = schema::nearest(&b.name.name, names) {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, b.name.span),
                                near,
                            );
                        }
                        let all: Vec<&str> = schema::TOP_LEVEL.iter().map(|d| d.name).collect();
                        self.diags
                            .push(d.with_note(format!("blocks: {}", all.join(", "))));
                    }
                },
                Item::Statement(s) => {
                    let mut d = Diagnostic::error(
                        "deck.unknown-key",
                        Location::new(file, s.key.span),
                        format!("`{} = ...` stands outside any block", s.key.name),
                    );
                    if let Some(owner) = schema::TOP_LEVEL
                        .iter()
                        .find(|b| b.key(&s.key.name).is_some())
                    {
                        d = d.with_note(format!(
                            "`{}` belongs in the `{}` block",
                            s.key.name, owner.name
                        ));
                    }
                    self.diags.push(d);
                }
                Item::Directive(dir) => {
                    if dir.name.name != "include" {
                        let mut d = Diagnostic::error(
                            "deck.unknown-block",
                            Location::new(file, dir.name.span),
                            format!("unknown block or directive `{}`", dir.name.name),
                        );
                        let names = schema::TOP_LEVEL.iter().map(|d| d.name).chain(["include"]);
                        if let Some(near) = schema::nearest(&dir.name.name, names) {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, dir.name.span),
                                near,
                            );
                        }
                        self.diags.push(d);
                    }
                }
            }
        }

        // Check the structure of every block once, whatever else happens.
        for list in blocks.values() {
            for f in list {
                let def = schema::top_block(&f.block.name.name).unwrap_or(&schema::CASE);
                self.check_block_structure(f.file, f.block, def);
            }
        }
        self.check_labels(&blocks);

        let main_loc = Location::new(0, Span::new(0, 0));
        let mut spans = Spans {
            main: main_loc,
            ..Default::default()
        };
        let case_meta = blocks.get("case").and_then(|v| v.first());
        let title = case_meta.and_then(|f| {
            let stmt = find(f.block, "title")?;
            self.text_value(f.file, stmt)
        });
        let title = title.or_else(|| case_meta.and_then(|f| label_of(f.block)));

        let grid = self
            .require(&blocks, "grid", main_loc)
            .and_then(|f| self.lower_grid(f.file, f.block, &mut spans));
        let fluid_found = self.require(&blocks, "fluid", main_loc);
        let initial_found = self.require(&blocks, "initial", main_loc);
        let rock_found = self.require(&blocks, "rock", main_loc);
        let timeline_found = self.require(&blocks, "timeline", main_loc);

        let Some(grid) = grid else {
            return (None, spans);
        };
        let shape = Shape {
            nx: grid.nx,
            ny: grid.ny,
            nz: grid.nz,
        };
        let initial = initial_found.and_then(|f| self.lower_initial(f.file, f.block, shape));
        let datum_pressure = match &initial {
            Some(Initial::Datum { pressure, .. }) => Some(*pressure),
            Some(Initial::Cells(v)) if !v.is_empty() => {
                Some(v.iter().sum::<f64>() / v.len() as f64)
            }
            _ => None,
        };
        let rock = rock_found
            .and_then(|f| self.lower_rock(f.file, f.block, shape, datum_pressure, &mut spans));
        let fluid =
            fluid_found.and_then(|f| self.lower_fluid(f.file, f.block, datum_pressure, &mut spans));
        let wells: Vec<Well> = blocks
            .get("well")
            .map(|v| {
                v.iter()
                    .filter_map(|f| self.lower_well(f.file, f.block, &grid, &mut spans))
                    .collect()
            })
            .unwrap_or_default();
        let boundaries: Vec<Boundary> = blocks
            .get("boundary")
            .map(|v| {
                v.iter()
                    .filter_map(|f| self.lower_boundary(f.file, f.block))
                    .collect()
            })
            .unwrap_or_default();
        let timeline =
            timeline_found.and_then(|f| self.lower_timeline(f.file, f.block, &wells, &mut spans));
        let report = blocks
            .get("report")
            .and_then(|v| v.first())
            .map(|f| self.lower_report(f.file, f.block))
            .unwrap_or_default();

        let (Some(rock), Some(fluid), Some(initial), Some(timeline)) =
            (rock, fluid, initial, timeline)
        else {
            return (None, spans);
        };
        let expected_wells = blocks.get("well").map(|v| v.len()).unwrap_or(0);
        let expected_boundaries = blocks.get("boundary").map(|v| v.len()).unwrap_or(0);
        if wells.len() != expected_wells || boundaries.len() != expected_boundaries {
            return (None, spans);
        }
        let case = Case {
            title,
            grid,
            rock,
            fluid,
            initial,
            wells,
            boundaries,
            timeline,
            report,
        };
        (Some(case), spans)
    }

    /// Parse and queue the includes of `file`, depth first, keeping deck order.
    fn expand(
        &mut self,
        file: usize,
        trees: &mut Vec<Arc<rill_syntax::SourceFile>>,
        stack: &mut Vec<PathBuf>,
        order: &mut Vec<(usize, usize)>,
        depth: usize,
    ) {
        let tree = trees[file].clone();
        for (idx, item) in tree.items.iter().enumerate() {
            order.push((file, idx));
            let Item::Directive(dir) = item else { continue };
            if dir.name.name != "include" {
                continue;
            }
            let loc = Location::new(file, dir.span);
            let name = match dir.args.as_slice() {
                [Atom {
                    kind: AtomKind::Str { value, unit: None },
                    ..
                }] => value.clone(),
                _ => {
                    self.diags.push(Diagnostic::error(
                        "deck.include",
                        loc,
                        "`include` takes one file name in quotes: include \"more-wells.rill\"",
                    ));
                    continue;
                }
            };
            let path = resolve(&self.files[file].path, &name);
            if stack.contains(&path) {
                self.diags.push(Diagnostic::error(
                    "deck.include",
                    loc,
                    format!(
                        "\"{name}\" includes itself through a cycle ({})",
                        path.display()
                    ),
                ));
                continue;
            }
            if depth + 1 > MAX_INCLUDE_DEPTH {
                self.diags.push(Diagnostic::error(
                    "deck.include",
                    loc,
                    format!("includes nest deeper than {MAX_INCLUDE_DEPTH} files"),
                ));
                continue;
            }
            if self.files.iter().any(|f| f.path == path) {
                self.diags.push(Diagnostic::warning(
                    "deck.include",
                    loc,
                    format!("\"{name}\" is already included; it is read once"),
                ));
                continue;
            }
            let bytes = match self.source.read(&path) {
                Ok(b) => b,
                Err(e) => {
                    self.diags.push(Diagnostic::error(
                        "deck.include",
                        loc,
                        format!("cannot include \"{name}\" ({}): {e}", path.display()),
                    ));
                    continue;
                }
            };
            let (text, tree) = rill_syntax::parse_bytes(&bytes);
            let tree = Arc::new(tree);
            let index = self.files.len();
            self.files.push(FileInfo {
                path: path.clone(),
                text: text.into(),
                tree: Some(tree.clone()),
            });
            trees.push(tree);
            stack.push(path);
            self.expand(index, trees, stack, order, depth + 1);
            stack.pop();
        }
    }

    fn require<'t>(
        &mut self,
        blocks: &'t HashMap<&'static str, Vec<Found<'t>>>,
        name: &str,
        main: Location,
    ) -> Option<&'t Found<'t>> {
        let found = blocks.get(name).and_then(|v| v.first());
        if found.is_none() {
            let skeleton = match name {
                "grid" => "grid {\n  cells = 10 x 10 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 20 ft\n  top = 5000 ft\n}\n",
                "rock" => "rock {\n  porosity = 0.2\n  kx = 100 md\n}\n",
                "fluid" => "fluid {\n  viscosity = 1 cP\n  fvf = 1.0 rb/stb\n  density = 62.4 lb/ft^3\n}\n",
                "initial" => "initial {\n  pressure = 3000 psi at 5000 ft\n}\n",
                _ => "timeline {\n  end = 365 day\n}\n",
            };
            self.diags.push(
                Diagnostic::error(
                    "deck.missing-key",
                    main,
                    format!("the case has no `{name}` block"),
                )
                .with_replacement(
                    format!("add a `{name}` block"),
                    main,
                    format!("{skeleton}\n"),
                ),
            );
        }
        found
    }

    /// Unknown and duplicate keys, misplaced blocks, missing required keys.
    fn check_block_structure(&mut self, file: usize, block: &Block, def: &BlockDef) {
        let mut seen: HashMap<&str, Span> = HashMap::new();
        for item in &block.items {
            match item {
                Item::Statement(s) => {
                    if def.key(&s.key.name).is_none() {
                        let mut d = Diagnostic::error(
                            "deck.unknown-key",
                            Location::new(file, s.key.span),
                            format!("`{}` is not a key of `{}`", s.key.name, def.name),
                        );
                        if let Some(near) =
                            schema::nearest(&s.key.name, def.keys.iter().map(|k| k.name))
                        {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, s.key.span),
                                near,
                            );
                        }
                        let keys: Vec<&str> = def.keys.iter().map(|k| k.name).collect();
                        if !keys.is_empty() {
                            d = d.with_note(format!("keys of `{}`: {}", def.name, keys.join(", ")));
                        }
                        self.diags.push(d);
                        continue;
                    }
                    if let Some(first) = seen.get(s.key.name.as_str()) {
                        self.diags.push(
                            Diagnostic::error(
                                "deck.duplicate-key",
                                Location::new(file, s.key.span),
                                format!(
                                    "`{}` is given twice in `{}`; later statements never replace earlier ones",
                                    s.key.name, def.name
                                ),
                            )
                            .with_label(Location::new(file, *first), "first given here")
                            .with_note(if def.name == "rock" {
                                "use a `patch` block to override part of a property"
                            } else {
                                "remove one of them"
                            }),
                        );
                    } else {
                        seen.insert(&s.key.name, s.key.span);
                    }
                }
                Item::Block(child) => match schema::child_block(def, &child.name.name) {
                    Some(cdef) => self.check_block_structure(file, child, cdef),
                    None => {
                        let mut d = Diagnostic::error(
                            "deck.unknown-block",
                            Location::new(file, child.name.span),
                            format!("`{}` cannot stand inside `{}`", child.name.name, def.name),
                        );
                        if let Some(near) =
                            schema::nearest(&child.name.name, def.children.iter().copied())
                        {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, child.name.span),
                                near,
                            );
                        }
                        self.diags.push(d);
                    }
                },
                Item::Directive(dir) => {
                    let mut d = Diagnostic::error(
                        "deck.unknown-key",
                        Location::new(file, dir.name.span),
                        format!(
                            "`{}` needs `= value` (or `{{ ... }}` for a block)",
                            dir.name.name
                        ),
                    );
                    if dir.name.name == "include" {
                        d = Diagnostic::error(
                            "deck.include",
                            Location::new(file, dir.name.span),
                            "`include` is allowed at the top level only",
                        );
                    } else if let Some(near) =
                        schema::nearest(&dir.name.name, def.keys.iter().map(|k| k.name))
                    {
                        d = d.with_note(format!("did you mean `{near} = ...`?"));
                    }
                    self.diags.push(d);
                }
            }
        }
        // Required keys (the well's `location`/`completions` pair is checked by the well).
        // A misspelt required key is reported once, as unknown with its fix,
        // not again as missing.
        let misspelt: Vec<&str> = block
            .items
            .iter()
            .filter_map(|i| match i {
                Item::Statement(s) if def.key(&s.key.name).is_none() => {
                    schema::nearest(&s.key.name, def.keys.iter().map(|k| k.name))
                }
                _ => None,
            })
            .collect();
        for k in def.keys.iter().filter(|k| k.required) {
            if !seen.contains_key(k.name) && !misspelt.contains(&k.name) {
                let at = Location::new(file, block.name.span);
                let mut d = Diagnostic::error(
                    "deck.missing-key",
                    at,
                    format!("`{}` needs the key `{}`: {}", def.name, k.name, k.doc),
                );
                let example = example_value(k);
                d = d.with_replacement(
                    format!("add `{} = {example}`", k.name),
                    Location::new(file, Span::new(block.open.end, block.open.end)),
                    format!("\n  {} = {example}", k.name),
                );
                self.diags.push(d);
            }
        }
    }

    fn check_labels(&mut self, blocks: &HashMap<&'static str, Vec<Found>>) {
        for (name, list) in blocks {
            let Some(def) = schema::top_block(name) else {
                continue;
            };
            let mut names: HashMap<String, Location> = HashMap::new();
            for f in list {
                let label = label_of(f.block);
                if def.label == LabelRule::Required && label.is_none() {
                    self.diags.push(Diagnostic::error(
                        "deck.missing-key",
                        Location::new(f.file, f.block.name.span),
                        format!(
                            "a `{name}` block needs a name in quotes: {name} \"NAME\" {{ ... }}"
                        ),
                    ));
                }
                if def.label == LabelRule::None && !f.block.args.is_empty() {
                    self.diags.push(Diagnostic::error(
                        "syntax.unexpected",
                        Location::new(f.file, f.block.args[0].span),
                        format!(
                            "expected `{{` after `{name}`, found {}",
                            crate::props::atom_words(&f.block.args[0].kind)
                        ),
                    ));
                }
                if let Some(label) = label {
                    let loc = Location::new(f.file, f.block.args[0].span);
                    if let Some(first) = names.get(&label) {
                        self.diags.push(
                            Diagnostic::error(
                                "deck.duplicate-name",
                                loc,
                                format!("two `{name}` blocks are named \"{label}\""),
                            )
                            .with_label(*first, "first named here"),
                        );
                    } else {
                        names.insert(label, loc);
                    }
                }
            }
        }
    }

    fn text_value(&mut self, file: usize, stmt: &Statement) -> Option<String> {
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Str { value, unit: None },
                ..
            }] => Some(value.clone()),
            _ => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, stmt.value.span),
                    format!("`{}` expects text in quotes", stmt.key.name),
                ));
                None
            }
        }
    }

    /// A single quantity of the given dimension.
    fn quantity(&mut self, file: usize, stmt: &Statement, dim: Dim, gauge: Gauge) -> Option<f64> {
        let key = stmt.key.name.clone();
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Number { value, unit, .. },
                span,
            }] => to_si(
                &mut self.reporter(file),
                *value,
                *span,
                unit.as_ref(),
                dim,
                gauge,
                &key,
            ),
            [] => None, // the parser reported the empty value
            atoms => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, stmt.value.span),
                    format!(
                        "`{key}` expects one value, {}, found {}",
                        describe_expected(dim),
                        crate::props::atom_words(&atoms[0].kind)
                    ),
                ));
                None
            }
        }
    }

    fn choice(
        &mut self,
        file: usize,
        stmt: &Statement,
        options: &[&'static str],
    ) -> Option<&'static str> {
        let (name, span) = match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Ident(name),
                span,
            }] => (name.clone(), *span),
            [] => return None,
            _ => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, stmt.value.span),
                    format!("`{}` expects one of {}", stmt.key.name, options.join(", ")),
                ));
                return None;
            }
        };
        if let Some(o) = options.iter().find(|o| **o == name) {
            return Some(o);
        }
        let mut d = Diagnostic::error(
            "deck.value",
            Location::new(file, span),
            format!(
                "`{}` expects one of {}, found `{name}`",
                stmt.key.name,
                options.join(", ")
            ),
        );
        if let Some(near) = schema::nearest(&name, options.iter().copied()) {
            d = d.with_replacement(
                format!("replace by `{near}`"),
                Location::new(file, span),
                near,
            );
        }
        self.diags.push(d);
        None
    }

    fn number(&mut self, file: usize, stmt: &Statement) -> Option<f64> {
        self.quantity(file, stmt, Dim::NONE, Gauge::Refused)
    }

    fn lower_grid(&mut self, file: usize, block: &Block, spans: &mut Spans) -> Option<Grid> {
        let cells = find(block, "cells")?;
        let (nx, ny, nz) = match cells.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Size(parts),
                span,
            }] => {
                if parts.len() != 3 || parts.contains(&0) {
                    self.diags.push(Diagnostic::error(
                        "grid.spacing",
                        Location::new(file, *span),
                        "`cells` expects three positive counts NX x NY x NZ",
                    ));
                    return None;
                }
                let total = parts.iter().try_fold(1u64, |acc, p| acc.checked_mul(*p));
                if total.is_none_or(|t| t > MAX_CELLS) {
                    let found = total
                        .map(|t| t.to_string())
                        .unwrap_or_else(|| "more than 2^64".into());
                    self.diags.push(
                        Diagnostic::error(
                            "grid.spacing",
                            Location::new(file, *span),
                            format!("`cells` gives {found} cells; rill holds at most {MAX_CELLS} (a typo in a count?)"),
                        )
                        .with_note("every per-cell property takes 8 bytes a cell, re-checked on each edit"),
                    );
                    return None;
                }
                (parts[0] as usize, parts[1] as usize, parts[2] as usize)
            }
            [] => return None,
            _ => {
                self.diags.push(
                    Diagnostic::error(
                        "deck.value",
                        Location::new(file, cells.value.span),
                        "`cells` expects the grid size as NX x NY x NZ, e.g. `30 x 20 x 4`",
                    )
                    .with_note("a 2D areal grid is NX x NY x 1"),
                );
                return None;
            }
        };
        let shape = Shape { nx, ny, nz };
        let mut reader_cache = std::mem::take(&mut self.array_cache);
        let deck_path = self.files[file].path.clone();
        let mut read_spacing =
            |this: &mut Self, key: &str, forms: Forms| -> Option<(Field, Location)> {
                let stmt = find(block, key)?;
                let mut files = std::mem::take(&mut this.files);
                let mut reader = PropReader {
                    shape,
                    source: this.source,
                    deck_path: deck_path.clone(),
                    cache: &mut reader_cache,
                    files: &mut files,
                };
                let mut r = Reporter {
                    file,
                    diags: &mut this.diags,
                };
                let expr =
                    reader.read(&mut r, &stmt.value, Dim::LENGTH, Gauge::Refused, forms, key);
                this.files = files;
                let expr = expr?;
                let field = evaluate(&expr, shape, &|_| None)?;
                Some((field, Location::new(file, stmt.value.span)))
            };
        let one_per = |n: usize| Forms {
            layers: false,
            cells: false,
            columns: false,
            file: false,
            arithmetic: false,
            bare_list: Some(crate::props::BareList::Axis(n)),
            file_columns: false,
        };
        let dx = read_spacing(self, "dx", one_per(nx));
        let dy = read_spacing(self, "dy", one_per(ny));
        let dz = read_spacing(self, "dz", Forms::THICKNESS);
        let top = read_spacing(self, "top", Forms::TOP);
        self.array_cache = reader_cache;
        // A bare list for dx/dy was read as "columns"; reinterpret by axis and count.
        let axis_list = |this: &mut Self,
                         f: Option<(Field, Location)>,
                         n: usize,
                         key: &str,
                         what: &str|
         -> Option<(Vec<f64>, Location)> {
            let (field, loc) = f?;
            match field {
                Field::Uniform(v) => Some((vec![v; n], loc)),
                Field::Columns(v) | Field::Layers(v) if v.len() == n => Some((v, loc)),
                Field::Columns(v) | Field::Layers(v) => {
                    this.diags.push(Diagnostic::error(
                        "grid.array-length",
                        loc,
                        format!("`{key}` needs {n} values ({what}), found {}", v.len()),
                    ));
                    None
                }
                Field::Cells(_) => None,
            }
        };
        let dx = axis_list(self, dx, nx, "dx", "one per column, NX");
        let dy = axis_list(self, dy, ny, "dy", "one per row, NY");
        spans.dx = dx.as_ref().map(|d| d.1);
        spans.dy = dy.as_ref().map(|d| d.1);
        spans.dz = dz.as_ref().map(|d| d.1);
        let dz = dz.map(|(f, _)| f.into_cell_values(shape, self.source.reuse()));
        let top = top.map(|(f, _)| match f {
            Field::Uniform(v) => vec![v; nx * ny],
            Field::Columns(v) => v,
            other => other.to_cells(Shape { nx, ny, nz: 1 }),
        });
        let (Some((dx, _)), Some((dy, _)), Some(dz), Some(top)) = (dx, dy, dz, top) else {
            return None;
        };
        let grid = Grid {
            nx,
            ny,
            nz,
            dx,
            dy,
            dz,
            top,
        };
        // Sizes must be positive; report the first offender per key.
        let mut ok = true;
        let not_positive = |values: &[f64]| {
            let bad = values
                .iter()
                .filter(|v| **v <= 0.0 || !v.is_finite())
                .count();
            let first = values.iter().position(|v| *v <= 0.0 || !v.is_finite());
            (bad, first)
        };
        let dz_scan = kept(
            self.source.reuse(),
            "sizes not positive",
            &[grid.dz.shared().clone()],
            &[],
            || not_positive(&grid.dz),
        );
        for (key, (bad, first), loc) in [
            ("dx", not_positive(&grid.dx), spans.dx),
            ("dy", not_positive(&grid.dy), spans.dy),
            ("dz", dz_scan, spans.dz),
        ] {
            if let Some(pos) = first {
                ok = false;
                let which = match key {
                    "dx" => format!("column i = {}", pos + 1),
                    "dy" => format!("row j = {}", pos + 1),
                    _ => {
                        let (i, j, k) = grid.ijk(pos);
                        format!("cell ({}, {}, {})", i + 1, j + 1, k + 1)
                    }
                };
                self.diags.push(
                    Diagnostic::error(
                        "grid.spacing",
                        loc.unwrap_or_default(),
                        format!("`{key}` must be positive; {bad} value(s) are zero or negative, the first at {which}"),
                    )
                    .with_note("an inactive cell is made with porosity 0, not with a zero size"),
                );
            }
        }
        ok.then_some(grid)
    }

    fn lower_initial(&mut self, file: usize, block: &Block, shape: Shape) -> Option<Initial> {
        let stmt = find(block, "pressure")?;
        if let Some((p, depth)) = self.pressure_at_depth(file, stmt)? {
            return Some(match depth {
                Some(d) => Initial::Datum {
                    pressure: p,
                    depth: d,
                },
                None => {
                    Initial::Cells(Field::Uniform(p).into_cell_values(shape, self.source.reuse()))
                }
            });
        }
        let field = self.read_field(
            file,
            stmt,
            shape,
            Dim::PRESSURE,
            Gauge::Allowed,
            Forms::PRESSURE,
        )?;
        Some(Initial::Cells(
            field.into_cell_values(shape, self.source.reuse()),
        ))
    }

    /// `p` or `p at depth`. `Some(None)` when the value is some other form.
    fn pressure_at_depth(
        &mut self,
        file: usize,
        stmt: &Statement,
    ) -> Option<Option<(f64, Option<f64>)>> {
        let key = stmt.key.name.clone();
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Number { value, unit, .. },
                span,
            }] => {
                let p = to_si(
                    &mut self.reporter(file),
                    *value,
                    *span,
                    unit.as_ref(),
                    Dim::PRESSURE,
                    Gauge::Allowed,
                    &key,
                )?;
                Some(Some((p, None)))
            }
            [Atom {
                kind: AtomKind::Number { value, unit, .. },
                span,
            }, Atom {
                kind: AtomKind::Ident(at),
                span: at_span,
            }, rest @ ..]
                if at == "at" =>
            {
                let p = to_si(
                    &mut self.reporter(file),
                    *value,
                    *span,
                    unit.as_ref(),
                    Dim::PRESSURE,
                    Gauge::Allowed,
                    &key,
                );
                let d = match rest {
                    [Atom {
                        kind: AtomKind::Number { value, unit, .. },
                        span,
                    }] => to_si(
                        &mut self.reporter(file),
                        *value,
                        *span,
                        unit.as_ref(),
                        Dim::LENGTH,
                        Gauge::Refused,
                        "at",
                    ),
                    _ => {
                        self.diags.push(Diagnostic::error(
                            "deck.value",
                            Location::new(file, *at_span),
                            "`at` must be followed by one depth, e.g. `3200 psi at 7150 ft`",
                        ));
                        None
                    }
                };
                Some(Some((p?, Some(d?))))
            }
            [Atom {
                kind: AtomKind::Ident(_),
                ..
            }, ..]
                if stmt.key.name == "pressure" =>
            {
                Some(None)
            }
            [] => None,
            atoms => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, stmt.value.span),
                    format!(
                        "`{key}` expects a pressure, optionally `at` a depth (`3200 psi at 7150 ft`), found {}",
                        crate::props::atom_words(&atoms[0].kind)
                    ),
                ));
                None
            }
        }
    }

    fn read_field(
        &mut self,
        file: usize,
        stmt: &Statement,
        shape: Shape,
        dim: Dim,
        gauge: Gauge,
        forms: Forms,
    ) -> Option<Field> {
        let expr = self.read_expr(file, &stmt.value, shape, dim, gauge, forms, &stmt.key.name)?;
        let found = infer_dim(&mut self.reporter(file), &expr, &|_| None, &stmt.key.name)?;
        if !check_result_dim(&mut self.reporter(file), &expr, found, dim, &stmt.key.name) {
            return None;
        }
        evaluate(&expr, shape, &|_| None)
    }

    #[allow(clippy::too_many_arguments)]
    fn read_expr(
        &mut self,
        file: usize,
        value: &Value,
        shape: Shape,
        dim: Dim,
        gauge: Gauge,
        forms: Forms,
        key: &str,
    ) -> Option<Expr> {
        let mut files = std::mem::take(&mut self.files);
        let deck_path = files[file].path.clone();
        let mut cache = std::mem::take(&mut self.array_cache);
        let mut reader = PropReader {
            shape,
            source: self.source,
            deck_path,
            cache: &mut cache,
            files: &mut files,
        };
        let mut r = Reporter {
            file,
            diags: &mut self.diags,
        };
        let expr = reader.read(&mut r, value, dim, gauge, forms, key);
        self.files = files;
        self.array_cache = cache;
        expr
    }

    fn lower_rock(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        datum: Option<f64>,
        spans: &mut Spans,
    ) -> Option<Rock> {
        const PROPS: [&str; 4] = ["porosity", "kx", "ky", "kz"];
        let dim_of = |name: &str| match name {
            "porosity" => Some(Dim::NONE),
            "kx" | "ky" | "kz" => Some(Dim::PERMEABILITY),
            _ => None,
        };
        // Definitions per property: the base expression, then patches in order
        // (cells selected by each patch).
        struct Def {
            expr: Expr,
            cells: Option<Vec<usize>>,
            loc: Location,
        }
        let mut defs: HashMap<&'static str, Vec<Def>> = HashMap::new();
        let mut ok = true;
        for item in &block.items {
            match item {
                Item::Statement(s) => {
                    let Some(name) = PROPS.iter().copied().find(|p| *p == s.key.name) else {
                        continue;
                    };
                    if defs
                        .get(name)
                        .is_some_and(|d| d.iter().any(|d| d.cells.is_none()))
                    {
                        continue; // duplicate, reported by the structure check
                    }
                    // The base value goes first, even when a patch stands above it in the file.
                    match self.read_expr(
                        file,
                        &s.value,
                        shape,
                        dim_of(name)?,
                        Gauge::Refused,
                        Forms::PROPERTY,
                        name,
                    ) {
                        Some(expr) => defs.entry(name).or_default().insert(
                            0,
                            Def {
                                expr,
                                cells: None,
                                loc: Location::new(file, s.value.span),
                            },
                        ),
                        None => ok = false,
                    }
                }
                Item::Block(p) if p.name.name == "patch" => {
                    let Some(cells) = self.patch_cells(file, p, shape) else {
                        ok = false;
                        continue;
                    };
                    for s in p.items.iter().filter_map(|i| {
                        if let Item::Statement(s) = i {
                            Some(s)
                        } else {
                            None
                        }
                    }) {
                        let Some(name) = PROPS.iter().copied().find(|q| *q == s.key.name) else {
                            continue;
                        };
                        match self.read_expr(
                            file,
                            &s.value,
                            shape,
                            dim_of(name)?,
                            Gauge::Refused,
                            Forms::PROPERTY,
                            name,
                        ) {
                            Some(expr) => defs.entry(name).or_default().push(Def {
                                expr,
                                cells: Some(cells.clone()),
                                loc: Location::new(file, s.value.span),
                            }),
                            None => ok = false,
                        }
                    }
                }
                _ => {}
            }
        }
        // A patch of a property without a base definition: the base is the default.
        for name in PROPS {
            let has_base = defs
                .get(name)
                .is_some_and(|d| d.first().is_some_and(|d| d.cells.is_none()));
            if !has_base {
                let default = match name {
                    "ky" | "kz" => Some(Expr::Ref {
                        name: "kx".into(),
                        span: Span::default(),
                    }),
                    _ => None,
                };
                match default {
                    Some(expr) => defs.entry(name).or_default().insert(
                        0,
                        Def {
                            expr,
                            cells: None,
                            loc: Location::new(file, block.name.span),
                        },
                    ),
                    None => {
                        // Required, reported missing by the structure check.
                        if defs.get(name).is_some_and(|d| !d.is_empty()) {
                            let at = defs[name][0].loc;
                            self.diags.push(Diagnostic::error(
                                "deck.missing-key",
                                at,
                                format!("a patch sets `{name}`, but `rock` has no base value for `{name}`"),
                            ));
                        }
                        ok = false;
                    }
                }
            }
        }
        // Dimensions and references.
        for name in PROPS {
            for def in defs.get(name).map(|v| v.as_slice()).unwrap_or(&[]) {
                let mut refs = Vec::new();
                def.expr.refs(&mut refs);
                let mut bad_ref = false;
                for (r, span) in &refs {
                    if !PROPS.contains(&r.as_str()) {
                        let mut d = Diagnostic::error(
                            "deck.reference",
                            Location::new(file, *span),
                            format!("`{r}` is not a property of `rock`; expressions may use porosity, kx, ky, kz"),
                        );
                        if let Some(near) = schema::nearest(r, PROPS) {
                            d = d.with_replacement(
                                format!("replace by `{near}`"),
                                Location::new(file, *span),
                                near,
                            );
                        }
                        self.diags.push(d);
                        bad_ref = true;
                    }
                }
                if bad_ref {
                    ok = false;
                    continue;
                }
                let mut r = self.reporter(file);
                match infer_dim(&mut r, &def.expr, &dim_of, name) {
                    Some(found) => {
                        if !check_result_dim(
                            &mut r,
                            &def.expr,
                            found,
                            dim_of(name).unwrap_or(Dim::NONE),
                            name,
                        ) {
                            ok = false;
                        }
                    }
                    None => ok = false,
                }
            }
        }
        if !ok {
            return None;
        }
        // Evaluation order by dependencies; a cycle is an error.
        let mut order: Vec<&'static str> = Vec::new();
        let mut state: HashMap<&str, u8> = HashMap::new();
        fn visit<'a>(
            name: &'static str,
            deps: &dyn Fn(&str) -> Vec<(&'static str, Span)>,
            state: &mut HashMap<&'a str, u8>,
            order: &mut Vec<&'static str>,
            cycle: &mut Option<(String, Span)>,
        ) {
            match state.get(name) {
                Some(2) => return,
                Some(1) => {
                    if cycle.is_none() {
                        *cycle = Some((name.to_string(), Span::default()));
                    }
                    return;
                }
                _ => {}
            }
            state.insert(name, 1);
            for (d, span) in deps(name) {
                if state.get(d) == Some(&1) && cycle.is_none() {
                    *cycle = Some((format!("{name} -> {d}"), span));
                }
                visit(d, deps, state, order, cycle);
            }
            state.insert(name, 2);
            order.push(name);
        }
        let deps = |name: &str| -> Vec<(&'static str, Span)> {
            let mut out = Vec::new();
            for def in defs.get(name).map(|v| v.as_slice()).unwrap_or(&[]) {
                let mut refs = Vec::new();
                def.expr.refs(&mut refs);
                for (r, span) in refs {
                    if let Some(p) = PROPS.iter().copied().find(|p| *p == r) {
                        out.push((p, span));
                    }
                }
            }
            out
        };
        let mut cycle = None;
        for name in PROPS {
            visit(name, &deps, &mut state, &mut order, &mut cycle);
        }
        if let Some((path, span)) = cycle {
            self.diags.push(Diagnostic::error(
                "deck.reference",
                Location::new(file, span),
                format!("rock properties refer to each other in a cycle ({path})"),
            ));
            return None;
        }
        // Every array below is kept for the next analysis: an edit elsewhere
        // in the deck finds the same inputs and gets the same arrays back.
        let reuse = self.source.reuse();
        let mut finals: HashMap<&str, Field> = HashMap::new();
        for name in order {
            let mut base: Option<Field> = None;
            let mut patches: Vec<(&[usize], Field)> = Vec::new();
            for def in defs.get(name).map(|v| v.as_slice()).unwrap_or(&[]) {
                let value = evaluate_kept(&def.expr, shape, &|r| finals.get(r).cloned(), reuse)?;
                spans.rock.entry(name).or_default().push(def.loc);
                match &def.cells {
                    None => base = Some(value),
                    Some(sel) => patches.push((sel, value)),
                }
            }
            let base = base?;
            let field = if patches.is_empty() {
                base
            } else {
                let (mut arrays, mut params) = (Vec::new(), vec![shape.cells() as u64]);
                base.encode(&mut arrays, &mut params);
                for (sel, value) in &patches {
                    params.push(sel.len() as u64);
                    params.extend(sel.iter().map(|&c| c as u64));
                    value.encode(&mut arrays, &mut params);
                }
                Field::Cells(kept(reuse, "patched property", &arrays, &params, || {
                    let mut target =
                        crate::props::cells_by_index(shape.cells(), reuse, |c| base.at(c, shape));
                    for (sel, value) in &patches {
                        for &c in *sel {
                            target[c] = value.at(c, shape);
                        }
                    }
                    Arc::new(target)
                }))
            };
            finals.insert(name, field);
        }
        let mut take = |n: &str| finals.remove(n).map(|f| f.into_cell_values(shape, reuse));
        let compressibility = match find(block, "compressibility") {
            Some(s) => {
                spans.rock_compressibility = Some(Location::new(file, s.value.span));
                self.quantity(file, s, Dim::COMPRESSIBILITY, Gauge::Refused)?
            }
            None => 0.0,
        };
        let ref_pressure = match find(block, "ref_pressure") {
            Some(s) => self.quantity(file, s, Dim::PRESSURE, Gauge::Allowed)?,
            None => datum?,
        };
        let (kz, ky, porosity) = (take("kz")?, take("ky")?, take("porosity")?);
        let kx = take("kx")?;
        Some(Rock {
            porosity,
            kx,
            ky,
            kz,
            compressibility,
            ref_pressure,
        })
    }

    /// Cells selected by a patch header `i = 12..14 k = 3`; omitted axes mean all.
    fn patch_cells(&mut self, file: usize, p: &Block, shape: Shape) -> Option<Vec<usize>> {
        let mut ranges = [(1usize, shape.nx), (1, shape.ny), (1, shape.nz)];
        let mut ok = true;
        for arg in &p.args {
            let AtomKind::Selector { key, value } = &arg.kind else {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, arg.span),
                    format!(
                        "a patch header takes `i = ..`, `j = ..`, `k = ..`, found {}",
                        crate::props::atom_words(&arg.kind)
                    ),
                ));
                ok = false;
                continue;
            };
            let (axis, n) = match key.name.as_str() {
                "i" => (0, shape.nx),
                "j" => (1, shape.ny),
                "k" => (2, shape.nz),
                other => {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        Location::new(file, key.span),
                        format!("a patch selects cells with `i`, `j` and `k`, found `{other}`"),
                    ));
                    ok = false;
                    continue;
                }
            };
            let Some((lo, hi)) = self.index_range(file, value, n, key.name.as_str(), "grid.index")
            else {
                ok = false;
                continue;
            };
            ranges[axis] = (lo, hi);
        }
        if !ok {
            return None;
        }
        let mut cells = Vec::new();
        for k in ranges[2].0..=ranges[2].1 {
            for j in ranges[1].0..=ranges[1].1 {
                for i in ranges[0].0..=ranges[0].1 {
                    cells.push((i - 1) + shape.nx * ((j - 1) + shape.ny * (k - 1)));
                }
            }
        }
        Some(cells)
    }

    /// A 1-based index or inclusive range within `1..=n`.
    fn index_range(
        &mut self,
        file: usize,
        atom: &Atom,
        n: usize,
        axis: &str,
        code: &'static str,
    ) -> Option<(usize, usize)> {
        let (lo, hi) = match &atom.kind {
            AtomKind::Range { start, end } => (*start, *end),
            AtomKind::Number {
                value, unit: None, ..
            } if value.fract() == 0.0 => (*value as i64, *value as i64),
            other => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, atom.span),
                    format!(
                        "expected an index or a range like `2..5` for `{axis}`, found {}",
                        crate::props::atom_words(other)
                    ),
                ));
                return None;
            }
        };
        if lo > hi {
            self.diags.push(
                Diagnostic::error(
                    code,
                    Location::new(file, atom.span),
                    format!("the range `{lo}..{hi}` for `{axis}` is empty"),
                )
                .with_replacement(
                    "swap the ends",
                    Location::new(file, atom.span),
                    format!("{hi}..{lo}"),
                ),
            );
            return None;
        }
        if lo < 1 || hi as u64 > n as u64 {
            self.diags.push(Diagnostic::error(
                code,
                Location::new(file, atom.span),
                format!(
                    "`{axis}` must lie within 1..{n} (the grid), found {}",
                    if lo == hi {
                        lo.to_string()
                    } else {
                        format!("{lo}..{hi}")
                    }
                ),
            ));
            return None;
        }
        Some((lo as usize, hi as usize))
    }

    fn lower_fluid(
        &mut self,
        file: usize,
        block: &Block,
        datum: Option<f64>,
        spans: &mut Spans,
    ) -> Option<Fluid> {
        let get = |this: &mut Self,
                   key: &str,
                   dim: Dim,
                   gauge: Gauge|
         -> Option<Option<(f64, Location)>> {
            match find(block, key) {
                None => Some(None),
                Some(s) => Some(Some((
                    this.quantity(file, s, dim, gauge)?,
                    Location::new(file, s.value.span),
                ))),
            }
        };
        let viscosity = get(self, "viscosity", Dim::VISCOSITY, Gauge::Refused);
        let fvf = get(self, "fvf", Dim::FVF, Gauge::Refused);
        let compressibility = get(
            self,
            "compressibility",
            Dim::COMPRESSIBILITY,
            Gauge::Refused,
        );
        let density = get(self, "density", Dim::DENSITY, Gauge::Refused);
        let ref_pressure = get(self, "ref_pressure", Dim::PRESSURE, Gauge::Allowed);
        let (viscosity, fvf, density) = (viscosity??, fvf??, density??);
        let compressibility = compressibility?;
        spans.viscosity = Some(viscosity.1);
        spans.fvf = Some(fvf.1);
        spans.density = Some(density.1);
        spans.fluid_compressibility = compressibility.map(|c| c.1);
        let ref_pressure = match ref_pressure? {
            Some((p, _)) => p,
            None => datum?,
        };
        Some(Fluid {
            name: label_of(block),
            viscosity: viscosity.0,
            fvf: fvf.0,
            compressibility: compressibility.map(|c| c.0).unwrap_or(0.0),
            density: density.0,
            ref_pressure,
        })
    }

    fn control(&mut self, file: usize, stmt: &Statement) -> Option<Control> {
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Ident(mode),
                span: mode_span,
            }, rest @ ..]
                if mode == "rate" || mode == "bhp" =>
            {
                let [Atom {
                    kind: AtomKind::Number { value, unit, .. },
                    span,
                }] = rest
                else {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        Location::new(file, *mode_span),
                        format!(
                            "`{mode}` must be followed by one {}",
                            if mode == "rate" {
                                "surface rate, e.g. `rate 600 stb/day`"
                            } else {
                                "pressure, e.g. `bhp 1500 psi`"
                            }
                        ),
                    ));
                    return None;
                };
                if mode == "rate" {
                    let q = to_si(
                        &mut self.reporter(file),
                        *value,
                        *span,
                        unit.as_ref(),
                        Dim::SURFACE_RATE,
                        Gauge::Refused,
                        "rate",
                    )?;
                    if q < 0.0 {
                        self.diags.push(
                            Diagnostic::error(
                                "deck.value",
                                Location::new(file, *span),
                                "a rate is given as a positive number; the well's `role` says whether it produces or injects",
                            )
                            .with_replacement("drop the sign", Location::new(file, *span), format!("{} {}", -value, unit.as_ref().map(|u| u.text.as_str()).unwrap_or(""))),
                        );
                        return None;
                    }
                    Some(Control::Rate(q))
                } else {
                    let p = to_si(
                        &mut self.reporter(file),
                        *value,
                        *span,
                        unit.as_ref(),
                        Dim::PRESSURE,
                        Gauge::Allowed,
                        "bhp",
                    )?;
                    Some(Control::Bhp(p))
                }
            }
            [] => None,
            [first, ..] => {
                let mut d = Diagnostic::error(
                    "deck.value",
                    Location::new(file, first.span),
                    format!(
                        "`control` expects `rate <surface rate>` or `bhp <pressure>`, found {}",
                        crate::props::atom_words(&first.kind)
                    ),
                );
                if let AtomKind::Ident(w) = &first.kind {
                    if let Some(near) = schema::nearest(w, schema::CONTROL_MODES.iter().copied()) {
                        d = d.with_replacement(
                            format!("replace by `{near}`"),
                            Location::new(file, first.span),
                            near,
                        );
                    }
                } else if let AtomKind::Number { unit: Some(u), .. } = &first.kind {
                    let guess = rill_units::parse(&u.text).ok().map(|u| u.dim);
                    let mode = if guess == Some(Dim::PRESSURE) {
                        "bhp"
                    } else {
                        "rate"
                    };
                    d = d.with_replacement(
                        format!("insert `{mode}`"),
                        Location::new(file, Span::new(first.span.start, first.span.start)),
                        format!("{mode} "),
                    );
                }
                self.diags.push(d);
                None
            }
        }
    }

    fn lower_well(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        spans: &mut Spans,
    ) -> Option<Well> {
        let name = label_of(block)?;
        let mut ws = WellSpans::default();
        let role = match find(block, "role") {
            Some(s) => self.choice(file, s, schema::ROLES),
            None => None,
        };
        let radius = find(block, "radius").and_then(|s| {
            ws.radius = Some(Location::new(file, s.value.span));
            self.quantity(file, s, Dim::LENGTH, Gauge::Refused)
        });
        let skin = match find(block, "skin") {
            Some(s) => self.number(file, s),
            None => Some(0.0),
        };
        let control = find(block, "control").and_then(|s| {
            ws.control = Some(Location::new(file, s.value.span));
            self.control(file, s)
        });
        let bhp_limit = match find(block, "bhp_limit") {
            Some(s) => {
                ws.bhp_limit = Some(Location::new(file, s.value.span));
                self.quantity(file, s, Dim::PRESSURE, Gauge::Allowed)
                    .map(Some)
            }
            None => Some(None),
        };
        let completions = self.completions(file, block, grid, &mut ws);
        spans.wells.push(ws);
        let origin = Origin {
            file,
            span: block.name.span.join(
                block
                    .args
                    .first()
                    .map(|a| a.span)
                    .unwrap_or(block.name.span),
            ),
        };
        Some(Well {
            name,
            role: match role? {
                "producer" => Role::Producer,
                _ => Role::Injector,
            },
            completions: completions?,
            radius: radius?,
            skin: skin?,
            control: control?,
            bhp_limit: bhp_limit?,
            origin,
        })
    }

    fn completions(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        ws: &mut WellSpans,
    ) -> Option<Vec<Completion>> {
        let location = find(block, "location");
        let layers = find(block, "layers");
        let explicit = find(block, "completions");
        let at = Location::new(file, block.name.span);
        let make = |i: usize, j: usize, k: usize| Completion {
            i,
            j,
            k,
            cell: grid.index(i, j, k),
        };
        match (location, explicit) {
            (Some(_), Some(e)) => {
                self.diags.push(Diagnostic::error(
                    "deck.duplicate-key",
                    Location::new(file, e.key.span),
                    "give either `location` (with `layers`) or `completions`, not both",
                ));
                None
            }
            (None, None) => {
                self.diags.push(Diagnostic::error(
                    "deck.missing-key",
                    at,
                    "a well needs `location = (i, j)` (with `layers`) or `completions = [(i, j, k) ...]`",
                ));
                None
            }
            (Some(loc), None) => {
                ws.completions = Some(Location::new(file, loc.value.span));
                let (i, j) = match loc.value.atoms.as_slice() {
                    [Atom {
                        kind: AtomKind::Tuple { items, .. },
                        span,
                    }] => match self.tuple_indices(file, items, *span, 2)?.as_slice() {
                        [i, j] => (*i, *j),
                        _ => return None,
                    },
                    [] => return None,
                    _ => {
                        self.diags.push(Diagnostic::error(
                            "deck.value",
                            Location::new(file, loc.value.span),
                            "`location` expects a column `(i, j)`",
                        ));
                        return None;
                    }
                };
                if i < 1 || j < 1 || i > grid.nx as i64 || j > grid.ny as i64 {
                    self.diags.push(Diagnostic::error(
                        "well.completion",
                        Location::new(file, loc.value.span),
                        format!(
                            "the column ({i}, {j}) lies outside the grid of {} x {} columns",
                            grid.nx, grid.ny
                        ),
                    ));
                    return None;
                }
                let (k0, k1) = match layers {
                    Some(l) => match l.value.atoms.as_slice() {
                        [a] => self.index_range(file, a, grid.nz, "layers", "well.completion")?,
                        _ => {
                            self.diags.push(Diagnostic::error(
                                "deck.value",
                                Location::new(file, l.value.span),
                                "`layers` expects a layer or a range like `1..4`",
                            ));
                            return None;
                        }
                    },
                    None => (1, grid.nz),
                };
                Some(
                    (k0..=k1)
                        .map(|k| make(i as usize - 1, j as usize - 1, k - 1))
                        .collect(),
                )
            }
            (None, Some(e)) => {
                ws.completions = Some(Location::new(file, e.value.span));
                if let Some(l) = layers {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        Location::new(file, l.key.span),
                        "`layers` goes with `location`; explicit `completions` name their layers",
                    ));
                    return None;
                }
                let items = match e.value.atoms.as_slice() {
                    [Atom {
                        kind:
                            AtomKind::List {
                                items, unit: None, ..
                            },
                        ..
                    }] => items,
                    [Atom {
                        kind: AtomKind::Tuple { .. },
                        ..
                    }] => std::slice::from_ref(&e.value.atoms[0]),
                    [] => return None,
                    _ => {
                        self.diags.push(Diagnostic::error(
                            "deck.value",
                            Location::new(file, e.value.span),
                            "`completions` expects a list of cells `[(i, j, k) (i, j, k)]`",
                        ));
                        return None;
                    }
                };
                let mut out = Vec::new();
                let mut ok = true;
                for item in items {
                    let AtomKind::Tuple { items: t, .. } = &item.kind else {
                        self.diags.push(Diagnostic::error(
                            "deck.value",
                            Location::new(file, item.span),
                            format!(
                                "expected a cell `(i, j, k)`, found {}",
                                crate::props::atom_words(&item.kind)
                            ),
                        ));
                        ok = false;
                        continue;
                    };
                    let Some(ijk) = self.tuple_indices(file, t, item.span, 3) else {
                        ok = false;
                        continue;
                    };
                    let (i, j, k) = (ijk[0], ijk[1], ijk[2]);
                    if i < 1
                        || j < 1
                        || k < 1
                        || i > grid.nx as i64
                        || j > grid.ny as i64
                        || k > grid.nz as i64
                    {
                        self.diags.push(Diagnostic::error(
                            "well.completion",
                            Location::new(file, item.span),
                            format!("the cell ({i}, {j}, {k}) lies outside the grid of {} x {} x {} cells", grid.nx, grid.ny, grid.nz),
                        ));
                        ok = false;
                        continue;
                    }
                    let c = make(i as usize - 1, j as usize - 1, k as usize - 1);
                    if out.iter().any(|o: &Completion| o.cell == c.cell) {
                        self.diags.push(Diagnostic::error(
                            "deck.duplicate-key",
                            Location::new(file, item.span),
                            format!("the cell ({i}, {j}, {k}) is completed twice"),
                        ));
                        ok = false;
                        continue;
                    }
                    out.push(c);
                }
                if out.is_empty() && ok {
                    self.diags.push(Diagnostic::error(
                        "well.completion",
                        Location::new(file, e.value.span),
                        "a well needs at least one completed cell",
                    ));
                    return None;
                }
                ok.then_some(out)
            }
        }
    }

    fn tuple_indices(
        &mut self,
        file: usize,
        items: &[Atom],
        span: Span,
        n: usize,
    ) -> Option<Vec<i64>> {
        if items.len() != n {
            self.diags.push(Diagnostic::error(
                "deck.value",
                Location::new(file, span),
                format!(
                    "expected {} indices {}, found {}",
                    n,
                    if n == 2 { "(i, j)" } else { "(i, j, k)" },
                    items.len()
                ),
            ));
            return None;
        }
        let mut out = Vec::with_capacity(n);
        for it in items {
            match &it.kind {
                AtomKind::Number {
                    value, unit: None, ..
                } if value.fract() == 0.0 && value.abs() < 1e12 => out.push(*value as i64),
                other => {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        Location::new(file, it.span),
                        format!(
                            "expected a whole 1-based index, found {}",
                            crate::props::atom_words(other)
                        ),
                    ));
                    return None;
                }
            }
        }
        Some(out)
    }

    fn lower_boundary(&mut self, file: usize, block: &Block) -> Option<Boundary> {
        let name = label_of(block)?;
        let side = find(block, "side")
            .and_then(|s| self.choice(file, s, schema::SIDES))
            .and_then(Side::from_name);
        let pressure = find(block, "pressure").and_then(|s| match self.pressure_at_depth(file, s) {
            Some(Some(v)) => Some(v),
            Some(None) => {
                self.diags.push(Diagnostic::error(
                    "deck.value",
                    Location::new(file, s.value.span),
                    "a boundary pressure is one value, optionally `at` a depth: `3150 psi at 7150 ft`",
                ));
                None
            }
            None => None,
        });
        let (pressure, datum) = pressure?;
        Some(Boundary {
            name,
            side: side?,
            pressure,
            datum,
            origin: Origin {
                file,
                span: block.name.span,
            },
        })
    }

    fn lower_timeline(
        &mut self,
        file: usize,
        block: &Block,
        wells: &[Well],
        spans: &mut Spans,
    ) -> Option<Timeline> {
        spans.timeline = Some(Location::new(file, block.name.span));
        let kind = match find(block, "kind") {
            Some(s) => match self.choice(file, s, schema::RUN_KINDS)? {
                "steady" => RunKind::Steady,
                _ => RunKind::Transient,
            },
            None => RunKind::Transient,
        };
        let time = |this: &mut Self,
                    key: &str,
                    spans_slot: &mut Option<Location>|
         -> Option<Option<f64>> {
            match find(block, key) {
                None => Some(None),
                Some(s) => {
                    *spans_slot = Some(Location::new(file, s.value.span));
                    let v = this.quantity(file, s, Dim::TIME, Gauge::Refused)?;
                    if v <= 0.0 {
                        this.diags.push(Diagnostic::error(
                            "timeline.order",
                            Location::new(file, s.value.span),
                            format!("`{key}` must be a positive time"),
                        ));
                        return None;
                    }
                    Some(Some(v))
                }
            }
        };
        let mut end_loc = None;
        let mut first_loc = None;
        let mut unused = None;
        let end = time(self, "end", &mut end_loc);
        let first_step = time(self, "first_step", &mut first_loc);
        let max_step = time(self, "max_step", &mut unused);
        let report_every = time(self, "report_every", &mut unused);
        spans.end = end_loc;
        spans.first_step = first_loc;
        let growth = match find(block, "growth") {
            Some(s) => {
                let g = self.number(file, s)?;
                if !(1.0..=10.0).contains(&g) {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        Location::new(file, s.value.span),
                        format!("`growth` must lie between 1 and 10, found {g}"),
                    ));
                    return None;
                }
                g
            }
            None => 1.5,
        };
        let (end, first_step, max_step, report_every) =
            (end?, first_step?, max_step?, report_every?);
        if kind == RunKind::Transient && end.is_none() {
            let at = Location::new(file, block.name.span);
            self.diags.push(
                Diagnostic::error(
                    "deck.missing-key",
                    at,
                    "a transient run needs `end`: how long to simulate",
                )
                .with_replacement(
                    "add `end = 365 day`",
                    Location::new(file, Span::new(block.open.end, block.open.end)),
                    "\n  end = 365 day",
                ),
            );
            return None;
        }
        let end_v = end.unwrap_or(0.0);
        let first_step_v =
            first_step.unwrap_or_else(|| (0.1 * 86400.0f64).min(end_v / 10.0).max(1.0));
        let max_step_v = max_step.unwrap_or_else(|| (end_v / 10.0).max(first_step_v));
        if let (Some(fs), Some(e)) = (first_step, end) {
            if fs > e {
                self.diags.push(
                    Diagnostic::error(
                        "timeline.order",
                        first_loc.unwrap_or_default(),
                        "`first_step` is longer than the whole run (`end`)",
                    )
                    .with_label(end_loc.unwrap_or_default(), "the run ends here"),
                );
            }
        }
        let mut events = Vec::new();
        let mut last: Option<(f64, Location)> = None;
        let mut ok = true;
        for item in &block.items {
            let Item::Block(ev) = item else { continue };
            if ev.name.name != "at" {
                continue;
            }
            let loc = Location::new(
                file,
                ev.name
                    .span
                    .join(ev.args.first().map(|a| a.span).unwrap_or(ev.name.span)),
            );
            let t = match ev.args.as_slice() {
                [Atom {
                    kind: AtomKind::Number { value, unit, .. },
                    span,
                }] => to_si(
                    &mut self.reporter(file),
                    *value,
                    *span,
                    unit.as_ref(),
                    Dim::TIME,
                    Gauge::Refused,
                    "at",
                ),
                _ => {
                    self.diags.push(Diagnostic::error(
                        "deck.value",
                        loc,
                        "an event starts with its time: `at 180 day { ... }`",
                    ));
                    None
                }
            };
            let Some(t) = t else {
                ok = false;
                continue;
            };
            if let Some((prev, prev_loc)) = last {
                if t <= prev {
                    self.diags.push(
                        Diagnostic::error(
                            "timeline.order",
                            loc,
                            "events must come in time order, each later than the one before",
                        )
                        .with_label(prev_loc, "the previous event"),
                    );
                    ok = false;
                }
            }
            if kind == RunKind::Transient && t > end_v {
                self.diags.push(
                    Diagnostic::error(
                        "timeline.order",
                        loc,
                        "this event comes after the end of the run",
                    )
                    .with_label(end_loc.unwrap_or_default(), "the run ends here"),
                );
                ok = false;
            }
            last = Some((t, loc));
            let mut changes = Vec::new();
            for inner in &ev.items {
                let Item::Block(wb) = inner else { continue };
                if wb.name.name != "well" {
                    continue;
                }
                let Some(wname) = label_of(wb) else {
                    self.diags.push(Diagnostic::error(
                        "deck.missing-key",
                        Location::new(file, wb.name.span),
                        "a change in an event names its well: well \"NAME\" { control = ... }",
                    ));
                    ok = false;
                    continue;
                };
                let Some(index) = wells.iter().position(|w| w.name == wname) else {
                    let span = wb.args.first().map(|a| a.span).unwrap_or(wb.name.span);
                    let mut d = Diagnostic::error(
                        "deck.reference",
                        Location::new(file, span),
                        format!("no well is named \"{wname}\""),
                    );
                    if let Some(near) =
                        schema::nearest(&wname, wells.iter().map(|w| w.name.as_str()))
                    {
                        d = d.with_replacement(
                            format!("replace by \"{near}\""),
                            Location::new(file, span),
                            format!("\"{near}\""),
                        );
                    }
                    self.diags.push(d);
                    ok = false;
                    continue;
                };
                let control = match find(wb, "control") {
                    Some(s) => {
                        if let Some(slot) = spans.wells.get_mut(index) {
                            slot.event_controls
                                .push((events.len(), Location::new(file, s.value.span)));
                        }
                        match self.control(file, s) {
                            Some(c) => Some(c),
                            None => {
                                ok = false;
                                None
                            }
                        }
                    }
                    None => None,
                };
                let bhp_limit = match find(wb, "bhp_limit") {
                    Some(s) => match self.quantity(file, s, Dim::PRESSURE, Gauge::Allowed) {
                        Some(v) => Some(v),
                        None => {
                            ok = false;
                            None
                        }
                    },
                    None => None,
                };
                changes.push(WellChange {
                    well: index,
                    control,
                    bhp_limit,
                });
            }
            events.push(Event {
                time: t,
                changes,
                origin: Origin {
                    file,
                    span: loc.span(),
                },
            });
        }
        if !ok {
            return None;
        }
        Some(Timeline {
            kind,
            end: end_v,
            first_step: first_step_v,
            max_step: max_step_v,
            growth,
            report_every,
            events,
        })
    }

    fn lower_report(&mut self, file: usize, block: &Block) -> ReportSettings {
        let units = find(block, "units")
            .and_then(|s| self.choice(file, s, schema::SYSTEMS))
            .and_then(rill_units::System::from_name)
            .unwrap_or_default();
        ReportSettings { units }
    }
}

/// The first statement with this key in a block.
pub fn find<'b>(block: &'b Block, key: &str) -> Option<&'b Statement> {
    block.items.iter().find_map(|i| match i {
        Item::Statement(s) if s.key.name == key => Some(s),
        _ => None,
    })
}

/// A block's string label, if it has one.
pub fn label_of(block: &Block) -> Option<String> {
    match block.args.first().map(|a| &a.kind) {
        Some(AtomKind::Str { value, .. }) => Some(value.clone()),
        _ => None,
    }
}

fn example_value(k: &KeyDef) -> String {
    match k.kind {
        ValueKind::Text => "\"...\"".into(),
        ValueKind::Size => "10 x 10 x 1".into(),
        ValueKind::Quantity(d) | ValueKind::Property(d) => {
            match rill_units::accepted_units(d).first() {
                Some(u) if d != Dim::NONE => format!("1 {u}"),
                _ => "0.2".into(),
            }
        }
        ValueKind::Number => "0".into(),
        ValueKind::Spacing(_) => "100 ft".into(),
        ValueKind::Top => "5000 ft".into(),
        ValueKind::PressureAtDepth => "3000 psi at 5000 ft".into(),
        ValueKind::Choice(c) => c.first().copied().unwrap_or("").into(),
        ValueKind::Column => "(1, 1)".into(),
        ValueKind::LayerRange => "1..1".into(),
        ValueKind::Cells => "[(1, 1, 1)]".into(),
        ValueKind::Control => "rate 500 stb/day".into(),
    }
}
