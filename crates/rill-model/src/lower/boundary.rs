use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_boundary(
        &mut self,
        file: usize,
        block: &Block,
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
}
