//! `rill run` refuses or stops what cannot give a sound result, and says
//! so: negative absolute pressures anywhere (`sanity.pressure`,
//! `initial.pressure`), runs that would take more steps than allowed
//! (`timeline.steps`), steps that collapse below `min_step`; and it prints
//! progress lines when stderr is not a terminal. Decks are of the fictional
//! "Millbrook" teaching block.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn rill() -> Command {
    Command::new(env!("CARGO_BIN_EXE_rill"))
}

fn teaching_block() -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/teaching-block.rill");
    std::fs::read_to_string(path).unwrap()
}

/// Writes `text` as `deck.rill` in a fresh folder and runs it; returns the
/// output and the result folder.
fn run_deck(text: &str, env: &[(&str, &str)]) -> (Output, PathBuf, tempfile::TempDir) {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("deck.rill");
    std::fs::write(&deck, text).unwrap();
    let out = dir.path().join("deck.out");
    let mut cmd = rill();
    cmd.arg("run").arg(&deck).arg("--out").arg(&out);
    for (k, v) in env {
        cmd.env(k, v);
    }
    (cmd.output().unwrap(), out, dir)
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

#[test]
fn negative_absolute_pressures_are_never_simulated() {
    let base = teaching_block();
    let cases = [
        (
            "control = rate 150 stb/day",
            "control = bhp -100 psi",
            "sanity.pressure",
        ),
        (
            "bhp_limit = 500 psi",
            "bhp_limit = -1000 psi",
            "sanity.pressure",
        ),
        (
            "report {",
            "boundary \"west edge\" {\n  side = west\n  pressure = -1e6 psi\n}\n\nreport {",
            "sanity.pressure",
        ),
        // A datum 1e7 ft below the grid: the equilibrium pressure at the
        // top is far below zero.
        (
            "pressure = 2500 psi at 5015 ft",
            "pressure = 2500 psi at 1e7 ft",
            "initial.pressure",
        ),
    ];
    for (from, to, code) in cases {
        assert!(base.contains(from), "{from}");
        let text = base.replacen(from, to, 1);
        let (o, out, _dir) = run_deck(&text, &[]);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(1), "{to}: {err}");
        assert!(err.contains(code), "{to}: {err}");
        assert!(err.contains("nothing was run"), "{to}: {err}");
        assert!(!out.exists(), "{to}: no result set may be written");
    }
}

#[test]
fn a_run_needing_a_million_steps_is_refused_before_it_starts() {
    let text = teaching_block()
        .replace("  end = 180 day\n", "  end = 100 day\n")
        .replace("max_step = 10 day", "max_step = 1e-4 day")
        .replace("first_step = 0.05 day", "first_step = 1e-5 day");
    let (o, out, _dir) = run_deck(&text, &[]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("timeline.steps"), "{err}");
    assert!(err.contains("1000000 steps"), "{err}");
    assert!(!out.exists());
}

#[test]
fn collapsing_steps_stop_at_min_step_with_the_likely_cause() {
    // Viscosity typed a billion times too small: every step fails until
    // it reaches min_step (1 s by default), then the run stops at once
    // instead of creeping on for hours.
    let text = teaching_block().replace("viscosity = 0.7 cP", "viscosity = 1e-9 cP");
    let (o, out, _dir) = run_deck(&text, &[]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("`min_step` = 1 s"), "{err}");
    assert!(err.contains("check the units of viscosity"), "{err}");
    assert!(!out.exists());
}

#[test]
fn max_steps_stops_a_run_that_cannot_finish_within_it() {
    // 180 days in steps of at most 1 day pass the check (180 steps, 190
    // allowed), but reports every 0.5 day need at least 360 steps: the run
    // stops at the 190th with the reason.
    let text = teaching_block()
        .replace("max_step = 10 day", "max_step = 1 day\n  max_steps = 190")
        .replace("report_every = 15 day", "report_every = 0.5 day");
    let (o, out, _dir) = run_deck(&text, &[]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(err.contains("stopped after 190 steps"), "{err}");
    assert!(err.contains("`max_steps`"), "{err}");
    assert!(!out.exists());
}

#[test]
fn progress_lines_go_to_stderr_when_it_is_not_a_terminal() {
    let (o, out, _dir) = run_deck(&teaching_block(), &[("RILL_PROGRESS_SECONDS", "0")]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(0), "{err}");
    let lines: Vec<&str> = err
        .lines()
        .filter(|l| l.starts_with("progress: "))
        .collect();
    assert!(lines.len() > 5, "{err}");
    assert!(
        lines.last().unwrap().contains("t = 180 of 180 day (100%)"),
        "{lines:?}"
    );
    assert!(out.join("series.csv").is_file());
    // Without the variable a short run prints none (the first line comes
    // after 2 s), and --quiet never prints any.
    let (o, _, _dir) = run_deck(&teaching_block(), &[]);
    assert!(!stderr(&o).contains("progress: "));
}

/// `--engine petsc` in a build without the `petsc` feature says how to get
/// one and runs nothing; `--petsc-options` needs the PETSc engine; the
/// distributed engine does not export the first system.
#[test]
fn the_engine_flags_are_refused_where_they_cannot_work() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("deck.rill");
    std::fs::write(&deck, teaching_block()).unwrap();
    let out = dir.path().join("deck.out");
    let run = |extra: &[&str]| {
        let mut cmd = rill();
        cmd.arg("run").arg(&deck).arg("--out").arg(&out).args(extra);
        cmd.output().unwrap()
    };
    let options_alone = run(&["--petsc-options", "-pc_type gamg"]);
    assert_eq!(options_alone.status.code(), Some(2));
    assert!(stderr(&options_alone).contains("--petsc-options needs --engine petsc"));
    let export = run(&["--engine", "petsc", "--export-system", "sys"]);
    assert_eq!(export.status.code(), Some(2));
    assert!(stderr(&export).contains("embedded engine only"));
    if !cfg!(feature = "petsc") {
        let petsc = run(&["--engine", "petsc"]);
        assert_eq!(petsc.status.code(), Some(2), "{}", stderr(&petsc));
        let text = stderr(&petsc);
        assert!(
            text.contains("built without the PETSc engine")
                && text.contains("--features petsc")
                && text.contains("libpetsc-real-dev"),
            "{text}"
        );
    }
    assert!(!out.exists(), "nothing was run or written");
}

/// An oil-water deck runs with the embedded engine: `rill run` exits 0,
/// writes the result set and shows the cautions.
#[test]
fn an_oil_water_deck_runs_and_writes_its_results() {
    let deck = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/fixtures/well.control-phase/clean.rill");
    let text = std::fs::read_to_string(deck).unwrap();
    let (o, out, _dir) = run_deck(&text, &[]);
    let said = stderr(&o);
    assert_eq!(o.status.code(), Some(0), "{said}");
    let series = std::fs::read_to_string(out.join("series.csv")).unwrap();
    let header = series.lines().next().unwrap();
    assert!(header.contains("P-1"), "{header}");
    assert!(series.lines().count() > 10, "{series}");
    assert!(!said.contains("panicked"), "{said}");
}
