//! The layering table in `DEVELOPERS.md` is the code map newcomers read: this
//! test keeps it true. For every crate under `crates/`, the rill crates its
//! `Cargo.toml` uses (normal dependencies, not dev-dependencies) must be
//! exactly the ones its row lists in the "uses" column, and every crate must
//! have a row.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// `crate name -> rill crates it may use`, from the table rows that start
/// with a crate name in backticks.
fn table(developers: &str) -> BTreeMap<String, BTreeSet<String>> {
    let mut rows = BTreeMap::new();
    for line in developers.lines() {
        let Some(rest) = line.strip_prefix("| `rill-") else {
            continue;
        };
        let cells: Vec<&str> = rest.split('|').collect();
        let name = format!("rill-{}", cells[0].trim().trim_end_matches('`'));
        let uses = cells
            .get(1)
            .map(|c| {
                c.split(',')
                    .map(str::trim)
                    .filter(|s| !s.is_empty())
                    .map(str::to_string)
                    .collect()
            })
            .unwrap_or_default();
        rows.insert(name, uses);
    }
    rows
}

/// The rill crates named in the `[dependencies]` section of a manifest.
fn rill_dependencies(manifest: &str) -> BTreeSet<String> {
    let mut in_deps = false;
    let mut deps = BTreeSet::new();
    for line in manifest.lines() {
        let line = line.trim();
        if line.starts_with('[') {
            in_deps = line == "[dependencies]";
            continue;
        }
        if in_deps && line.starts_with("rill-") {
            let name = line
                .split(|c: char| c == '.' || c == '=' || c.is_whitespace())
                .next()
                .unwrap_or_default();
            deps.insert(name.to_string());
        }
    }
    deps
}

#[test]
fn the_code_map_lists_each_crates_dependencies() {
    let developers = std::fs::read_to_string(root().join("DEVELOPERS.md")).unwrap();
    let rows = table(&developers);
    let mut crates = Vec::new();
    for entry in std::fs::read_dir(root().join("crates")).unwrap() {
        let dir = entry.unwrap().path();
        let manifest = dir.join("Cargo.toml");
        if manifest.is_file() {
            crates.push((
                dir.file_name().unwrap().to_string_lossy().into_owned(),
                std::fs::read_to_string(manifest).unwrap(),
            ));
        }
    }
    assert!(crates.len() >= 10, "found only {} crates", crates.len());
    let mut wrong = Vec::new();
    for (name, manifest) in &crates {
        let found = rill_dependencies(manifest);
        match rows.get(name) {
            None => wrong.push(format!("{name}: no row in DEVELOPERS.md's crate table")),
            Some(listed) if *listed != found => wrong.push(format!(
                "{name}: DEVELOPERS.md lists {listed:?}, Cargo.toml uses {found:?}"
            )),
            Some(_) => {}
        }
    }
    for name in rows.keys() {
        if !crates.iter().any(|(c, _)| c == name) {
            wrong.push(format!("{name}: listed in DEVELOPERS.md but not a crate"));
        }
    }
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}

#[test]
fn the_reader_understands_rows_and_manifests() {
    let rows =
        table("| crate | uses |\n| `rill-a` | rill-b, rill-c | owns |\n| `rill-b` | | x |\n");
    assert_eq!(
        rows["rill-a"],
        BTreeSet::from(["rill-b".into(), "rill-c".into()])
    );
    assert!(rows["rill-b"].is_empty());
    let deps = rill_dependencies(
        "[dependencies]\nrill-b.workspace = true\nrill-c = { path = \"x\" }\nserde = \"1\"\n[dev-dependencies]\nrill-d.workspace = true\n",
    );
    assert_eq!(deps, BTreeSet::from(["rill-b".into(), "rill-c".into()]));
}
