//! Symbols, navigation, semantic tokens, inlay hints, folding, code lenses.

mod common;
use common::*;
use rill_ide::{Config, InlayHintKind, Span, SymbolKind, Target, TokenKind};
use rill_model::MemorySource;
use rill_units::System;
use std::path::PathBuf;

#[test]
fn symbols_outline_the_deck() {
    let syms = snap(BASE).symbols();
    let names: Vec<(&str, SymbolKind)> = syms.iter().map(|s| (s.name.as_str(), s.kind)).collect();
    assert_eq!(
        names,
        vec![
            ("Base", SymbolKind::Case),
            ("grid", SymbolKind::Grid),
            ("rock", SymbolKind::Rock),
            ("fluid", SymbolKind::Fluid),
            ("initial", SymbolKind::Initial),
            ("P-1", SymbolKind::Well),
            ("east aquifer", SymbolKind::Boundary),
            ("timeline", SymbolKind::Timeline),
            ("report", SymbolKind::Report),
        ]
    );
    assert_eq!(syms[1].detail.as_deref(), Some("4 x 3 x 2"));
    assert_eq!(syms[3].detail.as_deref(), Some("brine"));
    assert_eq!(syms[5].detail.as_deref(), Some("producer"));
    assert_eq!(syms[6].detail.as_deref(), Some("east"));
    let patch = &syms[2].children[0];
    assert_eq!(
        (patch.name.as_str(), patch.kind),
        ("patch i = 2..3 k = 2", SymbolKind::Patch)
    );
    let event = &syms[7].children[0];
    assert_eq!(
        (event.name.as_str(), event.kind),
        ("at 50 day", SymbolKind::Event)
    );
    assert_eq!(event.children[0].name, "P-1");
    assert_eq!(
        &BASE[syms[5].selection.start..syms[5].selection.end],
        "\"P-1\""
    );
    assert!(
        syms[5].range.start <= syms[5].selection.start
            && syms[5].selection.end <= syms[5].range.end
    );
}

#[test]
fn definition_and_references_of_wells_and_includes() {
    let wells = "well \"Q-2\" {\n  role = injector\n  location = (3, 1)\n  radius = 0.3 ft\n  control = rate 10 stb/day\n}\n";
    let deck = BASE.replace("    well \"P-1\" { control = bhp 1500 psi }\n", "    well \"P-1\" { control = bhp 1500 psi }\n    well \"Q-2\" { control = rate 20 stb/day }\n")
        + "include \"more/wells.rill\"\n";
    let src = MemorySource::new().with("more/wells.rill", wells);
    let s = snap_with(&deck, &src);
    assert!(!s.analysis().has_errors(), "{:?}", s.diagnostics());
    // An event name goes to the well block in this file...
    let t = s
        .definition(at(&deck, "\"P-1\" { control", 2))
        .expect("definition");
    assert_eq!(
        t,
        Target {
            file: PathBuf::from("deck.rill"),
            span: Span::new(
                at(&deck, "\"P-1\" {\n  role", 0),
                at(&deck, "\"P-1\" {\n  role", 5)
            )
        }
    );
    // ...or in the included file.
    let t = s
        .definition(at(&deck, "\"Q-2\"", 1))
        .expect("definition in include");
    assert_eq!(t.file, PathBuf::from("more/wells.rill"));
    assert_eq!(&wells[t.span.start..t.span.end], "\"Q-2\"");
    // An include path goes to the top of the file.
    let t = s.definition(at(&deck, "more/wells", 3)).expect("include");
    assert_eq!(
        t,
        Target {
            file: PathBuf::from("more/wells.rill"),
            span: Span::new(0, 0)
        }
    );
    // An array file goes to the top of the file, resolved against the deck.
    let with_file = deck.replace("kx = layers [150 40] md", "kx = file \"arrays/kx.txt\" md");
    let arrays = MemorySource::new()
        .with("more/wells.rill", wells)
        .with("arrays/kx.txt", vec!["120"; 4 * 3 * 2].join(" "));
    let f = snap_with(&with_file, &arrays);
    assert!(!f.analysis().has_errors(), "{:?}", f.diagnostics());
    let t = f
        .definition(at(&with_file, "arrays/kx", 2))
        .expect("array file");
    assert_eq!(
        t,
        Target {
            file: PathBuf::from("arrays/kx.txt"),
            span: Span::new(0, 0)
        }
    );
    // Not on the form word or the unit.
    assert_eq!(f.definition(at(&with_file, "file \"arrays", 1)), None);
    // `ky = kx` goes to kx.
    let t = s.definition(at(&deck, "ky = kx", 6)).expect("reference");
    assert_eq!(&deck[t.span.start..t.span.end], "kx");
    assert_eq!(t.span.start, at(&deck, "kx = layers", 0));
    // References: the label and the event, from either place.
    let refs = s.references(at(&deck, "\"P-1\" {\n  role", 2));
    assert_eq!(
        refs,
        vec![
            Span::new(
                at(&deck, "\"P-1\" {\n  role", 0),
                at(&deck, "\"P-1\" {\n  role", 5)
            ),
            Span::new(
                at(&deck, "\"P-1\" { control", 0),
                at(&deck, "\"P-1\" { control", 5)
            )
        ]
    );
    assert_eq!(s.references(at(&deck, "\"P-1\" { control", 1)), refs);
    assert!(s.references(at(&deck, "porosity", 0)).is_empty());
}

#[test]
fn semantic_tokens_sorted_non_overlapping_and_classified() {
    let deck = format!("# header\n{BASE}include \"x.rill\"\n");
    let s = snap(&deck);
    let toks = s.semantic_tokens();
    assert!(
        toks.windows(2).all(|w| w[0].span.end <= w[1].span.start),
        "overlap"
    );
    assert!(toks.iter().all(|t| !t.span.is_empty()
        && deck.is_char_boundary(t.span.start)
        && deck.is_char_boundary(t.span.end)));
    let kind_of = |pat: &str, plus: usize, len: usize| {
        let start = at(&deck, pat, plus);
        toks.iter()
            .find(|t| t.span == Span::new(start, start + len))
            .map(|t| t.kind)
    };
    assert_eq!(kind_of("# header", 0, 8), Some(TokenKind::Comment));
    assert_eq!(kind_of("grid {", 0, 4), Some(TokenKind::Block));
    assert_eq!(kind_of("cells =", 0, 5), Some(TokenKind::Key));
    assert_eq!(kind_of("4 x 3", 0, 1), Some(TokenKind::Number));
    assert_eq!(kind_of("4 x 3", 2, 1), Some(TokenKind::Operator));
    assert_eq!(kind_of("100 ft", 4, 2), Some(TokenKind::Unit));
    assert_eq!(kind_of("100 ft", 0, 3), Some(TokenKind::Number));
    assert_eq!(kind_of("\"P-1\" {\n  role", 0, 5), Some(TokenKind::Name));
    assert_eq!(kind_of("producer", 0, 8), Some(TokenKind::EnumValue));
    assert_eq!(kind_of("layers [", 0, 6), Some(TokenKind::Keyword));
    assert_eq!(kind_of("at 50 day", 0, 2), Some(TokenKind::Keyword));
    assert_eq!(kind_of("psi at", 4, 2), Some(TokenKind::Keyword));
    assert_eq!(kind_of("include", 0, 7), Some(TokenKind::Keyword));
    assert_eq!(kind_of("\"x.rill\"", 0, 8), Some(TokenKind::String));
    assert_eq!(kind_of("0.1 * kx", 4, 1), Some(TokenKind::Operator));
    assert_eq!(kind_of("1..2", 1, 2), Some(TokenKind::Operator));
    // A range query returns the tokens of the whole document that overlap it.
    let r = Span::new(at(&deck, "rock {", 0), at(&deck, "fluid", 0));
    let part = s.semantic_tokens_in(r);
    let whole: Vec<_> = toks
        .iter()
        .filter(|t| t.span.start < r.end && r.start < t.span.end)
        .copied()
        .collect();
    assert_eq!(part, whole);
}

#[test]
fn inlay_hints_for_quantities_and_cell_counts() {
    let deck = BASE
        .replace("kx = layers [150 40] md", "kx = 150 md")
        .replace("cells = 4 x 3 x 2", "cells = 30 x 20 x 4");
    let s = snap(&deck);
    let all = Span::new(0, deck.len());
    let on = Config {
        inlay_hints: true,
        hint_system: None,
    };
    let hints = s.inlay_hints(all, &on);
    let label_at = |pat: &str, len: usize| {
        hints
            .iter()
            .find(|h| h.offset == at(&deck, pat, len))
            .map(|h| h.label.clone())
    };
    assert_eq!(label_at("30 x 20 x 4", 11).as_deref(), Some("= 2400 cells"));
    // 150 md = 1.48e-13 m^2 (darcy = 9.869233e-13 m^2, NIST SP 811).
    assert_eq!(label_at("150 md", 6).as_deref(), Some("≈ 1.48e-13 m²"));
    // 3200 psi = 220.632 bar (psi = 6894.757 Pa, NIST SP 811).
    assert_eq!(label_at("3200 psi", 8).as_deref(), Some("≈ 220.6 bar"));
    // 100 ft = 30.48 m exactly.
    assert_eq!(label_at("dx = 100 ft", 11).as_deref(), Some("= 30.48 m"));
    assert!(label_at("layers = 1..2", 13).is_none());
    assert!(hints.iter().any(|h| h.kind == InlayHintKind::Count));
    // Off, or a system that is already written: nothing.
    assert!(s
        .inlay_hints(
            all,
            &Config {
                inlay_hints: false,
                hint_system: None
            }
        )
        .is_empty());
    let field = s.inlay_hints(
        all,
        &Config {
            inlay_hints: true,
            hint_system: Some(System::Field),
        },
    );
    assert!(!field.iter().any(|h| h.offset == at(&deck, "3200 psi", 8)));
    let metric = s.inlay_hints(
        all,
        &Config {
            inlay_hints: true,
            hint_system: Some(System::Metric),
        },
    );
    assert!(metric
        .iter()
        .any(|h| h.offset == at(&deck, "3200 psi", 8) && h.label == "≈ 220.6 bar"));
    // Only inside the range.
    let r = Span::new(at(&deck, "initial", 0), at(&deck, "well", 0));
    let some = s.inlay_hints(r, &on);
    assert_eq!(some.len(), 2, "{some:?}"); // 3200 psi and 5000 ft
}

#[test]
fn folding_ranges_cover_blocks_lists_and_comment_runs() {
    let deck = format!(
        "# one\n# two\n# three\n{}",
        BASE.replace("dz = [20 30] ft", "dz = [\n    20\n    30\n  ] ft")
    );
    let folds = snap(&deck).folding_ranges();
    assert!(
        folds.contains(&Span::new(0, at(&deck, "# three", 7))),
        "{folds:?}"
    );
    let grid = Span::new(at(&deck, "grid {", 0), at(&deck, "  top = 5000 ft\n}", 17));
    assert!(folds.contains(&grid), "{folds:?}");
    let list = Span::new(at(&deck, "[\n    20", 0), at(&deck, "  ] ft", 3));
    assert!(folds.contains(&list), "{folds:?}");
    // One-line blocks do not fold.
    let one = at(&deck, "well \"P-1\" { control", 0);
    assert!(!folds.iter().any(|f| f.start == one));
}

#[test]
fn run_lens_enabled_only_without_errors() {
    let lenses = snap(BASE).code_lenses();
    assert_eq!(lenses.len(), 1);
    assert_eq!(lenses[0].command.as_deref(), Some("rill.run"));
    assert_eq!(lenses[0].span, Span::new(0, 4));
    let bad = BASE.replace("viscosity = 0.8 cP", "viscosity = 0.8");
    let lenses = snap(&bad).code_lenses();
    assert_eq!(lenses[0].command, None);
    assert!(lenses[0].title.contains("1 error"), "{}", lenses[0].title);
    assert!(snap("# just a comment\n").code_lenses().is_empty());
}
