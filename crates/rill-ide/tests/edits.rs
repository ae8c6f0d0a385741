//! Code actions and formatting edits: applied, they give text that checks clean
//! or that equals the formatter's output.

mod common;
use common::*;
use rill_ide::{CodeActionKind, Span};

#[test]
fn unit_fix_applied_checks_clean() {
    let deck = BASE.replace("viscosity = 0.8 cP", "viscosity = 0.8 cp");
    let s = snap(&deck);
    let d = s
        .diagnostics()
        .iter()
        .position(|d| d.code == "unit.unknown")
        .expect("unit.unknown");
    let off = at(&deck, "0.8 cp", 5);
    let actions = s.code_actions(Span::new(off, off));
    let fix = actions
        .iter()
        .find(|a| a.diagnostic == Some(d))
        .expect("a fix for the diagnostic");
    assert_eq!(fix.kind, CodeActionKind::QuickFix);
    let fixed = apply(&deck, &fix.edits);
    assert_eq!(fixed, BASE);
    assert!(
        snap(&fixed).diagnostics().is_empty(),
        "{:?}",
        snap(&fixed).diagnostics()
    );

    let deck = BASE.replace("radius = 0.3 ft", "radius = 0.3");
    let s = snap(&deck);
    let off = at(&deck, "0.3\n", 1);
    let actions = s.code_actions(Span::new(off, off));
    let fix = actions
        .iter()
        .find(|a| a.title.contains("`ft`"))
        .expect("add the unit ft");
    let fixed = apply(&deck, &fix.edits);
    assert!(snap(&fixed).diagnostics().is_empty(), "{fixed}");
}

#[test]
fn convert_to_metric_and_field_keeps_the_value() {
    let s = snap(BASE);
    let off = at(BASE, "3200 psi", 1);
    let actions = s.code_actions(Span::new(off, off));
    let metric = actions
        .iter()
        .find(|a| a.title.contains("metric"))
        .expect("metric");
    assert_eq!(metric.kind, CodeActionKind::Refactor);
    // psi = 6894.757 Pa (NIST SP 811): 220.632 bar.
    assert_eq!(metric.edits[0].new_text, "220.632 bar");
    assert!(
        !actions.iter().any(|a| a.title.contains("field")),
        "already field"
    );
    let converted = apply(BASE, &metric.edits);
    let s2 = snap(&converted);
    assert!(s2.diagnostics().is_empty(), "{:?}", s2.diagnostics());
    let (p1, p2) = match (
        &s.analysis().case.as_ref().unwrap().initial,
        &s2.analysis().case.as_ref().unwrap().initial,
    ) {
        (
            rill_model::Initial::Datum { pressure: a, .. },
            rill_model::Initial::Datum { pressure: b, .. },
        ) => (*a, *b),
        _ => panic!("datum"),
    };
    // Six significant digits keep the value to 5e-6.
    assert!((p1 - p2).abs() / p1 < 5e-6);
    // Back to field from metric; a length to metres.
    let off = at(&converted, "220.632 bar", 2);
    let actions = s2.code_actions(Span::new(off, off));
    let field = actions
        .iter()
        .find(|a| a.title.contains("field"))
        .expect("field");
    assert_eq!(field.edits[0].new_text, "3200 psi");
    let off = at(BASE, "0.3 ft", 0);
    let actions = s.code_actions(Span::new(off, off));
    assert_eq!(
        actions
            .iter()
            .find(|a| a.title.contains("metric"))
            .unwrap()
            .edits[0]
            .new_text,
        "0.09144 m"
    );
    // A gauge pressure converts to an absolute one of the same meaning.
    let deck = BASE.replace("bhp_limit = 1000 psi", "bhp_limit = 1000 psig");
    let off = at(&deck, "1000 psig", 0);
    let actions = snap(&deck).code_actions(Span::new(off, off));
    let f = actions.iter().find(|a| a.title.contains("field")).unwrap();
    assert_eq!(f.edits[0].new_text, "1014.7 psi");
}

#[test]
fn array_length_fix_shows_expected_and_found() {
    let deck = BASE.replace("dz = [20 30] ft", "dz = [20] ft");
    let s = snap(&deck);
    let d = s
        .diagnostics()
        .iter()
        .position(|d| d.code == "grid.array-length")
        .expect("array-length");
    let off = at(&deck, "[20]", 1);
    let actions = s.code_actions(Span::new(off, off));
    let fix = actions
        .iter()
        .find(|a| a.diagnostic == Some(d))
        .expect("length fix");
    assert!(fix.title.contains("expected 2, found 1"), "{}", fix.title);
    let fixed = apply(&deck, &fix.edits);
    assert!(fixed.contains("dz = [20 20] ft"), "{fixed}");
    assert!(snap(&fixed).diagnostics().is_empty());
    // Too many values.
    let deck = BASE.replace("dz = [20 30] ft", "dz = [20 30 40 50] ft");
    let s = snap(&deck);
    let off = at(&deck, "[20 30 40", 1);
    let actions = s.code_actions(Span::new(off, off));
    let fix = actions
        .iter()
        .find(|a| a.title.contains("expected 2, found 4"))
        .expect("drop fix");
    let fixed = apply(&deck, &fix.edits);
    assert_eq!(fixed, BASE);
}

#[test]
fn fixes_in_other_files_are_left_out() {
    let src = rill_model::MemorySource::new().with("w.rill", "well \"X\" {\n  role = producer\n  location = (1, 1)\n  radius = 0.3\n  control = rate 10 stb/day\n}\n");
    let deck = format!("{BASE}include \"w.rill\"\n");
    let s = snap_with(&deck, &src);
    assert!(s
        .diagnostics()
        .iter()
        .any(|d| d.location.file == 1 && d.code == "unit.missing"));
    let actions = s.code_actions(Span::new(0, deck.len()));
    assert!(actions.iter().all(|a| a
        .diagnostic
        .is_none_or(|i| s.diagnostics()[i].location.file == 0)));
}

#[test]
fn formatting_edits_reproduce_the_formatter() {
    let messy = "grid{cells=4x3x2\n dx=100ft;dy = 100 ft\n\n\n\n  dz=[20   30]ft\ntop=5000 ft}\n# note\nrock {porosity=0.2; kx = layers [150,40] md}\n";
    let s = snap(messy);
    let edits = s.format().expect("no syntax errors");
    assert!(!edits.is_empty());
    let want = rill_syntax::format(&rill_syntax::parse(messy), messy);
    assert_eq!(apply(messy, &edits), want);
    // Unchanged lines are left alone: one edit per changed run.
    let text =
        "grid {\n  cells = 1 x 1 x 1\n  dx =  1 ft\n  dy = 1 ft\n  dz = 1 ft\n  top  = 1 ft\n}\n";
    let edits = snap(text).format().unwrap();
    assert_eq!(edits.len(), 2, "{edits:?}");
    assert_eq!(
        &text[edits[0].span.start..edits[0].span.end],
        "  dx =  1 ft\n"
    );
    assert_eq!(edits[0].new_text, "  dx = 1 ft\n");
    assert_eq!(
        apply(text, &edits),
        rill_syntax::format(&rill_syntax::parse(text), text)
    );
    // Formatted already: no edits. Syntax errors: no formatting.
    assert_eq!(snap(&want).format(), Some(vec![]));
    assert_eq!(snap("grid { cells = [1 2\n").format(), None);
    // Multi-byte text around the change.
    let text = "case \"Ω🛢\" {\n  title   =   \"é\"\n}\n";
    let edits = snap(text).format().unwrap();
    let want = rill_syntax::format(&rill_syntax::parse(text), text);
    assert_eq!(apply(text, &edits), want);
}

#[test]
fn convert_a_list_with_one_unit() {
    let s = snap(BASE);
    let off = at(BASE, "[20 30] ft", 1);
    let actions = s.code_actions(Span::new(off, off));
    let metric = actions
        .iter()
        .find(|a| a.title.contains("metric"))
        .expect("list conversion");
    let converted = apply(BASE, &metric.edits);
    // ft = 0.3048 m exactly (NIST SP 811).
    assert!(converted.contains("dz = [6.096 9.144] m"), "{converted}");
    let s2 = snap(&converted);
    assert!(s2.diagnostics().is_empty());
    let (a, b) = (
        &s.analysis().case.as_ref().unwrap().grid.dz,
        &s2.analysis().case.as_ref().unwrap().grid.dz,
    );
    assert!(a.iter().zip(b).all(|(x, y)| (x - y).abs() < 1e-12));
}
