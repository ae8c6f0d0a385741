//! First checks on the example deck: every query answers without panicking.

use rill_ide::{Config, Snapshot, Span};
use rill_model::MemorySource;
use std::path::Path;

const LARKSPUR: &str = include_str!("../../../examples/larkspur-east.rill");

#[test]
fn larkspur_clean_and_answers() {
    let snap = Snapshot::new(
        Path::new("larkspur-east.rill"),
        LARKSPUR,
        &MemorySource::new(),
    );
    assert!(!snap.analysis().has_errors(), "{:?}", snap.diagnostics());
    let off = LARKSPUR.find("150 40").unwrap();
    let h = snap.hover(off).expect("hover on a layer value");
    assert!(h.markdown.contains("layer 1"), "{}", h.markdown);
    let syms = snap.symbols();
    assert!(syms.iter().any(|s| s.name == "LE-1"));
    assert_eq!(snap.format(), Some(vec![]));
    let toks = snap.semantic_tokens();
    assert!(toks.windows(2).all(|w| w[0].span.end <= w[1].span.start));
    let hints = snap.inlay_hints(
        Span::new(0, LARKSPUR.len()),
        &Config {
            inlay_hints: true,
            hint_system: None,
        },
    );
    assert!(hints.iter().any(|h| h.label == "= 2400 cells"), "{hints:?}");
}

/// The server shares snapshots between threads.
#[test]
fn snapshot_is_send_and_sync() {
    fn check<T: Send + Sync + Clone>(_: &T) {}
    let snap = Snapshot::new(Path::new("x.rill"), "", &MemorySource::new());
    check(&snap);
    assert!(snap
        .diagnostics()
        .iter()
        .any(|d| d.code == "deck.missing-key"));
}
