//! Includes and array files that name something other than a regular file
//! of sane size: a FIFO, a device, a directory, a symbolic link loop, a
//! huge (sparse) file. Each analysis must come back promptly with a
//! `deck.include` error that says what was found; none may block or read
//! without end. Unix only: FIFOs and devices are Unix things.
#![cfg(unix)]

use rill_model::source::{MAX_FILE_LEN, MAX_INCLUDE_LEN};
use rill_model::{analyze_text, Code, Severity};
use rill_workspace::DiskSource;
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

/// A small deck whose `kx` is `kx` and which ends with `extra`.
fn deck(kx: &str, extra: &str) -> String {
    format!(
        "grid {{\n  cells = 2 x 2 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}}\n\
         rock {{\n  porosity = 0.2\n  kx = {kx}\n}}\n\
         fluid {{\n  viscosity = 0.7 cP\n  fvf = 1.01 rb/stb\n  density = 64.0 lb/ft^3\n}}\n\
         initial {{\n  pressure = 2500 psi at 5015 ft\n}}\n\
         timeline {{\n  end = 10 day\n}}\n{extra}"
    )
}

/// The `deck.include` error messages of analysing `text` at `deck`, or a
/// failure when the analysis takes longer than a few seconds.
fn include_errors(deck: &Path, text: String) -> Vec<String> {
    let (tx, rx) = mpsc::channel();
    let deck = deck.to_path_buf();
    // The thread is left behind if it blocks; the test fails either way.
    std::thread::spawn(move || {
        let a = analyze_text(&deck, &text, &DiskSource::unconfined());
        let _ = tx.send(a);
    });
    let a = rx
        .recv_timeout(Duration::from_secs(20))
        .expect("the analysis did not return: a read blocked or ran without end");
    a.diagnostics
        .iter()
        .filter(|d| d.code == Code::DeckInclude && d.severity == Severity::Error)
        .map(|d| d.message.clone())
        .collect()
}

/// Both forms, `include "target"` and `kx = file "target" md`, give one
/// error each that contains `found`.
fn refused(dir: &Path, target: &Path, found: &str) {
    let deck_path = dir.join("deck.rill");
    let name = target.display().to_string();
    let include = include_errors(&deck_path, deck("50 md", &format!("include \"{name}\"\n")));
    assert_eq!(include.len(), 1, "{include:?}");
    assert!(include[0].contains(found), "include {name}: {}", include[0]);
    assert!(include[0].contains("expected a"), "{}", include[0]);
    let array = include_errors(&deck_path, deck(&format!("file \"{name}\" md"), ""));
    assert_eq!(array.len(), 1, "{array:?}");
    assert!(array[0].contains(found), "file {name}: {}", array[0]);
}

fn mkfifo(path: &Path) {
    let status = std::process::Command::new("mkfifo")
        .arg(path)
        .status()
        .expect("mkfifo runs");
    assert!(status.success());
}

#[test]
fn a_fifo_is_refused_without_blocking() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("fifo");
    mkfifo(&fifo);
    refused(dir.path(), Path::new("fifo"), "a FIFO (named pipe)");
    refused(dir.path(), &fifo, "a FIFO (named pipe)");
}

#[test]
fn devices_are_refused_without_reading() {
    let dir = tempfile::tempdir().unwrap();
    for dev in ["/dev/zero", "/dev/urandom", "/dev/null"] {
        refused(dir.path(), Path::new(dev), "a character device");
    }
}

#[test]
fn standard_input_is_never_read_unless_it_is_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let stdin = Path::new("/dev/stdin");
    match std::fs::metadata(stdin) {
        // `cargo test < file`: a regular file, read as any other.
        Ok(m) if m.is_file() => {}
        // A terminal, /dev/null, a pipe or a closed descriptor.
        _ => {
            let errors = include_errors(
                &dir.path().join("deck.rill"),
                deck("50 md", "include \"/dev/stdin\"\n"),
            );
            assert_eq!(errors.len(), 1, "{errors:?}");
            assert!(
                errors[0].contains("expected a regular file") || errors[0].contains("no such file"),
                "{}",
                errors[0]
            );
        }
    }
}

#[test]
fn a_directory_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("arrays")).unwrap();
    refused(dir.path(), Path::new("arrays"), "a directory");
}

#[test]
fn a_symbolic_link_loop_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    std::os::unix::fs::symlink(dir.path().join("b"), dir.path().join("a")).unwrap();
    std::os::unix::fs::symlink(dir.path().join("a"), dir.path().join("b")).unwrap();
    refused(dir.path(), Path::new("a"), "found a loop of symbolic links");
}

fn sparse(dir: &Path, name: &str, len: u64) -> PathBuf {
    let p = dir.join(name);
    std::fs::File::create(&p).unwrap().set_len(len).unwrap();
    p
}

#[test]
fn a_huge_file_is_refused_by_its_length() {
    let dir = tempfile::tempdir().unwrap();
    sparse(dir.path(), "huge.txt", 3_435_973_837);
    refused(
        dir.path(),
        Path::new("huge.txt"),
        "found a 3.2 GiB file (3435973837 bytes)",
    );
    // One byte over the limit of the source.
    sparse(dir.path(), "over.txt", MAX_FILE_LEN + 1);
    refused(
        dir.path(),
        Path::new("over.txt"),
        "expected a regular file under 512 MiB",
    );
}

#[test]
fn an_include_has_a_smaller_limit_than_an_array_file() {
    let dir = tempfile::tempdir().unwrap();
    sparse(dir.path(), "big.rill", MAX_INCLUDE_LEN + 1);
    let errors = include_errors(
        &dir.path().join("deck.rill"),
        deck("50 md", "include \"big.rill\"\n"),
    );
    assert_eq!(errors.len(), 1, "{errors:?}");
    assert!(
        errors[0].contains("expected a deck under 16 MiB, found a 16 MiB file (16777217 bytes)"),
        "{}",
        errors[0]
    );
}
