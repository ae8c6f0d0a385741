//! `rill check` on a fragment (a file of well blocks): checked through the
//! deck that includes it, or one error when nothing does.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

fn rill() -> Command {
    Command::new(env!("CARGO_BIN_EXE_rill"))
}

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// Standard output then standard error (diagnostics go to the latter).
fn both(out: &std::process::Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    )
}

const WELL: &str = "well \"L-1\" {\n  role = producer\n  location = (1, 1)\n  radius = 0.1 m\n  control = bhp 100 bar\n}\n";

#[test]
fn a_fragment_is_checked_through_the_deck_that_includes_it() {
    let out = rill()
        .current_dir(root())
        .args(["check", "examples/tamsin-ridge/wells.rill"])
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{stdout}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        stdout.starts_with(
            "examples/tamsin-ridge/wells.rill is included by examples/tamsin-ridge/tamsin-ridge.rill; checked that deck\n"
        ),
        "{stdout}"
    );
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("tamsin-ridge.rill: clean"), "{stderr}");
    // JSON stays JSON: the line goes to standard error.
    let json = rill()
        .current_dir(root())
        .args([
            "check",
            "--format",
            "json",
            "examples/tamsin-ridge/wells.rill",
        ])
        .output()
        .unwrap();
    assert_eq!(json.status.code(), Some(0));
    let v: Value = serde_json::from_slice(&json.stdout).unwrap();
    assert_eq!(v["diagnostics"].as_array().map(Vec::len), Some(0));
    assert!(String::from_utf8_lossy(&json.stderr).contains("checked that deck"));
}

#[test]
fn a_lone_fragment_gets_one_error() {
    let dir = tempfile::tempdir().unwrap();
    let lone = dir.path().join("lone.rill");
    std::fs::write(&lone, WELL).unwrap();
    let out = rill()
        .args(["check", "--format", "json"])
        .arg(&lone)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let diags = v["diagnostics"].as_array().unwrap();
    assert_eq!(diags.len(), 1, "{v}");
    assert_eq!(diags[0]["code"], "deck.missing-key");
    assert!(diags[0]["message"]
        .as_str()
        .unwrap()
        .contains("no deck in the workspace includes it"));
}

#[test]
fn the_search_climbs_to_the_project_root_and_no_further() {
    let dir = tempfile::tempdir().unwrap();
    let project = dir.path().join("project");
    std::fs::create_dir_all(project.join(".git")).unwrap();
    std::fs::create_dir_all(project.join("decks/wells")).unwrap();
    let fragment = project.join("decks/wells/more.rill");
    std::fs::write(&fragment, WELL).unwrap();
    // A deck above the project root is never looked at.
    std::fs::write(
        dir.path().join("outside.rill"),
        "include \"project/decks/wells/more.rill\"\n",
    )
    .unwrap();
    let out = rill().arg("check").arg(&fragment).output().unwrap();
    let stdout = both(&out);
    assert_eq!(out.status.code(), Some(1));
    assert!(
        stdout.contains("no deck in the workspace includes it"),
        "{stdout}"
    );
    assert!(stdout.contains("searched the decks under"), "{stdout}");
    // A deck in a parent folder inside the project is found; its errors are reported.
    std::fs::write(
        project.join("main.rill"),
        "include \"decks/wells/more.rill\"\n",
    )
    .unwrap();
    let out = rill().arg("check").arg(&fragment).output().unwrap();
    let stdout = both(&out);
    assert!(stdout.contains("main.rill; checked that deck"), "{stdout}");
    assert!(stdout.contains("the case has no `grid` block"), "{stdout}");
    assert_eq!(out.status.code(), Some(1));
}
