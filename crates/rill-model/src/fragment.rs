//! Fragments: files meant to be included by a deck (well, boundary, fault
//! or aquifer blocks, say). Checked on their own they lack every block of a case;
//! when no deck includes them, that is one mistake, said once.

use crate::{Analysis, Code, Diagnostic, Location};
use rill_syntax::{Item, Span};

/// The top-level blocks that make a file a case rather than a fragment.
pub const CASE_BLOCKS: &[&str] = &[
    "case", "grid", "rock", "fluid", "oil", "water", "initial", "timeline",
];

/// Whether the analysed file, with everything it includes, has none of
/// [`CASE_BLOCKS`]: it can only be part of another deck.
pub fn is_fragment(analysis: &Analysis) -> bool {
    analysis
        .files
        .iter()
        .filter_map(|f| f.tree.as_ref())
        .all(|tree| {
            !tree.items.iter().any(|item| {
                matches!(item, Item::Block(b) if CASE_BLOCKS.contains(&b.name.name.as_str()))
            })
        })
}

/// For a fragment that no deck includes: the missing-block errors (one per
/// block of the case, all at the file's start) become one error that says
/// what the file is and what to check instead, with `note` (where the
/// includers were looked for) when given. Diagnostics about the file's own
/// blocks stay. Returns false, changing nothing, when the file is not a
/// fragment.
pub fn mark_unincluded(analysis: &mut Analysis, note: Option<String>) -> bool {
    if !is_fragment(analysis) {
        return false;
    }
    let start = Location::new(0, Span::new(0, 0));
    let before = analysis.diagnostics.len();
    analysis
        .diagnostics
        .retain(|d| !(d.code == Code::DeckMissingKey && d.location == start));
    if analysis.diagnostics.len() == before {
        return false;
    }
    let mut one = Diagnostic::error(
        Code::DeckMissingKey,
        start,
        "this file has no `grid` block and no deck in the workspace includes it; \
         open or check the deck that includes it",
    )
    .with_note("a file of well, boundary, fault or aquifer blocks is checked as part of the deck that includes it");
    if let Some(note) = note {
        one = one.with_note(note);
    }
    analysis.diagnostics.insert(0, one);
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::MemorySource;
    use std::path::Path;

    const WELLS: &str = "well \"P-1\" {\n  role = producer\n  location = (1, 1)\n  radius = 0.1 m\n  control = bhp 100 bar\n}\n";

    #[test]
    fn a_lone_fragment_has_one_error_instead_of_one_per_block() {
        let source = MemorySource::default();
        let mut analysis = crate::analyze_text(Path::new("/w/wells.rill"), WELLS, &source);
        let missing = analysis
            .diagnostics
            .iter()
            .filter(|d| d.code == Code::DeckMissingKey)
            .count();
        assert!(missing >= 5, "{:?}", analysis.diagnostics);
        assert!(mark_unincluded(&mut analysis, Some("searched /w".into())));
        assert_eq!(analysis.diagnostics.len(), 1, "{:?}", analysis.diagnostics);
        let d = &analysis.diagnostics[0];
        assert!(d.message.contains("no deck in the workspace includes it"));
        assert_eq!((d.location.start, d.location.end), (0, 0));
        assert!(d.notes.iter().any(|n| n == "searched /w"));
    }

    #[test]
    fn a_deck_missing_one_block_is_not_a_fragment() {
        let text = format!("grid {{\n  cells = 2 x 2 x 1\n}}\n{WELLS}");
        let source = MemorySource::default();
        let mut analysis = crate::analyze_text(Path::new("/w/deck.rill"), &text, &source);
        let before = analysis.diagnostics.clone();
        assert!(!is_fragment(&analysis));
        assert!(!mark_unincluded(&mut analysis, None));
        assert_eq!(analysis.diagnostics, before);
    }

    #[test]
    fn a_fragment_keeps_the_errors_of_its_own_blocks() {
        let text = "well \"P-1\" {\n  role = producer\n}\n";
        let source = MemorySource::default();
        let mut analysis = crate::analyze_text(Path::new("/w/wells.rill"), text, &source);
        assert!(mark_unincluded(&mut analysis, None));
        assert!(analysis.diagnostics.len() > 1, "{:?}", analysis.diagnostics);
        assert_eq!(
            analysis
                .diagnostics
                .iter()
                .filter(|d| d.location.start == 0 && d.location.end == 0)
                .count(),
            1
        );
    }
}
