//! The checker never panics, whatever the deck: random and mutated decks
//! from the examples and fixtures go through the whole analysis. Results
//! kept between analyses (as the language server keeps them) never change
//! what an analysis finds. And the formatter keeps the diagnostics of every
//! example and fixture the same.
//!
//! Case counts come from `PROPTEST_CASES`; the default keeps CI fast, and
//! `scripts/fuzz-checker` runs a campaign of a million cases.

use proptest::prelude::*;
use rill_model::reuse::Reuse;
use rill_model::{analyze_text, analyze_text_with, MemorySource};
use std::path::{Path, PathBuf};

// The mutations are shared with the oil-water engine's no-panic campaign
// (`rill-sim/tests/oil_water_robust.rs`).
mod mutation;
use mutation::{apply, mutation};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// Every deck in examples/ and tests/fixtures/, with its path.
fn decks() -> Vec<(PathBuf, String)> {
    let mut out = Vec::new();
    let mut stack = vec![root().join("examples"), root().join("tests/fixtures")];
    while let Some(dir) = stack.pop() {
        let Ok(entries) = std::fs::read_dir(&dir) else {
            continue;
        };
        for e in entries.flatten() {
            let p = e.path();
            if p.is_dir() {
                stack.push(p);
            } else if p.extension().is_some_and(|x| x == "rill") {
                let text = std::fs::read_to_string(&p).unwrap();
                out.push((p, text));
            }
        }
    }
    out.sort();
    out
}

/// A source holding the example array and include files, so mutated decks
/// still reach deep into the checks.
fn source_for(path: &Path) -> MemorySource {
    let mut s = MemorySource::new();
    if let Some(dir) = path.parent() {
        if let Ok(entries) = std::fs::read_dir(dir) {
            for e in entries.flatten() {
                let p = e.path();
                if p.is_file() {
                    if let Ok(bytes) = std::fs::read(&p) {
                        s.insert(&p, bytes);
                    }
                }
            }
        }
    }
    s
}

/// Spans must lie on character boundaries inside their file.
fn assert_spans_sane(a: &rill_model::Analysis) {
    for d in &a.diagnostics {
        let text = &a.files[d.location.file].text;
        assert!(d.location.start <= d.location.end, "{d:?}");
        assert!(d.location.end <= text.len(), "{d:?}");
        assert!(
            text.is_char_boundary(d.location.start) && text.is_char_boundary(d.location.end),
            "{d:?}"
        );
    }
}

proptest! {
    // `PROPTEST_CASES` sets the count (256 by default, fast enough for CI).
    #![proptest_config(ProptestConfig {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(256),
        ..ProptestConfig::default()
    })]

    #[test]
    fn mutated_decks_never_panic_the_checker(pick in any::<usize>(), muts in prop::collection::vec(mutation(), 1..6)) {
        let decks = decks();
        let (path, text) = &decks[pick % decks.len()];
        let mut t = text.clone();
        for m in &muts {
            t = apply(&t, m);
        }
        let a = analyze_text(path, &t, &source_for(path));
        assert_spans_sane(&a);
    }

    /// A deck edited step by step, as typed, analysed with a cache that
    /// keeps results: each version's case and diagnostics equal those of a
    /// fresh analysis. Spare buffers come in between now and then.
    #[test]
    fn kept_results_never_change_an_analysis(
        pick in any::<usize>(),
        steps in prop::collection::vec((mutation(), any::<bool>()), 1..6),
    ) {
        let decks = decks();
        let (path, text) = &decks[pick % decks.len()];
        let files = source_for(path);
        let cache = Reuse::new();
        let mut t = text.clone();
        let first = analyze_text_with(path, &t, &files, &cache);
        if let Some(case) = &first.case {
            cache.prepare(case.grid.cell_count(), 2);
        }
        for (m, prepare) in &steps {
            t = apply(&t, m);
            let kept = analyze_text_with(path, &t, &files, &cache);
            let fresh = analyze_text(path, &t, &files);
            prop_assert_eq!(&kept.diagnostics, &fresh.diagnostics);
            prop_assert_eq!(&kept.case, &fresh.case);
            if let (true, Some(case)) = (*prepare, &kept.case) {
                cache.prepare(case.grid.cell_count(), 2);
            }
        }
    }

    #[test]
    fn random_text_never_panics_the_checker(text in "(?s).{0,400}") {
        let a = analyze_text(Path::new("random.rill"), &text, &MemorySource::new());
        assert_spans_sane(&a);
    }
}

/// Diagnostics as (code, severity, message) with positions left out, since
/// formatting moves text.
fn summary(a: &rill_model::Analysis) -> Vec<(String, String, String)> {
    let mut v: Vec<_> = a
        .diagnostics
        .iter()
        .map(|d| {
            (
                d.code.to_string(),
                d.severity.name().to_string(),
                d.message.clone(),
            )
        })
        .collect();
    v.sort();
    v
}

#[test]
fn fmt_is_idempotent_and_keeps_diagnostics_on_every_example_and_fixture() {
    let mut checked = 0;
    for (path, text) in decks() {
        let tree = rill_syntax::parse(&text);
        if !tree.errors.is_empty() {
            continue; // fmt refuses files with syntax errors
        }
        let once = rill_syntax::format(&tree, &text);
        let twice = rill_syntax::format(&rill_syntax::parse(&once), &once);
        assert_eq!(once, twice, "fmt is not idempotent on {}", path.display());
        let source = source_for(&path);
        let before = analyze_text(&path, &text, &source);
        let after = analyze_text(&path, &once, &source);
        assert_eq!(
            summary(&before),
            summary(&after),
            "fmt changed the diagnostics of {}",
            path.display()
        );
        checked += 1;
    }
    assert!(checked >= 30, "only {checked} decks checked");
}

#[test]
fn examples_are_clean_and_in_canonical_format() {
    let examples: Vec<_> = decks()
        .into_iter()
        .filter(|(p, _)| p.starts_with(root().join("examples")))
        .collect();
    for (path, text) in &examples {
        let name = path.file_name().unwrap().to_string_lossy();
        // A fragment included by another example is checked through it.
        let fragment = examples
            .iter()
            .any(|(_, t)| t.contains(&format!("include \"{name}\"")));
        let formatted = rill_syntax::format(&rill_syntax::parse(text), text);
        assert_eq!(
            &formatted,
            text,
            "{} is not in canonical format (run `rill fmt`)",
            path.display()
        );
        if fragment {
            continue;
        }
        let a = analyze_text(path, text, &source_for(path));
        assert!(
            a.diagnostics.is_empty(),
            "{}: {:?}",
            path.display(),
            a.diagnostics
                .iter()
                .map(|d| format!("{} {}", d.code, d.message))
                .collect::<Vec<_>>()
        );
    }
}

#[test]
fn a_patch_above_its_base_value_still_applies_after_it() {
    let base =
        std::fs::read_to_string(root().join("tests/fixtures/flow.isolated/clean.rill")).unwrap();
    let patch = "  patch i = 1 j = 1 {\n    kx = 5 md\n  }\n";
    assert!(base.contains(patch));
    let first = base
        .replacen(patch, "", 1)
        .replacen("rock {\n", &format!("rock {{\n{patch}"), 1);
    let a = analyze_text(Path::new("a.rill"), &base, &MemorySource::new());
    let b = analyze_text(Path::new("b.rill"), &first, &MemorySource::new());
    assert!(
        !b.has_errors(),
        "{:?}",
        b.diagnostics.iter().map(|d| &d.message).collect::<Vec<_>>()
    );
    let (ka, kb) = (a.case.unwrap().rock.kx, b.case.unwrap().rock.kx);
    assert_eq!(ka, kb);
    assert!(
        (ka[0] - 5.0 * 9.869233e-16).abs() < 1e-25,
        "the patch wins over the base in cell (1, 1, 1)"
    );
}
