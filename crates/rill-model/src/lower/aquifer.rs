use super::*;
use rill_units::factors::PSI;

impl<'s> Lowerer<'s> {
    /// One `aquifer` block: its side, selectors and the three positive
    /// numbers of the Fetkovich model. A missing key was reported by the
    /// structure check; a value that is not positive is reported here and
    /// drops the aquifer (the case then does not run).
    pub(super) fn lower_aquifer(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
    ) -> Option<Aquifer> {
        let name = label_of(block)?;
        let side = find(block, "side")
            .and_then(|s| self.choice(file, s, schema::SIDES))
            .and_then(Side::from_name);
        let water_volume = self.positive(file, block, "water_volume", Dim::RESERVOIR_VOLUME);
        let compressibility = self.positive(file, block, "compressibility", Dim::COMPRESSIBILITY);
        let productivity = self.positive(
            file,
            block,
            "productivity",
            Dim::RESERVOIR_RATE_PER_PRESSURE,
        );
        let select = self.boundary_selection(file, block, grid);
        let aquifer = Aquifer {
            name,
            side: side?,
            select: select?,
            water_volume: water_volume?,
            compressibility: compressibility?,
            productivity: productivity?,
            origin: Origin {
                file,
                span: block.name.span,
            },
        };
        let holds = aquifer.cells(grid);
        self.side_selection_holds(file, block, "aquifer", &aquifer.name, aquifer.side, &holds)
            .then_some(aquifer)
    }

    /// A key's quantity, required to be above zero: `deck.out-of-range`
    /// for a volume or productivity, `sanity.compressibility` for a
    /// compressibility (the code every compressibility answers to), which
    /// also warns above 1e-3 1/psi as it does for rock and fluid.
    fn positive(&mut self, file: usize, block: &Block, key: &str, dim: Dim) -> Option<f64> {
        let stmt = find(block, key)?;
        let v = self.quantity(file, stmt, dim, Gauge::Refused)?;
        let at = Location::new(file, stmt.value.span);
        let compressibility = dim == Dim::COMPRESSIBILITY;
        if v <= 0.0 {
            let code = if compressibility {
                Code::SanityCompressibility
            } else {
                Code::DeckOutOfRange
            };
            let why = match key {
                "water_volume" => "an aquifer holds a positive volume of water",
                "productivity" => "the influx is the productivity times the pressure difference, so a productivity of zero or less gives no aquifer or one that drains the reservoir",
                _ => "the aquifer's pressure falls by the influx over c_t W_i, which needs a positive compressibility",
            };
            self.diags.push(Diagnostic::error(
                code,
                at,
                format!("the aquifer's `{key}` must be above zero: {why}"),
            ));
            return None;
        }
        if compressibility && v > 1e-3 / PSI {
            self.diags.push(Diagnostic::warning(
                Code::SanityCompressibility,
                at,
                format!(
                    "aquifer compressibility of {} 1/psi is above 1e-3 1/psi; water plus rock is about 1e-6 to 2e-5 1/psi (common practice, no published source)",
                    crate::values::short_number(v * PSI)
                ),
            ));
        }
        Some(v)
    }

    /// The aquifers, or fewer when one holds an outer face that a boundary
    /// or an earlier aquifer already holds (`boundary.overlap`, on the
    /// aquifer; the case then does not run), or shares its name with a
    /// boundary (`deck.duplicate-name`: the two would write the same series).
    pub(super) fn aquifers_without_overlap(
        &mut self,
        aquifers: Vec<Aquifer>,
        boundaries: &[Boundary],
        grid: &Grid,
    ) -> Vec<Aquifer> {
        // Holder of each (cell, side): a boundary by its name, or an aquifer.
        let mut holder: HashMap<(usize, u8), (String, &'static str, Origin)> = HashMap::new();
        for b in boundaries {
            for c in b.cells(grid) {
                holder
                    .entry((c, b.side as u8))
                    .or_insert_with(|| (b.name.clone(), "boundary", b.origin));
            }
        }
        let mut keep = Vec::with_capacity(aquifers.len());
        for a in &aquifers {
            if let Some(b) = boundaries.iter().find(|b| b.name == a.name) {
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckDuplicateName,
                        Location::new(a.origin.file, a.origin.span),
                        format!(
                            "aquifer \"{}\" has the name of a boundary; their series would share one column name",
                            a.name
                        ),
                    )
                    .with_label(Location::new(b.origin.file, b.origin.span), "the boundary"),
                );
                keep.push(false);
                continue;
            }
            let side = a.side as u8;
            let clash = a
                .cells(grid)
                .into_iter()
                .find_map(|c| holder.get(&(c, side)).map(|h| (c, h.clone())));
            if let Some((c, (other, kind, origin))) = clash {
                let (i, j, k) = grid.ijk(c);
                self.diags.push(
                    Diagnostic::error(
                        Code::BoundaryOverlap,
                        Location::new(a.origin.file, a.origin.span),
                        format!(
                            "aquifer \"{}\" holds faces that {kind} \"{other}\" already holds (the {} face of cell ({}, {}, {}), and maybe more)",
                            a.name,
                            a.side.name(),
                            i + 1,
                            j + 1,
                            k + 1
                        ),
                    )
                    .with_label(
                        Location::new(origin.file, origin.span),
                        format!("the first {kind} on these faces"),
                    )
                    .with_note("restrict one of them with `i`, `j` or `k` so that they share no face"),
                );
                keep.push(false);
                continue;
            }
            for c in a.cells(grid) {
                holder.insert((c, side), (a.name.clone(), "aquifer", a.origin));
            }
            keep.push(true);
        }
        aquifers
            .into_iter()
            .zip(keep)
            .filter_map(|(a, k)| k.then_some(a))
            .collect()
    }
}
