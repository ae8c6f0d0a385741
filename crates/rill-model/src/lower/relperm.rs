//! `relperm "label"` blocks: the Corey form and the table form, with the
//! checks of their endpoints (`relperm.endpoints`) and of the shape of a
//! table (`relperm.shape`).

use super::*;
use crate::diagnostic::Severity;

/// Placeholder values offered when a key of a form is missing.
fn example(key: &str) -> &'static str {
    match key {
        "swc" | "sor" => "0.2",
        "krw_end" => "0.3",
        "kro_end" => "0.8",
        "nw" | "no" => "2",
        "sw" => "[0.2 0.5 0.8]",
        "krw" => "[0 0.1 0.3]",
        "kro" => "[0.8 0.2 0]",
        _ => "0",
    }
}

/// One value of a table column, with the span it came from.
type Point = (f64, Span);

impl<'s> Lowerer<'s> {
    /// Lowers one `relperm` block; `None` after reporting why it cannot be used.
    pub(super) fn lower_relperm(&mut self, file: usize, block: &Block) -> Option<Relperm> {
        let name = label_of(block)?;
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
        // A missing `model` is reported by the structure check.
        let model = self.choice(file, find(block, "model")?, schema::RELPERM_MODELS)?;
        let (own, other) = if model == "corey" {
            (schema::COREY_KEYS, schema::TABLE_KEYS)
        } else {
            (schema::TABLE_KEYS, schema::COREY_KEYS)
        };
        let mut ok = true;
        for item in &block.items {
            let Item::Statement(s) = item else { continue };
            if other.contains(&s.key.name.as_str()) {
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckUnknownKey,
                        Location::new(file, s.key.span),
                        format!(
                            "`{}` belongs to the {} form; this `relperm` is `model = {model}`, which takes {}",
                            s.key.name,
                            if model == "corey" { "table" } else { "Corey" },
                            own.join(", ")
                        ),
                    )
                    .with_note("write each set of curves in one form: endpoints and exponents (`corey`) or lists (`table`)"),
                );
                ok = false;
            }
        }
        let required: &[&str] = if model == "corey" {
            &["swc", "sor", "krw_end", "kro_end", "nw", "no"]
        } else {
            &["sw", "krw", "kro"]
        };
        for key in required {
            if find(block, key).is_none() {
                self.diags.push(
                    Diagnostic::error(
                        Code::DeckMissingKey,
                        Location::new(file, block.name.span),
                        format!("a `relperm` of `model = {model}` needs `{key}`"),
                    )
                    .with_replacement(
                        format!("add `{key} = {}`", example(key)),
                        Location::new(file, Span::new(block.open.end, block.open.end)),
                        format!("\n  {key} = {}", example(key)),
                    ),
                );
                ok = false;
            }
        }
        if !ok {
            return None;
        }
        let curves = if model == "corey" {
            Curves::Corey(self.corey(file, block)?)
        } else {
            Curves::Table(self.sat_table(file, block)?)
        };
        Some(Relperm {
            name,
            curves,
            origin,
        })
    }

    /// A dimensionless number of a relperm block, with its location.
    fn relperm_number(&mut self, file: usize, block: &Block, key: &str) -> Option<(f64, Location)> {
        let s = find(block, key)?;
        let v = self.number(file, s)?;
        Some((v, Location::new(file, s.value.span)))
    }

    fn corey(&mut self, file: usize, block: &Block) -> Option<Corey> {
        let swc = self.relperm_number(file, block, "swc");
        let sor = self.relperm_number(file, block, "sor");
        let krw_end = self.relperm_number(file, block, "krw_end");
        let kro_end = self.relperm_number(file, block, "kro_end");
        let nw = self.relperm_number(file, block, "nw");
        let no = self.relperm_number(file, block, "no");
        let pc_entry = match find(block, "pc_entry") {
            Some(s) => Some((
                self.quantity(file, s, Dim::PRESSURE, Gauge::Refused)?,
                Location::new(file, s.value.span),
            )),
            None => None,
        };
        let (swc, sor, krw_end, kro_end, nw, no) = (swc?, sor?, krw_end?, kro_end?, nw?, no?);
        let mut ok = true;
        for (key, (v, at)) in [("swc", swc), ("sor", sor)] {
            if !(0.0..=1.0).contains(&v) {
                self.diags.push(as_fraction(
                    Diagnostic::error(
                        Code::RelpermEndpoints,
                        at,
                        format!(
                            "`{key}` is a saturation between 0 and 1, found {}",
                            crate::values::short_number(v)
                        ),
                    ),
                    v,
                    at,
                ));
                ok = false;
            }
        }
        if ok && swc.0 + sor.0 >= 1.0 {
            self.diags.push(
                Diagnostic::error(
                    Code::RelpermEndpoints,
                    sor.1,
                    format!(
                        "`swc + sor` must stay below 1 (no saturation range is left to flow in), found {} + {} = {}",
                        crate::values::short_number(swc.0),
                        crate::values::short_number(sor.0),
                        crate::values::short_number(swc.0 + sor.0)
                    ),
                )
                .with_label(swc.1, "the connate water saturation"),
            );
            ok = false;
        }
        for (key, (v, at)) in [("krw_end", krw_end), ("kro_end", kro_end)] {
            if v <= 0.0 || v > 1.0 {
                self.diags.push(as_fraction(
                    Diagnostic::error(
                        Code::RelpermEndpoints,
                        at,
                        format!(
                            "`{key}` is an end-point relative permeability above 0 and at most 1, found {}",
                            crate::values::short_number(v)
                        ),
                    ),
                    v,
                    at,
                ));
                ok = false;
            }
        }
        for (key, (v, at)) in [("nw", nw), ("no", no)] {
            if v <= 0.0 {
                self.diags.push(Diagnostic::error(
                    Code::DeckOutOfRange,
                    at,
                    format!(
                        "the Corey exponent `{key}` must be positive, found {}",
                        crate::values::short_number(v)
                    ),
                ));
                ok = false;
            } else if v < 1.0 {
                // Newton cannot follow a curve that starts with an infinite
                // slope: steps shrink wherever the phase starts to flow.
                let (phase, from) = if key == "nw" {
                    ("krw", "`swc`")
                } else {
                    ("kro", "`1 - sor`")
                };
                self.diags.push(
                    Diagnostic::warning(
                        Code::RelpermShape,
                        at,
                        format!(
                            "the Corey exponent `{key}` is {}, below 1: `{phase}` rises infinitely steeply from {from}, and a run takes very short steps wherever that phase starts to flow",
                            crate::values::short_number(v)
                        ),
                    )
                    .with_note("measured Corey exponents lie between about 1 and 6; 1 gives a straight line"),
                );
            }
        }
        if let Some((pc, at)) = pc_entry {
            if pc < 0.0 {
                self.diags.push(Diagnostic::error(
                    Code::DeckOutOfRange,
                    at,
                    "`pc_entry` is the capillary pressure at sw = swc and must be 0 or more: pc falls from it to 0 at 1 - sor",
                ));
                ok = false;
            }
        }
        ok.then_some(Corey {
            swc: swc.0,
            sor: sor.0,
            krw_end: krw_end.0,
            kro_end: kro_end.0,
            nw: nw.0,
            no: no.0,
            pc_entry: pc_entry.map_or(0.0, |p| p.0),
        })
    }

    /// The items of a table column `[a b c] unit`, in SI.
    fn table_column(&mut self, file: usize, stmt: &Statement, dim: Dim) -> Option<Vec<Point>> {
        let key = stmt.key.name.as_str();
        match self.number_list(file, stmt, dim, "a number") {
            Some(column) => column,
            None => {
                if !stmt.value.atoms.is_empty() {
                    self.diags.push(Diagnostic::error(
                        Code::DeckValue,
                        Location::new(file, stmt.value.span),
                        format!(
                            "`{key}` expects a list with one value per row of the table, e.g. `{key} = {}`",
                            if dim == Dim::PRESSURE { "[9 3.2 0] psi" } else { example(key) }
                        ),
                    ));
                }
                None
            }
        }
    }

    #[allow(clippy::too_many_lines)] // one check per rule of the table, in the order the reference lists them
    fn sat_table(&mut self, file: usize, block: &Block) -> Option<SatTable> {
        let read = |this: &mut Self, key: &str, dim: Dim| {
            let s = find(block, key)?;
            Some((
                this.table_column(file, s, dim),
                Location::new(file, s.value.span),
            ))
        };
        let sw = read(self, "sw", Dim::NONE)?;
        let krw = read(self, "krw", Dim::NONE)?;
        let kro = read(self, "kro", Dim::NONE)?;
        let pc = read(self, "pc", Dim::PRESSURE);
        let (sw, sw_at) = (sw.0?, sw.1);
        let (krw, krw_at) = (krw.0?, krw.1);
        let (kro, kro_at) = (kro.0?, kro.1);
        let pc = match pc {
            Some((values, at)) => Some((values?, at)),
            None => None,
        };
        let mut ok = true;
        let n = sw.len();
        if n < 2 {
            self.diags.push(Diagnostic::error(
                Code::RelpermShape,
                sw_at,
                format!("a saturation table needs at least two rows, found {n}"),
            ));
            return None;
        }
        let mut lists: Vec<(&str, &[Point], Location)> =
            vec![("krw", &krw, krw_at), ("kro", &kro, kro_at)];
        if let Some((values, at)) = &pc {
            lists.push(("pc", values, *at));
        }
        for (key, values, at) in &lists {
            if values.len() != n {
                self.diags.push(
                    Diagnostic::error(
                        Code::RelpermShape,
                        *at,
                        format!(
                            "`{key}` has {} values but `sw` has {n}: every list of a table has one value per row",
                            values.len()
                        ),
                    )
                    .with_label(sw_at, "the saturations"),
                );
                ok = false;
            }
        }
        if !ok {
            return None;
        }
        let mut push =
            |this: &mut Self, severity: Severity, code: Code, span: Span, msg: String| {
                this.diags.push(Diagnostic::new(
                    code,
                    severity,
                    Location::new(file, span),
                    msg,
                ));
                if severity == Severity::Error {
                    ok = false;
                }
            };
        for (key, values) in [("sw", &sw), ("krw", &krw), ("kro", &kro)] {
            if let Some((v, span)) = values.iter().find(|(v, _)| !(0.0..=1.0).contains(v)) {
                let what = if key == "sw" {
                    "a saturation"
                } else {
                    "a relative permeability"
                };
                push(
                    self,
                    Severity::Error,
                    Code::RelpermEndpoints,
                    *span,
                    format!(
                        "each value of `{key}` is {what} between 0 and 1, found {}",
                        crate::values::short_number(*v)
                    ),
                );
            }
        }
        if let Some(w) = sw.windows(2).find(|w| w[1].0 <= w[0].0) {
            push(
                self,
                Severity::Error,
                Code::RelpermShape,
                w[1].1,
                format!(
                    "`sw` must increase from row to row, found {} after {}",
                    crate::values::short_number(w[1].0),
                    crate::values::short_number(w[0].0)
                ),
            );
        }
        let rules: [(&str, &[Point], bool, &str); 2] = [
            (
                "krw",
                &krw,
                true,
                "krw never falls as water saturation rises",
            ),
            (
                "kro",
                &kro,
                false,
                "kro never rises as water saturation rises",
            ),
        ];
        for (key, values, rising, why) in rules {
            let bad = values.windows(2).find(|w| {
                if rising {
                    w[1].0 < w[0].0
                } else {
                    w[1].0 > w[0].0
                }
            });
            if let Some(w) = bad {
                push(
                    self,
                    Severity::Error,
                    Code::RelpermShape,
                    w[1].1,
                    format!(
                        "`{key}` {} from {} to {} here: {why}",
                        if rising { "falls" } else { "rises" },
                        crate::values::short_number(w[0].0),
                        crate::values::short_number(w[1].0)
                    ),
                );
            }
        }
        if let Some((values, _)) = &pc {
            if let Some(w) = values.windows(2).find(|w| w[1].0 > w[0].0) {
                push(
                    self,
                    Severity::Error,
                    Code::RelpermShape,
                    w[1].1,
                    "`pc` rises here: the capillary pressure p_oil - p_water never rises as water saturation rises".into(),
                );
            }
        }
        let max_krw = krw.iter().map(|p| p.0).fold(0.0, f64::max);
        if max_krw <= 0.0 {
            push(
                self,
                Severity::Error,
                Code::RelpermEndpoints,
                krw_at.span(),
                "`krw` is 0 in every row: water could never flow".into(),
            );
        }
        if kro[0].0 <= 0.0 {
            push(
                self,
                Severity::Error,
                Code::RelpermEndpoints,
                kro[0].1,
                "`kro` is 0 at the first saturation: oil could never flow".into(),
            );
        }
        // A phase cannot flow where there is none of it: below the first
        // row `krw` falls linearly to 0 at sw = 0, above the last `kro`
        // to 0 at sw = 1. A row at that very end leaves no room to fall.
        if krw[0].0 != 0.0 {
            let at_end = sw[0].0 <= 0.0;
            push(
                self,
                if at_end {
                    Severity::Error
                } else {
                    Severity::Warning
                },
                Code::RelpermEndpoints,
                krw[0].1,
                if at_end {
                    format!(
                        "`krw` is {} at sw = 0: water would flow out of a cell that holds none",
                        crate::values::short_number(krw[0].0)
                    )
                } else {
                    format!(
                        "the first `krw` is {}, not 0: water flows below the table's first saturation (falling linearly to 0 at sw = 0)",
                        crate::values::short_number(krw[0].0)
                    )
                },
            );
        }
        if kro[n - 1].0 != 0.0 {
            let at_end = sw[n - 1].0 >= 1.0;
            push(
                self,
                if at_end {
                    Severity::Error
                } else {
                    Severity::Warning
                },
                Code::RelpermEndpoints,
                kro[n - 1].1,
                if at_end {
                    format!(
                        "`kro` is {} at sw = 1: oil would flow out of a cell that holds none",
                        crate::values::short_number(kro[n - 1].0)
                    )
                } else {
                    format!(
                        "the last `kro` is {}, not 0: no oil is left behind the flood (`kro` falls linearly to 0 at sw = 1 above the table)",
                        crate::values::short_number(kro[n - 1].0)
                    )
                },
            );
        }
        let values = |v: &[Point]| v.iter().map(|p| p.0).collect::<Vec<f64>>();
        ok.then(|| SatTable {
            sw: values(&sw),
            krw: values(&krw),
            kro: values(&kro),
            pc: pc.as_ref().map_or_else(|| vec![0.0; n], |(p, _)| values(p)),
        })
    }
}

/// Offers the fraction for a value that reads as a percentage (above 1, at
/// most 100), the usual slip in a saturation or an end point.
fn as_fraction(d: Diagnostic, v: f64, at: Location) -> Diagnostic {
    if v > 1.0 && v <= 100.0 {
        let fraction = crate::values::short_number(v / 100.0);
        d.with_replacement(
            format!("replace by {fraction} (a percentage as a fraction)"),
            at,
            fraction,
        )
    } else {
        d
    }
}
