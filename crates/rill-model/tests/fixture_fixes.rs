//! Every fix offered on every fixture deck is applied and the deck checked
//! again: the fix must remove its diagnostic without adding errors, and a
//! fix that touches a quantity must keep its meaning in SI. A volume moved
//! between reservoir and surface conditions is converted with the fluid's
//! formation volume factor; a unit of the wrong dimension keeps the number
//! the engineer wrote; a unit of the same dimension keeps the SI value.

use rill_model::{analyze_text, Analysis, Code, Diagnostic, Fix, MemorySource, Severity};
use rill_units::Dim;
use std::path::{Path, PathBuf};

fn fixture_decks() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/fixtures");
    let mut decks = Vec::new();
    for code in Code::ALL {
        for name in ["broken.rill", "clean.rill"] {
            decks.push(root.join(code.as_str()).join(name));
        }
    }
    decks
}

fn analyze(path: &Path, text: &str) -> Analysis {
    analyze_text(path, text, &MemorySource::new())
}

fn errors(a: &Analysis) -> usize {
    a.diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count()
}

fn line_of(text: &str, offset: usize) -> usize {
    text[..offset].matches('\n').count() + 1
}

/// The text with the fix's edits applied (all in the main file).
fn apply(text: &str, fix: &Fix) -> String {
    let mut edits: Vec<_> = fix.edits.iter().collect();
    assert!(
        edits.iter().all(|e| e.location.file == 0),
        "fix `{}` edits another file",
        fix.title
    );
    edits.sort_by_key(|e| std::cmp::Reverse(e.location.start));
    let mut out = text.to_string();
    for e in edits {
        out.replace_range(e.location.start..e.location.end, &e.replacement);
    }
    out
}

/// A quantity written as `NUMBER UNIT`.
#[derive(Debug)]
struct Quantity {
    number: f64,
    unit: String,
}

/// Split `200 bbl/day` into its number and unit.
fn quantity(text: &str) -> Option<Quantity> {
    let text = text.trim();
    let split = text.find(char::is_whitespace)?;
    let number = text[..split].parse::<f64>().ok()?;
    Some(Quantity {
        number,
        unit: text[split..].trim().to_string(),
    })
}

/// The number written just before `offset` (`rate 200 ` before a unit).
fn number_before(text: &str, offset: usize) -> Option<f64> {
    let before = text[..offset].trim_end();
    let start = before
        .rfind(|c: char| !(c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '-' | '+')))
        .map(|i| i + 1)
        .unwrap_or(0);
    before[start..].parse().ok()
}

/// What a quantity edit means: the quantity before and after it.
fn quantity_edit(text: &str, fix: &Fix) -> Option<(Quantity, Quantity)> {
    let [edit] = fix.edits.as_slice() else {
        return None;
    };
    let old = &text[edit.location.start..edit.location.end];
    if let (Some(before), Some(after)) = (quantity(old), quantity(&edit.replacement)) {
        return Some((before, after));
    }
    // Only the unit replaced: the number stands before it and stays.
    let number = number_before(text, edit.location.start)?;
    rill_units::parse(&edit.replacement).ok()?;
    Some((
        Quantity {
            number,
            unit: old.trim().to_string(),
        },
        Quantity {
            number,
            unit: edit.replacement.trim().to_string(),
        },
    ))
}

/// Volume powers moved from reservoir to surface conditions between two
/// dimensions that differ only in their volume kind; `None` otherwise.
fn volume_powers_moved(from: Dim, to: Dim) -> Option<i8> {
    let volume = |d: Dim| i16::from(d.l) + 3 * i16::from(d.s);
    (from.m == to.m && from.t == to.t && volume(from) == volume(to) && from.s != to.s)
        .then_some(to.s - from.s)
}

fn check_meaning(
    deck: &Path,
    d: &Diagnostic,
    fix: &Fix,
    text: &str,
    fixed: &Analysis,
) -> Result<(), String> {
    let Some((before, after)) = quantity_edit(text, fix) else {
        return Ok(());
    };
    let at = format!("{} `{}` (fix `{}`)", deck.display(), d.code, fix.title);
    let after_unit = rill_units::parse(&after.unit)
        .map_err(|e| format!("{at}: the fix writes a bad unit: {e}"))?;
    // An unknown unit has no meaning to keep: the fix names the intended one.
    let Ok(before_unit) = rill_units::parse(&before.unit) else {
        return Ok(());
    };
    // A fix that keeps the unit corrects the number itself (a sign, a
    // range): that is its purpose, not a change of meaning by a unit.
    if before.unit == after.unit {
        return Ok(());
    }
    let before_si = before_unit.to_si(before.number);
    let after_si = after_unit.to_si(after.number);
    if before_unit.dim == after_unit.dim.pow(-1) && before_unit.dim != Dim::NONE {
        // An upside-down unit: the reciprocal, to the six digits written.
        return if (after_si * before_si - 1.0).abs() <= 5e-6 {
            Ok(())
        } else {
            Err(format!(
                "{at}: {after_si} is not the reciprocal of {before_si}"
            ))
        };
    }
    if before_unit.dim == after_unit.dim {
        let same = (before_si - after_si).abs() <= 1e-12 * before_si.abs().max(after_si.abs());
        // A gauge unit refused where no absolute pressure stands (a
        // gradient, a difference) adds nothing: the number is the meaning.
        let gauge_dropped = before_unit.gauge && before.number == after.number;
        return if same || gauge_dropped {
            Ok(())
        } else {
            Err(format!("{at}: {before_si} became {after_si} in SI"))
        };
    }
    if let Some(moved) = volume_powers_moved(before_unit.dim, after_unit.dim) {
        let fvf = fixed
            .case
            .as_ref()
            .map(|c| c.fluid.fvf)
            .ok_or_else(|| format!("{at}: the fixed deck has no case to read the fvf from"))?;
        let want = before_si * fvf.powi(-i32::from(moved));
        // The fix writes six significant digits.
        return if (after_si - want).abs() <= 5e-6 * want.abs() {
            Ok(())
        } else {
            Err(format!(
                "{at}: {} {} at fvf {fvf} should become {want} in SI, the fix gives {after_si}",
                before.number, before.unit
            ))
        };
    }
    // A unit of another dimension: the number the engineer wrote stays.
    if before.number == after.number {
        Ok(())
    } else {
        Err(format!(
            "{at}: changed the number {} to {} along with the dimension",
            before.number, after.number
        ))
    }
}

#[test]
fn every_fixture_fix_removes_its_diagnostic_and_keeps_the_meaning() {
    let mut failures = Vec::new();
    let mut applied = 0;
    let mut conversions = 0;
    for deck in fixture_decks() {
        let text = std::fs::read_to_string(&deck).unwrap();
        let analysis = analyze(&deck, &text);
        for d in analysis.diagnostics.iter().filter(|d| d.location.file == 0) {
            for fix in &d.fixes {
                let fixed_text = apply(&text, fix);
                let fixed = analyze(&deck, &fixed_text);
                applied += 1;
                let line = line_of(&text, d.location.start);
                let still = fixed.diagnostics.iter().any(|e| {
                    e.code == d.code
                        && e.location.file == 0
                        && line_of(&fixed_text, e.location.start) == line
                        && e.message == d.message
                });
                if still {
                    failures.push(format!(
                        "{}: fix `{}` leaves `{}` at line {line}",
                        deck.display(),
                        fix.title,
                        d.code
                    ));
                }
                if errors(&fixed) > errors(&analysis) {
                    failures.push(format!(
                        "{}: fix `{}` adds errors: {:?}",
                        deck.display(),
                        fix.title,
                        fixed
                            .diagnostics
                            .iter()
                            .map(|e| (e.code, e.message.clone()))
                            .collect::<Vec<_>>()
                    ));
                }
                if d.code == Code::UnitVolumeKind && quantity_edit(&text, fix).is_some() {
                    conversions += 1;
                }
                if let Err(e) = check_meaning(&deck, d, fix, &text, &fixed) {
                    failures.push(e);
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The campaign must reach the fixes it is about.
    assert!(applied >= 10, "only {applied} fixes applied");
    assert!(conversions >= 1, "no volume-kind conversion was applied");
}

#[test]
fn a_reservoir_rate_becomes_a_surface_rate_through_the_fvf() {
    let deck = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/unit.volume-kind/broken.rill");
    let text = std::fs::read_to_string(&deck).unwrap();
    let analysis = analyze(&deck, &text);
    let d = analysis
        .diagnostics
        .iter()
        .find(|d| d.code == Code::UnitVolumeKind)
        .expect("the fixture's volume-kind error");
    let fix = &d.fixes[0];
    // 200 bbl/day of reservoir volume at fvf 1.02 rb/stb: 196.078 stb/day.
    assert_eq!(fix.edits[0].replacement, "196.078 stb/day");
    assert!(fix.title.contains("1.02"), "{}", fix.title);
    let fixed = analyze(&deck, &apply(&text, fix));
    assert_eq!(errors(&fixed), 0, "{:?}", fixed.diagnostics);
}

#[test]
fn without_a_usable_fluid_the_fix_is_a_note_not_a_number() {
    let deck = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/unit.volume-kind/broken.rill");
    let text = std::fs::read_to_string(&deck)
        .unwrap()
        .replace("fvf = 1.02 rb/stb", "fvf = 1.02 psi");
    let analysis = analyze(&deck, &text);
    let d = analysis
        .diagnostics
        .iter()
        .find(|d| d.code == Code::UnitVolumeKind)
        .expect("the volume-kind error");
    assert!(d.fixes.is_empty(), "{:?}", d.fixes);
    assert!(
        d.notes
            .iter()
            .any(|n| n.contains("divide the number by the formation volume factor")),
        "{:?}",
        d.notes
    );
}

#[test]
fn an_upside_down_fvf_is_fixed_by_its_reciprocal() {
    let deck = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/unit.volume-kind/clean.rill");
    let text = std::fs::read_to_string(&deck).unwrap();
    let fvf_line = text
        .lines()
        .find(|l| l.trim_start().starts_with("fvf"))
        .expect("the clean fixture's fvf");
    let text = text.replace(fvf_line, "  fvf = 0.98 stb/rb");
    let analysis = analyze(&deck, &text);
    let d = analysis
        .diagnostics
        .iter()
        .find(|d| d.code == Code::UnitVolumeKind)
        .expect("the upside-down fvf");
    let fix = d
        .fixes
        .iter()
        .find(|f| f.title.contains("reciprocal"))
        .expect("the reciprocal fix");
    assert_eq!(fix.edits[0].replacement, "1.02041 rb/stb");
    let fixed = analyze(&deck, &apply(&text, fix));
    assert_eq!(errors(&fixed), 0, "{:?}", fixed.diagnostics);
    let fvf = fixed.case.expect("the fixed case").fluid.fvf;
    assert!((fvf * 0.98 - 1.0).abs() < 5e-6, "{fvf}");
}
