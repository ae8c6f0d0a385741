//! `rill fmt`: canonical layout through the formatter of `rill-syntax`.
//! A deck is written only here, atomically, and only when it changes.

use std::io::Write;
use std::path::{Path, PathBuf};

pub fn run(files: &[PathBuf], check: bool) -> u8 {
    let mut status = 0u8;
    for path in files {
        match format_file(path, check) {
            Ok(false) => {}
            Ok(true) => {
                if check {
                    println!("would reformat {}", path.display());
                    status = status.max(1);
                } else {
                    println!("formatted {}", path.display());
                }
            }
            Err(e) => {
                eprintln!("error: {}: {e}", path.display());
                status = 2;
            }
        }
    }
    status
}

/// Returns whether the file's layout changes.
fn format_file(path: &Path, check: bool) -> Result<bool, String> {
    let bytes = std::fs::read(path).map_err(|e| format!("cannot read: {e}"))?;
    let text = std::str::from_utf8(&bytes)
        .map_err(|_| "not UTF-8 text; fix the encoding first".to_string())?;
    let tree = rill_syntax::parse(text);
    if let Some(e) = tree.errors.first() {
        return Err(format!(
            "has syntax errors (first: expected {}, found {}); run `rill check` and fix them before formatting",
            e.expected, e.found
        ));
    }
    let formatted = rill_syntax::format(&tree, text);
    if formatted == text {
        return Ok(false);
    }
    if !check {
        write_atomically(path, formatted.as_bytes()).map_err(|e| format!("cannot write: {e}"))?;
    }
    Ok(true)
}

/// Write beside the file, then rename over it, so that a crash never leaves a half-written deck.
fn write_atomically(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let mut tmp = tempfile::NamedTempFile::new_in(dir)?;
    tmp.write_all(bytes)?;
    tmp.as_file().sync_all()?;
    if let Ok(meta) = std::fs::metadata(path) {
        let _ = std::fs::set_permissions(tmp.path(), meta.permissions());
    }
    tmp.persist(path).map_err(|e| e.error)?;
    Ok(())
}
