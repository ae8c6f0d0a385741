//! `rill check` on the file-read and number reproducers: `..` in an
//! include or array file is taken from the real folder of the including
//! deck (a decoy in the current folder is never read), special files are
//! refused at once, and numbers a case cannot hold are errors.

use std::io::Read;
use std::path::Path;
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

/// A deck on a 2 x 2 x 1 grid with `kx` as given, ending with `extra`.
fn deck(kx: &str, extra: &str) -> String {
    format!(
        "grid {{\n  cells = 2 x 2 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}}\n\
         rock {{\n  porosity = 0.2\n  kx = {kx}\n}}\n\
         fluid {{\n  viscosity = 0.7 cP\n  fvf = 1.01 rb/stb\n  density = 64.0 lb/ft^3\n}}\n\
         initial {{\n  pressure = 2500 psi at 5015 ft\n}}\n\
         well \"P\" {{\n  role = producer\n  location = (1, 1)\n  radius = 0.3 ft\n  control = bhp 1500 psi\n}}\n\
         timeline {{\n  end = 10 day\n}}\n{extra}"
    )
}

/// The output of `child`, or a failure when it runs longer than 20 s.
fn finish(mut child: Child) -> Output {
    let start = Instant::now();
    loop {
        if child.try_wait().unwrap().is_some() {
            let mut stdout = Vec::new();
            let mut stderr = Vec::new();
            child
                .stdout
                .take()
                .unwrap()
                .read_to_end(&mut stdout)
                .unwrap();
            child
                .stderr
                .take()
                .unwrap()
                .read_to_end(&mut stderr)
                .unwrap();
            let status = child.wait().unwrap();
            return Output {
                status,
                stdout,
                stderr,
            };
        }
        if start.elapsed() > Duration::from_secs(20) {
            child.kill().unwrap();
            child.wait().unwrap();
            panic!("`rill check` did not finish within 20 s: a read blocked");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// `rill check deck.rill` run in `dir`, its standard input a pipe that
/// stays open and empty (as in a shell pipeline whose writer waits).
fn check_in(dir: &Path) -> (Option<i32>, String) {
    let child = Command::new(env!("CARGO_BIN_EXE_rill"))
        .args(["check", "deck.rill"])
        .current_dir(dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let out = finish(child);
    let text =
        String::from_utf8_lossy(&out.stdout).into_owned() + &String::from_utf8_lossy(&out.stderr);
    (out.status.code(), text)
}

#[test]
fn parent_folders_are_those_of_the_including_deck() {
    let dir = tempfile::tempdir().unwrap();
    let deck_dir = dir.path().join("a/b");
    std::fs::create_dir_all(&deck_dir).unwrap();
    // The real files two folders up, and decoys beside the deck.
    std::fs::write(
        dir.path().join("common.rill"),
        "report {\n  units = field\n}\n",
    )
    .unwrap();
    std::fs::write(dir.path().join("kx.txt"), "10 20 30 40").unwrap();
    std::fs::write(deck_dir.join("common.rill"), "decoy {\n}\n").unwrap();
    std::fs::write(deck_dir.join("kx.txt"), "1 2 3").unwrap();
    std::fs::write(
        deck_dir.join("deck.rill"),
        deck(
            "file \"../../kx.txt\" md",
            "include \"../../common.rill\"\n",
        ),
    )
    .unwrap();
    let (code, text) = check_in(&deck_dir);
    assert_eq!(code, Some(0), "{text}");
    assert!(
        !text.contains("decoy") && !text.contains("grid.array-length"),
        "{text}"
    );
}

#[cfg(unix)]
#[test]
fn parent_folders_follow_a_symbolic_link_as_the_file_system_does() {
    // root/link -> root/x/y; from root/link, `..` is root/x.
    let dir = tempfile::tempdir().unwrap();
    let root = dir.path();
    std::fs::create_dir_all(root.join("x/y")).unwrap();
    std::os::unix::fs::symlink(root.join("x/y"), root.join("link")).unwrap();
    std::fs::write(root.join("x/kx.txt"), "10 20 30 40").unwrap();
    std::fs::write(root.join("kx.txt"), "1 2 3").unwrap();
    std::fs::write(
        root.join("link/deck.rill"),
        deck("file \"../kx.txt\" md", ""),
    )
    .unwrap();
    let (code, text) = check_in(&root.join("link"));
    assert_eq!(code, Some(0), "{text}");
}

#[cfg(unix)]
#[test]
fn special_files_are_refused_at_once() {
    let dir = tempfile::tempdir().unwrap();
    let status = Command::new("mkfifo")
        .arg(dir.path().join("fifo"))
        .status()
        .unwrap();
    assert!(status.success());
    let cases = [
        ("fifo", "a FIFO (named pipe)"),
        ("/dev/zero", "a character device"),
        ("/dev/urandom", "a character device"),
    ];
    for (name, found) in cases {
        for text in [
            deck("50 md", &format!("include \"{name}\"\n")),
            deck(&format!("file \"{name}\" md"), ""),
        ] {
            std::fs::write(dir.path().join("deck.rill"), text).unwrap();
            let (code, out) = check_in(dir.path());
            assert_eq!(code, Some(1), "{out}");
            assert!(out.contains("deck.include"), "{out}");
            assert!(
                out.contains(&format!(
                    "expected a regular file (under 512 MiB), found {found}"
                )),
                "{out}"
            );
        }
    }
    // Standard input is the open, empty pipe given to the check: a FIFO.
    std::fs::write(
        dir.path().join("deck.rill"),
        deck("50 md", "include \"/dev/stdin\"\n"),
    )
    .unwrap();
    let (code, out) = check_in(dir.path());
    assert_eq!(code, Some(1), "{out}");
    assert!(out.contains("found a FIFO (named pipe)"), "{out}");
}

#[test]
fn numbers_a_case_cannot_hold_are_errors() {
    let dir = tempfile::tempdir().unwrap();
    for kx in [
        "1e309 md",
        "1e308 md * 10",
        "1e308 md * 10 - 1e308 md * 10",
        "1e308 darcy",
        "layers [1e309] md",
    ] {
        std::fs::write(dir.path().join("deck.rill"), deck(kx, "")).unwrap();
        let (code, out) = check_in(dir.path());
        assert_eq!(code, Some(1), "kx = {kx}: {out}");
        assert!(out.contains("deck.out-of-range"), "kx = {kx}: {out}");
    }
}
