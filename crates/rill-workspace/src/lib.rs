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
//! It reads regular files only, opened without blocking and at most
//! `rill_model::source::MAX_FILE_LEN` bytes, so that no FIFO, device or
//! runaway file can hold or exhaust an analysis; and it resolves `..` the
//! way the file system does.
//!
//! It also keeps the includer index ([`includers`]): which decks in the
//! workspace include which files, so that a fragment opened or checked on
//! its own is analysed through the deck that includes it.
//!
//! It must never interpret file contents beyond the `include` directives
//! the index reads, never block on a read, and never write any file.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

pub mod includers;
pub use includers::Includers;

use rill_model::source::{normalize, Source, SourceError, MAX_FILE_LEN};
use std::collections::HashMap;
use std::path::{Component, Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::SystemTime;

#[derive(Debug, Clone)]
struct Cached {
    modified: Option<SystemTime>,
    len: u64,
    bytes: Arc<[u8]>,
}

/// Where a source may read.
#[derive(Debug, Default)]
enum Reach {
    /// Anywhere (the command line: the user named the deck).
    #[default]
    Anywhere,
    /// Inside these folders only (real paths); none means nothing at all.
    Within(Vec<PathBuf>),
    /// Nowhere on disk: an unsaved buffer with no folder open.
    Nowhere,
}

/// Files on disk, optionally confined to a set of root folders.
///
/// Only regular files are read, opened without blocking (a FIFO never
/// holds the analysis) and at most [`MAX_FILE_LEN`] bytes long.
#[derive(Debug, Default)]
pub struct DiskSource {
    reach: Reach,
    cache: Mutex<HashMap<PathBuf, Cached>>,
    /// Editor buffers that override the disk contents, by written and by real path.
    overlays: Mutex<HashMap<PathBuf, Arc<[u8]>>>,
}

/// The written path and, when it exists, the real one (symbolic links resolved).
fn keys(path: &Path) -> Vec<PathBuf> {
    let mut out = vec![normalize(path)];
    if let Ok(real) = std::fs::canonicalize(path) {
        if real != out[0] {
            out.push(real);
        }
    }
    out
}

/// What a file that is not a regular file is, in words.
fn kind_of(ft: std::fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if ft.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if ft.is_char_device() {
            return "a character device";
        }
        if ft.is_block_device() {
            return "a block device";
        }
        if ft.is_socket() {
            return "a socket";
        }
    }
    if ft.is_dir() {
        "a directory"
    } else {
        "something other than a regular file"
    }
}

/// The error of a failed path lookup or open.
fn io_error(e: &std::io::Error) -> SourceError {
    if e.kind() == std::io::ErrorKind::NotFound {
        return SourceError::NotFound;
    }
    #[cfg(unix)]
    if e.raw_os_error() == Some(libc::ELOOP) {
        return SourceError::NotRegular("a loop of symbolic links");
    }
    SourceError::Unreadable(e.to_string())
}

/// Open for reading without ever waiting: on Unix with `O_NONBLOCK`, so
/// that opening a FIFO with no writer returns at once (the file type is
/// checked next, on the open file, so nothing can be swapped in between).
fn open_nonblocking(path: &Path) -> std::io::Result<std::fs::File> {
    let mut options = std::fs::OpenOptions::new();
    options.read(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        options.custom_flags(libc::O_NONBLOCK);
    }
    options.open(path)
}

/// The bytes of a regular file, at most `limit` of them.
fn read_regular(
    mut file: std::fs::File,
    meta: &std::fs::Metadata,
    limit: u64,
) -> Result<Vec<u8>, SourceError> {
    use std::io::Read;
    if !meta.file_type().is_file() {
        return Err(SourceError::NotRegular(kind_of(meta.file_type())));
    }
    if meta.len() > limit {
        return Err(SourceError::TooLarge {
            len: meta.len(),
            limit,
        });
    }
    // The file may grow while it is read: one byte past the limit tells.
    let mut bytes = Vec::with_capacity(usize::try_from(meta.len()).unwrap_or(0));
    (&mut file)
        .take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| SourceError::Unreadable(e.to_string()))?;
    if bytes.len() as u64 > limit {
        return Err(SourceError::TooLarge {
            len: meta.len().max(bytes.len() as u64),
            limit,
        });
    }
    Ok(bytes)
}

impl DiskSource {
    /// Reads anywhere (the command line: the user named the deck).
    pub fn unconfined() -> Self {
        Self::default()
    }

    /// Reads only inside `roots` and `allowed`; with neither, nothing.
    pub fn confined(roots: Vec<PathBuf>, allowed: Vec<PathBuf>) -> Self {
        let canon = |p: PathBuf| std::fs::canonicalize(&p).unwrap_or_else(|_| normalize(&p));
        DiskSource {
            reach: Reach::Within(roots.into_iter().chain(allowed).map(canon).collect()),
            ..Default::default()
        }
    }

    /// Reads nothing from disk, every read failing with
    /// [`SourceError::Unsaved`]: for an unsaved buffer when no folder is open.
    pub fn unsaved() -> Self {
        DiskSource {
            reach: Reach::Nowhere,
            ..Default::default()
        }
    }

    /// Use `text` for `path` instead of the file on disk (an open editor buffer).
    pub fn set_overlay(&self, path: &Path, text: &str) {
        let text: Arc<[u8]> = Arc::from(text.as_bytes());
        if let Ok(mut o) = self.overlays.lock() {
            for key in keys(path) {
                o.insert(key, text.clone());
            }
        }
    }

    /// Read `path` from disk again (its editor buffer was closed).
    pub fn clear_overlay(&self, path: &Path) {
        if let Ok(mut o) = self.overlays.lock() {
            for key in keys(path) {
                o.remove(&key);
            }
        }
    }

    /// Forget a cached file (it changed on disk).
    pub fn invalidate(&self, path: &Path) {
        if let Ok(mut c) = self.cache.lock() {
            for key in keys(path) {
                c.remove(&key);
            }
        }
    }

    /// Drop the cached file contents.
    pub fn clear_cache(&self) {
        if let Ok(mut c) = self.cache.lock() {
            c.clear();
        }
    }

    fn permitted(&self, real: &Path) -> bool {
        match &self.reach {
            Reach::Anywhere => true,
            Reach::Within(roots) => roots.iter().any(|r| real.starts_with(r)),
            Reach::Nowhere => false,
        }
    }

    fn overlay(&self, path: &Path) -> Option<Arc<[u8]>> {
        let o = self.overlays.lock().ok()?;
        o.get(&normalize(path)).cloned()
    }
}

impl Source for DiskSource {
    fn read(&self, path: &Path) -> Result<Arc<[u8]>, SourceError> {
        if matches!(self.reach, Reach::Nowhere) {
            return Err(SourceError::Unsaved);
        }
        if let Some(text) = self.overlay(path) {
            return Ok(text);
        }
        // Confinement is checked on the real path, before anything is
        // opened, so that symbolic links cannot lead outside the workspace
        // and nothing outside it is even touched.
        let real = match std::fs::canonicalize(path) {
            Ok(real) => real,
            // `/dev/stdin` and its like name a pipe that has no path.
            Err(e) if matches!(self.reach, Reach::Anywhere) => match std::fs::metadata(path) {
                Ok(meta) if !meta.is_file() => {
                    return Err(SourceError::NotRegular(kind_of(meta.file_type())))
                }
                _ => return Err(io_error(&e)),
            },
            Err(e) => return Err(io_error(&e)),
        };
        if !self.permitted(&real) {
            return Err(SourceError::OutsideWorkspace);
        }
        if let Some(text) = self.overlay(&real) {
            return Ok(text);
        }
        let file = open_nonblocking(&real).map_err(|e| io_error(&e))?;
        let meta = file
            .metadata()
            .map_err(|e| SourceError::Unreadable(e.to_string()))?;
        let modified = meta.modified().ok();
        if let Some(hit) = self.cache.lock().ok().and_then(|c| c.get(&real).cloned()) {
            if meta.is_file()
                && hit.modified == modified
                && hit.len == meta.len()
                && modified.is_some()
            {
                return Ok(hit.bytes);
            }
        }
        let bytes: Arc<[u8]> = read_regular(file, &meta, MAX_FILE_LEN)?.into();
        if let Ok(mut c) = self.cache.lock() {
            c.insert(
                real,
                Cached {
                    modified,
                    len: meta.len(),
                    bytes: bytes.clone(),
                },
            );
        }
        Ok(bytes)
    }

    /// `..` is resolved against the real folder of `from`, as the file
    /// system does (`a/link/..` is the folder above the link's target, not
    /// `a`); paths without `..` stay as written.
    fn resolve(&self, from: &Path, relative: &str) -> PathBuf {
        let lexical = rill_model::source::resolve(from, relative);
        let rel = Path::new(relative);
        if !rel.components().any(|c| c == Component::ParentDir) {
            return lexical;
        }
        let joined = if rel.is_absolute() {
            rel.to_path_buf()
        } else {
            from.parent().unwrap_or(Path::new("")).join(rel)
        };
        let joined = if joined.as_os_str().is_empty() {
            PathBuf::from(".")
        } else {
            joined
        };
        if let Ok(real) = std::fs::canonicalize(&joined) {
            return real;
        }
        // A missing file: resolve the folders that exist, keep the rest.
        let mut head = joined.as_path();
        let mut tail: Vec<&std::ffi::OsStr> = Vec::new();
        while let Some(parent) = head.parent() {
            if let Some(name) = head.file_name() {
                tail.push(name);
            } else {
                break;
            }
            head = parent;
            let probe = if head.as_os_str().is_empty() {
                Path::new(".")
            } else {
                head
            };
            if let Ok(real) = std::fs::canonicalize(probe) {
                let mut out = real;
                for name in tail.iter().rev() {
                    out.push(name);
                }
                return normalize(&out);
            }
        }
        lexical
    }

    fn list(&self, dir: &Path) -> Vec<(String, bool)> {
        let Ok(real) = std::fs::canonicalize(dir) else {
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
        assert_eq!(
            s.read(dir.path()),
            Err(SourceError::NotRegular("a directory"))
        );
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

#[cfg(all(test, unix))]
mod resolve_tests {
    use super::*;

    #[test]
    fn parent_folders_are_those_of_the_file_system() {
        // root/link -> root/x/y: `link/..` is root/x, where the file system
        // goes, not root, where lexical normalisation would go.
        let dir = tempfile::tempdir().unwrap();
        let root = std::fs::canonicalize(dir.path()).unwrap();
        std::fs::create_dir_all(root.join("x/y")).unwrap();
        std::os::unix::fs::symlink(root.join("x/y"), root.join("link")).unwrap();
        std::fs::write(root.join("x/c.rill"), "real").unwrap();
        std::fs::write(root.join("c.rill"), "decoy").unwrap();
        let s = DiskSource::unconfined();
        let deck = root.join("link/deck.rill");
        let path = s.resolve(&deck, "../c.rill");
        assert_eq!(path, root.join("x/c.rill"));
        assert_eq!(&*s.read(&path).unwrap(), b"real");
        // A missing file still resolves through the real folders.
        assert_eq!(s.resolve(&deck, "../none.rill"), root.join("x/none.rill"));
        // Without `..` the path stays as written (its identity for overlays).
        assert_eq!(s.resolve(&deck, "./more.rill"), root.join("link/more.rill"));
    }

    #[test]
    fn confinement_with_no_folder_reads_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("a.rill");
        std::fs::write(&p, "x").unwrap();
        assert_eq!(
            DiskSource::confined(vec![], vec![]).read(&p),
            Err(SourceError::OutsideWorkspace)
        );
        assert_eq!(DiskSource::unsaved().read(&p), Err(SourceError::Unsaved));
        assert!(DiskSource::unsaved().list(dir.path()).is_empty());
    }
}
