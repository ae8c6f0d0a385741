use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn lower_initial(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        spans: &mut Spans,
    ) -> Option<Initial> {
        let stmt = find(block, "pressure")?;
        spans.initial = Some(Location::new(file, stmt.value.span));
        if let Some((p, depth)) = self.pressure_at_depth(file, stmt)? {
            return Some(match depth {
                Some(d) => Initial::Datum {
                    pressure: p,
                    depth: d,
                },
                None => Initial::Cells(Field::Uniform(p).into_cell_values(shape, Some(self.reuse))),
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
            field.into_cell_values(shape, Some(self.reuse)),
        ))
    }
}
