//! The editor on an oil-water deck: hover on a `relperm` block (mobility
//! ratio and the Buckley-Leverett front) and on a cell (its curves and
//! initial saturation), completion of the controls that fit the role and
//! of relperm labels, the outline, the tokens and the run lens.

mod common;
use common::*;
use rill_ide::{CompletionKind, SymbolKind, TokenKind};

const DECK: &str = include_str!("../../../tests/fixtures/well.control-phase/clean.rill");

/// The number in the row of the markdown table whose first cell starts with `what`.
fn row_value(md: &str, what: &str) -> f64 {
    let row = md
        .lines()
        .find(|l| l.starts_with(&format!("| {what}")))
        .unwrap_or_else(|| panic!("no row `{what}` in\n{md}"));
    let cells = row_cells(row);
    let value = cells[1].split_whitespace().next().unwrap();
    value
        .parse()
        .unwrap_or_else(|_| panic!("`{value}` in {row}"))
}

/// The oil and water productivities on the first line of `md` that starts
/// with `prefix` (`at the initial saturation: ...`), as shown.
fn phase_numbers(md: &str, prefix: &str) -> Vec<f64> {
    md.lines()
        .find(|l| l.starts_with(prefix))
        .unwrap_or_else(|| panic!("no line `{prefix}` in\n{md}"))
        .split_whitespace()
        .filter_map(|t| t.trim_end_matches(',').parse().ok())
        .collect()
}

/// The fixture's curves: Corey swc 0.2, sor 0.25, krw_end 0.3, kro_end
/// 0.8, nw = no = 2, with 2 cP oil and 0.5 cP water. M = (0.3 / 0.5) /
/// (0.8 / 2) = 1.5. The front is checked against a brute-force maximum of
/// the secant f_w(S) / (S - swc) on a grid of 200,000 saturations.
#[test]
fn hover_on_a_relperm_block_gives_the_mobility_ratio_and_the_front() {
    let s = snap(DECK);
    let h = s.hover(at(DECK, "relperm \"sand\"", 2)).expect("a hover");
    let md = &h.markdown;
    assert!(
        md.starts_with("**relperm \"sand\"** — Corey: swc 0.2, sor 0.25"),
        "{md}"
    );
    assert!(md.contains("used by 24 active cells"), "{md}");
    assert!(md.contains("With oil 2 cP and water 0.5 cP"), "{md}");
    assert_eq!(row_value(md, "endpoint mobility ratio"), 1.5);
    let f = |s: f64| {
        let n = ((s - 0.2) / 0.55).clamp(0.0, 1.0);
        let (lw, lo) = (0.3 * n * n / 0.5, 0.8 * (1.0 - n) * (1.0 - n) / 2.0);
        lw / (lw + lo)
    };
    let (mut best_s, mut best) = (0.2, 0.0);
    for i in 1..=200_000 {
        let s = 0.2 + 0.55 * i as f64 / 200_000.0;
        let v = f(s) / (s - 0.2);
        if v > best {
            (best_s, best) = (s, v);
        }
    }
    // Four significant digits are shown.
    let near = |shown: f64, exact: f64| (shown - exact).abs() <= 5e-5 * exact.abs().max(1.0);
    let front = row_value(md, "water saturation behind the front");
    assert!(near(front, best_s), "{front} vs {best_s}");
    assert!(near(
        row_value(md, "fractional flow at the front"),
        f(best_s)
    ));
    assert!(near(
        row_value(md, "pore volumes injected at breakthrough"),
        1.0 / best
    ));
    assert!(near(
        row_value(md, "average water saturation"),
        0.2 + 1.0 / best
    ));
    // The curves are tabulated from swc to 1 - sor.
    assert!(md.contains("| 0.2 | 0 | 0.8 | 1.5 | 0 |"), "{md}");
    assert!(md.contains("| 0.75 | 0.3 | 0 | 0 | 1 |"), "{md}");
    // The same text on the label in `rock { relperm = ... }`.
    let text = DECK.replace(
        "  kz = 0.1 * kx\n",
        "  kz = 0.1 * kx\n  relperm = \"sand\"\n",
    );
    let s = snap(&text);
    let h = s
        .hover(at(&text, "relperm = \"sand\"", 12))
        .expect("a hover");
    assert!(
        h.markdown.starts_with("**relperm \"sand\"**"),
        "{}",
        h.markdown
    );
}

#[test]
fn hover_on_a_cell_gives_its_curves_and_initial_saturation() {
    // Cell (1, 1, 2) of the injector's column: 6035 ft, 5 ft above the
    // contact at 6040 ft. With (63.5 - 52) lb/ft^3 between the phases,
    // pc = 11.5 * 5 / 144 psi = 0.3993 psi (compressibility moves it in the
    // fourth digit), so S = 1 - 0.3993 / 1.5 and sw = 0.2 + 0.55 S = 0.6036.
    let text = DECK.replace("location = (1, 1)", "completions = [(1, 1, 2)]");
    let s = snap(&text);
    let h = s.hover(at(&text, "(1, 1, 2)", 1)).expect("a hover");
    let md = &h.markdown;
    assert!(md.contains("| relperm | \"sand\" |"), "{md}");
    let row = md
        .lines()
        .find(|l| l.starts_with("| initial water saturation"))
        .expect("the saturation");
    assert!(row.contains("(from the water contact)"), "{row}");
    let sw: f64 = row_cells(row)[1]
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    let exact = 0.2 + 0.55 * (1.0 - 11.5 * 5.0 / 144.0 / 1.5);
    assert!((sw - exact).abs() < 2e-4, "{sw} vs {exact}");
    assert!(md.contains("with the oil's viscosity"), "{md}");
    // The phases there: Corey with swc 0.2, sor 0.25, krw_end 0.3,
    // kro_end 0.8, both exponents 2 (hand-computed from the deck); the
    // mobilities with 0.5 cP water and 2 cP oil.
    let s_n = (sw - 0.2) / 0.55;
    let (krw, kro) = (0.3 * s_n * s_n, 0.8 * (1.0 - s_n) * (1.0 - s_n));
    let numbers = |prefix: &str| -> Vec<f64> {
        let row = md.lines().find(|l| l.starts_with(prefix)).expect(prefix);
        row_cells(row)[1]
            .split([',', ' '])
            .filter_map(|t| t.parse().ok())
            .collect()
    };
    let kr = numbers("| krw, kro (initial)");
    assert!(
        (kr[0] - krw).abs() < 1e-5 && (kr[1] - kro).abs() < 1e-5,
        "{kr:?}"
    );
    let mob = numbers("| water, oil mobility");
    assert!(
        (mob[0] - krw / 0.5).abs() < 1e-5 && (mob[1] - kro / 2.0).abs() < 1e-5,
        "{mob:?}"
    );
    assert!(md.contains("1/cP"), "{md}");
    // Each phase's productivity at the initial saturation: the
    // productivity with the oil's viscosity and fvf (kr = 1) times kro for
    // the oil, and for the water krw with its own viscosity and fvf
    // (0.5 cP and 1.01 rb/stb against 2 cP and 1.2 rb/stb in the deck).
    let well = md
        .lines()
        .find(|l| l.starts_with("well \""))
        .expect("the well line");
    let productivity: f64 = well
        .split("productivity ")
        .nth(1)
        .and_then(|t| t.split_whitespace().next())
        .and_then(|t| t.parse().ok())
        .expect("a productivity");
    let values = phase_numbers(md, "at the initial saturation:");
    let (oil, water) = (
        productivity * kro,
        productivity * krw * (2.0 * 1.2) / (0.5 * 1.01),
    );
    let near = |a: f64, b: f64| (a - b).abs() <= 1e-3 * b.abs();
    assert!(
        near(values[0], oil) && near(values[1], water),
        "{values:?}: {oil}, {water}"
    );
}

#[test]
fn completion_offers_the_controls_of_the_role_and_the_relperm_labels() {
    let labels = |text: &str, pat: &str, plus: usize| -> Vec<String> {
        snap(text)
            .completion(at(text, pat, plus))
            .into_iter()
            .map(|i| i.label)
            .collect()
    };
    let text = DECK.replace("control = water_rate 300 stb/day", "control = ");
    assert_eq!(
        labels(&text, "control = \n", 10),
        ["water_rate", "bhp", "shut"]
    );
    let text = DECK.replace("control = oil_rate 250 stb/day", "control = ");
    assert_eq!(
        labels(&text, "control = \n", 10),
        ["oil_rate", "liquid_rate", "bhp", "shut"]
    );
    // Units of a phase rate are surface rates.
    let text = DECK.replace("oil_rate 250 stb/day", "oil_rate 250 ");
    assert!(labels(&text, "oil_rate 250 ", 13).contains(&"stb/day".to_string()));
    // An event's change takes the role of its well.
    let text = DECK.replace(
        "  report_every = 10 day\n",
        "  report_every = 10 day\n  at 50 day {\n    well \"P-1\" { control =  }\n  }\n",
    );
    assert_eq!(
        labels(&text, "control =  }", 10),
        ["oil_rate", "liquid_rate", "bhp", "shut"]
    );
    // `relperm = ` in the rock: the labels, quoted; inside quotes, bare.
    let text = DECK.replace("  kz = 0.1 * kx\n", "  kz = 0.1 * kx\n  relperm = \n");
    let items = snap(&text).completion(at(&text, "relperm = \n", 10));
    assert_eq!(items.len(), 1);
    assert_eq!(
        (items[0].label.as_str(), items[0].kind),
        ("\"sand\"", CompletionKind::Reference)
    );
    let text = DECK.replace("  kz = 0.1 * kx\n", "  kz = 0.1 * kx\n  relperm = \"sa\"\n");
    let items = snap(&text).completion(at(&text, "\"sa\"", 3));
    assert_eq!(items.len(), 1);
    assert_eq!(items[0].insert_text, "sand");
    // A single-phase deck keeps `rate`.
    assert!(BASE.contains("control = rate 300 stb/day"));
    let text = BASE.replace("control = rate 300 stb/day", "control = ");
    assert_eq!(labels(&text, "control = \n", 10), ["rate", "bhp", "shut"]);
}

#[test]
fn outline_tokens_and_lens_know_the_oil_water_blocks() {
    let s = snap(DECK);
    let symbols = s.symbols();
    let kinds: Vec<(String, SymbolKind, Option<String>)> = symbols
        .iter()
        .map(|x| (x.name.clone(), x.kind, x.detail.clone()))
        .collect();
    assert!(
        kinds.contains(&("oil".into(), SymbolKind::Oil, Some("2 cP".into()))),
        "{kinds:?}"
    );
    assert!(
        kinds.contains(&("water".into(), SymbolKind::Water, Some("0.5 cP".into()))),
        "{kinds:?}"
    );
    assert!(
        kinds.contains(&(
            "sand".into(),
            SymbolKind::Relperm,
            Some("relperm, corey".into())
        )),
        "{kinds:?}"
    );
    let token = |pat: &str, plus: usize| {
        let off = at(DECK, pat, plus);
        s.semantic_tokens()
            .into_iter()
            .find(|t| t.span.start == off)
            .map(|t| t.kind)
    };
    assert_eq!(token("oil {", 0), Some(TokenKind::Block));
    assert_eq!(token("relperm \"sand\"", 0), Some(TokenKind::Block));
    assert_eq!(token("model = corey", 8), Some(TokenKind::EnumValue));
    assert_eq!(token("water_rate 300", 0), Some(TokenKind::EnumValue));
    assert_eq!(token("water_contact", 0), Some(TokenKind::Key));
    let text = DECK.replace(
        "  kz = 0.1 * kx\n",
        "  kz = 0.1 * kx\n  relperm = \"sand\"\n",
    );
    let s2 = snap(&text);
    let off = at(&text, "= \"sand\"", 2);
    let kind = s2
        .semantic_tokens()
        .into_iter()
        .find(|t| t.span.start == off)
        .map(|t| t.kind);
    assert_eq!(kind, Some(TokenKind::Name));
    // Clean: the lens runs it as any deck.
    let lenses = s.code_lenses();
    assert_eq!(lenses.len(), 1);
    assert_eq!(lenses[0].command.as_deref(), Some("rill.run"));
}

/// Hover on a well of an oil-water deck: each completion's phase
/// productivities at the initial saturation, the same numbers the cell
/// hover gives under the well, the productivity column being the oil's
/// with kr = 1 (kro times it is the oil's), and their totals.
#[test]
fn hover_on_a_well_gives_each_completions_phase_productivities() {
    let s = snap(DECK);
    let h = s.hover(at(DECK, "well \"I-1\"", 6)).expect("a hover");
    let md = &h.markdown;
    assert!(md.contains("| oil, water at initial sw |"), "{md}");
    assert!(md.contains("with the oil's viscosity"), "{md}");
    let rows: Vec<Vec<String>> = md
        .lines()
        .filter(|l| l.starts_with("| (1, 1, "))
        .map(row_cells)
        .collect();
    assert_eq!(rows.len(), 2, "{md}");
    let (mut oil_total, mut water_total) = (0.0, 0.0);
    for (k, row) in rows.iter().enumerate() {
        let pair: Vec<f64> = row[4].split(", ").map(|t| t.parse().unwrap()).collect();
        (oil_total, water_total) = (oil_total + pair[0], water_total + pair[1]);
        // The cell hover of that completion says the same.
        let cell = format!("(1, 1, {})", k + 1);
        let text = DECK.replace("location = (1, 1)", &format!("completions = [{cell}]"));
        let cell_md = snap(&text)
            .hover(at(&text, &cell, 1))
            .expect("a hover")
            .markdown;
        let shown = phase_numbers(&cell_md, "at the initial saturation:");
        assert!(
            close6(pair[0], shown[0]) && close6(pair[1], shown[1]),
            "{row:?} vs {shown:?}"
        );
        let kro = cell_md
            .lines()
            .find(|l| l.starts_with("| krw, kro (initial)"))
            .and_then(|l| {
                row_cells(l)[1]
                    .split(", ")
                    .nth(1)
                    .and_then(|t| t.parse::<f64>().ok())
            })
            .expect("kro");
        let prod: f64 = row[3].parse().unwrap();
        // Two shown numbers multiplied: each rounded at six digits.
        let product = prod * kro;
        assert!(
            ((pair[0] - product) / product).abs() < 2e-5,
            "{} vs {prod} x {kro}",
            pair[0]
        );
    }
    let t = phase_numbers(md, "at the initial saturation: oil");
    assert!(
        close6(t[0], oil_total) && close6(t[1], water_total),
        "{t:?}"
    );
}
