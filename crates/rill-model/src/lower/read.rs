use super::*;

impl<'s> Lowerer<'s> {
    pub(super) fn text_value(&mut self, file: usize, stmt: &Statement) -> Option<String> {
        match stmt.value.atoms.as_slice() {
            [Atom {
                kind: AtomKind::Str { value, unit: None },
                ..
            }] => Some(value.clone()),
            _ => {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, stmt.value.span),
                    format!("`{}` expects text in quotes", stmt.key.name),
                ));
                None
            }
        }
    }

    /// The items of a list value `[a b c] unit`, each in SI with its span: a
    /// unit after `]` applies to every item, an item may carry its own.
    /// `None` when the value is not one list (the caller says what it
    /// expected); `Some(None)` when an item is not a number of `dim` (said
    /// here, `item` describing what an item should be).
    pub(super) fn number_list(
        &mut self,
        file: usize,
        stmt: &Statement,
        dim: Dim,
        item: &str,
    ) -> Option<Option<Vec<(f64, Span)>>> {
        let key = stmt.key.name.as_str();
        let [Atom {
            kind: AtomKind::List { items, unit, .. },
            ..
        }] = stmt.value.atoms.as_slice()
        else {
            return None;
        };
        let mut out = Vec::with_capacity(items.len());
        let mut ok = true;
        for it in items {
            let AtomKind::Number {
                value,
                unit: own_unit,
                ..
            } = &it.kind
            else {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
                    Location::new(file, it.span),
                    format!(
                        "each item of `{key}` is {item}, found {}",
                        crate::props::atom_words(&it.kind)
                    ),
                ));
                ok = false;
                continue;
            };
            let unit = own_unit.as_ref().or(unit.as_ref());
            match to_si(
                &mut self.reporter(file),
                *value,
                it.span,
                unit,
                dim,
                Gauge::Refused,
                key,
            ) {
                Some(v) => out.push((v, it.span)),
                None => ok = false,
            }
        }
        Some(ok.then_some(out))
    }

    /// A single quantity of the given dimension.
    pub(super) fn quantity(
        &mut self,
        file: usize,
        stmt: &Statement,
        dim: Dim,
        gauge: Gauge,
    ) -> Option<f64> {
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
                    Code::DeckValue,
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

    pub(super) fn choice(
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
                    Code::DeckChoice,
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
            Code::DeckChoice,
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

    pub(super) fn number(&mut self, file: usize, stmt: &Statement) -> Option<f64> {
        self.quantity(file, stmt, Dim::NONE, Gauge::Refused)
    }

    /// `p` or `p at depth`. `Some(None)` when the value is some other form.
    pub(super) fn pressure_at_depth(
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
                            Code::DeckValue,
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
                    Code::DeckValue,
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

    pub(super) fn read_field(
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
        self.evaluated(
            file,
            &stmt.key.name,
            dim,
            evaluate(&expr, shape, dim, &|_| None),
        )
    }

    /// The value of an evaluation, or `None` after reporting why it has none.
    pub(super) fn evaluated(
        &mut self,
        file: usize,
        key: &str,
        dim: Dim,
        result: Result<Field, Failed>,
    ) -> Option<Field> {
        match result {
            Ok(field) => Some(field),
            Err(failed) => {
                self.diags.extend(failed.diagnostic(file, key, dim));
                None
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    pub(super) fn read_expr(
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
        let mut reader = PropReader {
            shape,
            source: self.source,
            deck_path,
            cache: self.reuse,
            files: &mut files,
        };
        let mut r = Reporter {
            file,
            diags: &mut self.diags,
            fvf: self.fvf,
        };
        let expr = reader.read(&mut r, value, dim, gauge, forms, key);
        self.files = files;
        expr
    }

    /// A 1-based index or inclusive range within `1..=n`.
    pub(super) fn index_range(
        &mut self,
        file: usize,
        atom: &Atom,
        n: usize,
        axis: &str,
        code: Code,
    ) -> Option<(usize, usize)> {
        let (lo, hi) = match &atom.kind {
            AtomKind::Range { start, end } => (*start, *end),
            AtomKind::Number {
                value, unit: None, ..
            } if value.fract() == 0.0 => (*value as i64, *value as i64),
            other => {
                self.diags.push(Diagnostic::error(
                    Code::DeckValue,
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

    pub(super) fn tuple_indices(
        &mut self,
        file: usize,
        items: &[Atom],
        span: Span,
        n: usize,
    ) -> Option<Vec<i64>> {
        if items.len() != n {
            self.diags.push(Diagnostic::error(
                Code::DeckValue,
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
                        Code::DeckValue,
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
}
