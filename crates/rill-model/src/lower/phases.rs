//! The phases of a deck: one `fluid`, or `oil` and `water` with `relperm`
//! blocks. Which blocks and keys belong to which kind of deck
//! (`deck.phases`), the curves of each cell (`rock.relperm` with its
//! patches), the initial saturation, and whether a well's control fits
//! the deck and its role (`well.control-phase`).

use super::*;

/// A block skeleton offered by fixes that add a missing phase block.
fn phase_skeleton(name: &str) -> &'static str {
    match name {
        "oil" => "oil {\n  viscosity = 2 cP\n  fvf = 1.2 rb/stb\n  density = 52 lb/ft^3\n}",
        _ => "water {\n  viscosity = 0.5 cP\n  fvf = 1.01 rb/stb\n  density = 63.5 lb/ft^3\n}",
    }
}

/// The skeleton of a `relperm` block, for the fix of a deck without one.
const RELPERM_SKELETON: &str = "relperm \"rock\" {\n  model = corey\n  swc = 0.2\n  sor = 0.2\n  krw_end = 0.3\n  kro_end = 0.8\n  nw = 2\n  no = 2\n}\n\n";

/// The blocks that make a deck single-phase or oil-water.
pub(super) struct PhaseBlocks<'t> {
    /// The `fluid` block of a single-phase deck.
    pub fluid: Option<&'t Found<'t>>,
    /// The `oil` and `water` blocks of an oil-water deck (both present).
    pub oil_water: Option<(&'t Found<'t>, &'t Found<'t>)>,
}

/// Where a block stands, for labels and fixes.
fn name_at(f: &Found) -> Location {
    Location::new(f.file, f.block.name.span)
}

/// The whole block with the line break after it, for a fix that removes it.
fn block_with_line(text: &str, b: &Block) -> Span {
    let end = text.get(b.span.end..).map_or(b.span.end, |rest| {
        b.span.end + rest.find('\n').map_or(rest.len(), |p| p + 1)
    });
    Span::new(b.span.start, end)
}

impl<'s> Lowerer<'s> {
    /// Sorts out `fluid`, `oil` and `water`: a single-phase deck has one
    /// `fluid`, an oil-water deck both `oil` and `water` and no `fluid`.
    /// Sets `two_phase` for the rest of the lowering.
    pub(super) fn phase_blocks<'t>(
        &mut self,
        blocks: &'t HashMap<&'static str, Vec<Found<'t>>>,
        main: Location,
    ) -> PhaseBlocks<'t> {
        let first = |name: &str| blocks.get(name).and_then(|v| v.first());
        let (fluid, oil, water) = (first("fluid"), first("oil"), first("water"));
        self.two_phase = oil.is_some() || water.is_some();
        if !self.two_phase {
            return PhaseBlocks {
                fluid: self.require(blocks, "fluid", main),
                oil_water: None,
            };
        }
        if let Some(f) = fluid {
            let other = oil.or(water).map(name_at).unwrap_or(main);
            let mut d = Diagnostic::error(
                Code::DeckPhases,
                name_at(f),
                "a deck has one `fluid` (a single-phase deck) or `oil` and `water` (an oil-water deck), not both",
            )
            .with_label(other, "an oil-water block");
            if oil.is_some() && water.is_some() {
                let text = self.files[f.file].text.clone();
                d = d.with_replacement(
                    "remove the `fluid` block (keep oil and water)",
                    Location::new(f.file, block_with_line(&text, f.block)),
                    "",
                );
            }
            self.diags.push(d);
        }
        match (oil, water) {
            (Some(o), Some(w)) => PhaseBlocks {
                fluid: None,
                oil_water: Some((o, w)),
            },
            (Some(present), None) | (None, Some(present)) => {
                let (has, lacks) = if oil.is_some() {
                    ("oil", "water")
                } else {
                    ("water", "oil")
                };
                let end = Location::new(
                    present.file,
                    Span::new(present.block.span.end, present.block.span.end),
                );
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckPhases,
                        name_at(present),
                        format!(
                            "an oil-water deck needs both `oil` and `water`; it has `{has}` but no `{lacks}` block"
                        ),
                    )
                    .with_replacement(
                        format!("add a `{lacks}` block"),
                        end,
                        format!("\n\n{}", phase_skeleton(lacks)),
                    ),
                );
                PhaseBlocks {
                    fluid: None,
                    oil_water: None,
                }
            }
            (None, None) => PhaseBlocks {
                fluid,
                oil_water: None,
            },
        }
    }

    /// The `relperm` blocks: lowered in an oil-water deck (where at least
    /// one is needed), a `deck.phases` error each in a single-phase deck.
    /// `None` when one of them did not lower.
    pub(super) fn relperm_blocks(
        &mut self,
        blocks: &HashMap<&'static str, Vec<Found>>,
        two_phase: bool,
        main: Location,
    ) -> Option<Vec<Relperm>> {
        let found = blocks.get("relperm").map(|v| v.as_slice()).unwrap_or(&[]);
        if !two_phase {
            for f in found {
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckPhases,
                        name_at(f),
                        "a `relperm` block belongs to an oil-water deck, and this deck is single-phase (it has a `fluid` block)",
                    )
                    .with_note("for oil and water, replace `fluid` by an `oil` and a `water` block"),
                );
            }
            return Some(Vec::new());
        }
        if found.is_empty() {
            self.diags.push(
                Diagnostic::error(
                    Code::DeckMissingKey,
                    main,
                    "an oil-water deck needs a `relperm` block: the saturation functions of its rock",
                )
                .with_replacement("add a `relperm` block", main, RELPERM_SKELETON),
            );
            return None;
        }
        let lowered: Vec<Relperm> = found
            .iter()
            .filter_map(|f| self.lower_relperm(f.file, f.block))
            .collect();
        (lowered.len() == found.len()).then_some(lowered)
    }

    /// The phases of the deck: the fluid (the oil of an oil-water deck)
    /// and, for an oil-water deck, the water, the curves of every cell and
    /// the initial saturation. The second part is `Some(None)` for a
    /// single-phase deck and `None` when an oil-water part did not lower.
    #[allow(clippy::type_complexity)]
    pub(super) fn lower_phases(
        &mut self,
        phases: &PhaseBlocks,
        relperms: Option<Vec<Relperm>>,
        (rock, initial): (Option<&Found>, Option<&Found>),
        grid: &Grid,
        datum_pressure: Option<f64>,
        spans: &mut Spans,
    ) -> (Option<Fluid>, Option<Option<OilWater>>) {
        let shape = Shape {
            nx: grid.nx,
            ny: grid.ny,
            nz: grid.nz,
        };
        let cell_relperm = match (rock, &relperms) {
            (Some(f), Some(r)) => self.lower_cell_relperm(f.file, f.block, shape, r),
            _ => None,
        };
        let saturation = initial.and_then(|f| self.lower_saturation(f.file, f.block, grid, spans));
        let Some((oil, water)) = phases.oil_water else {
            let fluid = phases
                .fluid
                .and_then(|f| self.lower_fluid(f.file, f.block, datum_pressure, spans));
            // Fixes that move a volume between reservoir and surface
            // conditions convert with the fluid's fvf.
            self.fvf = fluid.as_ref().map(|f| f.fvf);
            let single = (!self.two_phase).then_some(None);
            return (fluid, single);
        };
        // The phases' fvfs differ: no volume conversion is offered.
        self.fvf = None;
        let mut water_spans = Spans::default();
        let water = self.lower_fluid(water.file, water.block, datum_pressure, &mut water_spans);
        spans.water = FluidSpans {
            viscosity: water_spans.viscosity,
            fvf: water_spans.fvf,
            density: water_spans.density,
            compressibility: water_spans.fluid_compressibility,
        };
        let oil = self.lower_fluid(oil.file, oil.block, datum_pressure, spans);
        let oil_water = match (water, relperms, cell_relperm, saturation) {
            (Some(water), Some(relperms), Some(cell_relperm), Some(saturation)) => {
                Some(Some(OilWater {
                    water,
                    relperms,
                    cell_relperm,
                    saturation,
                }))
            }
            _ => None,
        };
        (oil, oil_water)
    }

    /// A `deck.phases` error for every oil-water key in a single-phase deck's `block`.
    fn refuse_keys(&mut self, file: usize, block: &Block, keys: &[&str]) {
        for item in &block.items {
            match item {
                Item::Statement(s) if keys.contains(&s.key.name.as_str()) => {
                    self.diags.push(
                        Diagnostic::error(
                            Code::DeckPhases,
                            Location::new(file, s.key.span),
                            format!(
                                "`{}` belongs to an oil-water deck, and this deck is single-phase (it has a `fluid` block)",
                                s.key.name
                            ),
                        )
                        .with_note("for oil and water, replace `fluid` by an `oil` and a `water` block"),
                    );
                }
                Item::Block(child) if child.name.name == "patch" => {
                    self.refuse_keys(file, child, keys);
                }
                _ => {}
            }
        }
    }

    /// The curves of every cell: `rock.relperm` (which may be omitted when
    /// there is one `relperm` block) with its patches. In a single-phase
    /// deck the key is refused and `None` returned.
    pub(super) fn lower_cell_relperm(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        relperms: &[Relperm],
    ) -> Option<CellRelperm> {
        if !self.two_phase {
            self.refuse_keys(file, block, &["relperm"]);
            return None;
        }
        let mut ok = true;
        let base = match find(block, "relperm") {
            Some(s) => {
                let r = self.relperm_ref(file, s, relperms);
                ok &= r.is_some();
                r
            }
            None if relperms.len() == 1 => Some(0),
            None => {
                let names: Vec<String> =
                    relperms.iter().map(|r| format!("\"{}\"", r.name)).collect();
                let mut d = Diagnostic::error(
                    Code::DeckMissingKey,
                    Location::new(file, block.name.span),
                    format!(
                        "`rock` needs `relperm = \"...\"`: the deck has {} `relperm` blocks ({}), so the rock must say which its cells use",
                        relperms.len(),
                        names.join(", ")
                    ),
                )
                .with_note("patches may then give other curves to parts of the grid");
                if let Some(first) = relperms.first() {
                    d = d.with_replacement(
                        format!("add `relperm = \"{}\"`", first.name),
                        Location::new(file, Span::new(block.open.end, block.open.end)),
                        format!("\n  relperm = \"{}\"", crate::lower::escape(&first.name)),
                    );
                }
                self.diags.push(d);
                ok = false;
                None
            }
        };
        let mut patches: Vec<(Vec<usize>, usize)> = Vec::new();
        for item in &block.items {
            let Item::Block(p) = item else { continue };
            if p.name.name != "patch" {
                continue;
            }
            let Some(s) = find(p, "relperm") else {
                continue;
            };
            let r = self.relperm_ref(file, s, relperms);
            // The patch's header has its own errors, reported by the rock.
            let cells = self.quiet(|this| this.patch_cells(file, p, shape));
            match (r, cells) {
                (Some(r), Some((cells, _))) => patches.push((cells, r)),
                _ => ok = false,
            }
        }
        if !ok {
            return None;
        }
        let mut cell = vec![base? as u32; shape.cells()];
        for (cells, r) in patches {
            for c in cells {
                cell[c] = r as u32;
            }
        }
        Some(CellRelperm(Arc::new(cell)))
    }

    /// Runs `f` and drops the diagnostics it raised (they are raised again elsewhere).
    fn quiet<T>(&mut self, f: impl FnOnce(&mut Self) -> T) -> T {
        let before = self.diags.len();
        let out = f(self);
        self.diags.truncate(before);
        out
    }

    /// The index of the `relperm` block that `relperm = "label"` names.
    fn relperm_ref(&mut self, file: usize, s: &Statement, relperms: &[Relperm]) -> Option<usize> {
        let (label, span) = match s.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Str { value, unit: None },
                span,
            }] => (value, *span),
            [] => return None,
            _ => {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, s.value.span),
                    "`relperm` expects the label of a `relperm` block in quotes, e.g. `relperm = \"channel sand\"`",
                ));
                return None;
            }
        };
        if let Some(i) = relperms.iter().position(|r| &r.name == label) {
            return Some(i);
        }
        let names: Vec<String> = relperms.iter().map(|r| format!("\"{}\"", r.name)).collect();
        let mut d = Diagnostic::error(
            Code::DeckReference,
            Location::new(file, span),
            format!("no `relperm` block is labelled \"{label}\""),
        )
        .with_note(format!("relperm blocks: {}", names.join(", ")));
        if let Some(near) = schema::nearest(label, relperms.iter().map(|r| r.name.as_str())) {
            d = d.with_replacement(
                format!("replace by \"{near}\""),
                Location::new(file, span),
                format!("\"{}\"", crate::lower::escape(near)),
            );
        }
        self.diags.push(d);
        None
    }

    /// `water_contact` or `water_saturation` of the `initial` block. In a
    /// single-phase deck both are refused and `None` returned.
    pub(super) fn lower_saturation(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        spans: &mut Spans,
    ) -> Option<InitialSaturation> {
        if !self.two_phase {
            self.refuse_keys(file, block, &["water_contact", "water_saturation"]);
            return None;
        }
        let contact = find(block, "water_contact");
        let given = find(block, "water_saturation");
        match (contact, given) {
            (Some(_), Some(g)) => {
                self.diags.push(Diagnostic::error(
                    Code::DeckDuplicateKey,
                    Location::new(file, g.key.span),
                    "give either `water_contact` (saturations in equilibrium) or `water_saturation` (given directly), not both",
                ));
                None
            }
            (None, None) => {
                let (_, deep) = derived::depth_range(grid);
                let base = derived::grid_base(grid).max(deep);
                let ft = base / rill_units::factors::FT;
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckMissingKey,
                        Location::new(file, block.name.span),
                        "an oil-water deck's `initial` needs `water_contact = <depth>` (saturations in capillary-gravity equilibrium) or `water_saturation = ...` (given directly)",
                    )
                    .with_replacement(
                        "add `water_contact` at the base of the grid",
                        Location::new(file, Span::new(block.open.end, block.open.end)),
                        format!("\n  water_contact = {} ft", crate::values::short_number(ft.ceil())),
                    ),
                );
                None
            }
            (Some(c), None) => {
                spans.water_contact = Some(Location::new(file, c.value.span));
                let depth = self.quantity(file, c, Dim::LENGTH, Gauge::Refused)?;
                Some(InitialSaturation::Contact { depth })
            }
            (None, Some(g)) => {
                spans.water_saturation = Some(Location::new(file, g.value.span));
                let shape = Shape {
                    nx: grid.nx,
                    ny: grid.ny,
                    nz: grid.nz,
                };
                let field =
                    self.read_field(file, g, shape, Dim::NONE, Gauge::Refused, Forms::PROPERTY)?;
                Some(InitialSaturation::Cells(
                    field.into_cell_values(shape, Some(self.reuse)),
                ))
            }
        }
    }

    /// Whether `control` fits the deck and the well's role: `rate` in a
    /// single-phase deck, `oil_rate` or `liquid_rate` for an oil-water
    /// producer, `water_rate` for an oil-water injector. Reports and
    /// returns false when it does not.
    pub(super) fn control_fits(
        &mut self,
        file: usize,
        stmt: &Statement,
        control: Control,
        role: Option<Role>,
    ) -> bool {
        let word = control.word();
        let Some(Atom { span, .. }) = stmt.value.atoms.first() else {
            return true;
        };
        let at = Location::new(file, *span);
        let replace = |d: Diagnostic, by: &[&str]| {
            by.iter().fold(d, |d, w| {
                d.with_replacement(format!("replace by `{w}`"), at, *w)
            })
        };
        match (self.two_phase, control, role) {
            (_, Control::Bhp(_) | Control::Shut, _) => true,
            (false, Control::Rate(_), _)
            | (true, Control::OilRate(_) | Control::LiquidRate(_), Some(Role::Producer) | None)
            | (true, Control::WaterRate(_), Some(Role::Injector) | None) => true,
            (false, _, _) => {
                let d = Diagnostic::error(
                    Code::DeckPhases,
                    at,
                    format!(
                        "`{word}` is a control of an oil-water deck, and this deck is single-phase (it has a `fluid` block): its surface rate is `rate`"
                    ),
                );
                self.diags.push(replace(d, &["rate"]));
                false
            }
            (true, Control::Rate(_), role) => {
                let by: &[&str] = match role {
                    Some(Role::Producer) => &["oil_rate", "liquid_rate"],
                    Some(Role::Injector) => &["water_rate"],
                    None => &["oil_rate", "liquid_rate", "water_rate"],
                };
                let d = Diagnostic::error(
                    Code::DeckValue,
                    at,
                    "`rate` is the control of a single-phase deck; in an oil-water deck a rate names its phase: `oil_rate` or `liquid_rate` for a producer, `water_rate` for an injector",
                );
                self.diags.push(replace(d, by));
                false
            }
            (true, _, Some(Role::Injector)) => {
                let d = Diagnostic::error(
                    Code::WellControlPhase,
                    at,
                    format!(
                        "`{word}` is a producer's control; an injector injects water: `water_rate`"
                    ),
                );
                self.diags.push(replace(d, &["water_rate"]));
                false
            }
            (true, _, _) => {
                let d = Diagnostic::error(
                    Code::WellControlPhase,
                    at,
                    "`water_rate` is an injector's control; a producer holds `oil_rate` (surface oil) or `liquid_rate` (surface oil plus water)",
                );
                self.diags.push(replace(d, &["oil_rate", "liquid_rate"]));
                false
            }
        }
    }

    /// A producer's `max_water_cut`: a fraction in (0, 1], oil-water
    /// producers only. `Some(None)` without the key, `None` on an error.
    pub(super) fn max_water_cut(
        &mut self,
        file: usize,
        block: &Block,
        role: Option<Role>,
        ws: &mut WellSpans,
    ) -> Option<Option<f64>> {
        let Some(s) = find(block, "max_water_cut") else {
            return Some(None);
        };
        ws.max_water_cut = Some(Location::new(file, s.value.span));
        if !self.two_phase {
            self.refuse_keys(file, block, &["max_water_cut"]);
            return None;
        }
        if role == Some(Role::Injector) {
            self.diags.push(Diagnostic::error(
                Code::WellControlPhase,
                Location::new(file, s.key.span),
                "`max_water_cut` belongs to producers: it shuts a producer whose surface water cut exceeds it, and an injector produces nothing",
            ));
            return None;
        }
        let v = self.number(file, s)?;
        if v <= 0.0 || v > 1.0 {
            self.diags.push(Diagnostic::error(
                Code::DeckOutOfRange,
                Location::new(file, s.value.span),
                format!(
                    "`max_water_cut` is a fraction above 0 and at most 1 (`0.95` or `95 %`), found {}",
                    crate::values::short_number(v)
                ),
            ));
            return None;
        }
        Some(Some(v))
    }
}
