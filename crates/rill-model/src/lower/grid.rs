use super::*;

/// A spacing key's value and where it stands.
struct Spacing {
    field: Field,
    loc: Location,
}

/// One axis' sizes (`dx` or `dy`), one per column or row.
struct AxisSizes {
    values: Vec<f64>,
    loc: Location,
}

/// Sizes that are zero, negative or not finite: how many, and the first.
#[derive(Clone, Copy)]
struct NotPositive {
    count: usize,
    first: Option<usize>,
}

fn not_positive(values: &[f64]) -> NotPositive {
    let bad = |v: &f64| *v <= 0.0 || !v.is_finite();
    NotPositive {
        count: values.iter().filter(|v| bad(v)).count(),
        first: values.iter().position(bad),
    }
}

impl<'s> Lowerer<'s> {
    pub(super) fn lower_grid(
        &mut self,
        file: usize,
        block: &Block,
        spans: &mut Spans,
    ) -> Option<Grid> {
        let shape = self.cell_counts(file, find(block, "cells")?)?;
        let Shape { nx, ny, nz } = shape;
        let one_per = |n: usize| Forms {
            layers: false,
            cells: false,
            columns: false,
            file: false,
            arithmetic: false,
            bare_list: Some(crate::props::BareList::Axis(n)),
            file_columns: false,
        };
        let dx = self.read_spacing(file, block, shape, "dx", one_per(nx));
        let dy = self.read_spacing(file, block, shape, "dy", one_per(ny));
        let dz = self.read_spacing(file, block, shape, "dz", Forms::THICKNESS);
        let top = self.read_spacing(file, block, shape, "top", Forms::TOP);
        let dx = self.axis_sizes(dx, nx, "dx", "one per column, NX");
        let dy = self.axis_sizes(dy, ny, "dy", "one per row, NY");
        spans.dx = dx.as_ref().map(|d| d.loc);
        spans.dy = dy.as_ref().map(|d| d.loc);
        spans.dz = dz.as_ref().map(|d| d.loc);
        let dz = dz.map(|s| s.field.into_cell_values(shape, Some(self.reuse)));
        let top = top.map(|s| match s.field {
            Field::Uniform(v) => vec![v; nx * ny],
            Field::Columns(v) => v,
            other => other.to_cells(Shape { nx, ny, nz: 1 }),
        });
        let (Some(dx), Some(dy), Some(dz), Some(top)) = (dx, dy, dz, top) else {
            return None;
        };
        let grid = Grid {
            nx,
            ny,
            nz,
            dx: dx.values,
            dy: dy.values,
            dz,
            top,
        };
        self.sizes_positive(&grid, spans).then_some(grid)
    }

    /// The grid size from `cells = NX x NY x NZ`.
    fn cell_counts(&mut self, file: usize, cells: &Statement) -> Option<Shape> {
        match cells.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Size(parts),
                span,
            }] => {
                if parts.len() != 3 || parts.contains(&0) {
                    self.diags.push(Diagnostic::error(
                        Code::GridCells,
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
                            Code::GridCells,
                            Location::new(file, *span),
                            format!("`cells` gives {found} cells; rill holds at most {MAX_CELLS} (a typo in a count?)"),
                        )
                        .with_note("every per-cell property takes 8 bytes a cell, re-checked on each edit"),
                    );
                    return None;
                }
                Some(Shape {
                    nx: parts[0] as usize,
                    ny: parts[1] as usize,
                    nz: parts[2] as usize,
                })
            }
            [] => None,
            _ => {
                self.diags.push(
                    Diagnostic::error(
                        Code::GridCells,
                        Location::new(file, cells.value.span),
                        "`cells` expects the grid size as NX x NY x NZ, e.g. `30 x 20 x 4`",
                    )
                    .with_note("a 2D areal grid is NX x NY x 1"),
                );
                None
            }
        }
    }

    /// A length-valued grid key (`dx`, `dy`, `dz`, `top`) in the given forms.
    fn read_spacing(
        &mut self,
        file: usize,
        block: &Block,
        shape: Shape,
        key: &str,
        forms: Forms,
    ) -> Option<Spacing> {
        let stmt = find(block, key)?;
        let expr = self.read_expr(
            file,
            &stmt.value,
            shape,
            Dim::LENGTH,
            Gauge::Refused,
            forms,
            key,
        )?;
        let field = evaluate(&expr, shape, Dim::LENGTH, &|_| None);
        let field = self.evaluated(file, key, Dim::LENGTH, field)?;
        Some(Spacing {
            field,
            loc: Location::new(file, stmt.value.span),
        })
    }

    /// A bare list for dx/dy was read as "columns"; reinterpret by axis and count.
    fn axis_sizes(
        &mut self,
        spacing: Option<Spacing>,
        n: usize,
        key: &str,
        what: &str,
    ) -> Option<AxisSizes> {
        let Spacing { field, loc } = spacing?;
        match field {
            Field::Uniform(v) => Some(AxisSizes {
                values: vec![v; n],
                loc,
            }),
            Field::Columns(v) | Field::Layers(v) if v.len() == n => {
                Some(AxisSizes { values: v, loc })
            }
            Field::Columns(v) | Field::Layers(v) => {
                self.diags.push(Diagnostic::error(
                    Code::GridArrayLength,
                    loc,
                    format!("`{key}` needs {n} values ({what}), found {}", v.len()),
                ));
                None
            }
            Field::Cells(_) => None,
        }
    }

    /// Sizes must be positive; report the first offender per key.
    fn sizes_positive(&mut self, grid: &Grid, spans: &Spans) -> bool {
        let mut ok = true;
        let dz_scan = kept(
            Some(self.reuse),
            "sizes not positive",
            &[grid.dz.shared().clone()],
            &[],
            || not_positive(&grid.dz),
        );
        for (key, scan, loc) in [
            ("dx", not_positive(&grid.dx), spans.dx),
            ("dy", not_positive(&grid.dy), spans.dy),
            ("dz", dz_scan, spans.dz),
        ] {
            if let Some(pos) = scan.first {
                ok = false;
                let which = match key {
                    "dx" => format!("column i = {}", pos + 1),
                    "dy" => format!("row j = {}", pos + 1),
                    _ => {
                        let (i, j, k) = grid.ijk(pos);
                        format!("cell ({}, {}, {})", i + 1, j + 1, k + 1)
                    }
                };
                let bad = scan.count;
                self.diags.push(
                    Diagnostic::error(
                        Code::GridSpacing,
                        loc.unwrap_or_default(),
                        format!("`{key}` must be positive; {bad} value(s) are zero or negative, the first at {which}"),
                    )
                    .with_note("an inactive cell is made with porosity 0, not with a zero size"),
                );
            }
        }
        ok
    }
}
