//! Atomic replacement of result sets, refusals, and `--export-system` files.

use std::fs;
use std::path::Path;

use super::fixtures::*;
use crate::atomic::{FAIL_ON, STOP_AFTER_SWAP};
use crate::{
    default_out_dir, write_results, write_system, write_system_with, OutputError, RunMeta,
};
use rill_model::UnitSystem;

fn listing(dir: &Path) -> Vec<String> {
    let mut out = Vec::new();
    for entry in walk(dir) {
        out.push(entry.strip_prefix(dir).unwrap().display().to_string());
    }
    out.sort();
    out
}

fn walk(dir: &Path) -> Vec<std::path::PathBuf> {
    let mut out = Vec::new();
    for entry in fs::read_dir(dir).unwrap() {
        let p = entry.unwrap().path();
        if p.is_dir() {
            out.extend(walk(&p));
        } else {
            out.push(p);
        }
    }
    out
}

fn siblings(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

struct FailOn;
impl FailOn {
    fn set(rel: &str) -> FailOn {
        FAIL_ON.with(|f| *f.borrow_mut() = Some(rel.to_string()));
        FailOn
    }
}
impl Drop for FailOn {
    fn drop(&mut self) {
        FAIL_ON.with(|f| *f.borrow_mut() = None);
    }
}

#[test]
fn failure_midway_leaves_the_previous_results_intact() {
    let (dir, deck) = deck_dir();
    let out = default_out_dir(&deck);
    assert_eq!(out, dir.path().join("lobe.out"));
    let case = case(3, 2, 2, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    let first = write_results(&out, &case, &results, &meta).unwrap();
    let before: Vec<(String, Vec<u8>)> = walk(&out)
        .into_iter()
        .map(|p| (p.display().to_string(), fs::read(&p).unwrap()))
        .collect();

    // A second run with other values fails while writing its second map, and
    // again while writing the report (the last file).
    let mut other = results.clone();
    other.pressure_avg[2] = 1234.0 * PSI;
    for failing in ["maps/step_0001.vtr", "report.html"] {
        let _guard = FailOn::set(failing);
        let err = write_results(&out, &case, &other, &meta).unwrap_err();
        assert!(matches!(err, OutputError::Io { .. }), "{err}");
        assert!(err.to_string().contains("injected failure"), "{err}");
        let after: Vec<(String, Vec<u8>)> = walk(&out)
            .into_iter()
            .map(|p| (p.display().to_string(), fs::read(&p).unwrap()))
            .collect();
        assert_eq!(before, after, "the previous set is untouched");
        // No staging directory is left beside it.
        assert_eq!(siblings(dir.path()), ["lobe.out", "lobe.rill"]);
    }
    assert_eq!(first.files.len(), before.len());
}

#[test]
fn second_write_replaces_the_first_completely() {
    let (dir, deck) = deck_dir();
    let out = dir.path().join("lobe.out");
    let case = case(3, 2, 2, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    write_results(&out, &case, &results, &meta).unwrap();
    assert_eq!(
        listing(&out),
        [
            ".rill-results",
            "maps/rill.pvd",
            "maps/step_0000.vtr",
            "maps/step_0001.vtr",
            "maps/step_0002.vtr",
            "report.html",
            "series.csv",
            "series.json"
        ]
    );
    // A shorter run: two report times and no boundary.
    let mut shorter = results.clone();
    for v in [
        &mut shorter.times,
        &mut shorter.pressure_avg,
        &mut shorter.balance_error,
    ] {
        v.truncate(2);
    }
    shorter.pressure.truncate(2);
    for w in &mut shorter.wells {
        for s in [&mut w.bhp, &mut w.rate, &mut w.cumulative] {
            s.truncate(2);
        }
        w.mode.truncate(2);
    }
    shorter.boundaries.clear();
    let second = write_results(&out, &case, &shorter, &meta).unwrap();
    assert_eq!(
        listing(&out),
        [
            ".rill-results",
            "maps/rill.pvd",
            "maps/step_0000.vtr",
            "maps/step_0001.vtr",
            "report.html",
            "series.csv",
            "series.json"
        ]
    );
    let csv = fs::read_to_string(&second.series_csv).unwrap();
    assert_eq!(csv.lines().count(), 3);
    assert!(!csv.contains("east aquifer"));
    assert_eq!(
        siblings(dir.path()),
        ["lobe.out", "lobe.rill"],
        "the old set is removed"
    );
    assert_eq!(second.files.len(), 7);
    assert!(second
        .files
        .iter()
        .all(|f| f.starts_with(&second.dir) && f.is_file()));
}

#[test]
fn refuses_the_deck_its_directory_and_its_ancestors() {
    let (dir, deck) = deck_dir();
    let case = case(2, 2, 1, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    for (target, words) in [
        (deck.clone(), "the deck file itself"),
        (dir.path().to_path_buf(), "the deck's own directory"),
        (dir.path().join("."), "the deck's own directory"),
        (dir.path().join("sub/.."), "the deck's own directory"),
        (
            dir.path().parent().unwrap().to_path_buf(),
            "contains the deck",
        ),
    ] {
        let err = write_results(&target, &case, &results, &meta).unwrap_err();
        assert!(
            matches!(err, OutputError::Refused { .. }),
            "{target:?}: {err}"
        );
        let text = err.to_string();
        assert!(text.contains(words), "{target:?}: {text}");
        assert!(text.contains("lobe.out"), "says where results go: {text}");
    }
    assert_eq!(
        fs::read_to_string(&deck).unwrap(),
        "# deck\n",
        "the deck is untouched"
    );
    assert_eq!(siblings(dir.path()), ["lobe.rill"]);
}

#[test]
fn refuses_directories_that_are_not_result_sets() {
    let (dir, deck) = deck_dir();
    let case = case(2, 2, 1, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    let foreign = dir.path().join("notes");
    fs::create_dir(&foreign).unwrap();
    fs::write(foreign.join("thesis.tex"), "precious").unwrap();
    let err = write_results(&foreign, &case, &results, &meta).unwrap_err();
    assert!(
        err.to_string()
            .contains("holds files that rill did not write"),
        "{err}"
    );
    assert_eq!(
        fs::read_to_string(foreign.join("thesis.tex")).unwrap(),
        "precious"
    );

    let file = dir.path().join("plain.txt");
    fs::write(&file, "x").unwrap();
    let err = write_results(&file, &case, &results, &meta).unwrap_err();
    assert!(err.to_string().contains("not a directory"), "{err}");

    #[cfg(unix)]
    {
        let real = dir.path().join("real.out");
        write_results(&real, &case, &results, &meta).unwrap();
        let link = dir.path().join("link.out");
        std::os::unix::fs::symlink(&real, &link).unwrap();
        let err = write_results(&link, &case, &results, &meta).unwrap_err();
        assert!(err.to_string().contains("symbolic link"), "{err}");
    }

    // An empty directory, and a nested new one, are fine.
    let empty = dir.path().join("empty");
    fs::create_dir(&empty).unwrap();
    write_results(&empty, &case, &results, &meta).unwrap();
    write_results(&dir.path().join("runs/a/b"), &case, &results, &meta).unwrap();
}

#[test]
fn export_system_writes_both_files_atomically() {
    let (dir, deck) = deck_dir();
    let sys = dir.path().join("system");
    let written = write_system(
        &sys,
        &deck,
        b"%%MatrixMarket matrix coordinate real general\n",
        b"%%MatrixMarket rhs\n",
    )
    .unwrap();
    assert_eq!(written, [sys.join("matrix.mtx"), sys.join("rhs.mtx")]);
    assert!(fs::read_to_string(sys.join("matrix.mtx"))
        .unwrap()
        .starts_with("%%MatrixMarket"));

    // A failure in the second writer leaves both previous files as they were.
    let err = write_system_with(
        &sys,
        &deck,
        |w| w.write_all(b"new matrix\n"),
        |_| Err(std::io::Error::other("solver gave up")),
        None,
    )
    .unwrap_err();
    assert!(
        err.to_string().contains("rhs.mtx") && err.to_string().contains("solver gave up"),
        "{err}"
    );
    assert!(fs::read_to_string(sys.join("matrix.mtx"))
        .unwrap()
        .starts_with("%%MatrixMarket"));
    assert_eq!(
        siblings(&sys),
        ["matrix.mtx", "rhs.mtx"],
        "no temporary files left"
    );

    // An oil-water system adds its accumulation blocks, in the same step.
    let written = write_system_with(
        &sys,
        &deck,
        |w| w.write_all(b"matrix\n"),
        |w| w.write_all(b"rhs\n"),
        Some(Box::new(|w| w.write_all(b"blocks\n"))),
    )
    .unwrap();
    assert_eq!(written.len(), 3);
    assert_eq!(
        fs::read_to_string(sys.join("accumulation.mtx")).unwrap(),
        "blocks\n"
    );
    assert_eq!(
        siblings(&sys),
        ["accumulation.mtx", "matrix.mtx", "rhs.mtx"]
    );

    // The files are as readable as any file the user creates there, not
    // private like the temporary files they were.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let plain = sys.join("plain");
        fs::File::create(&plain).unwrap();
        let mode = |p: &Path| fs::metadata(p).unwrap().permissions().mode() & 0o777;
        assert_eq!(mode(&sys.join("matrix.mtx")), mode(&plain));
        fs::remove_file(plain).unwrap();
    }

    let err = write_system(dir.path(), &deck, b"", b"").unwrap_err();
    assert!(err.to_string().contains("deck's own directory"), "{err}");
}

#[cfg(target_os = "linux")]
#[test]
fn directories_are_exchanged_in_one_step() {
    let dir = tempfile::tempdir().unwrap();
    let (a, b) = (dir.path().join("a"), dir.path().join("b"));
    fs::create_dir(&a).unwrap();
    fs::create_dir(&b).unwrap();
    fs::write(a.join("from_a"), "a").unwrap();
    fs::write(b.join("from_b"), "b").unwrap();
    crate::atomic::exchange(&a, &b).unwrap();
    assert_eq!(siblings(&a), ["from_b"]);
    assert_eq!(siblings(&b), ["from_a"]);
}

/// Publishes with the process "killed" right after the swap.
struct StopAfterSwap;
impl StopAfterSwap {
    fn set() -> StopAfterSwap {
        STOP_AFTER_SWAP.with(|s| s.set(true));
        StopAfterSwap
    }
}
impl Drop for StopAfterSwap {
    fn drop(&mut self) {
        STOP_AFTER_SWAP.with(|s| s.set(false));
    }
}

#[test]
fn a_kill_after_the_swap_leaves_the_new_set_in_place() {
    let (dir, deck) = deck_dir();
    let out = dir.path().join("lobe.out");
    let case = case(3, 2, 2, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    write_results(&out, &case, &results, &meta).unwrap();
    let mut other = results.clone();
    other.pressure_avg[2] = 1234.0 * PSI;
    {
        let _kill = StopAfterSwap::set();
        write_results(&out, &case, &other, &meta).unwrap();
    }
    // The result folder is there, holding the new set; the previous set is
    // in a hidden folder named after this process.
    let series = fs::read_to_string(out.join("series.csv")).unwrap();
    let fresh = dir.path().join("fresh.out");
    write_results(&fresh, &case, &other, &meta).unwrap();
    assert_eq!(
        series,
        fs::read_to_string(fresh.join("series.csv")).unwrap()
    );
    let pid = std::process::id();
    let hidden: Vec<String> = siblings(dir.path())
        .into_iter()
        .filter(|n| n.starts_with(".lobe.out.rill-"))
        .collect();
    assert_eq!(hidden.len(), 1, "{hidden:?}");
    let prefix = if cfg!(target_os = "linux") {
        format!(".lobe.out.rill-new-{pid}-") // exchanged: staging holds the old set
    } else {
        format!(".lobe.out.rill-old-{pid}-")
    };
    assert!(hidden[0].starts_with(&prefix), "{hidden:?}");
}

/// The id of a process that has ended.
#[cfg(unix)]
fn dead_pid() -> u32 {
    let mut child = std::process::Command::new("true").spawn().unwrap();
    let pid = child.id();
    child.wait().unwrap();
    pid
}

#[cfg(unix)]
#[test]
fn leftovers_of_ended_writers_are_removed_when_the_next_run_starts() {
    let (dir, deck) = deck_dir();
    let out = dir.path().join("lobe.out");
    let case = case(3, 2, 2, UnitSystem::Field);
    let results = results(&case);
    let meta = RunMeta::new(&deck);
    let mut live = std::process::Command::new("sleep")
        .arg("30")
        .spawn()
        .unwrap();
    let dead = dead_pid();
    let leftovers = [
        (format!(".lobe.out.rill-new-{dead}-Ab12Cd"), false),
        (format!(".lobe.out.rill-old-{dead}-17-0"), false),
        (format!(".lobe.out.rill-new-{}-Xy34Zw", live.id()), true),
        (
            format!(".lobe.out.rill-new-{}-Own567", std::process::id()),
            true,
        ),
        // Another target's leftovers are not this run's business.
        (format!(".other.out.rill-new-{dead}-Qr89St"), true),
    ];
    for (name, _) in &leftovers {
        let p = dir.path().join(name);
        fs::create_dir(&p).unwrap();
        fs::write(p.join("series.csv"), vec![b'x'; 4096]).unwrap();
    }
    // Even a run that then fails sweeps first.
    {
        let _guard = FailOn::set("report.html");
        write_results(&out, &case, &results, &meta).unwrap_err();
    }
    let _ = live.kill();
    let _ = live.wait();
    let now = siblings(dir.path());
    for (name, kept) in &leftovers {
        assert_eq!(now.contains(name), *kept, "{name}: {now:?}");
    }
}
