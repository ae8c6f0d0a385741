//! The analysis reads included decks and array files only through
//! [`Source`], so that it does no I/O of its own: the command line reads
//! from disk, the language server from its open documents and disk, and
//! tests from memory. A source reads and lists; what an analysis keeps
//! (parsed arrays, derived results) lives in [`crate::reuse::Reuse`],
//! which the caller owns.

use std::collections::HashMap;
use std::path::{Component, Path, PathBuf};
use std::sync::Arc;

/// Why a file could not be had.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SourceError {
    /// There is no file at the path.
    NotFound,
    /// The file exists but could not be read (the reason).
    Unreadable(String),
    /// The path leaves the workspace and the user has not allowed that.
    OutsideWorkspace,
    /// The path is not a regular file: what it is ("a FIFO (named pipe)",
    /// "a character device", "a directory").
    NotRegular(&'static str),
    /// The file is larger than a source accepts (its length and the limit, bytes).
    TooLarge {
        /// The length found.
        len: u64,
        /// The largest length accepted.
        limit: u64,
    },
    /// The deck is an unsaved buffer and no folder is open: there is no
    /// place on disk it may read from.
    Unsaved,
}

/// The largest file a source on disk reads, in bytes (512 MiB): an array
/// file for the largest grid (20 million cells) written at 25 characters a
/// value fits, and a runaway file cannot exhaust memory.
pub const MAX_FILE_LEN: u64 = 512 << 20;

/// The largest included deck, in bytes (16 MiB): decks are written by hand,
/// bulk values belong in array files (which may reach [`MAX_FILE_LEN`]).
pub const MAX_INCLUDE_LEN: u64 = 16 << 20;

/// A length in bytes as people read it: "3.2 GiB", "700 KiB", "12 bytes".
pub fn human_len(len: u64) -> String {
    const UNITS: [&str; 4] = ["KiB", "MiB", "GiB", "TiB"];
    if len < 1024 {
        return format!("{len} bytes");
    }
    let mut v = len as f64 / 1024.0;
    let mut unit = 0;
    while v >= 1024.0 && unit + 1 < UNITS.len() {
        v /= 1024.0;
        unit += 1;
    }
    if v < 10.0 {
        format!("{v:.1} {}", UNITS[unit])
    } else {
        format!("{v:.0} {}", UNITS[unit])
    }
}

impl std::fmt::Display for SourceError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SourceError::NotFound => write!(f, "no such file"),
            SourceError::Unreadable(why) => write!(f, "cannot be read: {why}"),
            SourceError::OutsideWorkspace => write!(
                f,
                "it lies outside the workspace folders (with no folder open: outside the \
                 deck's own folder); open a folder that holds it, or allow its folder in \
                 the settings"
            ),
            SourceError::NotRegular(what) => write!(
                f,
                "expected a regular file (under {}), found {what}; name a regular file",
                human_len(MAX_FILE_LEN)
            ),
            SourceError::TooLarge { len, limit } => write!(
                f,
                "expected a regular file under {}, found a {} file ({len} bytes); \
                 split it or coarsen the grid",
                human_len(*limit),
                human_len(*len)
            ),
            SourceError::Unsaved => write!(
                f,
                "the deck is an unsaved buffer and no folder is open, so nothing is read \
                 from disk; save the deck or open a folder"
            ),
        }
    }
}

/// Where the analysis gets file contents: the only way it reads anything.
pub trait Source {
    /// The bytes of the file at `path` (already resolved against the including file).
    fn read(&self, path: &Path) -> Result<Arc<[u8]>, SourceError>;

    /// The path that `relative`, written in the file at `from`, names.
    /// Lexical by default ([`resolve`]); a source on disk resolves `..`
    /// against the real folder of `from`, as the file system does.
    fn resolve(&self, from: &Path, relative: &str) -> PathBuf {
        resolve(from, relative)
    }

    /// The entries of the folder `dir`, as (name, is a folder), for path
    /// completion in an editor; none by default. Confined like [`Source::read`].
    fn list(&self, _dir: &Path) -> Vec<(String, bool)> {
        Vec::new()
    }
}

/// Resolve `relative` against the directory of `from`, lexically (no file
/// system access): `a/b/../c` becomes `a/c`.
pub fn resolve(from: &Path, relative: &str) -> PathBuf {
    let rel = Path::new(relative);
    let joined = if rel.is_absolute() {
        rel.to_path_buf()
    } else {
        from.parent().unwrap_or(Path::new("")).join(rel)
    };
    normalize(&joined)
}

/// Lexical normalisation of `.` and `..` components. A `..` removes the
/// name before it only: leading `..` of a relative path are kept (`../..`
/// is two folders up, never nothing), and `..` at the root stays there.
pub fn normalize(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for comp in path.components() {
        match comp {
            Component::CurDir => {}
            Component::ParentDir => match out.components().next_back() {
                Some(Component::Normal(_)) => {
                    out.pop();
                }
                Some(Component::RootDir | Component::Prefix(_)) => {}
                _ => out.push(".."),
            },
            other => out.push(other.as_os_str()),
        }
    }
    out
}

/// Files held in memory, for tests and for editors' unsaved buffers.
#[derive(Debug, Clone, Default)]
pub struct MemorySource {
    files: HashMap<PathBuf, Arc<[u8]>>,
}

impl MemorySource {
    /// An empty set of files.
    pub fn new() -> Self {
        Self::default()
    }
    /// Add a file (builder style).
    pub fn with(mut self, path: impl AsRef<Path>, text: impl AsRef<[u8]>) -> Self {
        self.insert(path, text);
        self
    }
    /// Add or replace a file.
    pub fn insert(&mut self, path: impl AsRef<Path>, text: impl AsRef<[u8]>) {
        self.files
            .insert(normalize(path.as_ref()), Arc::from(text.as_ref()));
    }
}

impl Source for MemorySource {
    fn read(&self, path: &Path) -> Result<Arc<[u8]>, SourceError> {
        self.files
            .get(&normalize(path))
            .cloned()
            .ok_or(SourceError::NotFound)
    }

    fn list(&self, dir: &Path) -> Vec<(String, bool)> {
        let dir = normalize(dir);
        let mut out: Vec<(String, bool)> = Vec::new();
        for path in self.files.keys() {
            let Ok(rest) = path.strip_prefix(&dir) else {
                continue;
            };
            let mut parts = rest.components();
            let Some(first) = parts.next() else { continue };
            let entry = (
                first.as_os_str().to_string_lossy().into_owned(),
                parts.next().is_some(),
            );
            if !out.contains(&entry) {
                out.push(entry);
            }
        }
        out.sort();
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn leading_parent_folders_are_kept() {
        assert_eq!(
            normalize(Path::new("../../common.rill")),
            Path::new("../../common.rill")
        );
        assert_eq!(
            resolve(Path::new("deck.rill"), "../../c.rill"),
            Path::new("../../c.rill")
        );
        assert_eq!(
            resolve(Path::new("a/deck.rill"), "../../c.rill"),
            Path::new("../c.rill")
        );
        assert_eq!(normalize(Path::new("a/b/../c")), Path::new("a/c"));
        assert_eq!(normalize(Path::new("/../x")), Path::new("/x"));
        assert_eq!(normalize(Path::new("./../a/./b/..")), Path::new("../a"));
    }

    #[test]
    fn lengths_read_as_people_write_them() {
        assert_eq!(human_len(12), "12 bytes");
        assert_eq!(human_len(700 * 1024), "700 KiB");
        assert_eq!(human_len(MAX_FILE_LEN), "512 MiB");
        assert_eq!(human_len(3_435_973_837), "3.2 GiB");
    }
}
