use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_boundary(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        spans: &mut Spans,
    ) -> Option<Boundary> {
        let name = label_of(block)?;
        let side = find(block, "side")
            .and_then(|s| self.choice(file, s, schema::SIDES))
            .and_then(Side::from_name);
        let pressure_at = find(block, "pressure")
            .map(|s| Location::new(file, s.value.span))
            .unwrap_or(Location::new(file, block.name.span));
        spans.boundaries.push(pressure_at);
        let pressure = find(block, "pressure").and_then(|s| match self.pressure_at_depth(file, s) {
            Some(Some(v)) => Some(v),
            Some(None) => {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, s.value.span),
                    "a boundary pressure is one value, optionally `at` a depth: `3150 psi at 7150 ft`",
                ));
                None
            }
            None => None,
        });
        let select = self.boundary_selection(file, block, grid);
        let (pressure, datum) = pressure?;
        let boundary = Boundary {
            name,
            side: side?,
            pressure,
            datum,
            select: select?,
            origin: Origin {
                file,
                span: block.name.span,
            },
        };
        let holds = boundary.cells(grid);
        self.side_selection_holds(
            file,
            block,
            "boundary",
            &boundary.name,
            boundary.side,
            &holds,
        )
        .then_some(boundary)
    }

    /// False, with a `grid.index` error on the first selector (or the
    /// name), when a boundary's or an aquifer's `i`, `j`, `k` leave no
    /// cell of its side (`holds` is empty).
    pub(super) fn side_selection_holds(
        &mut self,
        file: usize,
        block: &Block,
        what: &str,
        name: &str,
        side: Side,
        holds: &[usize],
    ) -> bool {
        if !holds.is_empty() {
            return true;
        }
        let at = ["i", "j", "k"]
            .iter()
            .find_map(|k| find(block, k))
            .map_or(Location::new(file, block.name.span), |s| {
                Location::new(file, s.value.span)
            });
        self.diags.push(Diagnostic::error(
            Code::GridIndex,
            at,
            format!(
                "{what} \"{name}\" selects no face on the {} side: its `i`, `j`, `k` miss the side's cells",
                side.name()
            ),
        ));
        false
    }

    /// The boundaries, or fewer when two hold one outer face
    /// (`boundary.overlap`, on the later one; the case then does not run).
    pub(super) fn without_overlap(
        &mut self,
        boundaries: Vec<Boundary>,
        grid: &Grid,
    ) -> Vec<Boundary> {
        let mut holder: HashMap<(usize, u8), usize> = HashMap::new();
        let mut keep = vec![true; boundaries.len()];
        for (n, b) in boundaries.iter().enumerate() {
            let side = b.side as u8;
            let clash = b
                .cells(grid)
                .into_iter()
                .find_map(|c| match holder.get(&(c, side)) {
                    Some(&other) => Some((c, other)),
                    None => {
                        holder.insert((c, side), n);
                        None
                    }
                });
            if let Some((c, other)) = clash {
                let (i, j, k) = grid.ijk(c);
                let first = &boundaries[other];
                self.diags.push(
                    Diagnostic::error(
                        Code::BoundaryOverlap,
                        Location::new(b.origin.file, b.origin.span),
                        format!(
                            "boundary \"{}\" holds faces that boundary \"{}\" already holds (the {} face of cell ({}, {}, {}), and maybe more)",
                            b.name,
                            first.name,
                            b.side.name(),
                            i + 1,
                            j + 1,
                            k + 1
                        ),
                    )
                    .with_label(
                        Location::new(first.origin.file, first.origin.span),
                        "the first boundary on these faces",
                    )
                    .with_note("restrict one of them with `i`, `j` or `k` so that they share no face"),
                );
                keep[n] = false;
            }
        }
        boundaries
            .into_iter()
            .zip(keep)
            .filter_map(|(b, k)| k.then_some(b))
            .collect()
    }

    /// The `i`, `j`, `k` selectors of a boundary, an aquifer or a fault
    /// (1-based in the deck).
    pub(super) fn boundary_selection(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
    ) -> Option<Selection> {
        let mut select = Selection::default();
        let mut ok = true;
        for (axis, n) in [("i", grid.nx), ("j", grid.ny), ("k", grid.nz)] {
            let Some(stmt) = find(block, axis) else {
                continue;
            };
            let [atom] = stmt.value.atoms.as_slice() else {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, stmt.value.span),
                    format!("`{axis}` takes one index or one range like `2..5`"),
                ));
                ok = false;
                continue;
            };
            match self.index_range(file, atom, n, axis, Code::GridIndex) {
                Some((lo, hi)) => {
                    let r = Some((lo - 1, hi - 1));
                    match axis {
                        "i" => select.i = r,
                        "j" => select.j = r,
                        _ => select.k = r,
                    }
                }
                None => ok = false,
            }
        }
        ok.then_some(select)
    }
}
