//! Messages say each thing once: a missing array file is named once when
//! its resolved path is the same text, and its resolved path is added only
//! where it says more. Deck of the fictional "Millbrook" teaching block.

use rill_model::{analyze_text, Code, MemorySource};
use std::path::Path;

const BLOCK: &str = include_str!("../../../examples/teaching-block.rill");

fn missing_file_message(deck: &str) -> String {
    let text = BLOCK.replace("kx = 50 md", "kx = file \"tops.txt\" md");
    let a = analyze_text(Path::new(deck), &text, &MemorySource::new());
    a.diagnostics
        .into_iter()
        .find(|d| d.code == Code::DeckInclude)
        .expect("a deck.include error")
        .message
}

#[test]
fn a_missing_array_file_is_named_once() {
    let m = missing_file_message("block.rill");
    assert!(
        m.starts_with("array file \"tops.txt\" cannot be used: "),
        "{m}"
    );
    let m = missing_file_message("/w/block.rill");
    assert!(
        m.starts_with("array file \"tops.txt\" (/w/tops.txt) cannot be used: "),
        "{m}"
    );
}
