//! Every block and key of the schema reaches the editor: completion offers
//! each key inside its block, hover on each key gives its sentence, the
//! tokens mark it as a key, and every block name is in each editor's
//! grammar. A block or key added to the schema without its editor support
//! fails here, whichever block it belongs to.

mod common;
use common::*;
use rill_ide::TokenKind;
use rill_model::schema::{self, BlockDef, LabelRule};

/// A block of the schema with the text that opens it and the text that
/// wraps it (its parents), so that an empty line inside can be completed.
struct Place {
    def: &'static BlockDef,
    /// The header lines from the top level down to this block, each ending
    /// in `{`.
    headers: Vec<String>,
}

/// The header that opens `def` (its label or selector where it needs one).
fn header(def: &BlockDef) -> String {
    match def.name {
        "patch" => "patch i = 1 {".into(),
        "at" => "at 10 day {".into(),
        _ => match def.label {
            LabelRule::Required => format!("{} \"x\" {{", def.name),
            LabelRule::Optional | LabelRule::None => format!("{} {{", def.name),
        },
    }
}

/// Every block of the schema, top level and nested.
fn places() -> Vec<Place> {
    fn walk(def: &'static BlockDef, parents: &[String], out: &mut Vec<Place>) {
        let mut headers = parents.to_vec();
        headers.push(header(def));
        for child in def.children {
            let child = schema::child_block(def, child).expect("child block defined");
            walk(child, &headers, out);
        }
        out.push(Place { def, headers });
    }
    let mut out = Vec::new();
    for def in schema::TOP_LEVEL {
        if def.name != "include" {
            walk(def, &[], &mut out);
        }
    }
    out
}

/// The block's headers around `inner` (one line), closed again.
fn nest(place: &Place, inner: &str) -> String {
    let mut text = String::new();
    for h in &place.headers {
        text.push_str(h);
        text.push('\n');
    }
    text.push_str(inner);
    text.push('\n');
    for _ in &place.headers {
        text.push_str("}\n");
    }
    text
}

#[test]
fn every_key_is_completed_inside_its_block() {
    for place in places() {
        let text = nest(&place, "  ");
        let off = text.find("\n  \n").expect("empty line") + 3;
        let items = snap(&text).completion(off);
        let labels: Vec<&str> = items.iter().map(|i| i.label.as_str()).collect();
        for key in place.def.keys {
            assert!(
                labels.contains(&key.name),
                "`{}` not completed in `{}`: {labels:?}",
                key.name,
                place.headers.join(" ")
            );
        }
    }
}

#[test]
fn every_key_has_its_sentence_on_hover_and_is_a_key_token() {
    for place in places() {
        for key in place.def.keys {
            let text = nest(&place, &format!("  {} = 1", key.name));
            let off = text.find(&format!("  {} = 1", key.name)).unwrap() + 2;
            let s = snap(&text);
            let hover = s
                .hover(off)
                .unwrap_or_else(|| panic!("no hover on `{}` in `{}`", key.name, place.def.name));
            assert!(
                hover.markdown.contains(key.doc),
                "hover on `{}` in `{}` lacks its sentence:\n{}",
                key.name,
                place.def.name,
                hover.markdown
            );
            let token = s
                .semantic_tokens()
                .into_iter()
                .find(|t| t.span.start == off);
            assert_eq!(
                token.map(|t| t.kind),
                Some(TokenKind::Key),
                "`{}` in `{}`",
                key.name,
                place.def.name
            );
        }
    }
}

#[test]
fn every_block_name_is_in_each_editor_grammar() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
    let read = |p: &str| std::fs::read_to_string(root.join(p)).expect(p);
    let vscode = read("editors/vscode/syntaxes/rill.tmLanguage.json");
    let neovim = read("editors/neovim/syntax/rill.vim");
    let emacs = read("editors/emacs/rill-mode.el");
    let vscode_blocks = vscode
        .lines()
        .find(|l| l.contains("\\\\b(case|"))
        .expect("the block rule of the VS Code grammar");
    let neovim_blocks = neovim
        .lines()
        .find(|l| l.starts_with("syntax match rillBlock"))
        .expect("the block rule of the Neovim syntax");
    let emacs_blocks = &emacs[emacs
        .find("(defconst rill-block-names")
        .expect("rill-block-names")..];
    let emacs_blocks = &emacs_blocks[..emacs_blocks.find(')').unwrap()];
    let mut names: Vec<&str> = places().iter().map(|p| p.def.name).collect();
    names.push("include");
    for name in names {
        assert!(
            ["(", "|"].iter().any(|before| ["|", ")"]
                .iter()
                .any(|after| vscode_blocks.contains(&format!("{before}{name}{after}")))),
            "`{name}` missing from the VS Code grammar"
        );
        assert!(
            neovim_blocks.contains(&format!("\\<\\%({name}\\|"))
                || neovim_blocks.contains(&format!("\\|{name}\\|"))
                || neovim_blocks.contains(&format!("\\|{name}\\)")),
            "`{name}` missing from the Neovim syntax"
        );
        assert!(
            emacs_blocks.contains(&format!("\"{name}\"")),
            "`{name}` missing from the Emacs mode"
        );
    }
}
