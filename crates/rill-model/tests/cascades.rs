//! One mistake, one diagnostic: follow-on errors that only repeat a mistake
//! in other words are not reported.

use rill_model::{analyze_text, MemorySource};
use std::path::Path;

fn codes(fixture: &str) -> Vec<&'static str> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures")
        .join(fixture)
        .join("broken.rill");
    let text = std::fs::read_to_string(&path).unwrap();
    analyze_text(&path, &text, &MemorySource::new())
        .diagnostics
        .iter()
        .map(|d| d.code.as_str())
        .collect()
}

#[test]
fn an_unclosed_list_is_reported_once() {
    assert_eq!(codes("syntax.unclosed"), vec!["syntax.unclosed"]);
}

#[test]
fn a_misspelt_required_key_is_unknown_not_also_missing() {
    assert_eq!(codes("deck.unknown-key"), vec!["deck.unknown-key"]);
}

#[test]
fn a_missing_key_without_a_near_miss_is_still_missing() {
    assert_eq!(codes("deck.missing-key"), vec!["deck.missing-key"]);
}

#[test]
fn an_event_change_without_a_well_name_is_reported() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/larkspur-east.rill");
    let text = std::fs::read_to_string(&path).unwrap().replace(
        "    well \"LE-1\" {\n      control = bhp",
        "    well {\n      control = bhp",
    );
    let a = analyze_text(&path, &text, &MemorySource::new());
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == "deck.missing-key" && d.message.contains("names its well")),
        "{:?}",
        a.diagnostics
    );
    assert!(a.case.is_none());
}

#[test]
fn a_grid_far_too_large_is_refused_before_anything_is_allocated() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/teaching-block.rill");
    let text = std::fs::read_to_string(&path)
        .unwrap()
        .replace("cells = 11 x 11 x 1", "cells = 1000 x 1000 x 1000");
    let a = analyze_text(&path, &text, &MemorySource::new());
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .map(|d| (d.code, d.message.clone()))
        .collect();
    assert!(
        d.iter()
            .any(|(c, m)| *c == "grid.cells" && m.contains("1000000000 cells")),
        "{d:?}"
    );
}

#[test]
fn a_patch_over_an_erroneous_base_line_does_not_call_the_base_missing() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/flow.isolated/broken.rill");
    let text = std::fs::read_to_string(&path)
        .unwrap()
        .replace("kx = layers [100 50] md", "kx = layers [100 50] psi");
    let a = analyze_text(&path, &text, &MemorySource::new());
    let codes: Vec<_> = a.diagnostics.iter().map(|d| d.code.as_str()).collect();
    // The unit is the one mistake; the patch's `kx` has its base line.
    assert_eq!(codes, vec!["unit.dimension"], "{:?}", a.diagnostics);
}

#[test]
fn a_well_in_an_inactive_column_gets_one_error_naming_every_cell() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/well.completion/broken.rill");
    let text = std::fs::read_to_string(&path)
        .unwrap()
        .replace("location = (5, 2)", "location = (2, 2)")
        .replace(
            "  compressibility = 4e-6 1/psi\n}",
            "  compressibility = 4e-6 1/psi\n  patch i = 2 j = 2 { porosity = 0 }\n}",
        );
    let a = analyze_text(&path, &text, &MemorySource::new());
    let d: Vec<_> = a.diagnostics.iter().collect();
    // Not one error per layer, and no "cannot flow" follow-on.
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0].code, "well.completion");
    assert!(
        d[0].message.contains("2 inactive cells") && d[0].message.contains("(2, 2, 1), (2, 2, 2)"),
        "{}",
        d[0].message
    );
}

#[test]
fn an_event_naming_a_well_dropped_for_its_own_error_is_not_a_second_error() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/larkspur-east.rill");
    let text = std::fs::read_to_string(&path).unwrap();
    let well_line = text
        .lines()
        .skip_while(|l| !l.starts_with("well \"LE-1\""))
        .find(|l| l.trim_start().starts_with("radius"))
        .expect("LE-1's radius");
    let text = text.replacen(well_line, "  radius = 0.3 psi", 1);
    let a = analyze_text(&path, &text, &MemorySource::new());
    let codes: Vec<_> = a.diagnostics.iter().map(|d| d.code.as_str()).collect();
    assert_eq!(codes, vec!["unit.dimension"], "{:?}", a.diagnostics);
    // A name that no block carries is still a reference error.
    let text = text.replace(
        "well \"LE-1\" {\n      control",
        "well \"LE-9\" {\n      control",
    );
    let a = analyze_text(&path, &text, &MemorySource::new());
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == "deck.reference" && d.message.contains("LE-9")),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn an_event_before_the_start_is_an_ordering_error() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/larkspur-east.rill");
    let text = std::fs::read_to_string(&path)
        .unwrap()
        .replace("at 180 day {", "at -1 day {");
    let a = analyze_text(&path, &text, &MemorySource::new());
    let d: Vec<_> = a.diagnostics.iter().collect();
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0].code, "timeline.order");
    assert!(
        d[0].message.contains("before the start"),
        "{}",
        d[0].message
    );
}

#[test]
fn flow_isolated_stands_on_the_patch_that_cut_the_cells_off_with_the_base_as_context() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/flow.isolated/broken.rill");
    let text = std::fs::read_to_string(&path).unwrap();
    let a = analyze_text(&path, &text, &MemorySource::new());
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == "flow.isolated")
        .expect("flow.isolated");
    let at = |offset: usize| &text[offset..];
    // On the patch's `kx = 0 md`, not on the base `kx = layers [...]`.
    assert!(at(d.location.start).starts_with("0 md"), "{d:?}");
    assert!(
        d.message
            .contains("this patch sets `kx` to 0 in cell (1, 1, 1)"),
        "{}",
        d.message
    );
    let base = &d.labels[0];
    assert!(
        at(base.location.start).starts_with("layers [100 50] md"),
        "{d:?}"
    );
    assert_eq!(base.message, "the base value of `kx`");
}
