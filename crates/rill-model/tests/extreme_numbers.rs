//! Extreme numbers in every numeric key of the examples: literals that
//! overflow or underflow when read (`1e309`, `1e-400`, huge exponents),
//! values that overflow in SI or in the units rill shows, and sums and
//! products that overflow. The checker never panics, never lets a value
//! that is not finite into the checked case, and raises an error where it
//! refuses one.
//!
//! Case counts come from `PROPTEST_CASES` (256 by default, for CI);
//! `scripts/fuzz-checker` runs the long campaign.

use proptest::prelude::*;
use rill_model::{analyze_text, Code, MemorySource, Severity};
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// The example decks with their array and include files, and the numeric
/// statements in them: (deck index, line, byte range of the number, the
/// rest of the line after it).
struct Corpus {
    decks: Vec<(PathBuf, String, MemorySource)>,
    numbers: Vec<(usize, usize, std::ops::Range<usize>, String)>,
}

fn corpus() -> Corpus {
    let paths = [
        root().join("examples/teaching-block.rill"),
        root().join("examples/larkspur-east.rill"),
        root().join("examples/tamsin-ridge/tamsin-ridge.rill"),
        // Oil-water: the phases, the Corey and table curves, the contact,
        // the phase controls and `max_water_cut`.
        root().join("examples/brackenlow-waterflood.rill"),
    ];
    let mut decks = Vec::new();
    let mut numbers = Vec::new();
    for (d, path) in paths.iter().enumerate() {
        let text = std::fs::read_to_string(path).unwrap();
        let mut source = MemorySource::new();
        for e in std::fs::read_dir(path.parent().unwrap()).unwrap().flatten() {
            if e.path().is_file() {
                source.insert(e.path(), std::fs::read(e.path()).unwrap());
            }
        }
        for (l, line) in text.lines().enumerate() {
            let Some(eq) = line.find(" = ") else { continue };
            let value = &line[eq + 3..];
            let len = value
                .find(|c: char| !(c.is_ascii_digit() || ".eE+-".contains(c)))
                .unwrap_or(value.len());
            if len > 0 && value.as_bytes()[0].is_ascii_digit() {
                let start = eq + 3;
                numbers.push((d, l, start..start + len, value[len..].to_string()));
            }
        }
        decks.push((path.clone(), text, source));
    }
    Corpus { decks, numbers }
}

/// A literal at or beyond the ends of the 64-bit float range.
fn extreme() -> impl Strategy<Value = String> {
    prop_oneof![
        (prop::sample::select(vec!["1", "9.99", "1.7976931348623157", "5", "0.1"]), 290i32..=330)
            .prop_map(|(m, e)| format!("{m}e{e}")),
        (prop::sample::select(vec!["1", "2.5", "4.9"]), -400i32..=-300)
            .prop_map(|(m, e)| format!("{m}e{e}")),
        Just("1e99999".to_string()),
        Just("1e-99999".to_string()),
        Just("179769313486231570000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000000.0".to_string()),
    ]
}

/// A value replacing a number: a lone literal, or arithmetic of two
/// extreme literals with the number's own unit.
fn replacement() -> impl Strategy<Value = (String, String, char, bool)> {
    (
        extreme(),
        extreme(),
        prop::sample::select(vec!['*', '/', '+', '-']),
        any::<bool>(),
    )
        .prop_map(|(a, b, op, pair)| (a, b, op, pair))
}

/// Whether a value that is not finite (`inf`, `-inf`, `NaN`) appears in
/// the debug text of a case, outside quoted names.
fn shows_non_finite(debug: &str) -> bool {
    let mut outside = String::with_capacity(debug.len());
    let mut quoted = false;
    let mut escaped = false;
    for c in debug.chars() {
        match (quoted, escaped, c) {
            (true, false, '\\') => escaped = true,
            (true, true, _) => escaped = false,
            (_, false, '"') => quoted = !quoted,
            (false, _, c) => outside.push(c),
            _ => {}
        }
    }
    outside
        .split(|c: char| !c.is_ascii_alphabetic())
        .any(|w| w == "inf" || w == "NaN")
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(256),
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    /// One to three numbers of an example replaced: no panic, no value
    /// that is not finite in the case, and an overflowing literal is an
    /// error.
    #[test]
    fn extreme_literals_never_reach_the_case(
        picks in prop::collection::vec((any::<prop::sample::Index>(), replacement()), 1..4),
    ) {
        let corpus = corpus();
        let deck = picks[0].0.index(corpus.numbers.len());
        let d = corpus.numbers[deck].0;
        let (path, text, source) = &corpus.decks[d];
        let mut lines: Vec<String> = text.lines().map(String::from).collect();
        let mut overflowing_literal = false;
        let mut replaced = std::collections::HashSet::new();
        for (pick, (a, b, op, pair)) in &picks {
            // Numbers of the same deck only.
            let same: Vec<_> = corpus.numbers.iter().filter(|n| n.0 == d).collect();
            let (_, l, range, rest) = same[pick.index(same.len())];
            if !replaced.insert(*l) {
                continue; // one replacement per line
            }
            let line = &lines[*l];
            let unit = rest.split_whitespace().next().filter(|u| !u.starts_with('#') && !u.starts_with(',') && *u != "at" && *u != "x" && *u != "..").unwrap_or("");
            let value = if *pair && !unit.is_empty() {
                format!("{a} {unit} {op} {b}")
            } else {
                a.clone()
            };
            overflowing_literal |= value.split_whitespace().any(|t| t.parse::<f64>().is_ok_and(|v| v.is_infinite()));
            lines[*l] = format!("{}{}{}", &line[..range.start], value, &line[range.end..]);
        }
        let text = lines.join("\n") + "\n";
        let a = analyze_text(path, &text, source);
        if let Some(case) = &a.case {
            let debug = format!("{case:?}");
            prop_assert!(!shows_non_finite(&debug), "a value that is not finite in the case of:\n{text}");
        }
        let errors: Vec<_> = a.diagnostics.iter().filter(|d| d.severity == Severity::Error).collect();
        if overflowing_literal {
            prop_assert!(!errors.is_empty(), "no error for an overflowing literal in:\n{text}");
        }
        for d in &errors {
            prop_assert!(!d.message.is_empty());
        }
        // Out-of-range errors name a place inside the deck.
        for d in errors.iter().filter(|d| d.code == Code::DeckOutOfRange) {
            prop_assert!(d.location.end <= a.files[d.location.file].text.len());
        }
    }
}

#[test]
fn the_reproducers_are_errors_and_never_reach_the_case() {
    let path = root().join("examples/teaching-block.rill");
    let text = std::fs::read_to_string(&path).unwrap();
    for kx in [
        "1e309 md",
        "1e308 md * 10",
        "1e308 md * 10 - 1e308 md * 10",
        "-1e309 md",
        "1e308 darcy",
        "5 md * 1e300 * 1e300 / 1e300",
    ] {
        let deck = text.replace("kx = 50 md", &format!("kx = {kx}"));
        let a = analyze_text(&path, &deck, &MemorySource::new());
        let d = a
            .diagnostics
            .iter()
            .find(|d| d.code == Code::DeckOutOfRange)
            .unwrap_or_else(|| panic!("no deck.out-of-range for kx = {kx}: {:?}", a.diagnostics));
        assert_eq!(d.severity, Severity::Error);
        // The error points into the value of `kx`.
        let at = deck.find(kx).unwrap();
        assert!(
            d.location.start >= at && d.location.end <= at + kx.len(),
            "kx = {kx}: {d:?}"
        );
        if let Some(case) = &a.case {
            assert!(!shows_non_finite(&format!("{case:?}")), "kx = {kx}");
        }
    }
    // An array file value that overflows once in SI units and in md.
    let source =
        MemorySource::new().with(path.parent().unwrap().join("kx.txt"), "1e306 ".repeat(121));
    let deck = text.replace("kx = 50 md", "kx = file \"kx.txt\" darcy");
    let a = analyze_text(&path, &deck, &source);
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::DeckOutOfRange)
        .expect("an error for the file");
    assert!(
        d.message.contains("value 1 of file \"kx.txt\""),
        "{}",
        d.message
    );
}

#[test]
fn the_non_finite_probe_sees_what_it_looks_for() {
    assert!(shows_non_finite("Rock { kx: [1.0, inf] }"));
    assert!(shows_non_finite("x: NaN,"));
    assert!(!shows_non_finite("name: \"inf NaN\", title: \"infinity\""));
}
