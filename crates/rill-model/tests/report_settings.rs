//! The `report` block: unit system and which report times get a map file.
//! Deck of the fictional "Millbrook" teaching block.

use rill_model::{analyze_text, Code, MapSelection, MemorySource, UnitSystem};
use std::path::Path;

const BLOCK: &str = include_str!("../../../examples/teaching-block.rill");

fn report(body: &str) -> rill_model::Analysis {
    let text = BLOCK.replace(
        "report {\n  units = field\n}",
        &format!("report {{\n{body}\n}}"),
    );
    assert!(text.contains(body));
    analyze_text(Path::new("/w/millbrook.rill"), &text, &MemorySource::new())
}

#[test]
fn maps_defaults_to_all_and_takes_last_or_none() {
    let a = report("  units = metric");
    let r = a.case.unwrap().report;
    assert_eq!((r.units, r.maps), (UnitSystem::Metric, MapSelection::All));
    for (word, want) in [("last", MapSelection::Last), ("none", MapSelection::None)] {
        let a = report(&format!("  maps = {word}"));
        assert!(!a.has_errors(), "{:?}", a.diagnostics);
        assert_eq!(a.case.unwrap().report.maps, want);
    }
}

#[test]
fn an_unknown_map_choice_is_a_choice_error_with_the_nearest() {
    let a = report("  maps = lats");
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::DeckChoice)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert!(d[0].message.contains("lats"), "{}", d[0].message);
    assert!(!d[0].fixes.is_empty(), "a fix offers `last`");
}
