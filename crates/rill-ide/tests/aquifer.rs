//! Editor answers on an `aquifer` block: completion of the block and its
//! keys, hover on the block and its keys, the outline and the tokens.

mod common;
use common::*;
use rill_ide::{CompletionKind, SymbolKind, TokenKind};

const AQUIFER: &str = "aquifer \"south flank\" {\n  side = south\n  k = 2\n  water_volume = 2.5e9 rb\n  compressibility = 7e-6 1/psi\n  productivity = 35 rb/day/psi\n}\n";

fn deck() -> String {
    BASE.replace("timeline {", &format!("{AQUIFER}\ntimeline {{"))
}

#[test]
fn the_deck_with_an_aquifer_checks_clean() {
    let s = snap(&deck());
    assert!(!s.analysis().has_errors(), "{:?}", s.analysis().diagnostics);
}

#[test]
fn completion_offers_the_block_and_its_keys() {
    let empty = snap("").completion(0);
    let block = empty
        .iter()
        .find(|i| i.label == "aquifer")
        .expect("aquifer");
    assert!(
        block.insert_text.starts_with("aquifer \"${1:name}\" {"),
        "{}",
        block.insert_text
    );
    assert!(
        block.insert_text.contains("productivity = "),
        "{}",
        block.insert_text
    );
    // Keys not yet given, inside the block.
    let text = deck().replace("  k = 2\n", "  k = 2\n  \n");
    let off = at(&text, "  k = 2\n  \n", 10);
    let items = snap(&text).completion(off);
    let labels: Vec<&str> = items.iter().map(|i| i.label.as_str()).collect();
    assert!(labels.contains(&"i") && labels.contains(&"j"), "{labels:?}");
    assert!(
        !labels.contains(&"productivity") && !labels.contains(&"k"),
        "{labels:?}"
    );
    // Sides after `side = `, units after a productivity number.
    let text = deck().replace("  side = south", "  side = ");
    let items = snap(&text).completion(at(&text, "side = ", 7));
    assert!(items
        .iter()
        .any(|i| i.label == "south" && i.kind == CompletionKind::EnumValue));
    let text = deck().replace("35 rb/day/psi", "35 ");
    let items = snap(&text).completion(at(&text, "productivity = 35 ", 18));
    assert_eq!(items.first().map(|i| i.label.as_str()), Some("rb/day/psi"));
}

#[test]
fn hover_on_the_block_shows_j_w_ct_p_ai_and_the_time_constant() {
    let text = deck();
    let h = snap(&text)
        .hover(at(&text, "aquifer \"south", 2))
        .expect("hover");
    let md = &h.markdown;
    assert!(
        md.contains("**aquifer \"south flank\"** — south side"),
        "{md}"
    );
    assert!(md.contains("| productivity J | 35 rb/day/psi |"), "{md}");
    assert!(md.contains("| water volume W_i | 2.5e9 rb |"), "{md}");
    assert!(md.contains("| compressibility c_t | 7e-6 1/psi |"), "{md}");
    // c_t W_i / J = 7e-6 * 2.5e9 / 35 = 500 day.
    assert!(
        md.contains("| time constant c_t W_i / J | 500 day |"),
        "{md}"
    );
    assert!(md.contains("| initial pressure p_ai |"), "{md}");
    assert!(md.contains("4 faces of active cells"), "{md}");
    // On a key: the schema's sentence.
    let h = snap(&text)
        .hover(at(&text, "water_volume", 1))
        .expect("key hover");
    assert!(
        h.markdown.contains("Initial water volume of the aquifer"),
        "{}",
        h.markdown
    );
}

#[test]
fn outline_and_tokens() {
    let text = deck();
    let s = snap(&text);
    let sym = s
        .symbols()
        .into_iter()
        .find(|s| s.kind == SymbolKind::Aquifer)
        .expect("symbol");
    assert_eq!(sym.name, "south flank");
    assert_eq!(sym.detail.as_deref(), Some("south"));
    let tokens = s.semantic_tokens();
    let kind_at = |pat: &str| {
        let off = at(&text, pat, 0);
        tokens.iter().find(|t| t.span.start == off).map(|t| t.kind)
    };
    assert_eq!(kind_at("aquifer \"south"), Some(TokenKind::Block));
    assert_eq!(kind_at("\"south flank\""), Some(TokenKind::Name));
    assert_eq!(kind_at("water_volume"), Some(TokenKind::Key));
    assert_eq!(kind_at("south\n  k"), Some(TokenKind::EnumValue));
    assert_eq!(kind_at("rb/day/psi"), Some(TokenKind::Unit));
}
