use super::*;

/// The completion of cell (i, j, k), 0-based, along `direction`.
fn completion(grid: &Grid, i: usize, j: usize, k: usize, direction: Direction) -> Completion {
    Completion::new(grid, i, j, k, direction)
}

/// The axes of a cell tuple, in order.
const AXES: [(&str, Direction); 3] = [
    ("i", Direction::X),
    ("j", Direction::Y),
    ("k", Direction::Z),
];

impl<'s> Lowerer<'s> {
    pub(super) fn control(&mut self, file: usize, stmt: &Statement) -> Option<Control> {
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Ident(mode),
                ..
            }] if mode == "shut" => Some(Control::Shut),
            [Atom {
                kind: AtomKind::Ident(mode),
                span: mode_span,
            }, rest @ ..]
                if schema::CONTROL_MODES.contains(&mode.as_str()) =>
            {
                let [Atom {
                    kind: AtomKind::Number { value, unit, .. },
                    span,
                }] = rest
                else {
                    self.diags.push(Diagnostic::error(
                        Code::DeckValue,
                        Location::new(file, *mode_span),
                        format!(
                            "`{mode}` must be followed by one {}",
                            if mode == "bhp" {
                                "pressure, e.g. `bhp 1500 psi`".to_string()
                            } else {
                                format!("surface rate, e.g. `{mode} 600 stb/day`")
                            }
                        ),
                    ));
                    return None;
                };
                if mode != "bhp" {
                    let q = to_si(
                        &mut self.reporter(file),
                        *value,
                        *span,
                        unit.as_ref(),
                        Dim::SURFACE_RATE,
                        Gauge::Refused,
                        mode,
                    )?;
                    if q < 0.0 {
                        self.diags.push(
                            Diagnostic::error(
                                Code::DeckOutOfRange,
                                Location::new(file, *span),
                                "a rate is given as a positive number; the well's `role` says whether it produces or injects",
                            )
                            .with_replacement("drop the sign", Location::new(file, *span), format!("{} {}", -value, unit.as_ref().map(|u| u.text.as_str()).unwrap_or(""))),
                        );
                        return None;
                    }
                    Some(match mode.as_str() {
                        "oil_rate" => Control::OilRate(q),
                        "liquid_rate" => Control::LiquidRate(q),
                        "water_rate" => Control::WaterRate(q),
                        _ => Control::Rate(q),
                    })
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
                    Code::DeckChoice,
                    Location::new(file, first.span),
                    format!(
                        "`control` expects {}, found {}",
                        if self.two_phase {
                            "`oil_rate`, `liquid_rate` or `water_rate` with a surface rate, `bhp <pressure>` or `shut`"
                        } else {
                            "`rate <surface rate>`, `bhp <pressure>` or `shut`"
                        },
                        crate::props::atom_words(&first.kind)
                    ),
                );
                if let AtomKind::Ident(w) = &first.kind {
                    let words = if self.two_phase {
                        schema::CONTROL_WORDS
                    } else {
                        schema::SINGLE_PHASE_CONTROLS
                    };
                    if let Some(near) = schema::nearest(w, words.iter().copied()) {
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
                    } else if self.two_phase {
                        "liquid_rate"
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

    pub(super) fn lower_well(
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
        let role = match role {
            Some("producer") => Some(Role::Producer),
            Some(_) => Some(Role::Injector),
            None => None,
        };
        let control = find(block, "control").and_then(|s| {
            ws.control = Some(Location::new(file, s.value.span));
            let c = self.control(file, s)?;
            self.control_fits(file, s, c, role).then_some(c)
        });
        let max_water_cut = self.max_water_cut(file, block, role, &mut ws);
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
            role: role?,
            completions: completions?,
            radius: radius?,
            skin: skin?,
            control: control?,
            bhp_limit: bhp_limit?,
            max_water_cut: max_water_cut?,
            origin,
        })
    }

    pub(super) fn completions(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        ws: &mut WellSpans,
    ) -> Option<Vec<Completion>> {
        let location = find(block, "location");
        let layers = find(block, "layers");
        let explicit = find(block, "completions");
        let direction = find(block, "direction");
        let at = Location::new(file, block.name.span);
        if let (Some(d), Some(_)) = (direction, location) {
            self.diags.push(Diagnostic::error(
                Code::DeckValue,
                Location::new(file, d.key.span),
                "`direction` goes with explicit `completions`; a well at a `location` is vertical",
            ));
            return None;
        }
        let direction = match direction {
            Some(d) => Direction::from_name(self.choice(file, d, schema::DIRECTIONS)?)?,
            None => Direction::Z,
        };
        match (location, explicit) {
            (Some(_), Some(e)) => {
                self.diags.push(Diagnostic::error(
                    Code::DeckDuplicateKey,
                    Location::new(file, e.key.span),
                    "give either `location` (with `layers`) or `completions`, not both",
                ));
                None
            }
            (None, None) => {
                self.diags.push(Diagnostic::error(
                    Code::DeckMissingKey,
                    at,
                    "a well needs `location = (i, j)` (with `layers`) or `completions = [(i, j, k) ...]`",
                ));
                None
            }
            (Some(loc), None) => {
                ws.completions = Some(Location::new(file, loc.value.span));
                self.column_completions(file, loc, layers, grid)
            }
            (None, Some(e)) => {
                ws.completions = Some(Location::new(file, e.value.span));
                self.listed_completions(file, e, layers, grid, direction)
            }
        }
    }

    /// `location = (i, j)` with optional `layers`: the column's cells.
    fn column_completions(
        &mut self,
        file: usize,
        loc: &Statement,
        layers: Option<&Statement>,
        grid: &Grid,
    ) -> Option<Vec<Completion>> {
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
                    Code::DeckValue,
                    Location::new(file, loc.value.span),
                    "`location` expects a column `(i, j)`",
                ));
                return None;
            }
        };
        if i < 1 || j < 1 || i > grid.nx as i64 || j > grid.ny as i64 {
            self.diags.push(Diagnostic::error(
                Code::WellCompletion,
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
                [a] => self.index_range(file, a, grid.nz, "layers", Code::WellCompletion)?,
                _ => {
                    self.diags.push(Diagnostic::error(
                        Code::DeckValue,
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
                .map(|k| completion(grid, i as usize - 1, j as usize - 1, k - 1, Direction::Z))
                .collect(),
        )
    }

    /// `completions = [(i, j, k) ...]`: the listed cells, each once, along
    /// `direction`; a cell with a range, `(28..35, 10, 2)`, is the cells
    /// along that axis, completed along it.
    fn listed_completions(
        &mut self,
        file: usize,
        e: &Statement,
        layers: Option<&Statement>,
        grid: &Grid,
        direction: Direction,
    ) -> Option<Vec<Completion>> {
        if let Some(l) = layers {
            self.diags.push(Diagnostic::error(
                Code::DeckValue,
                Location::new(file, l.key.span),
                "`layers` goes with `location`; explicit `completions` name their layers",
            ));
            return None;
        }
        let items = match e.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::List {
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
                    Code::DeckValue,
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
                    Code::DeckValue,
                    Location::new(file, item.span),
                    format!(
                        "expected a cell `(i, j, k)`, found {}",
                        crate::props::atom_words(&item.kind)
                    ),
                ));
                ok = false;
                continue;
            };
            if t.iter().any(|a| matches!(a.kind, AtomKind::Range { .. })) {
                match self.ranged_cells(file, t, item.span, grid) {
                    Some(cells) => {
                        for c in cells {
                            ok &= self.push_once(file, item.span, &mut out, c);
                        }
                    }
                    None => ok = false,
                }
                continue;
            }
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
                    Code::WellCompletion,
                    Location::new(file, item.span),
                    format!(
                        "the cell ({i}, {j}, {k}) lies outside the grid of {} x {} x {} cells",
                        grid.nx, grid.ny, grid.nz
                    ),
                ));
                ok = false;
                continue;
            }
            let c = completion(
                grid,
                i as usize - 1,
                j as usize - 1,
                k as usize - 1,
                direction,
            );
            ok &= self.push_once(file, item.span, &mut out, c);
        }
        if out.is_empty() && ok {
            self.diags.push(Diagnostic::error(
                Code::WellCompletion,
                Location::new(file, e.value.span),
                "a well needs at least one completed cell",
            ));
            return None;
        }
        ok.then_some(out)
    }

    /// Adds `c` unless its cell is completed already (an error then).
    fn push_once(
        &mut self,
        file: usize,
        span: Span,
        out: &mut Vec<Completion>,
        c: Completion,
    ) -> bool {
        if out.iter().any(|o| o.cell == c.cell) {
            self.diags.push(Diagnostic::error(
                Code::DeckDuplicateKey,
                Location::new(file, span),
                format!(
                    "the cell ({}, {}, {}) is completed twice",
                    c.i + 1,
                    c.j + 1,
                    c.k + 1
                ),
            ));
            return false;
        }
        out.push(c);
        true
    }

    /// The cells of a tuple with one range, `(28..35, 10, 2)`, completed
    /// along the axis of the range.
    fn ranged_cells(
        &mut self,
        file: usize,
        t: &[Atom],
        span: Span,
        grid: &Grid,
    ) -> Option<Vec<Completion>> {
        let ranges = t
            .iter()
            .filter(|a| matches!(a.kind, AtomKind::Range { .. }))
            .count();
        if t.len() != 3 || ranges != 1 {
            self.diags.push(Diagnostic::error(
                Code::DeckValue,
                Location::new(file, span),
                "a completed stretch is a cell with one range, `(28..35, 10, 2)`: three indices, one of them a range",
            ));
            return None;
        }
        let sizes = [grid.nx, grid.ny, grid.nz];
        let mut bounds = [(0, 0); 3];
        let mut along = Direction::Z;
        for (a, atom) in t.iter().enumerate() {
            bounds[a] = self.index_range(file, atom, sizes[a], AXES[a].0, Code::WellCompletion)?;
            if matches!(atom.kind, AtomKind::Range { .. }) {
                along = AXES[a].1;
            }
        }
        let [(i0, i1), (j0, j1), (k0, k1)] = bounds;
        let mut cells = Vec::new();
        for k in k0..=k1 {
            for j in j0..=j1 {
                for i in i0..=i1 {
                    cells.push(completion(grid, i - 1, j - 1, k - 1, along));
                }
            }
        }
        Some(cells)
    }
}
