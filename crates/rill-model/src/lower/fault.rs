use super::*;

impl<'s> Lowerer<'s> {
    /// A `fault` block: its side, selection and multiplier. `fault.faces`
    /// when a selected cell has no neighbour across the side.
    pub(super) fn lower_fault(
        &mut self,
        file: usize,
        block: &Block,
        grid: &Grid,
        spans: &mut Spans,
    ) -> Option<Fault> {
        let name = label_of(block)?;
        let side = find(block, "side")
            .and_then(|s| self.choice(file, s, schema::SIDES))
            .and_then(Side::from_name);
        let multiplier_stmt = find(block, "multiplier");
        spans.faults.push(
            multiplier_stmt
                .map(|s| Location::new(file, s.value.span))
                .unwrap_or(Location::new(file, block.name.span)),
        );
        let multiplier = multiplier_stmt.and_then(|s| {
            let m = self.number(file, s)?;
            if m < 0.0 {
                self.diags.push(Diagnostic::error(
                    Code::DeckOutOfRange,
                    Location::new(file, s.value.span),
                    format!("a fault `multiplier` is 0 or more (0 seals the faces), found {m}"),
                ));
                return None;
            }
            Some(m)
        });
        let select = self.boundary_selection(file, block, grid);
        let fault = Fault {
            name,
            side: side?,
            select: select?,
            multiplier: multiplier?,
            origin: Origin {
                file,
                span: block.name.span,
            },
        };
        let cells = fault.cells(grid);
        let edge: Vec<usize> = cells
            .iter()
            .copied()
            .filter(|&c| derived::neighbor(grid, c, fault.side).is_none())
            .collect();
        if let Some(&first) = edge.first() {
            let (i, j, k) = grid.ijk(first);
            let at = ["i", "j", "k", "side"]
                .iter()
                .find_map(|k| find(block, k))
                .map_or(Location::new(file, block.name.span), |s| {
                    Location::new(file, s.value.span)
                });
            self.diags.push(
                Diagnostic::error(
                    Code::FaultFaces,
                    at,
                    format!(
                        "fault \"{}\" selects {} of {} face(s) on the grid's {} edge, with no cell across (the first of cell ({}, {}, {}))",
                        fault.name,
                        edge.len(),
                        cells.len(),
                        fault.side.name(),
                        i + 1,
                        j + 1,
                        k + 1
                    ),
                )
                .with_note("a fault scales faces between two cells: restrict `i`, `j` or `k` to cells with a neighbour on that side (a constant-pressure edge is a `boundary`)"),
            );
            return None;
        }
        Some(fault)
    }
}
