//! Turning atoms into SI numbers: units checked against the expected
//! dimension, with the diagnostics and fixes for every way a unit can be
//! wrong (unknown, missing, wrong dimension, reservoir instead of surface
//! volume, gauge where an absolute value is not meant).

use crate::diagnostic::{Code, Diagnostic, Location};
use rill_syntax::{Span, UnitExpr};
use rill_units::{Dim, Unit, UnitErrorKind};

/// Collects diagnostics for one file while values are read.
pub struct Reporter<'a> {
    /// The file the values stand in (index in `Analysis::files`).
    pub file: usize,
    /// Where the diagnostics go.
    pub diags: &'a mut Vec<Diagnostic>,
    /// The fluid's formation volume factor (reservoir over surface volume),
    /// once the fluid has lowered: fixes that move a volume between
    /// reservoir and surface conditions convert the number with it.
    pub fvf: Option<f64>,
}

impl Reporter<'_> {
    /// The place of `span` in this file.
    pub fn loc(&self, span: Span) -> Location {
        Location::new(self.file, span)
    }
    /// Report a diagnostic.
    pub fn push(&mut self, d: Diagnostic) {
        self.diags.push(d);
    }
}

/// The largest magnitude, in SI, that a value of dimension `dim` may have:
/// the largest `f64` both in SI and in every unit rill shows such values
/// in. A permeability of 1e309 md is finite in m^2 (9.9e293) but not in
/// md, and the simulator's products of such values overflow.
pub fn largest(dim: Dim) -> f64 {
    use rill_units::{display_unit, Kind, System};
    let smallest_factor = Kind::ALL
        .iter()
        .filter(|k| k.dim() == dim)
        .flat_map(|k| [System::Field, System::Metric, System::Si].map(|s| display_unit(*k, s)))
        .map(|u| u.factor)
        .fold(1.0_f64, f64::min);
    f64::MAX * smallest_factor
}

/// Whether `si` is a value a case can hold: finite and within [`largest`]
/// (`limit` is `largest(dim)`, computed once for a whole array).
pub fn within(si: f64, limit: f64) -> bool {
    si.is_finite() && si.abs() <= limit
}

/// The message for a value of `key` that a case cannot hold; `place`
/// says where within the value ("in cell (3, 1, 1)", "value 7 of the file").
pub fn beyond_message(key: &str, si: f64, dim: Dim, place: &str) -> String {
    use rill_units::{display_unit, Kind, System};
    let at = if place.is_empty() {
        String::new()
    } else {
        format!(" {place}")
    };
    if si.is_nan() {
        return format!(
            "`{key}`{at} is not a number (NaN, from an undefined operation such as \
             infinity minus infinity); expected a finite value: check the exponents and \
             units of the arithmetic"
        );
    }
    // Shown in the unit of its dimension with the smallest factor: the
    // one in which it overflows first (md for a permeability).
    let shown = Kind::ALL
        .iter()
        .filter(|k| k.dim() == dim)
        .flat_map(|k| [System::Field, System::Metric].map(|s| display_unit(*k, s)))
        .min_by(|a, b| a.factor.total_cmp(&b.factor))
        .map(|u| (si / u.factor, u.name))
        .unwrap_or((si, ""));
    let found = if shown.0.is_finite() {
        format!("{} {}", rill_units::format_number(shown.0), shown.1)
    } else {
        format!("beyond 1.8e308 {}", shown.1)
    };
    format!(
        "`{key}`{at} overflows: expected a value a 64-bit number holds in SI and in the \
         units rill shows (about 1.8e308 at most), found {}; check the exponent and the unit",
        found.trim_end()
    )
}

/// Whether the number written at `span` was read as a finite value; if
/// not (`1e309` overflows when read), a `deck.out-of-range` error.
pub fn finite_literal(r: &mut Reporter, value: f64, span: Span, key: &str) -> bool {
    if value.is_finite() {
        return true;
    }
    r.push(Diagnostic::error(
        Code::DeckOutOfRange,
        r.loc(span),
        format!(
            "`{key}`: expected a number a 64-bit float holds (about 1.8e308 at most), \
             found one beyond it; check the exponent"
        ),
    ));
    false
}

/// `si` when a case can hold it (see [`within`]), else `None` after a
/// `deck.out-of-range` error at `span`.
pub fn held(r: &mut Reporter, si: f64, dim: Dim, span: Span, key: &str) -> Option<f64> {
    if within(si, largest(dim)) {
        return Some(si);
    }
    r.push(Diagnostic::error(
        Code::DeckOutOfRange,
        r.loc(span),
        beyond_message(key, si, dim, ""),
    ));
    None
}

/// Where a gauge unit (`psig`, `barg`) may be used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Gauge {
    /// An absolute pressure value: gauge units are fine.
    Allowed,
    /// A difference, a part of an arithmetic expression, or not a pressure.
    Refused,
}

/// Names the dimension for messages: "a pressure (psi, bar, kPa)".
pub fn describe_expected(dim: Dim) -> String {
    let what = dim.describe();
    let units = rill_units::accepted_units(dim);
    let head: Vec<&str> = units.iter().take(4).map(String::as_str).collect();
    let what = if what.is_empty() {
        format!("a quantity of dimension {dim}")
    } else {
        article(what)
    };
    if head.is_empty() {
        what
    } else {
        format!("{what} ({})", head.join(", "))
    }
}

fn article(what: &str) -> String {
    let first = what.chars().next().unwrap_or('x');
    if what == "dimensionless" {
        "a dimensionless number".to_string()
    } else if "aeiou".contains(first) {
        format!("an {what}")
    } else {
        format!("a {what}")
    }
}

/// What a found dimension is, for messages: "a pressure" or "dimension L^3".
pub fn describe_found(dim: Dim) -> String {
    let what = dim.describe();
    if what.is_empty() {
        format!("dimension {dim}")
    } else {
        article(what)
    }
}

/// Replace reservoir-volume unit names by surface ones (or the reverse) in a
/// unit expression: `bbl/day` becomes `stb/day`. `None` when no name changes.
fn swap_volume_names(text: &str, to_surface: bool) -> Option<String> {
    let pairs: &[(&str, &str)] = &[
        ("bbl", "stb"),
        ("rb", "stb"),
        ("rm3", "sm3"),
        ("m3", "sm3"),
        ("m^3", "sm3"),
    ];
    let mut out = String::with_capacity(text.len() + 2);
    let mut changed = false;
    let bytes = text.as_bytes();
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i].is_ascii_alphabetic() {
            let start = i;
            while i < bytes.len() && (bytes[i].is_ascii_alphanumeric() || bytes[i] == b'_') {
                i += 1;
            }
            // `m^3` is a name plus an exponent: look ahead for it.
            let mut word = &text[start..i];
            if word == "m" && text[i..].starts_with("^3") {
                word = "m^3";
                i += 2;
            }
            let replacement = pairs.iter().find_map(|(res, surf)| {
                if to_surface && word == *res {
                    Some(*surf)
                } else if !to_surface && word == *surf {
                    Some(if *surf == "stb" { "rb" } else { "rm3" })
                } else {
                    None
                }
            });
            match replacement {
                Some(r) => {
                    out.push_str(r);
                    changed = true;
                }
                None => out.push_str(word),
            }
        } else {
            out.push(bytes[i] as char);
            i += 1;
        }
    }
    changed.then_some(out)
}

/// Dimension with surface volume counted as geometric volume: equal for two
/// dimensions that differ only in the kind of volume. Wider than `i8`,
/// because a unit may carry exponents up to the limits of `Dim`.
fn collapse(d: Dim) -> (i32, i8, i8) {
    (i32::from(d.l) + 3 * i32::from(d.s), d.m, d.t)
}

/// Format a number compactly for fixes: `1.0204`, `2.5e-6`.
pub fn short_number(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let a = v.abs();
    if (1e-3..1e6).contains(&a) {
        let s = format!("{v:.6}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        // Keep about five significant digits.
        let digits_before = a.log10().floor() as i32 + 1;
        let decimals = (5 - digits_before).clamp(0, 6) as usize;
        let t = format!("{v:.decimals$}");
        let t = if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        };
        if t.len() < s.len() {
            t
        } else {
            s.to_string()
        }
    } else {
        format!("{v:.4e}").replace("0e", "e").replace(".000e", "e")
    }
}

/// Offer the usual units of `dim` as fixes, each inserted after the bare
/// number at `number_span`.
pub fn with_unit_fixes(mut d: Diagnostic, r: &Reporter, number_span: Span, dim: Dim) -> Diagnostic {
    let end = r.loc(Span::new(number_span.end, number_span.end));
    for u in rill_units::accepted_units(dim).into_iter().take(3) {
        d = d.with_replacement(format!("add the unit `{u}`"), end, format!(" {u}"));
    }
    d
}

/// Convert `value` written with `unit` to SI, checking the dimension.
/// `number_span` covers the number (and unit) for placing fixes.
pub fn to_si(
    r: &mut Reporter,
    value: f64,
    number_span: Span,
    unit: Option<&UnitExpr>,
    expected: Dim,
    gauge: Gauge,
    key: &str,
) -> Option<f64> {
    let u = checked_unit(r, value, number_span, unit, expected, gauge, key)?;
    held(r, u.to_si(value), expected, number_span, key)
}

/// The unit of a value, checked against `expected`. A missing unit is fine
/// for a dimensionless value.
pub fn checked_unit(
    r: &mut Reporter,
    value: f64,
    number_span: Span,
    unit: Option<&UnitExpr>,
    expected: Dim,
    gauge: Gauge,
    key: &str,
) -> Option<Unit> {
    if !finite_literal(r, value, number_span, key) {
        return None;
    }
    let Some(unit) = unit else {
        if expected == Dim::NONE {
            return Some(Unit {
                factor: 1.0,
                dim: Dim::NONE,
                gauge: false,
            });
        }
        let mut d = Diagnostic::error(
            Code::UnitMissing,
            r.loc(number_span),
            format!(
                "`{key}` expects {}, found a bare number",
                describe_expected(expected)
            ),
        );
        d = with_unit_fixes(d, r, number_span, expected);
        r.push(d.with_note(
            "every dimensional number carries its unit: there is no implicit unit system",
        ));
        return None;
    };
    let parsed = match rill_units::parse(&unit.text) {
        Ok(u) => u,
        Err(e) => {
            report_unit_error(r, unit, &e, expected, key);
            return None;
        }
    };
    if parsed.dim == expected {
        if parsed.gauge && gauge == Gauge::Refused {
            let abs = if unit.text == "barg" { "bar" } else { "psi" };
            r.push(
                Diagnostic::error(
                    Code::UnitGauge,
                    r.loc(unit.span),
                    format!("`{key}` is not an absolute pressure here, so the gauge unit `{}` is refused", unit.text),
                )
                .with_replacement(format!("use the absolute unit `{abs}`"), r.loc(unit.span), abs)
                .with_note("gauge units are accepted only for absolute pressure values"),
            );
            return None;
        }
        return Some(parsed);
    }
    if collapse(parsed.dim) == collapse(expected) {
        let d = volume_kind_diagnostic(r, value, number_span, unit, parsed.dim, expected, key);
        r.push(d);
        return None;
    }
    let mut d = Diagnostic::error(
        Code::UnitDimension,
        r.loc(unit.span),
        format!(
            "`{key}` expects {}, found `{}`, which is {}",
            describe_expected(expected),
            unit.text,
            describe_found(parsed.dim)
        ),
    );
    for u in rill_units::accepted_units(expected).into_iter().take(3) {
        d = d.with_replacement(
            format!("replace `{}` by `{u}`", unit.text),
            r.loc(unit.span),
            u,
        );
    }
    r.push(d);
    None
}

/// Report a unit that does not parse: unknown (with suggestions), a gauge
/// unit inside a compound, or malformed.
fn report_unit_error(
    r: &mut Reporter,
    unit: &UnitExpr,
    e: &rill_units::UnitError,
    expected: Dim,
    key: &str,
) {
    let span = Span::new(
        unit.span.start + e.start,
        unit.span.start + e.end.max(e.start + 1).min(unit.text.len()),
    );
    let span = if span.is_empty() { unit.span } else { span };
    match &e.kind {
        UnitErrorKind::Unknown { name, suggestions } => {
            let mut d = Diagnostic::error(
                Code::UnitUnknown,
                r.loc(span),
                format!("unknown unit `{name}`"),
            );
            for s in suggestions {
                d = d.with_replacement(
                    format!("replace `{name}` by `{s}`"),
                    r.loc(span),
                    s.clone(),
                );
            }
            if suggestions.is_empty() {
                d = d.with_note(format!("`{key}` expects {}", describe_expected(expected)));
            }
            r.push(d);
        }
        UnitErrorKind::GaugeInCompound { name } => {
            r.push(
                Diagnostic::error(
                    Code::UnitGauge,
                    r.loc(span),
                    format!("the gauge unit `{name}` cannot be part of a compound unit"),
                )
                .with_note("gauge units add atmospheric pressure; use `psi` or `bar` inside compound units"),
            );
        }
        UnitErrorKind::Syntax { .. } => {
            r.push(Diagnostic::error(
                Code::UnitUnknown,
                r.loc(span),
                format!("malformed unit `{}`: {e}", unit.text),
            ));
        }
    }
}

/// Reservoir volume where surface volume is expected, or the reverse, with
/// the fixes that apply: the reciprocal of an upside-down unit, the unit
/// with its volume names swapped.
fn volume_kind_diagnostic(
    r: &Reporter,
    value: f64,
    number_span: Span,
    unit: &UnitExpr,
    found: Dim,
    expected: Dim,
    key: &str,
) -> Diagnostic {
    let mut d = Diagnostic::error(
        Code::UnitVolumeKind,
        r.loc(unit.span),
        volume_kind_message(key, expected, found, &unit.text),
    );
    if found.l == -expected.l
        && found.s == -expected.s
        && found.t == expected.t
        && found.m == expected.m
    {
        // Upside down: offer the reciprocal with the right unit.
        if let Some(right) = rill_units::accepted_units(expected).into_iter().next() {
            if value != 0.0 {
                let flipped = significant(1.0 / value, 6);
                d = d.with_replacement(
                    format!("write the reciprocal: `{flipped} {right}`"),
                    r.loc(number_span),
                    format!("{flipped} {right}"),
                );
            }
        }
    }
    // How many volume powers move from reservoir to surface conditions
    // (negative: the other way). A unit whose names can be swapped has the
    // same scale either way (1 bbl and 1 stb are both 0.158987 m^3), so the
    // number must change by fvf^-moved to keep its meaning.
    let moved = expected.s - found.s;
    let to_surface = moved > 0
        || (expected.s != 0
            && expected.s.signum() == found.s.signum()
            && expected.s.abs() > found.s.abs());
    let Some(fixed) = swap_volume_names(&unit.text, to_surface) else {
        return d;
    };
    let Ok(fixed_unit) = rill_units::parse(&fixed) else {
        return d;
    };
    if fixed_unit.dim != expected {
        return d;
    }
    // A unit shared by a list of numbers stands outside the number's span:
    // converting one number would change the others' meaning, so only the
    // note is given there.
    let own_unit = number_span.start <= unit.span.start && unit.span.end <= number_span.end;
    let written = rill_units::parse(&unit.text).ok();
    match (r.fvf, written) {
        (Some(fvf), Some(written)) if own_unit && fvf > 0.0 && moved != 0 => {
            let si = written.to_si(value) * fvf.powi(-i32::from(moved));
            let number = significant(fixed_unit.from_si(si), 6);
            let how = if moved > 0 { "divided by" } else { "times" };
            d = d.with_replacement(
                format!(
                    "convert to `{number} {fixed}`: {} {} {how} the fluid's fvf, {} rb/stb at its reference pressure",
                    short_number(value),
                    unit.text,
                    short_number(fvf)
                ),
                r.loc(number_span),
                format!("{number} {fixed}"),
            );
        }
        _ => {
            let how = if moved > 0 { "divide" } else { "multiply" };
            d = d.with_note(format!(
                "write the value in `{fixed}`: {how} the number by the formation volume factor (rb/stb) to keep its meaning"
            ));
        }
    }
    d
}

/// `v` with at most `digits` significant digits, without trailing zeros.
fn significant(v: f64, digits: usize) -> String {
    if v == 0.0 || !v.is_finite() {
        return short_number(v);
    }
    let magnitude = v.abs().log10().floor() as i32;
    if (-4..15).contains(&magnitude) {
        let decimals = (digits as i32 - 1 - magnitude).max(0) as usize;
        let t = format!("{v:.decimals$}");
        if t.contains('.') {
            t.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            t
        }
    } else {
        let t = format!("{v:.*e}", digits - 1);
        let (mantissa, exp) = t.split_once('e').unwrap_or((&t, "0"));
        let mantissa = if mantissa.contains('.') {
            mantissa.trim_end_matches('0').trim_end_matches('.')
        } else {
            mantissa
        };
        format!("{mantissa}e{exp}")
    }
}

fn volume_kind_message(key: &str, expected: Dim, found: Dim, text: &str) -> String {
    if expected == Dim::FVF {
        return format!("`{key}` is reservoir volume per surface volume (rb/stb, rm3/sm3); `{text}` is upside down");
    }
    let (want, got) = if expected.s != 0 && found.s == 0 {
        ("at surface conditions", "reservoir (in-situ) volume")
    } else if expected.s == 0 && found.s != 0 {
        ("at reservoir conditions", "surface volume")
    } else {
        ("of another volume kind", "a different volume kind")
    };
    format!(
        "`{key}` expects {} {want}, found `{text}`, which is in {got}",
        describe_expected(expected)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn swaps_reservoir_names_for_surface_ones() {
        assert_eq!(
            swap_volume_names("bbl/day", true).as_deref(),
            Some("stb/day")
        );
        assert_eq!(
            swap_volume_names("m^3/day", true).as_deref(),
            Some("sm3/day")
        );
        assert_eq!(
            swap_volume_names("stb/day", false).as_deref(),
            Some("rb/day")
        );
        assert_eq!(swap_volume_names("psi", true), None);
    }

    #[test]
    fn short_numbers() {
        assert_eq!(short_number(1.0 / 0.98), "1.0204");
        assert_eq!(short_number(2.0), "2");
        assert_eq!(short_number(0.0), "0");
    }
}
