use super::*;

/// The rock properties that take per-cell values and may refer to each other.
const PROPS: [&str; 4] = ["porosity", "kx", "ky", "kz"];

fn dim_of(name: &str) -> Option<Dim> {
    match name {
        "porosity" => Some(Dim::NONE),
        "kx" | "ky" | "kz" => Some(Dim::PERMEABILITY),
        _ => None,
    }
}

/// One definition of a rock property: the base value (no cells) or a patch
/// (the cells it selects).
struct RockDef {
    expr: Expr,
    cells: Option<Vec<usize>>,
    /// The patch's box of cells (`None` for the base value).
    select: Option<Selection>,
    loc: Location,
}

/// Definitions per property: the base expression first, then patches in
/// deck order.
type RockDefs = HashMap<&'static str, Vec<RockDef>>;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_rock(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        datum: Option<f64>,
        spans: &mut Spans,
    ) -> Option<Rock> {
        let mut defs = RockDefs::new();
        let mut ok = self.rock_definitions(file, block, shape, &mut defs)?;
        ok &= self.default_bases(file, block, &mut defs);
        ok &= self.check_rock_exprs(file, &defs);
        if !ok {
            return None;
        }
        let order = self.rock_order(file, &defs)?;
        let mut finals = self.evaluate_rock(shape, &defs, order, spans)?;
        let reuse = Some(self.reuse);
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

    /// Read the base statements and the patches into `defs`; false when one
    /// did not read.
    fn rock_definitions(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        defs: &mut RockDefs,
    ) -> Option<bool> {
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
                            RockDef {
                                expr,
                                cells: None,
                                select: None,
                                loc: Location::new(file, s.value.span),
                            },
                        ),
                        None => ok = false,
                    }
                }
                Item::Block(p) if p.name.name == "patch" => {
                    let Some((cells, select)) = self.patch_cells(file, p, shape) else {
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
                            Some(expr) => defs.entry(name).or_default().push(RockDef {
                                expr,
                                cells: Some(cells.clone()),
                                select: Some(select),
                                loc: Location::new(file, s.value.span),
                            }),
                            None => ok = false,
                        }
                    }
                }
                _ => {}
            }
        }
        Some(ok)
    }

    /// A patch of a property without a base definition: the base is the
    /// default (`ky` and `kz` default to `kx`); false when there is none.
    fn default_bases(&mut self, file: usize, block: &Block, defs: &mut RockDefs) -> bool {
        let mut ok = true;
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
                        RockDef {
                            expr,
                            cells: None,
                            select: None,
                            loc: Location::new(file, block.name.span),
                        },
                    ),
                    None => {
                        // Required, reported missing by the structure check. A
                        // base line that is there but did not read has its own
                        // error: saying it is missing would send the engineer
                        // looking for a line they can see.
                        let base_written = find(block, name).is_some();
                        if !base_written && defs.get(name).is_some_and(|d| !d.is_empty()) {
                            let at = defs[name][0].loc;
                            self.diags.push(Diagnostic::error(
                                Code::DeckMissingKey,
                                at,
                                format!("a patch sets `{name}`, but `rock` has no base value for `{name}`"),
                            ));
                        }
                        ok = false;
                    }
                }
            }
        }
        ok
    }

    /// Dimensions and references of every definition; false on an error.
    fn check_rock_exprs(&mut self, file: usize, defs: &RockDefs) -> bool {
        let mut ok = true;
        for name in PROPS {
            for def in defs.get(name).map(|v| v.as_slice()).unwrap_or(&[]) {
                let mut refs = Vec::new();
                def.expr.refs(&mut refs);
                let mut bad_ref = false;
                for (r, span) in &refs {
                    if !PROPS.contains(&r.as_str()) {
                        let mut d = Diagnostic::error(
                            Code::DeckReference,
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
        ok
    }

    /// Evaluation order by dependencies; a cycle is an error.
    fn rock_order(&mut self, file: usize, defs: &RockDefs) -> Option<Vec<&'static str>> {
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
                    // In a patch, the property's own name is its value
                    // before the patch: no dependency on the final value.
                    if def.cells.is_some() && r == name {
                        continue;
                    }
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
                Code::DeckReference,
                Location::new(file, span),
                format!("rock properties refer to each other in a cycle ({path})"),
            ));
            return None;
        }
        Some(order)
    }

    /// Evaluate the properties in `order`, patches over the base. Every
    /// array is kept for the next analysis: an edit elsewhere in the deck
    /// finds the same inputs and gets the same arrays back.
    fn evaluate_rock(
        &mut self,
        shape: Shape,
        defs: &RockDefs,
        order: Vec<&'static str>,
        spans: &mut Spans,
    ) -> Option<HashMap<&'static str, Field>> {
        let reuse = Some(self.reuse);
        let mut finals: HashMap<&'static str, Field> = HashMap::new();
        for name in order {
            let mut base: Option<Field> = None;
            let mut patches: Vec<(&[usize], Field)> = Vec::new();
            for def in defs.get(name).map(|v| v.as_slice()).unwrap_or(&[]) {
                let dim = dim_of(name).unwrap_or(Dim::NONE);
                // A patch that names its own property scales the value
                // before it: the base with the earlier patches applied.
                let before = match (&def.cells, &base) {
                    (Some(_), Some(b)) if refers_to(&def.expr, name) => {
                        Some(patched(reuse, shape, b, &patches))
                    }
                    _ => None,
                };
                let lookup = |r: &str| match &before {
                    Some(f) if r == name => Some(f.clone()),
                    _ => finals.get(r).cloned(),
                };
                let value = evaluate_kept(&def.expr, shape, dim, &lookup, reuse);
                let value = self.evaluated(def.loc.file, name, dim, value)?;
                spans.rock.entry(name).or_default().push(def.loc);
                if let Some(select) = def.select {
                    spans
                        .rock_patches
                        .entry(name)
                        .or_default()
                        .push((def.loc, select));
                }
                match &def.cells {
                    None => base = Some(value),
                    Some(sel) => patches.push((sel, value)),
                }
            }
            let base = base?;
            finals.insert(name, patched(reuse, shape, &base, &patches));
        }
        Some(finals)
    }

    /// Cells selected by a patch header `i = 12..14 k = 3` (omitted axes
    /// mean all), listed and as a box.
    pub(super) fn patch_cells(
        &mut self,
        file: usize,
        p: &Block,
        shape: Shape,
    ) -> Option<(Vec<usize>, Selection)> {
        let mut ranges = [(1usize, shape.nx), (1, shape.ny), (1, shape.nz)];
        let mut ok = true;
        for arg in &p.args {
            let AtomKind::Selector { key, value } = &arg.kind else {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
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
                        Code::DeckChoice,
                        Location::new(file, key.span),
                        format!("a patch selects cells with `i`, `j` and `k`, found `{other}`"),
                    ));
                    ok = false;
                    continue;
                }
            };
            let Some((lo, hi)) =
                self.index_range(file, value, n, key.name.as_str(), Code::GridIndex)
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
        let zero_based = |(lo, hi): (usize, usize)| Some((lo - 1, hi - 1));
        let select = Selection {
            i: zero_based(ranges[0]),
            j: zero_based(ranges[1]),
            k: zero_based(ranges[2]),
        };
        Some((cells, select))
    }
}

/// Whether `expr` refers to the property `name`.
fn refers_to(expr: &Expr, name: &str) -> bool {
    let mut refs = Vec::new();
    expr.refs(&mut refs);
    refs.iter().any(|(r, _)| r == name)
}

/// `base` with `patches` applied in order. Kept for the next analysis: an
/// edit elsewhere in the deck finds the same inputs and gets the same
/// array back.
fn patched(
    reuse: Option<&Reuse>,
    shape: Shape,
    base: &Field,
    patches: &[(&[usize], Field)],
) -> Field {
    if patches.is_empty() {
        return base.clone();
    }
    let (mut arrays, mut params) = (Vec::new(), vec![shape.cells() as u64]);
    base.encode(&mut arrays, &mut params);
    for (sel, value) in patches {
        params.push(sel.len() as u64);
        params.extend(sel.iter().map(|&c| c as u64));
        value.encode(&mut arrays, &mut params);
    }
    Field::Cells(kept(reuse, "patched property", &arrays, &params, || {
        let mut target = crate::props::cells_by_index(shape.cells(), reuse, |c| base.at(c, shape));
        for (sel, value) in patches {
            for &c in *sel {
                target[c] = value.at(c, shape);
            }
        }
        Arc::new(target)
    }))
}
