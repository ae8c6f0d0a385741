//! `docs/reference.md` and `docs/tutorial.md` against the code.
//!
//! The reference must document exactly the blocks and keys of the schema,
//! the unit names of the registry and the diagnostic codes that `rill
//! explain` knows; its complete decks (code blocks tagged `rill`) must check
//! without errors or warnings. The tutorial's `rill` blocks, read in order,
//! are the deck `examples/tutorial/pebblebrook.rill`: every step checks with
//! nothing wrong but the blocks still to come, and the whole deck checks
//! clean and runs.
//!
//! The format this test reads (the reference's note for maintainers says
//! the same): under `## Blocks and keys`, a `### ` heading per block whose
//! text is its path in backticks joined by ` / ` (`` `rock` / `patch` ``),
//! followed by one table whose first column is `key`, a key in backticks
//! per row; under `## Units`, tables whose first column is `unit`; under
//! `## Diagnostics`, one table whose first column is `code` and a `### `
//! heading per code.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};
use std::process::Command;

use rill_model::explain::explain;
use rill_model::schema::{self, BlockDef};
use rill_model::{analyze, Code, MemorySource, Severity};

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn read(relative: &str) -> String {
    let path = repo().join(relative);
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The lines of the `## title` section, up to the next `## ` heading.
fn section<'a>(text: &'a str, title: &str) -> Vec<&'a str> {
    let heading = format!("## {title}");
    let mut lines = text.lines().skip_while(|l| l.trim_end() != heading);
    assert!(
        lines.next().is_some(),
        "the reference has no `{heading}` section"
    );
    lines.take_while(|l| !l.starts_with("## ")).collect()
}

/// The `### ` subsections of a section: heading text and body lines.
fn subsections<'a>(lines: &[&'a str]) -> Vec<(&'a str, Vec<&'a str>)> {
    let mut out: Vec<(&str, Vec<&str>)> = Vec::new();
    for line in lines {
        if let Some(h) = line.strip_prefix("### ") {
            out.push((h.trim(), Vec::new()));
        } else if let Some(last) = out.last_mut() {
            last.1.push(line);
        }
    }
    out
}

/// Fenced code blocks outside them are skipped, so that a table in a code
/// example never counts.
fn outside_code<'a>(lines: &[&'a str]) -> Vec<&'a str> {
    let mut inside = false;
    lines
        .iter()
        .copied()
        .filter(|l| {
            if l.trim_start().starts_with("```") {
                inside = !inside;
                return false;
            }
            !inside
        })
        .collect()
}

/// The cells of a table row, trimmed (`|` inside backticks escaped as `\|`).
fn cells(row: &str) -> Vec<String> {
    let inner = row.trim().trim_start_matches('|').trim_end_matches('|');
    let mut out = vec![String::new()];
    let mut chars = inner.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\\' if chars.peek() == Some(&'|') => {
                out.last_mut().unwrap().push('|');
                chars.next();
            }
            '|' => out.push(String::new()),
            _ => out.last_mut().unwrap().push(c),
        }
    }
    out.into_iter().map(|c| c.trim().to_string()).collect()
}

/// The first-column names of every table whose first header cell is
/// `header`, each a single name in backticks; `where_` names the place for
/// messages.
fn table_names(lines: &[&str], header: &str, where_: &str) -> Vec<Vec<String>> {
    let lines = outside_code(lines);
    let mut tables = Vec::new();
    let mut i = 0;
    while i < lines.len() {
        let row = lines[i].trim();
        if row.starts_with('|') && cells(row).first().map(String::as_str) == Some(header) {
            i += 2; // the header and its separator
            let mut names = Vec::new();
            while i < lines.len() && lines[i].trim().starts_with('|') {
                let first = cells(lines[i]).remove(0);
                let name = first
                    .strip_prefix('`')
                    .and_then(|s| s.strip_suffix('`'))
                    .filter(|s| !s.is_empty() && !s.contains('`'))
                    .unwrap_or_else(|| {
                        panic!("{where_}: a `{header}` row must start with one name in backticks, found `{first}`")
                    });
                names.push(name.to_string());
                i += 1;
            }
            tables.push(names);
        } else {
            i += 1;
        }
    }
    tables
}

/// The schema's blocks by path (`timeline / at / well`), with their keys.
fn schema_blocks() -> BTreeMap<String, BTreeSet<String>> {
    fn walk(def: &'static BlockDef, path: &str, out: &mut BTreeMap<String, BTreeSet<String>>) {
        out.insert(
            path.to_string(),
            def.keys.iter().map(|k| k.name.to_string()).collect(),
        );
        for child in def.children {
            let child_def = schema::child_block(def, child)
                .unwrap_or_else(|| panic!("`{path}` names a child `{child}` the schema lacks"));
            walk(child_def, &format!("{path} / {child}"), out);
        }
    }
    let mut out = BTreeMap::new();
    for def in schema::TOP_LEVEL {
        walk(def, def.name, &mut out);
    }
    out
}

/// The documented blocks by path, with the keys of their `key` table.
fn documented_blocks(reference: &str) -> BTreeMap<String, BTreeSet<String>> {
    let mut out = BTreeMap::new();
    for (heading, body) in subsections(&section(reference, "Blocks and keys")) {
        let parts: Vec<&str> = heading.split(" / ").collect();
        let path: Vec<&str> = parts
            .iter()
            .map(|p| {
                p.strip_prefix('`')
                    .and_then(|s| s.strip_suffix('`'))
                    .unwrap_or_else(|| {
                        panic!("block heading `### {heading}`: each part is a name in backticks")
                    })
            })
            .collect();
        let path = path.join(" / ");
        let tables = table_names(&body, "key", &format!("block `{path}`"));
        assert!(
            tables.len() == 1,
            "block `{path}`: expected one table with the header `key`, found {}",
            tables.len()
        );
        let keys: BTreeSet<String> = tables[0].iter().cloned().collect();
        assert_eq!(
            keys.len(),
            tables[0].len(),
            "block `{path}` lists a key twice"
        );
        assert!(
            out.insert(path.clone(), keys).is_none(),
            "block `{path}` is documented twice"
        );
    }
    out
}

#[test]
fn every_block_and_key_of_the_schema_is_documented_and_no_other() {
    let reference = read("docs/reference.md");
    let schema = schema_blocks();
    let documented = documented_blocks(&reference);
    let mut problems = Vec::new();
    for (path, keys) in &schema {
        match documented.get(path) {
            None => problems.push(format!("block `{path}` of the schema is not documented")),
            Some(doc) => {
                for k in keys.difference(doc) {
                    problems.push(format!("key `{k}` of block `{path}` is not documented"));
                }
                for k in doc.difference(keys) {
                    problems.push(format!(
                        "the reference documents key `{k}` in block `{path}`, which the schema lacks"
                    ));
                }
            }
        }
    }
    for path in documented.keys().filter(|p| !schema.contains_key(*p)) {
        problems.push(format!(
            "the reference documents block `{path}`, which the schema lacks"
        ));
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn every_unit_of_the_registry_is_documented_and_no_other() {
    let reference = read("docs/reference.md");
    let tables = table_names(&section(&reference, "Units"), "unit", "units");
    let documented: Vec<String> = tables.into_iter().flatten().collect();
    let set: BTreeSet<&str> = documented.iter().map(String::as_str).collect();
    assert_eq!(set.len(), documented.len(), "a unit is listed twice");
    let registry: BTreeSet<&str> = rill_units::registry().iter().map(|u| u.name).collect();
    let missing: Vec<_> = registry.difference(&set).collect();
    let unknown: Vec<_> = set.difference(&registry).collect();
    assert!(
        missing.is_empty() && unknown.is_empty(),
        "units of the registry not documented: {missing:?}; documented units the registry lacks: {unknown:?}"
    );
}

#[test]
fn every_diagnostic_code_is_documented_and_no_other() {
    let reference = read("docs/reference.md");
    let lines = section(&reference, "Diagnostics");
    let tables = table_names(&lines, "code", "diagnostics");
    assert_eq!(tables.len(), 1, "one table of codes in `## Diagnostics`");
    let listed: BTreeSet<&str> = tables[0].iter().map(String::as_str).collect();
    assert_eq!(listed.len(), tables[0].len(), "a code is listed twice");
    let known: BTreeSet<&str> = Code::ALL.iter().map(|c| c.as_str()).collect();
    let mut problems = Vec::new();
    for code in Code::ALL {
        if explain(*code).is_none() {
            problems.push(format!("`rill explain` does not know `{code}`"));
        }
    }
    for c in known.difference(&listed) {
        problems.push(format!("code `{c}` is not in the table of codes"));
    }
    for c in listed.difference(&known) {
        problems.push(format!(
            "the table lists `{c}`, which `rill explain` does not know"
        ));
    }
    // One entry per code, carrying the summary `rill explain` prints.
    let entries: BTreeMap<&str, String> = subsections(&lines)
        .into_iter()
        .filter_map(|(h, body)| {
            let code = h.strip_prefix('`')?.strip_suffix('`')?;
            Some((
                code,
                body.join(" ")
                    .split_whitespace()
                    .collect::<Vec<_>>()
                    .join(" "),
            ))
        })
        .collect();
    for code in Code::ALL {
        let summary = explain(*code).map(|e| e.summary).unwrap_or_default();
        match entries.get(code.as_str()) {
            None => problems.push(format!("code `{code}` has no `### ` entry")),
            Some(body) if !body.contains(summary) => problems.push(format!(
                "the entry of `{code}` does not say what `rill explain` says: {summary}"
            )),
            Some(_) => {}
        }
    }
    for c in entries.keys().filter(|c| !known.contains(*c)) {
        problems.push(format!(
            "the reference has an entry for `{c}`, which `rill explain` does not know"
        ));
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// The code blocks of a markdown text tagged `tag`, with their first line.
fn code_blocks(text: &str, tag: &str) -> Vec<(usize, String)> {
    let mut out = Vec::new();
    let mut current: Option<(usize, String)> = None;
    for (n, line) in text.lines().enumerate() {
        let fence = line.trim_start().strip_prefix("```");
        match (&mut current, fence) {
            (None, Some(info)) if info.trim() == tag => current = Some((n + 1, String::new())),
            (Some(_), Some(_)) => out.extend(current.take()),
            (Some((_, body)), None) => {
                body.push_str(line);
                body.push('\n');
            }
            (None, _) => {}
        }
    }
    out
}

/// The errors and warnings of a deck, as `code: message` lines.
fn problems_of(deck: &str) -> Vec<(Code, String)> {
    let source = MemorySource::new().with("/docs/deck.rill", deck);
    let analysis = analyze(Path::new("/docs/deck.rill"), &source).expect("the deck is readable");
    analysis
        .diagnostics
        .iter()
        .filter(|d| d.severity != Severity::Info)
        .map(|d| (d.code, format!("{}: {}", d.code, d.message)))
        .collect()
}

#[test]
fn the_complete_decks_of_the_reference_check_clean() {
    let reference = read("docs/reference.md");
    let decks = code_blocks(&reference, "rill");
    assert!(!decks.is_empty(), "the reference shows no complete deck");
    for (line, deck) in decks {
        let problems = problems_of(&deck);
        assert!(
            problems.is_empty(),
            "the deck at docs/reference.md:{line} does not check clean:\n{problems:#?}"
        );
    }
}

const TUTORIAL_DECK: &str = "examples/tutorial/pebblebrook.rill";

/// The tutorial's `rill` blocks are its deck, in order: each step checks
/// with nothing but missing blocks and keys, and together they are the
/// deck file, which checks clean.
#[test]
fn the_tutorial_builds_its_deck_step_by_step() {
    let tutorial = read("docs/tutorial.md");
    let steps = code_blocks(&tutorial, "rill");
    assert!(steps.len() > 3, "the tutorial builds its deck in steps");
    let mut deck = String::new();
    for (line, step) in &steps {
        if !deck.is_empty() {
            deck.push('\n');
        }
        deck.push_str(step);
        let wrong: Vec<_> = problems_of(&deck)
            .into_iter()
            .filter(|(code, _)| *code != Code::DeckMissingKey)
            .collect();
        assert!(
            wrong.is_empty(),
            "the tutorial's deck up to docs/tutorial.md:{line} has problems besides missing blocks:\n{wrong:#?}"
        );
    }
    assert_eq!(
        deck,
        read(TUTORIAL_DECK),
        "the tutorial's `rill` blocks, joined by blank lines, must be {TUTORIAL_DECK}"
    );
    let problems = problems_of(&deck);
    assert!(problems.is_empty(), "{problems:#?}");
}

/// `rill check` and `rill run` on the tutorial's deck, as the tutorial
/// shows them; the series header it quotes is the one the run writes.
#[test]
fn the_tutorial_deck_checks_and_runs() {
    let deck = repo().join(TUTORIAL_DECK);
    let rill = env!("CARGO_BIN_EXE_rill");
    let check = Command::new(rill).arg("check").arg(&deck).output().unwrap();
    // The summary line goes to standard error, with the diagnostics.
    let said = String::from_utf8_lossy(&check.stderr);
    assert!(check.status.success(), "rill check: {said}");
    assert!(
        said.contains("pebblebrook.rill: clean"),
        "rill check: {said}"
    );

    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("pebblebrook.out");
    let run = Command::new(rill)
        .args(["run", "--quiet", "--out"])
        .arg(&out)
        .arg(&deck)
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "rill run: {}",
        String::from_utf8_lossy(&run.stderr)
    );
    let series = std::fs::read_to_string(out.join("series.csv")).unwrap();
    let header = series.lines().next().unwrap();
    let tutorial = read("docs/tutorial.md");
    assert!(
        tutorial.contains(header),
        "the tutorial should quote the series header the run writes:\n{header}"
    );
    // t = 0, every 60 days and the event at 1 yr up to 2 yr: the report
    // times the tutorial explains.
    let times: Vec<f64> = series
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    assert_eq!(times.first(), Some(&0.0));
    assert!(
        times.contains(&365.25),
        "the event at 1 yr is reported: {times:?}"
    );
    assert_eq!(
        times.last(),
        Some(&730.5),
        "the run reaches 2 yr: {times:?}"
    );
}

const WATERFLOOD_DECK: &str = "examples/brackenlow-waterflood.rill";

/// The waterflood tutorial quotes its example: every line of its
/// `rill-fragment` blocks (but `...`) is a line of the deck, comments
/// aside, and the `rill check` and `rill inspect` lines it shows are what
/// the commands print.
#[test]
fn the_waterflood_tutorial_quotes_its_example() {
    let page = read("docs/waterflood.md");
    let deck = read(WATERFLOOD_DECK);
    let deck_lines: Vec<&str> = deck
        .lines()
        .map(|l| l.split('#').next().unwrap_or("").trim_end())
        .collect();
    let fragments = code_blocks(&page, "rill-fragment");
    assert!(
        fragments.len() >= 5,
        "the page reads the deck block by block"
    );
    for (line, block) in &fragments {
        for l in block.lines() {
            if l.trim() == "..." {
                continue;
            }
            assert!(
                deck_lines.contains(&l.trim_end()),
                "docs/waterflood.md:{line}: `{l}` is not a line of {WATERFLOOD_DECK}"
            );
        }
    }
    let rill = env!("CARGO_BIN_EXE_rill");
    let deck_path = repo().join(WATERFLOOD_DECK);
    let inspect = |cell: &str| {
        let out = Command::new(rill)
            .args(["inspect", "--cell", cell])
            .arg(&deck_path)
            .output()
            .unwrap();
        String::from_utf8_lossy(&out.stdout).into_owned()
    };
    let shown = inspect("12,6,5");
    for quoted in ["initial sw  0.634422", "krw, kro    0.208784, 0.0180364"] {
        assert!(page.contains(quoted), "the page quotes `{quoted}`");
        assert!(
            shown.contains(quoted),
            "rill inspect prints `{quoted}`:\n{shown}"
        );
    }
    // The producer's top cell: each phase's productivity at the initial
    // saturation, oil at kro_end (0.9 / 1.8 cP over its fvf) and no water.
    let shown = inspect("23,11,2");
    let quoted = "at initial sw  oil 0.736059, water 0 stb/day/psi";
    assert!(page.contains(quoted), "the page quotes `{quoted}`");
    assert!(
        shown.contains(quoted),
        "rill inspect prints `{quoted}`:\n{shown}"
    );
}
