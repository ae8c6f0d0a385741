//! The canonical formatter: exact layouts, and the three promises
//! (idempotent, comment-preserving, meaning-preserving) on each case.

mod common;

use common::*;
use rill_syntax::*;

/// Formats `text` (checking the promises) and compares with `expected`.
fn fmt(text: &str, expected: &str) {
    let f = parse(text);
    assert!(f.errors.is_empty(), "{text:?}: {:#?}", f.errors);
    let out = check_format(text, &f);
    assert_eq!(out, expected, "\n--- got\n{out}\n--- expected\n{expected}");
}

#[test]
fn spec_deck_layout() {
    let text = clean_deck();
    let out = check_format(&text, &parse(&text));
    assert!(out.starts_with("case \"Larkspur east lobe\" {  # optional metadata\n  title = \"pilot producer, 1 year\"\n}\n\ngrid {\n"));
    assert!(out.contains("\n  cells = 30 x 20 x 4  # NX x NY x NZ\n"));
    assert!(out.contains("\n  patch i = 12..14 k = 3 {  # overrides inside a sub-block; omitted axes mean all\n    kz = 0 md  # a sealing streak\n  }\n"));
    assert!(out.contains(
        "\n  # completions = [(15, 10, 1), (16, 10, 2)]   # alternative: explicit cells\n"
    ));
    assert!(out.contains("\n  at 180 day {  # a change of controls\n    well \"LE-1\" { control = bhp 1500 psi }\n  }\n"));
    assert!(out.contains("  pressure = 3150 psi at 7150 ft  # constant pressure, hydrostatic along the face;\n  # without `at`, the value holds at every face centre\n}\n"));
    assert!(out
        .ends_with("}\n\ninclude \"more-wells.rill\"  # top level only; relative to this file\n"));
}

#[test]
fn spacing_and_atoms() {
    fmt("a=1\n", "a = 1\n");
    fmt("  kz =0.1*kx\n", "kz = 0.1 * kx\n");
    fmt("k = kx-5 md\n", "k = kx - 5 md\n");
    fmt("k = kx*-1\n", "k = kx * -1\n");
    fmt("k = kx   -5\n", "k = kx -5\n");
    fmt("c = 30x20x4\n", "c = 30 x 20 x 4\n");
    fmt("c = 30 x20 x 4\n", "c = 30 x 20 x 4\n");
    fmt("c = 0x10.1 day\n", "c = 0 x 10 .1 day\n");
    fmt("c = 30x20x4ft\n", "c = 30 x 20 x 4 ft\n");
    fmt("p = 22%\n", "p = 22 %\n");
    fmt("p = 250md\n", "p = 250 md\n");
    fmt("d = 62.4\tlb/ft^3\n", "d = 62.4 lb/ft^3\n");
    fmt("n = 1E6 .5 1.50e-6\n", "n = 1E6 .5 1.50e-6\n");
    fmt(
        "t = \"say \\\"hi\\\" \\\\\"\n",
        "t = \"say \\\"hi\\\" \\\\\"\n",
    );
    fmt("f = file \"kx.txt\"md\n", "f = file \"kx.txt\" md\n");
    fmt("l = (15,10 , 1)\n", "l = (15, 10, 1)\n");
    fmt("r = 1..5\n", "r = 1..5\n");
    fmt("x = [ 1,2 , 3 ]ft\n", "x = [1 2 3] ft\n");
    fmt("x = [[1,2],[3]]\n", "x = [[1 2] [3]]\n");
    fmt("x = [1 -2 - 3]\n", "x = [1 -2 - 3]\n");
    fmt(
        "x = [(15, 10, 1), (16, 10, 2)]\n",
        "x = [(15, 10, 1) (16, 10, 2)]\n",
    );
}

#[test]
fn commas_kept_where_needed() {
    fmt("x = [1, md]\n", "x = [1, md]\n");
    fmt("x = [1\n  md]\n", "x = [1, md]\n");
    fmt("x = [30, x, 20]\n", "x = [30, x 20]\n");
    fmt("x = [30 x 2, x 2]\n", "x = [30 x 2, x 2]\n");
    fmt("x = [\"a\", b]\n", "x = [\"a\", b]\n");
    fmt("x = [[1], m]\n", "x = [[1], m]\n");
    fmt("x = [1, (m)]\n", "x = [1, (m)]\n");
    fmt("x = [1 md, m]\n", "x = [1 md m]\n");
    fmt("x = [a, b]\n", "x = [a b]\n");
    fmt("x = 12 ( x1)\n", "x = 12 (x1,)\n");
    fmt("x = 12 (x1,)\n", "x = 12 (x1,)\n");
    fmt("x = \"s\" ( m) (m, s)\n", "x = \"s\" (m,) (m, s)\n");
    fmt("p i = 3 ( k) {\n}\n", "p i = 3 (k,) {\n}\n");
    fmt("x = 12 md (m)\n", "x = 12 md (m)\n");
    fmt("x = [0 x, 5]\n", "x = [0 x, 5]\n");
    fmt("x = [0 x\n 5..6]\n", "x = [0 x, 5..6]\n");
    fmt("x = [0 x, -5]\n", "x = [0 x -5]\n");
}

#[test]
fn statements_split_and_indented() {
    fmt("a = 1; b = 2\n", "a = 1\nb = 2\n");
    fmt(
        "grid {\ncells = 1\n      dx = 2\n}\n",
        "grid {\n  cells = 1\n  dx = 2\n}\n",
    );
    fmt("a { b { c = 1\n} }\n", "a {\n  b {\n    c = 1\n  }\n}\n");
}

#[test]
fn one_line_blocks() {
    fmt(
        "well \"A\" {control = bhp 1500 psi}\n",
        "well \"A\" { control = bhp 1500 psi }\n",
    );
    fmt(
        "well \"A\" { a = 1;b = 2 }\n",
        "well \"A\" { a = 1; b = 2 }\n",
    );
    fmt(
        "at 180 day { well \"LE-1\" { control = bhp 1500 psi } }\n",
        "at 180 day { well \"LE-1\" { control = bhp 1500 psi } }\n",
    );
    fmt("grid { }\n", "grid {}\n");
    fmt("grid {\n}\n", "grid {\n}\n");
    // Too long for one line: expanded.
    let long = format!("well \"A\" {{ a = \"{}\"; b = 2 }}\n", "x".repeat(80));
    fmt(
        &long,
        &format!("well \"A\" {{\n  a = \"{}\"\n  b = 2\n}}\n", "x".repeat(80)),
    );
    // A multi-line block stays multi-line.
    fmt("w {\n  a = 1 }\n", "w {\n  a = 1\n}\n");
}

#[test]
fn blank_lines() {
    fmt(
        "\n\na = 1\n\n\n\nb = 2\nc = 3\n\n\n",
        "a = 1\n\nb = 2\nc = 3\n",
    );
    fmt(
        "a {\n}\nb {\n}\nc = 1\nd {\n}\n",
        "a {\n}\n\nb {\n}\n\nc = 1\n\nd {\n}\n",
    );
    fmt(
        "a {\n\n\n  x = 1\n\n\n\n  y = 2\n\n}\n",
        "a {\n  x = 1\n\n  y = 2\n}\n",
    );
    // A comment right above a block stays attached to it.
    fmt("a = 1\n# about b\nb {\n}\n", "a = 1\n\n# about b\nb {\n}\n");
    fmt("a {\n}\n# tail\n", "a {\n}\n\n# tail\n");
}

#[test]
fn comments() {
    fmt(
        "# head\n\n\n# two\na = 1    # trailing   \n",
        "# head\n\n# two\na = 1  # trailing\n",
    );
    fmt(
        "a {   # open\n  # first\n  x = 1\n  # last\n}   # close\n",
        "a {  # open\n  # first\n  x = 1\n  # last\n}  # close\n",
    );
    fmt("a {\n    # only\n}\n", "a {\n  # only\n}\n");
    fmt("a = 1; # after semicolon\n", "a = 1  # after semicolon\n");
    fmt("a = 1; b = 2 # on b\n", "a = 1\nb = 2  # on b\n");
    fmt("w { x = 1 }  # c\n", "w { x = 1 }  # c\n");
    fmt("a {  # c\n}\n", "a {  # c\n}\n");
    fmt("#\n", "#\n");
    // Comments inside a list stay at the end of their line.
    fmt(
        "dy = [40 40   # first\n   # own line\n   60 60] ft\n",
        "dy = [40 40  # first\n  # own line\n  60 60] ft\n",
    );
    fmt("x = [ # c\n 1]\n", "x = [  # c\n  1]\n");
    fmt("x = [1 # c\n]\n", "x = [1  # c\n  ]\n");
}

#[test]
fn long_lists_wrap() {
    let items: Vec<String> = (0..60).map(|i| format!("{}", 100 + i)).collect();
    let text = format!("rock {{\n  kx = layers [{}] md\n}}\n", items.join(" "));
    let f = parse(&text);
    let out = check_format(&text, &f);
    for line in out.lines() {
        assert!(
            line.chars().count() <= rill_syntax::format::WIDTH,
            "{line:?} too long"
        );
    }
    let lines: Vec<&str> = out.lines().collect();
    assert!(lines.len() > 4);
    assert!(lines[1].starts_with("  kx = layers [100 101 "));
    assert!(
        lines[2].starts_with("    1"),
        "continuation one level deeper: {:?}",
        lines[2]
    );
    assert!(out.contains("159] md\n}\n"));
    // Numbers keep their spelling when wrapped.
    let text = format!("x = [{}]\n", vec!["1.50e-6"; 40].join(" "));
    let out = check_format(&text, &parse(&text));
    assert_eq!(out.matches("1.50e-6").count(), 40);
    // Units stay on the line of their number.
    let text = format!("x = [{}]\n", vec!["1 md"; 40].join(" "));
    let out = check_format(&text, &parse(&text));
    assert!(!out.contains("1\n"));
}

#[test]
fn crlf_and_cr_become_lf() {
    fmt(
        "a = 1\r\nb {\r\n  c = 2\r\n}\r\n",
        "a = 1\n\nb {\n  c = 2\n}\n",
    );
    fmt("a = 1\rb = 2\r", "a = 1\nb = 2\n");
}

#[test]
fn empty_and_error_files() {
    assert_eq!(format(&parse(""), ""), "");
    assert_eq!(format(&parse("\n\n  \n"), "\n\n  \n"), "");
    let bad = "a = [1\nb = 2   \n";
    assert_eq!(format(&parse(bad), bad), bad);
}

#[test]
fn meaning_helper_sees_differences() {
    let a = parse("x = [1 2] md\n");
    let b = parse("x   =   [1,2]md\n");
    let c = parse("x = [1 2]\nmd\n");
    assert!(same_meaning(&a, &b));
    assert!(!same_meaning(&a, &c));
    assert!(
        !same_meaning(&parse("x = 1.0\n"), &parse("x = 1\n")),
        "raw spellings are meaning for the formatter"
    );
}

#[test]
fn cell_arrays_are_laid_out_one_grid_row_per_line() {
    let values: Vec<String> = (0..12).map(|n| format!("{}", 100 + n)).collect();
    let text = format!(
        "grid {{\n  cells = 3 x 2 x 2\n}}\n\nrock {{\n  kx = cells [{}] md * 2\n  top = columns [1 2 3 4 5 6] ft\n  ky = layers [1 2] md\n}}\n",
        values.join(" ")
    );
    fmt(
        &text,
        "grid {\n  cells = 3 x 2 x 2\n}\n\nrock {\n  kx = cells [\n    100 101 102\n    103 104 105\n    106 107 108\n    109 110 111\n  ] md * 2\n  top = columns [\n    1 2 3\n    4 5 6\n  ] ft\n  ky = layers [1 2] md\n}\n",
    );
    // A one-line block holding a grid array is expanded: rows need lines.
    fmt(
        "grid { cells = 2 x 2 x 1 }\npatch { kx = cells [1 2 3 4] }\n",
        "grid { cells = 2 x 2 x 1 }\n\npatch {\n  kx = cells [\n    1 2\n    3 4\n  ]\n}\n",
    );
}

#[test]
fn cell_arrays_without_a_grid_or_with_comments_keep_the_plain_wrapping() {
    // An included fragment: no grid in the file, so no NX.
    fmt(
        "rock {\n  kx = cells [1 2 3 4] md\n}\n",
        "rock {\n  kx = cells [1 2 3 4] md\n}\n",
    );
    // A comment inside the list stays where it was.
    fmt(
        "grid {\n  cells = 2 x 1 x 2\n}\n\nrock {\n  kx = cells [1 2 # top\n 3 4]\n}\n",
        "grid {\n  cells = 2 x 1 x 2\n}\n\nrock {\n  kx = cells [1 2  # top\n    3 4]\n}\n",
    );
    // One row or less: nothing to split.
    fmt(
        "grid {\n  cells = 4 x 1 x 1\n}\n\nrock {\n  kx = cells [1 2 3 4]\n}\n",
        "grid {\n  cells = 4 x 1 x 1\n}\n\nrock {\n  kx = cells [1 2 3 4]\n}\n",
    );
}

#[test]
fn wide_grid_rows_wrap_at_a_fixed_count_and_each_row_starts_a_line() {
    let nx = 25;
    let values: Vec<String> = (0..2 * nx)
        .map(|n| format!("{:.4}", 0.1 + n as f64 * 1e-4))
        .collect();
    let text = format!(
        "grid {{\n  cells = {nx} x 2 x 1\n}}\n\nrock {{\n  porosity = cells [{}]\n}}\n",
        values.join(" ")
    );
    let out = check_format(&text, &parse(&text));
    let lines: Vec<&str> = out.lines().collect();
    let start = lines.iter().position(|l| l.ends_with("cells [")).unwrap();
    let body = &lines[start + 1..start + 7];
    // Two rows of 25 values: 10 + 10 + 5 each; rows at one level deeper
    // than the key, their continuations one more.
    let counts: Vec<usize> = body.iter().map(|l| l.split_whitespace().count()).collect();
    assert_eq!(counts, [10, 10, 5, 10, 10, 5], "{out}");
    assert!(
        body[0].starts_with("    0.1000 ") && body[3].starts_with("    0.1025 "),
        "{out}"
    );
    assert!(body[1].starts_with("      0.1010 "), "{out}");
    assert_eq!(lines[start + 7], "  ]");
    for line in &lines {
        assert!(
            line.chars().count() <= rill_syntax::format::WIDTH,
            "{line:?}"
        );
    }
}

/// A saturation table in a `relperm` block is laid out with its columns
/// aligned, keys padded to one width; anything else in the block, and
/// lists elsewhere, keep the plain layout.
#[test]
fn relperm_tables_align_their_columns() {
    fmt(
        "relperm \"shaly layers\" {\n  model = table\n  sw = [0.25 0.35 0.45 0.55 0.65 0.72]\n  krw = [0 0.02 0.07 0.15 0.26 0.35]\n  kro = [0.7 0.42 0.21 0.08 0.01 0]  # oil\n  pc = [9 3.2 1.6 0.8 0.3 0] psi\n}\n",
        "relperm \"shaly layers\" {\n  model = table\n  sw  = [0.25 0.35 0.45 0.55 0.65 0.72]\n  krw = [0    0.02 0.07 0.15 0.26 0.35]\n  kro = [0.7  0.42 0.21 0.08 0.01 0   ]  # oil\n  pc  = [9    3.2  1.6  0.8  0.3  0   ] psi\n}\n",
    );
    // Lists of different lengths are not one table (the checker reports
    // them); neither is one list alone, nor the same lists outside relperm.
    fmt(
        "relperm \"a\" {\n  sw = [0.2 0.5 0.8]\n  krw = [0 0.3]\n}\n",
        "relperm \"a\" {\n  sw = [0.2 0.5 0.8]\n  krw = [0 0.3]\n}\n",
    );
    fmt(
        "grid {\n  dx = [100 2000]\n  dy = [20 30]\n}\n",
        "grid {\n  dx = [100 2000]\n  dy = [20 30]\n}\n",
    );
    // A comment inside a list leaves the table to the plain layout.
    fmt(
        "relperm \"a\" {\n  sw = [0.2 0.5 0.8]\n  krw = [0 0.1 # low\n  0.3]\n}\n",
        "relperm \"a\" {\n  sw = [0.2 0.5 0.8]\n  krw = [0 0.1  # low\n    0.3]\n}\n",
    );
    // A table too wide for 100 columns wraps as any list.
    let wide: Vec<String> = (0..30).map(|i| format!("0.{:02}", i + 10)).collect();
    let text = format!(
        "relperm \"a\" {{\n  sw = [{}]\n  krw = [{}]\n}}\n",
        wide.join(" "),
        wide.join(" ")
    );
    let out = check_format(&text, &parse(&text));
    assert!(out.lines().all(|l| l.chars().count() <= 100), "{out}");
    assert!(out.contains("\n  sw = [0.10 "), "{out}");
}
