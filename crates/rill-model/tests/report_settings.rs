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

fn timeline(extra: &str) -> rill_model::Analysis {
    let text = BLOCK.replace(
        "  report_every = 15 day\n",
        &format!("  report_every = 15 day\n{extra}\n"),
    );
    assert!(text.contains(extra));
    analyze_text(Path::new("/w/millbrook.rill"), &text, &MemorySource::new())
}

#[test]
fn report_at_takes_a_list_of_times_in_any_unit() {
    let a = timeline("  report_at = [48 1 2 6 12 24 2] hr");
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let hours: Vec<f64> = a
        .case
        .unwrap()
        .timeline
        .report_at
        .iter()
        .map(|t| t / 3600.0)
        .collect();
    assert_eq!(
        hours,
        [1.0, 2.0, 6.0, 12.0, 24.0, 48.0],
        "sorted, each once"
    );
    // A unit on an item overrides the list's.
    let a = timeline("  report_at = [30 min 2 day] hr");
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    assert_eq!(a.case.unwrap().timeline.report_at, [1800.0, 172800.0]);
}

#[test]
fn report_at_mistakes_are_located() {
    let a = timeline("  report_at = [1 2 3]");
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::UnitMissing),
        "{:?}",
        a.diagnostics
    );
    let a = timeline("  report_at = [10 200] day");
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::TimelineOrder)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert!(d[0].message.contains("after the end"));
    let a = timeline("  report_at = 12 hr");
    assert!(a
        .diagnostics
        .iter()
        .any(|d| d.code == Code::DeckValue && d.message.contains("list of times")));
}
