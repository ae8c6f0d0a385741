//! `rill-workspace` owns the file system side of the analysis: it reads
//! decks, includes and array files from disk for `rill-model` through its
//! `Source` trait, refuses paths outside the workspace folders unless they
//! are allowed, and caches file contents by modification time and size so
//! that re-checking a deck does not re-read large unchanged arrays; with
//! [`DiskSource::with_reuse`] it also keeps the arrays and scans an
//! analysis derived from them (`rill_model::reuse`) for the next one.
//!
//! It must never interpret file contents, and never write any file.

use rill_model::reuse::Reuse;
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

/// Numbers of an array file with the bytes they were parsed from.
type ParsedArray = (Arc<[u8]>, Arc<Vec<f64>>);

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
    /// Parsed array files, valid while the cached bytes are the same `Arc`.
    parsed: Mutex<HashMap<PathBuf, ParsedArray>>,
    /// Derived arrays and scans kept between analyses (an editor's re-checks).
    reuse: Option<Reuse>,
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

    /// Keep what each analysis derives from the arrays for the next one:
    /// for a language server, which re-checks on every edit. A single
    /// check has no next analysis and does without.
    pub fn with_reuse(mut self) -> Self {
        self.reuse = Some(Reuse::new());
        self
    }

    /// Use `text` for `path` instead of the file on disk (an open editor buffer).
    pub fn set_overlay(&self, path: &Path, text: &str) {
        if let Ok(mut o) = self.overlays.lock() {
            o.insert(normalize(path), Arc::from(text.as_bytes()));
        }
    }

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
        if let Ok(mut p) = self.parsed.lock() {
            p.remove(&normalize(path));
        }
    }

    /// Drop cached file contents and parsed arrays of files not read for a while.
    pub fn clear_cache(&self) {
        if let Ok(mut c) = self.cache.lock() {
            c.clear();
        }
        if let Ok(mut p) = self.parsed.lock() {
            p.clear();
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

    fn parsed_numbers(&self, path: &Path, bytes: &Arc<[u8]>) -> Option<Arc<Vec<f64>>> {
        let parsed = self.parsed.lock().ok()?;
        let (held, numbers) = parsed.get(&normalize(path))?;
        Arc::ptr_eq(held, bytes).then(|| numbers.clone())
    }

    fn keep_parsed_numbers(&self, path: &Path, bytes: &Arc<[u8]>, numbers: &Arc<Vec<f64>>) {
        if let Ok(mut parsed) = self.parsed.lock() {
            parsed.insert(normalize(path), (bytes.clone(), numbers.clone()));
        }
    }

    fn reuse(&self) -> Option<&Reuse> {
        self.reuse.as_ref()
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
    fn parsed_arrays_are_kept_while_the_bytes_are_unchanged() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("kx.txt");
        std::fs::write(&p, "1 2").unwrap();
        let s = DiskSource::unconfined();
        let bytes = s.read(&p).unwrap();
        s.keep_parsed_numbers(&p, &bytes, &Arc::new(vec![1.0, 2.0]));
        assert_eq!(
            s.parsed_numbers(&p, &s.read(&p).unwrap()).as_deref(),
            Some(&vec![1.0, 2.0])
        );
        std::fs::write(&p, "1 2 3").unwrap();
        let changed = s.read(&p).unwrap();
        assert!(s.parsed_numbers(&p, &changed).is_none());
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
