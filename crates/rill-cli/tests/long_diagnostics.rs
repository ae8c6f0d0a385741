//! Text diagnostics stay short on pathological input: long source lines
//! are shown cut around the span, messages quoting a long token are cut,
//! and the output is written at once. (Scaled-down versions of a 50 MB
//! identifier, 10^6 unclosed `{` and a 5-million-entry array line.)

use std::process::Command;

/// `rill check` text output (stderr) for `text`.
fn check(text: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("deck.rill");
    std::fs::write(&deck, text).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_rill"))
        .arg("check")
        .arg(&deck)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1), "the deck has errors");
    String::from_utf8(out.stderr).unwrap()
}

/// No line longer than a cut source line, a cut message and their frame.
fn assert_short(out: &str, input_len: usize) {
    let longest = out.lines().map(|l| l.chars().count()).max().unwrap_or(0);
    assert!(longest <= 260, "a {longest}-character line in:\n{out}");
    assert!(
        out.len() < 20_000 && out.len() < input_len,
        "{} bytes of output for {input_len} bytes of input",
        out.len()
    );
}

#[test]
fn a_long_identifier_is_cut_in_the_snippet_and_the_message() {
    let name = "a".repeat(300_000);
    let text = format!("grid {{\n  cells = 3 x 3 x 1\n  {name} = 1 ft\n}}\n");
    let out = check(&text);
    assert_short(&out, text.len());
    assert!(out.contains("deck.rill:3:3"), "{out}");
    assert!(out.contains('…'), "{out}");
}

#[test]
fn many_unclosed_braces() {
    let text = "{".repeat(200_000) + "\n";
    let out = check(&text);
    assert_short(&out, text.len());
    assert!(out.contains('…'), "{out}");
}

#[test]
fn a_long_array_line_with_a_wrong_count_points_into_it() {
    let values = vec!["0.2"; 200_000].join(" ");
    let text = format!(
        "grid {{\n  cells = 3 x 3 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}}\nrock {{\n  porosity = [{values}]\n  kx = 10 mD\n  ky = 10 mD\n  kz = 1 mD\n}}\n"
    );
    let out = check(&text);
    assert_short(&out, text.len());
    assert!(out.contains("deck.rill:9:"), "{out}");
    // The cut line is marked as cut.
    assert!(
        out.lines()
            .any(|l| l.contains("0.2 0.2") && l.contains('…')),
        "{out}"
    );
}
