//! A reader that closes the pipe early (`rill explain ... | head`) ends the
//! command quietly, as the usual Unix tools end: by SIGPIPE, never by a
//! panic ("failed printing to stdout", exit 101).
#![cfg(unix)]

use std::os::fd::{FromRawFd, OwnedFd};
use std::os::unix::process::ExitStatusExt;
use std::path::Path;
use std::process::{Command, Stdio};

/// Runs `rill args` with stdout a pipe whose reading end is already closed.
fn into_closed_pipe(args: &[&str]) -> std::process::Output {
    let mut fds = [0; 2];
    // SAFETY: a fresh pipe; the reading end is closed at once and the
    // writing end is owned by the `OwnedFd` handed to the child.
    let write = unsafe {
        assert_eq!(libc::pipe(fds.as_mut_ptr()), 0);
        libc::close(fds[0]);
        OwnedFd::from_raw_fd(fds[1])
    };
    Command::new(env!("CARGO_BIN_EXE_rill"))
        .args(args)
        .stdout(Stdio::from(write))
        .stderr(Stdio::piped())
        .output()
        .unwrap()
}

#[test]
fn explain_and_inspect_end_quietly_when_the_reader_is_gone() {
    let deck = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/larkspur-east.rill");
    let deck = deck.to_str().unwrap();
    for args in [
        &["explain", "unit.volume-kind"][..],
        &["inspect", deck, "--cell", "2,2,1"][..],
        &["check", "--format", "json", deck][..],
    ] {
        let o = into_closed_pipe(args);
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert_ne!(o.status.code(), Some(101), "{args:?}: {err}");
        assert_eq!(
            o.status.signal(),
            Some(libc::SIGPIPE),
            "{args:?}: {:?}",
            o.status
        );
    }
}
