//! The shape of the code: no source file under `crates/*/src` over
//! [`MAX_LINES`] lines. (Function length is clippy's `too_many_lines`,
//! configured in the workspace's `clippy.toml`.)

use std::fs;
use std::path::{Path, PathBuf};

/// The longest a source file may be, in lines.
const MAX_LINES: usize = 800;

fn crates_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

/// Every file under `dir`, recursively.
fn files_under(dir: &Path, out: &mut Vec<PathBuf>) {
    let entries = fs::read_dir(dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
    for entry in entries {
        let path = entry.expect("directory entry").path();
        if path.is_dir() {
            files_under(&path, out);
        } else {
            out.push(path);
        }
    }
}

/// Lines as an editor counts them: a last line without a line end counts.
fn line_count(text: &[u8]) -> usize {
    let ends = text.iter().filter(|&&b| b == b'\n').count();
    ends + usize::from(text.last().is_some_and(|&b| b != b'\n'))
}

#[test]
fn line_count_counts_an_unterminated_last_line() {
    assert_eq!(line_count(b""), 0);
    assert_eq!(line_count(b"a\n"), 1);
    assert_eq!(line_count(b"a\nb"), 2);
    assert_eq!(line_count(b"a\n\n"), 2);
}

#[test]
fn no_source_file_is_over_800_lines() {
    let mut files = Vec::new();
    let crates = fs::read_dir(crates_dir()).expect("the workspace's crates folder");
    for krate in crates {
        let src = krate.expect("directory entry").path().join("src");
        if src.is_dir() {
            files_under(&src, &mut files);
        }
    }
    // The walk must have found this workspace's sources, or it checked nothing.
    assert!(
        files.iter().any(|f| f.ends_with("rill-cli/src/main.rs")),
        "no sources found under {}",
        crates_dir().display()
    );
    files.sort();
    let too_long: Vec<String> = files
        .iter()
        .filter_map(|f| {
            let text = fs::read(f).unwrap_or_else(|e| panic!("{}: {e}", f.display()));
            let n = line_count(&text);
            let name = f.strip_prefix(crates_dir()).unwrap_or(f);
            (n > MAX_LINES).then(|| format!("crates/{}: {n} lines", name.display()))
        })
        .collect();
    assert!(
        too_long.is_empty(),
        "source files over {MAX_LINES} lines (split them into modules):\n{}",
        too_long.join("\n")
    );
}
