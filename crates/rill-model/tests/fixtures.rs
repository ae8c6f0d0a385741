//! Every diagnostic code has a broken deck under `tests/fixtures/<code>/`
//! that triggers it (code, severity, line and column given in its first
//! line, `# expect: CODE SEVERITY LINE:COL`) and a clean neighbour that
//! does not.

use rill_model::{analyze_text, Analysis, Code, MemorySource};
use std::path::{Path, PathBuf};

fn fixtures() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/fixtures")
}

fn check(path: &Path) -> (String, Analysis) {
    let text = std::fs::read_to_string(path).unwrap();
    let analysis = analyze_text(path, &text, &MemorySource::new());
    (text, analysis)
}

/// 1-based line and column (in characters) of a byte offset.
fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let before = &text[..offset];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().unwrap_or("").chars().count() + 1;
    (line, col)
}

#[test]
fn every_code_has_a_fixture_pair() {
    for code in Code::ALL {
        let dir = fixtures().join(code.as_str());
        assert!(
            dir.join("broken.rill").is_file(),
            "missing tests/fixtures/{code}/broken.rill"
        );
        assert!(
            dir.join("clean.rill").is_file(),
            "missing tests/fixtures/{code}/clean.rill"
        );
    }
}

#[test]
fn broken_decks_trigger_their_code_at_the_expected_place() {
    let mut failures = Vec::new();
    for code in Code::ALL {
        let path = fixtures().join(code.as_str()).join("broken.rill");
        let (text, analysis) = check(&path);
        let header = text.lines().next().unwrap_or("");
        let parts: Vec<&str> = header
            .trim_start_matches("# expect:")
            .split_whitespace()
            .collect();
        assert_eq!(parts.len(), 3, "bad header in {}", path.display());
        assert_eq!(
            parts[0],
            code.as_str(),
            "header names another code in {}",
            path.display()
        );
        let (line, col) = parts[2].split_once(':').unwrap();
        let want = (
            line.parse::<usize>().unwrap(),
            col.parse::<usize>().unwrap(),
        );
        let found: Vec<_> = analysis
            .diagnostics
            .iter()
            .filter(|d| d.code == *code && d.location.file == 0)
            .collect();
        let hit = found
            .iter()
            .find(|d| d.severity.name() == parts[1] && line_col(&text, d.location.start) == want);
        if hit.is_none() {
            failures.push(format!(
                "{code}: expected {} at {}:{}, found {:?}",
                parts[1],
                want.0,
                want.1,
                analysis
                    .diagnostics
                    .iter()
                    .map(|d| format!(
                        "{} {} {:?} {}",
                        d.code,
                        d.severity.name(),
                        line_col(&text, d.location.start),
                        d.message
                    ))
                    .collect::<Vec<_>>()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn clean_neighbours_do_not_trigger_their_code() {
    let mut failures = Vec::new();
    for code in Code::ALL {
        let path = fixtures().join(code.as_str()).join("clean.rill");
        let (_, analysis) = check(&path);
        if analysis.diagnostics.iter().any(|d| d.code == *code) {
            failures.push(format!(
                "{code}: {:?}",
                analysis
                    .diagnostics
                    .iter()
                    .map(|d| &d.message)
                    .collect::<Vec<_>>()
            ));
        }
        if analysis.has_errors() {
            failures.push(format!(
                "{code}: clean neighbour has errors: {:?}",
                analysis
                    .diagnostics
                    .iter()
                    .map(|d| format!("{} {}", d.code, d.message))
                    .collect::<Vec<_>>()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
