//! A fragment (a file of well blocks) answered through the deck that
//! includes it: diagnostics, hover, references and rename across files.

mod common;
use common::*;
use rill_ide::{FileEdit, Snapshot, TextEdit};
use rill_model::MemorySource;
use std::path::{Path, PathBuf};

const FOLDER: &str = "/work/tamsin";

fn example(name: &str) -> String {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/tamsin-ridge");
    std::fs::read_to_string(dir.join(name)).unwrap()
}

fn path(name: &str) -> PathBuf {
    Path::new(FOLDER).join(name)
}

/// The Tamsin Ridge example in memory, with `main` as its main deck.
fn source(main: &str, wells: &str) -> MemorySource {
    let mut s = MemorySource::new()
        .with(path("tamsin-ridge.rill"), main)
        .with(path("wells.rill"), wells);
    for array in ["top.txt", "porosity.txt", "kx.txt"] {
        s.insert(path(array), example(array));
    }
    s
}

/// The main deck with an event that changes well TR-2.
fn main_with_event() -> String {
    example("tamsin-ridge.rill").replace(
        "  report_every = 60 day\n",
        "  report_every = 60 day\n  at 180 day {\n    well \"TR-2\" { control = bhp 170 bar }\n  }\n",
    )
}

fn in_deck(main: &str, wells: &str) -> Snapshot {
    let s = source(main, wells);
    Snapshot::in_deck(
        &path("tamsin-ridge.rill"),
        main,
        &path("wells.rill"),
        wells,
        &s,
        &rill_model::Reuse::new(),
    )
    .expect("the deck reads the fragment")
}

#[test]
fn a_fragment_in_its_deck_is_clean_and_hovers_with_the_well_index() {
    let wells = example("wells.rill");
    let main = example("tamsin-ridge.rill");
    let snap = in_deck(&main, &wells);
    assert!(snap.focus() > 0);
    assert_eq!(snap.context(), Some(path("tamsin-ridge.rill").as_path()));
    assert_eq!(snap.text(), wells);
    assert!(snap.diagnostics().is_empty(), "{:?}", snap.diagnostics());
    let hover = snap
        .hover(at(&wells, "\"TR-2\"", 2))
        .expect("hover on the well");
    assert!(
        hover.markdown.contains("well index ["),
        "{}",
        hover.markdown
    );
    assert_eq!(&wells[hover.range.start..hover.range.end], "\"TR-2\"");
    // The same well, analysed alone, has no case behind it.
    let alone = Snapshot::new(&path("wells.rill"), &wells, &source(&main, &wells));
    let generic = alone.hover(at(&wells, "\"TR-2\"", 2)).expect("hover");
    assert!(!generic.markdown.contains("well index ["));
    // A fragment is run through its deck.
    assert!(snap.code_lenses().is_empty());
}

#[test]
fn a_fragment_shows_only_its_own_diagnostics() {
    let wells = example("wells.rill").replace("radius = 0.1 m\n  skin", "radius = 0.1 bar\n  skin");
    let main = example("tamsin-ridge.rill").replace("end = 2 yr", "end = 2 bar");
    let snap = in_deck(&main, &wells);
    let mine: Vec<_> = snap
        .diagnostics()
        .iter()
        .filter(|d| d.location.file == snap.focus())
        .collect();
    assert_eq!(mine.len(), 1, "{:?}", snap.diagnostics());
    assert_eq!(&wells[mine[0].location.start..mine[0].location.end], "bar");
    assert!(snap.diagnostics().iter().any(|d| d.location.file == 0));
    // Its fix is offered in the fragment.
    let actions = snap.code_actions(mine[0].location.span());
    assert!(
        actions.iter().any(|a| a.diagnostic.is_some()),
        "{actions:?}"
    );
}

#[test]
fn a_buffer_that_moved_on_is_not_taken_from_the_deck() {
    let wells = example("wells.rill");
    let main = example("tamsin-ridge.rill");
    let s = source(&main, &wells);
    let newer = format!("{wells}\n# typed\n");
    let got = Snapshot::in_deck(
        &path("tamsin-ridge.rill"),
        &main,
        &path("wells.rill"),
        &newer,
        &s,
        &rill_model::Reuse::new(),
    );
    assert!(got.is_none());
    // Nor a file the deck does not include.
    let other = Snapshot::in_deck(
        &path("tamsin-ridge.rill"),
        &main,
        &path("other.rill"),
        "",
        &s,
        &rill_model::Reuse::new(),
    );
    assert!(other.is_none());
}

#[test]
fn references_and_rename_from_a_fragment_reach_the_deck() {
    let wells = example("wells.rill");
    let main = main_with_event();
    let snap = in_deck(&main, &wells);
    let on_label = at(&wells, "\"TR-2\"", 3);
    let refs = snap.references_everywhere(on_label);
    let files: Vec<&Path> = refs.iter().map(|t| t.file.as_path()).collect();
    assert_eq!(
        files,
        vec![
            path("tamsin-ridge.rill").as_path(),
            path("wells.rill").as_path()
        ]
    );
    assert_eq!(&main[refs[0].span.start..refs[0].span.end], "\"TR-2\"");
    assert_eq!(
        snap.prepare_rename(on_label),
        Some((refs[1].span, "TR-2".to_string()))
    );
    let edits = snap.rename(on_label, "TR-2A").expect("rename");
    let edits_of = |name: &str| -> Vec<TextEdit> {
        edits
            .iter()
            .filter(|e: &&FileEdit| e.file == path(name))
            .map(|e| e.edit.clone())
            .collect()
    };
    let new_main = apply(&main, &edits_of("tamsin-ridge.rill"));
    let new_wells = apply(&wells, &edits_of("wells.rill"));
    assert!(new_main.contains("well \"TR-2A\" { control"));
    assert!(new_wells.contains("well \"TR-2A\" {\n"));
    assert!(!new_main.contains("\"TR-2\"") && !new_wells.contains("\"TR-2\""));
    let after = in_deck(&new_main, &new_wells);
    assert!(after.diagnostics().is_empty(), "{:?}", after.diagnostics());
    // From the event in the main deck, the same places.
    let from_main = Snapshot::new(&path("tamsin-ridge.rill"), &main, &source(&main, &wells));
    let at_event = at(&main, "\"TR-2\" { control", 2);
    assert_eq!(from_main.references_everywhere(at_event), refs);
    // Names that cannot be written, or that are taken, are refused.
    assert!(snap
        .rename(on_label, "TR-5")
        .unwrap_err()
        .contains("already exists"));
    assert!(snap.rename(on_label, "a\"b").is_err());
    assert!(snap.rename(on_label, " ").is_err());
    assert!(snap.rename(at(&wells, "role", 1), "X").is_err());
    assert_eq!(snap.rename(on_label, "TR-2"), Ok(Vec::new()));
}

#[test]
fn boundaries_are_renamed_too() {
    let main = example("tamsin-ridge.rill");
    let snap = Snapshot::new(
        &path("tamsin-ridge.rill"),
        &main,
        &source(&main, &example("wells.rill")),
    );
    let edits = snap
        .rename(at(&main, "\"basal aquifer\"", 4), "deep aquifer")
        .expect("rename");
    assert_eq!(edits.len(), 1);
    assert_eq!(edits[0].file, path("tamsin-ridge.rill"));
    assert_eq!(
        &main[edits[0].edit.span.start..edits[0].edit.span.end],
        "\"basal aquifer\""
    );
    assert_eq!(edits[0].edit.new_text, "\"deep aquifer\"");
}

#[test]
fn a_lone_fragment_has_one_error() {
    let wells = example("wells.rill");
    let mut alone = Snapshot::new(&path("wells.rill"), &wells, &MemorySource::new());
    assert!(alone.diagnostics().len() >= 5);
    assert!(alone.mark_unincluded(None));
    assert_eq!(alone.diagnostics().len(), 1, "{:?}", alone.diagnostics());
    // A deck is not a fragment.
    let main = example("tamsin-ridge.rill");
    let mut deck = Snapshot::new(&path("tamsin-ridge.rill"), &main, &MemorySource::new());
    assert!(!deck.mark_unincluded(None));
}

#[test]
fn every_offset_of_a_fragment_answers_inside_its_text() {
    let wells = format!("{}  # Ω😀\n", example("wells.rill"));
    let main = main_with_event();
    let snap = in_deck(&main, &wells);
    let inside = |span: rill_ide::Span| {
        span.start <= span.end && span.end <= wells.len() && wells.is_char_boundary(span.start)
    };
    for off in 0..=wells.len() + 2 {
        if let Some(h) = snap.hover(off) {
            assert!(inside(h.range), "hover at {off}");
        }
        for c in snap.completion(off) {
            assert!(inside(c.replace), "completion at {off}");
        }
        for t in snap.references_everywhere(off) {
            if t.file == snap.path() {
                assert!(inside(t.span), "reference at {off}");
            }
        }
        if let Ok(edits) = snap.rename(off, "R") {
            for e in edits.iter().filter(|e| e.file == snap.path()) {
                assert!(inside(e.edit.span), "rename at {off}");
            }
        }
        for a in snap.code_actions(rill_ide::Span::new(off, off + 2)) {
            assert!(a.edits.iter().all(|e| inside(e.span)), "action at {off}");
        }
    }
}
