//! `aquifer` blocks: what they lower to, the values they refuse, and that
//! an aquifer never holds a face a boundary or another aquifer holds.
//! Fixture deck of the fictional 4 x 3 x 2 block.

use rill_model::{analyze_text, Analysis, Code, MemorySource, Severity, Side};
use std::path::Path;

const BASE: &str = include_str!("../../../tests/fixtures/timeline.steps/clean.rill");

fn with(extra: &str) -> Analysis {
    let text = BASE.replace("timeline {", &format!("{extra}\ntimeline {{"));
    analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new())
}

fn aquifer(name: &str, body: &str) -> String {
    format!("aquifer \"{name}\" {{\n{body}\n}}\n")
}

const SOUTH: &str = "  side = south\n  k = 2\n  water_volume = 2.5e9 rb\n  compressibility = 7e-6 1/psi\n  productivity = 35 rb/day/psi";

fn has(a: &Analysis, code: Code, severity: Severity, text: &str) -> bool {
    a.diagnostics
        .iter()
        .any(|d| d.code == code && d.severity == severity && d.message.contains(text))
}

#[test]
fn an_aquifer_lowers_to_si_with_its_faces() {
    let a = with(&aquifer("south flank", SOUTH));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    let aq = &case.aquifers[0];
    assert_eq!(aq.name, "south flank");
    assert_eq!(aq.side, Side::South);
    let bbl = 0.158987294928;
    let psi = 6894.757293168;
    assert!((aq.water_volume / (2.5e9 * bbl) - 1.0).abs() < 1e-12);
    assert!((aq.compressibility / (7e-6 / psi) - 1.0).abs() < 1e-12);
    assert!((aq.productivity / (35.0 * bbl / 86400.0 / psi) - 1.0).abs() < 1e-12);
    let g = &case.grid;
    let held: Vec<_> = aq.cells(g).iter().map(|&c| g.ijk(c)).collect();
    assert_eq!(held, [(0, 0, 1), (1, 0, 1), (2, 0, 1), (3, 0, 1)]);
    // Four equal faces of layer 2 (30 ft thick), centres at 6035 ft.
    let faces = rill_model::aquifer::faces(&case, aq);
    assert_eq!(faces.len(), 4);
    assert!(faces.iter().all(|f| (f.share - 0.25).abs() < 1e-15));
    let depth = rill_model::aquifer::mean_depth(&faces).unwrap();
    assert!((depth - 6035.0 * 0.3048).abs() < 1e-9);
    // p_ai on the datum's hydrostat: about 3000 psi + 35 ft of water.
    let p_ai = rill_model::aquifer::initial_pressure(&case, &faces).unwrap();
    let expected = rill_model::derived::hydrostatic_pressure(
        &case.fluid,
        3000.0 * psi,
        6000.0 * 0.3048,
        depth,
    );
    assert!((p_ai / expected - 1.0).abs() < 1e-12);
    assert!((p_ai / psi - 3015.0).abs() < 1.0, "{}", p_ai / psi);
}

#[test]
fn values_that_are_not_positive_are_errors() {
    let a = with(&aquifer("a", &SOUTH.replace("2.5e9 rb", "0 rb")));
    assert!(has(
        &a,
        Code::DeckOutOfRange,
        Severity::Error,
        "`water_volume` must be above zero"
    ));
    assert!(a.runnable_case().is_none());
    let a = with(&aquifer(
        "a",
        &SOUTH.replace("35 rb/day/psi", "-35 rb/day/psi"),
    ));
    assert!(has(
        &a,
        Code::DeckOutOfRange,
        Severity::Error,
        "`productivity` must be above zero"
    ));
    let a = with(&aquifer("a", &SOUTH.replace("7e-6 1/psi", "0 1/psi")));
    assert!(has(
        &a,
        Code::SanityCompressibility,
        Severity::Error,
        "`compressibility` must be above zero"
    ));
    let a = with(&aquifer("a", &SOUTH.replace("7e-6 1/psi", "2e-3 1/psi")));
    assert!(has(
        &a,
        Code::SanityCompressibility,
        Severity::Warning,
        "above 1e-3 1/psi"
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
}

#[test]
fn units_of_the_wrong_kind_are_refused() {
    // A surface volume where the aquifer's reservoir volume is meant.
    let a = with(&aquifer("a", &SOUTH.replace("2.5e9 rb", "2.5e9 stb")));
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::UnitVolumeKind),
        "{:?}",
        a.diagnostics
    );
    // A surface productivity.
    let a = with(&aquifer(
        "a",
        &SOUTH.replace("35 rb/day/psi", "35 stb/day/psi"),
    ));
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::UnitVolumeKind),
        "{:?}",
        a.diagnostics
    );
    let a = with(&aquifer("a", &SOUTH.replace("35 rb/day/psi", "35 rb/day")));
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::UnitDimension),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn a_missing_key_is_named() {
    let a = with(&aquifer(
        "a",
        "  side = south\n  water_volume = 1e9 rb\n  productivity = 3 rb/day/psi",
    ));
    assert!(
        has(&a, Code::DeckMissingKey, Severity::Error, "compressibility"),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn an_aquifer_on_faces_a_boundary_or_aquifer_holds_is_an_overlap() {
    let b = "boundary \"edge\" {\n  side = south\n  pressure = 3000 psi\n}\n";
    let a = with(&format!("{b}{}", aquifer("flank", SOUTH)));
    assert!(
        has(
            &a,
            Code::BoundaryOverlap,
            Severity::Error,
            "aquifer \"flank\" holds faces that boundary \"edge\" already holds"
        ),
        "{:?}",
        a.diagnostics
    );
    assert!(a.runnable_case().is_none());
    let two = format!(
        "{}{}",
        aquifer("one", SOUTH),
        aquifer("two", &SOUTH.replace("k = 2", "i = 3..4"))
    );
    let a = with(&two);
    assert!(
        has(
            &a,
            Code::BoundaryOverlap,
            Severity::Error,
            "aquifer \"two\" holds faces that aquifer \"one\" already holds"
        ),
        "{:?}",
        a.diagnostics
    );
    // Disjoint layers of one side, and a boundary on another side, are fine.
    let apart = format!(
        "{}{}boundary \"east\" {{\n  side = east\n  pressure = 3000 psi\n}}\n",
        aquifer("one", SOUTH),
        aquifer("two", &SOUTH.replace("k = 2", "k = 1"))
    );
    let a = with(&apart);
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    assert_eq!(a.case.unwrap().aquifers.len(), 2);
}

#[test]
fn an_aquifer_named_like_a_boundary_is_a_duplicate_name() {
    let b = "boundary \"flank\" {\n  side = east\n  pressure = 3000 psi\n}\n";
    let a = with(&format!("{b}{}", aquifer("flank", SOUTH)));
    assert!(
        has(
            &a,
            Code::DeckDuplicateName,
            Severity::Error,
            "has the name of a boundary"
        ),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn a_selection_that_misses_the_side_is_a_grid_index_error() {
    let a = with(&aquifer("a", &SOUTH.replace("k = 2", "j = 2")));
    assert!(
        has(
            &a,
            Code::GridIndex,
            Severity::Error,
            "selects no face on the south side"
        ),
        "{:?}",
        a.diagnostics
    );
    let a = with(&aquifer("a", &SOUTH.replace("k = 2", "k = 5")));
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::GridIndex),
        "{:?}",
        a.diagnostics
    );
}
