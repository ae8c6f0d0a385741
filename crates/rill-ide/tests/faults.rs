//! The `fault` block in the editor: hover on the block (faces, summed
//! transmissibility before and after), hover on a faulted cell (the
//! multiplied value the run assembles, the multiplier and the value
//! before), completion, outline, tokens and formatting.

mod common;
use common::*;
use rill_ide::{CompletionKind, SymbolKind, TokenKind};
use rill_model::derived::{fluid_trans, interior_face};
use rill_model::inspect::cell_report;
use rill_model::Side;
use rill_units::{display_unit, format_number, Kind, System};

const FAULT: &str =
    "fault \"Crane\" {\n  side = east\n  i = 2\n  j = 1..2\n  multiplier = 0.02\n}\n\n";

fn deck() -> String {
    BASE.replace("timeline {", &format!("{FAULT}timeline {{"))
}

fn field(si: f64, kind: Kind) -> f64 {
    display_unit(kind, System::Field).from_si(si)
}

#[test]
fn hover_on_a_fault_gives_its_faces_and_their_transmissibility_before_and_after() {
    let text = deck();
    let s = snap(&text);
    assert!(!s.analysis().has_errors(), "{:?}", s.diagnostics());
    let h = s.hover(at(&text, "\"Crane\"", 2)).expect("fault hover");
    let case = s.analysis().case.clone().unwrap();
    let g = &case.grid;
    // Column 2, rows 1..2, both layers: 4 faces.
    let (mut before, mut after) = (0.0, 0.0);
    for j in 0..2 {
        for k in 0..2 {
            let face = interior_face(g, &case.rock, g.index(1, j, k), Side::East).unwrap();
            before += fluid_trans(&case, face.geometric_trans);
            after += 0.02 * fluid_trans(&case, face.geometric_trans);
        }
    }
    assert!(
        h.markdown
            .contains("east faces of the selected cells, multiplier 0.02"),
        "{}",
        h.markdown
    );
    let want = format!(
        "4 faces; transmissibility in total {} stb/day/psi before, {} stb/day/psi after",
        format_number(field(before, Kind::Transmissibility)),
        format_number(field(after, Kind::Transmissibility))
    );
    assert!(h.markdown.contains(&want), "{want} in {}", h.markdown);
    // Hover on the word `fault` shows the same.
    let h2 = s.hover(at(&text, "fault \"Crane\"", 1)).expect("hover");
    assert!(h2.markdown.contains(&want), "{}", h2.markdown);
}

#[test]
fn hover_on_a_faulted_cell_shows_the_multiplied_value_and_the_one_before() {
    // The well's column (2, 2) has the fault on its east faces.
    let text = deck();
    let s = snap(&text);
    let case = s.analysis().case.clone().unwrap();
    let h = s.hover(at(&text, "location = (2, 2)", 12)).expect("hover");
    let r = cell_report(&case, 1, 1, 0).unwrap();
    let east = r.faces.iter().find(|f| f.side == Side::East).unwrap();
    assert_eq!(east.multiplier, 0.02);
    // The face table shows the multiplied value ...
    let row = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| east |"))
        .unwrap_or_else(|| panic!("{}", h.markdown));
    let t: f64 = row_cells(row)[3].parse().unwrap();
    let t_field = field(east.trans, Kind::Transmissibility);
    assert!((t - t_field).abs() <= 1e-5 * t_field, "{row}");
    // ... and a second table the multiplier and the value before it.
    let fault_row = format!(
        "| east | 0.02 | {} |",
        format_number(field(east.unmodified_trans, Kind::Transmissibility))
    );
    assert!(
        h.markdown.contains(&fault_row),
        "{fault_row} in {}",
        h.markdown
    );
    assert!((east.trans - 0.02 * east.unmodified_trans).abs() <= 1e-12 * east.unmodified_trans);
}

#[test]
fn keys_of_a_fault_are_completed_and_hovered() {
    let text = BASE.replace("timeline {", "fault \"Crane\" {\n  \n}\n\ntimeline {");
    let s = snap(&text);
    let off = at(&text, "fault \"Crane\" {\n  ", 18);
    let items = s.completion(off);
    let keys: Vec<&str> = items
        .iter()
        .filter(|i| i.kind == CompletionKind::Key)
        .map(|i| i.label.as_str())
        .collect();
    for k in ["side", "i", "j", "k", "multiplier"] {
        assert!(keys.contains(&k), "{k} in {keys:?}");
    }
    // The top level offers the block.
    let top = snap(BASE).completion(0);
    assert!(top
        .iter()
        .any(|i| i.label == "fault" && i.kind == CompletionKind::Block));
    // The side takes the six sides.
    let text = deck().replace("side = east", "side = ");
    let off = at(&text, "side = ", 7);
    let sides: Vec<String> = snap(&text)
        .completion(off)
        .into_iter()
        .map(|i| i.label)
        .collect();
    assert!(
        sides.contains(&"east".to_string()) && sides.contains(&"top".to_string()),
        "{sides:?}"
    );
    // Hover on each key gives its doc.
    let text = deck();
    let s = snap(&text);
    for (key, words) in [
        ("side = east\n  i = 2", "The faces it scales"),
        ("i = 2\n  j", "Columns i of the selected cells"),
        ("j = 1..2\n  multiplier", "Rows j of the selected cells"),
        ("multiplier = 0.02", "0 seals them"),
    ] {
        let h = s.hover(at(&text, key, 0)).expect("key hover");
        assert!(h.markdown.contains(words), "{key}: {}", h.markdown);
    }
}

#[test]
fn a_fault_is_in_the_outline_tokens_and_formatter() {
    let text = deck();
    let s = snap(&text);
    let sym = s
        .symbols()
        .into_iter()
        .find(|x| x.kind == SymbolKind::Fault)
        .expect("fault symbol");
    assert_eq!(sym.name, "Crane");
    assert_eq!(sym.detail.as_deref(), Some("east, multiplier 0.02"));
    let tokens = s.semantic_tokens();
    let kind_at = |pat: &str| {
        let o = at(&text, pat, 0);
        tokens.iter().find(|t| t.span.start == o).map(|t| t.kind)
    };
    assert_eq!(kind_at("fault \"Crane\""), Some(TokenKind::Block));
    assert_eq!(kind_at("multiplier ="), Some(TokenKind::Key));
    assert_eq!(kind_at("east\n  i = 2"), Some(TokenKind::EnumValue));
    // The canonical layout of the block is kept as written.
    let edits = s.format().expect("no syntax errors");
    assert_eq!(apply(&text, &edits), text);
    // A ragged block is laid out like any other.
    let ragged = deck().replace(
        FAULT,
        "fault   \"Crane\"{\nside   =   east\n      i = 2\n j = 1..2\nmultiplier=0.02\n}\n\n",
    );
    let s = snap(&ragged);
    let formatted = apply(&ragged, &s.format().expect("no syntax errors"));
    assert!(formatted.contains(FAULT), "{formatted}");
}
