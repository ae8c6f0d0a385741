//! What `rill lsp` reads from disk, over its pipes: with no workspace
//! folder, an unsaved buffer reads nothing and a saved deck only its own
//! folder; a FIFO in the workspace never sticks a document (later
//! versions still get their diagnostics).

use serde_json::{json, Value};
use std::process::Command;

/// A clean deck followed by `extra`, with `kx` as given.
fn deck(kx: &str, extra: &str) -> String {
    format!(
        "grid {{\n  cells = 2 x 2 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}}\n\
         rock {{\n  porosity = 0.2\n  kx = {kx}\n}}\n\
         fluid {{\n  viscosity = 0.7 cP\n  fvf = 1.01 rb/stb\n  density = 64.0 lb/ft^3\n}}\n\
         initial {{\n  pressure = 2500 psi at 5015 ft\n}}\n\
         timeline {{\n  end = 10 day\n}}\n{extra}"
    )
}

mod common;
use common::Server;

/// A server initialised with `root` (a `file:` URI) or with no workspace at all.
fn start(root: Option<&str>) -> Server {
    let mut s = Server::start();
    s.initialize(root);
    s
}

fn has_code(list: &[Value], code: &str) -> bool {
    list.iter().any(|d| d["code"] == code)
}

fn message_of<'a>(list: &'a [Value], code: &str) -> &'a str {
    list.iter()
        .find(|d| d["code"] == code)
        .and_then(|d| d["message"].as_str())
        .unwrap_or("")
}

#[test]
fn an_unsaved_buffer_with_no_folder_reads_nothing_from_disk() {
    let dir = tempfile::tempdir().unwrap();
    let dir = dir.path().canonicalize().unwrap();
    let secret = dir.join("secret.rill");
    std::fs::write(&secret, "rock {\n  porosity = 0.3\n}\n").unwrap();
    let mut s = start(None);
    let uri = "untitled:Untitled-1";
    let text = deck(
        "50 md",
        &format!(
            "include \"{}\"\ninclude \"/etc/passwd\"\n",
            secret.display()
        ),
    );
    s.open(uri, &text);
    let (list, targets) = s.diagnostics_until(uri, |l| has_code(l, "deck.include"));
    let includes: Vec<&Value> = list
        .iter()
        .filter(|d| d["code"] == "deck.include")
        .collect();
    assert_eq!(includes.len(), 2, "{list:?}");
    for d in includes {
        let m = d["message"].as_str().unwrap();
        assert!(m.contains("unsaved"), "{m}");
        assert!(m.contains("save the deck or open a folder"), "{m}");
    }
    // Nothing was read, so nothing is published on those files.
    assert_eq!(targets, vec![uri.to_string()], "published on {targets:?}");
    // A relative include from the unsaved buffer reads nothing either.
    let uri2 = "untitled:Untitled-2";
    s.open(uri2, &deck("50 md", "include \"secret.rill\"\n"));
    let (list, _) = s.diagnostics_until(uri2, |l| has_code(l, "deck.include"));
    assert!(
        message_of(&list, "deck.include").contains("unsaved"),
        "{list:?}"
    );
    s.stop();
}

#[test]
fn a_saved_deck_with_no_folder_reads_its_own_folder_only() {
    let dir = tempfile::tempdir().unwrap();
    let dir = dir.path().canonicalize().unwrap();
    std::fs::create_dir(dir.join("deck")).unwrap();
    std::fs::write(dir.join("deck/kx.txt"), "10 20 30 40").unwrap();
    std::fs::write(dir.join("outside.txt"), "10 20 30 40").unwrap();
    let mut s = start(None);
    let uri = format!("file://{}/deck/case.rill", dir.display());
    s.open(&uri, &deck("file \"kx.txt\" md", ""));
    let (list, _) = s.diagnostics_until(&uri, |_| true);
    assert!(!has_code(&list, "deck.include"), "{list:?}");
    // The same numbers one folder up are outside the deck's folder.
    let uri2 = format!("file://{}/deck/other.rill", dir.display());
    s.open(&uri2, &deck("file \"../outside.txt\" md", ""));
    let (list, _) = s.diagnostics_until(&uri2, |l| has_code(l, "deck.include"));
    let m = message_of(&list, "deck.include");
    assert!(m.contains("outside the workspace folders"), "{m}");
    assert!(m.contains("open a folder that holds it"), "{m}");
    s.stop();
}

#[cfg(unix)]
#[test]
fn a_fifo_in_the_workspace_never_sticks_its_document() {
    let dir = tempfile::tempdir().unwrap();
    let dir = dir.path().canonicalize().unwrap();
    let status = Command::new("mkfifo")
        .arg(dir.join("fifo"))
        .status()
        .unwrap();
    assert!(status.success());
    let root = format!("file://{}", dir.display());
    let uri = format!("{root}/deck.rill");
    let mut s = start(Some(&root));
    s.open(&uri, &deck("file \"fifo\" md", "include \"fifo\"\n"));
    let (list, _) = s.diagnostics_until(&uri, |l| has_code(l, "deck.include"));
    let fifo_errors = list
        .iter()
        .filter(|d| d["code"] == "deck.include")
        .filter(|d| {
            d["message"]
                .as_str()
                .unwrap()
                .contains("a FIFO (named pipe)")
        })
        .count();
    assert_eq!(fifo_errors, 2, "{list:?}");
    // Later versions are analysed and published, one after the other.
    for (version, kx) in [(2, "150 psi"), (3, "1e309 md")] {
        s.send(
            json!({"jsonrpc": "2.0", "method": "textDocument/didChange", "params": {
            "textDocument": {"uri": uri, "version": version},
            "contentChanges": [{"text": deck(kx, "include \"fifo\"\n")}]}}),
        );
        let code = if version == 2 {
            "unit.dimension"
        } else {
            "deck.out-of-range"
        };
        let (list, _) = s.diagnostics_until(&uri, |l| has_code(l, code));
        assert!(has_code(&list, "deck.include"), "{list:?}");
    }
    s.stop();
}
