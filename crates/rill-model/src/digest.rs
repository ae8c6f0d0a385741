//! The case digest: a fingerprint of everything a run simulates, so that a
//! result set on disk can be matched with the deck as it is now. Two decks
//! that lower to the same [`Case`] (a comment, the layout, `ft` written as
//! `m`) have the same digest; any change to a value that reaches the
//! simulator gives another.
//!
//! Where blocks are written (their `Origin`) is left out: moving a block
//! or editing a comment above it changes no result. The case is streamed
//! through its `Debug` form (every field, so a field
//! added to `Case` is covered without touching this file; floats print as
//! the shortest text that reads back to the same bits) into XXH3-128, a
//! fixed, published hash: the digest is the same in every rill process and
//! version that lowers the deck the same way.

use std::fmt::Write;

use xxhash_rust::xxh3::Xxh3;

use crate::case::{Case, Origin};

/// The digest of `case` as 32 lowercase hex digits.
pub fn case_digest(case: &Case) -> String {
    let mut sink = HashSink(Xxh3::new());
    // Per-cell arrays are shared, so the copy is cheap.
    let mut case = case.clone();
    for w in &mut case.wells {
        w.origin = Origin::default();
    }
    for b in &mut case.boundaries {
        b.origin = Origin::default();
    }
    for f in &mut case.faults {
        f.origin = Origin::default();
    }
    for a in &mut case.aquifers {
        a.origin = Origin::default();
    }
    for e in &mut case.timeline.events {
        e.origin = Origin::default();
    }
    // Writing into the hasher cannot fail.
    let _ = write!(sink, "{case:?}");
    format!("{:032x}", sink.0.digest128())
}

/// Feeds formatted text to the hasher without building the string.
struct HashSink(Xxh3);

impl Write for HashSink {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        self.0.update(s.as_bytes());
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{analyze_text, MemorySource};
    use std::path::Path;

    const DECK: &str = include_str!("../../../examples/teaching-block.rill");

    fn digest(text: &str) -> String {
        let a = analyze_text(Path::new("/w/block.rill"), text, &MemorySource::new());
        case_digest(a.case.as_ref().expect("a case"))
    }

    #[test]
    fn layout_and_comments_keep_the_digest_and_values_change_it() {
        let d = digest(DECK);
        assert_eq!(d.len(), 32);
        assert_eq!(d, digest(DECK), "the same deck, the same digest");
        // A comment at the top moves every block: the same case.
        assert_eq!(d, digest(&format!("# revised\n\n{DECK}")));
        // 100 ft written as 30.48 m is the same length.
        assert!(DECK.contains("dx = 100 ft"));
        assert_eq!(d, digest(&DECK.replace("dx = 100 ft", "dx = 30.48 m")));
        // Any simulated value changes it.
        assert_ne!(d, digest(&DECK.replace("dx = 100 ft", "dx = 101 ft")));
        assert_ne!(
            d,
            digest(&DECK.replace("porosity = 0.2", "porosity = 0.21"))
        );
    }
}
