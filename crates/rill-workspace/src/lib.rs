//! `rill-workspace` owns the file system side of the analysis: it reads
//! decks, includes and array files from disk for `rill-model` through its
//! `Source` trait, lists folders for path completion, refuses paths outside
//! the workspace folders unless they are allowed, and caches file contents
//! by modification time and size, so that re-checking a deck does not
//! re-read large unchanged arrays and hands out the same bytes (which is
//! what lets the caller's `rill_model::Reuse` keep their parsed numbers).
//! Parsed arrays and derived results are not kept here: they live in the
//! `Reuse` that the caller owns and passes to the analysis.
//!
//! It must never interpret file contents, and never write any file.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

use rill_model::source::{normalize, Source, SourceError};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::SystemTime;

#[derive(Debug, Clone)]
struct Cached {
    modified: Option<SystemTime>,
    len: u64,
    bytes: Arc<[u8]>,
}

/// Files on disk, optionally confined to a set of root folders.
#[derive(Debug, Default)]
pub struct DiskSource {
    /// Folders whose files may be read; empty means no confinement.
    roots: Vec<PathBuf>,
    /// Extra folders the user allowed outside the roots.
    allowed: Vec<PathBuf>,
    cache: Mutex<HashMap<PathBuf, Cached>>,
    /// Editor buffers that override the disk contents.
    overlays: Mutex<HashMap<PathBuf, Arc<[u8]>>>,
}

impl DiskSource {
    /// Reads anywhere (the command line: the user named the deck).
    pub fn unconfined() -> Self {
        Self::default()
    }

    /// Reads only inside `roots` and `allowed`.
    pub fn confined(roots: Vec<PathBuf>, allowed: Vec<PathBuf>) -> Self {
        let canon = |p: PathBuf| std::fs::canonicalize(&p).unwrap_or_else(|_| normalize(&p));
        DiskSource {
            roots: roots.into_iter().map(canon).collect(),
            allowed: allowed.into_iter().map(canon).collect(),
            ..Default::default()
        }
    }

    /// Use `text` for `path` instead of the file on disk (an open editor buffer).
    pub fn set_overlay(&self, path: &Path, text: &str) {
        if let Ok(mut o) = self.overlays.lock() {
            o.insert(normalize(path), Arc::from(text.as_bytes()));
        }
    }

    /// Read `path` from disk again (its editor buffer was closed).
    pub fn clear_overlay(&self, path: &Path) {
        if let Ok(mut o) = self.overlays.lock() {
            o.remove(&normalize(path));
        }
    }

    /// Forget a cached file (it changed on disk).
    pub fn invalidate(&self, path: &Path) {
        if let Ok(mut c) = self.cache.lock() {
            c.remove(&normalize(path));
        }
    }

    /// Drop the cached file contents.
    pub fn clear_cache(&self) {
        if let Ok(mut c) = self.cache.lock() {
            c.clear();
        }
    }

    fn permitted(&self, real: &Path) -> bool {
        if self.roots.is_empty() {
            return true;
        }
        self.roots
            .iter()
            .chain(&self.allowed)
            .any(|r| real.starts_with(r))
    }
}

impl Source for DiskSource {
    fn read(&self, path: &Path) -> Result<Arc<[u8]>, SourceError> {
        let key = normalize(path);
        if let Some(text) = self.overlays.lock().ok().and_then(|o| o.get(&key).cloned()) {
            return Ok(text);
        }
        let meta = match std::fs::metadata(&key) {
            Ok(m) => m,
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
                return Err(SourceError::NotFound)
            }
            Err(e) => return Err(SourceError::Unreadable(e.to_string())),
        };
        if meta.is_dir() {
            return Err(SourceError::Unreadable("it is a directory".into()));
        }
        // Confinement is checked on the real path, so that symbolic links
        // cannot lead outside the workspace.
        let real =
            std::fs::canonicalize(&key).map_err(|e| SourceError::Unreadable(e.to_string()))?;
        if !self.permitted(&real) {
            return Err(SourceError::OutsideWorkspace);
        }
        let modified = meta.modified().ok();
        if let Some(hit) = self.cache.lock().ok().and_then(|c| c.get(&key).cloned()) {
            if hit.modified == modified && hit.len == meta.len() && modified.is_some() {
                return Ok(hit.bytes);
            }
        }
        let bytes: Arc<[u8]> = std::fs::read(&key)
            .map_err(|e| SourceError::Unreadable(e.to_string()))?
            .into();
        if let Ok(mut c) = self.cache.lock() {
            c.insert(
                key,
                Cached {
                    modified,
                    len: meta.len(),
                    bytes: bytes.clone(),
                },
            );
        }
        Ok(bytes)
    }

    fn list(&self, dir: &Path) -> Vec<(String, bool)> {
        let Ok(real) = std::fs::canonicalize(normalize(dir)) else {
            return Vec::new();
        };
        if !self.permitted(&real) {
            return Vec::new();
        }
        let Ok(entries) = std::fs::read_dir(&real) else {
            return Vec::new();
        };
        let mut out: Vec<(String, bool)> = entries
            .flatten()
            .filter_map(|e| {
                let name = e.file_name().to_string_lossy().into_owned();
                // Hidden files are left out, as file pickers do.
                let is_dir = std::fs::metadata(e.path()).ok()?.is_dir();
                (!name.starts_with('.')).then_some((name, is_dir))
            })
            .collect();
        out.sort();
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_and_caches_until_the_file_changes() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("a.txt");
        std::fs::write(&p, "1 2 3").unwrap();
        let s = DiskSource::unconfined();
        assert_eq!(&*s.read(&p).unwrap(), b"1 2 3");
        std::fs::write(&p, "1 2 3 4").unwrap();
        // Length changed, so the cache is bypassed even within one mtime tick.
        assert_eq!(&*s.read(&p).unwrap(), b"1 2 3 4");
    }

    #[test]
    fn missing_file_and_directory() {
        let dir = tempfile::tempdir().unwrap();
        let s = DiskSource::unconfined();
        assert_eq!(s.read(&dir.path().join("nope")), Err(SourceError::NotFound));
        assert!(matches!(
            s.read(dir.path()),
            Err(SourceError::Unreadable(_))
        ));
    }

    #[test]
    fn confinement_refuses_paths_outside_the_roots() {
        let inside = tempfile::tempdir().unwrap();
        let outside = tempfile::tempdir().unwrap();
        let secret = outside.path().join("secret.txt");
        std::fs::write(&secret, "x").unwrap();
        let ok = inside.path().join("ok.txt");
        std::fs::write(&ok, "y").unwrap();
        let s = DiskSource::confined(vec![inside.path().to_path_buf()], vec![]);
        assert!(s.read(&ok).is_ok());
        assert_eq!(s.read(&secret), Err(SourceError::OutsideWorkspace));
        // Through a relative path that climbs out.
        let climbing = inside
            .path()
            .join("..")
            .join(outside.path().file_name().unwrap())
            .join("secret.txt");
        assert_eq!(s.read(&climbing), Err(SourceError::OutsideWorkspace));
        let allowed = DiskSource::confined(
            vec![inside.path().to_path_buf()],
            vec![outside.path().to_path_buf()],
        );
        assert!(allowed.read(&secret).is_ok());
    }

    #[test]
    fn an_unchanged_file_gives_the_same_bytes() {
        // The caller's `Reuse` keeps parsed arrays by the identity of these bytes.
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("kx.txt");
        std::fs::write(&p, "1 2").unwrap();
        let s = DiskSource::unconfined();
        let first = s.read(&p).unwrap();
        assert!(Arc::ptr_eq(&first, &s.read(&p).unwrap()));
        std::fs::write(&p, "1 2 3").unwrap();
        assert!(!Arc::ptr_eq(&first, &s.read(&p).unwrap()));
        s.invalidate(&p);
        let reread = s.read(&p).unwrap();
        assert_eq!(&*reread, b"1 2 3");
    }

    #[test]
    fn listing_is_confined_and_skips_hidden_files() {
        let inside = tempfile::tempdir().unwrap();
        let outside = tempfile::tempdir().unwrap();
        std::fs::write(inside.path().join("kx.txt"), "1").unwrap();
        std::fs::write(inside.path().join(".hidden"), "1").unwrap();
        std::fs::create_dir(inside.path().join("arrays")).unwrap();
        std::fs::write(outside.path().join("secret.txt"), "x").unwrap();
        let s = DiskSource::confined(vec![inside.path().to_path_buf()], vec![]);
        assert_eq!(
            s.list(inside.path()),
            vec![("arrays".to_string(), true), ("kx.txt".to_string(), false)]
        );
        assert!(s.list(outside.path()).is_empty());
        assert!(s.list(&inside.path().join("nope")).is_empty());
    }

    #[test]
    fn overlays_win_over_disk() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("deck.rill");
        std::fs::write(&p, "disk").unwrap();
        let s = DiskSource::unconfined();
        s.set_overlay(&p, "buffer");
        assert_eq!(&*s.read(&p).unwrap(), b"buffer");
        s.clear_overlay(&p);
        assert_eq!(&*s.read(&p).unwrap(), b"disk");
    }
}
