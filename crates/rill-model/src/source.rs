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
}

impl std::fmt::Display for SourceError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SourceError::NotFound => write!(f, "no such file"),
            SourceError::Unreadable(why) => write!(f, "cannot be read: {why}"),
            SourceError::OutsideWorkspace => write!(f, "it lies outside the workspace folders"),
        }
    }
}

/// Where the analysis gets file contents: the only way it reads anything.
pub trait Source {
    /// The bytes of the file at `path` (already resolved against the including file).
    fn read(&self, path: &Path) -> Result<Arc<[u8]>, SourceError>;

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

/// Lexical normalisation of `.` and `..` components.
pub fn normalize(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for comp in path.components() {
        match comp {
            Component::CurDir => {}
            Component::ParentDir => {
                if !out.pop() {
                    out.push("..");
                }
            }
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
