//! Atomic publication of a result set and of single files.
//!
//! A result set is built in a staging directory beside the target (same
//! parent, so the same filesystem), every file is synced, and then it is
//! swapped into place. On Linux the two directories are exchanged in one
//! step (`renameat2` with `RENAME_EXCHANGE`): the target always exists, and
//! a kill at any moment leaves either the old set or the new one in place.
//! Elsewhere, or where the filesystem refuses the exchange, the previous set
//! is renamed aside and the new one renamed in (between the two renames the
//! target is briefly absent). Then the parent directory is synced and the
//! previous set removed. A failure at any point before the swap removes the
//! staging directory and leaves the previous set untouched; a reader sees
//! either the old set or the new one, never a mixture.
//!
//! A process killed while writing leaves a hidden `.NAME.rill-new-PID-*`
//! (or `.NAME.rill-old-PID-*`) directory beside the target. The next write
//! of the same target removes, before it starts, those whose writer process
//! is gone, and any older than [`STALE_AFTER`] (the process id may have been
//! reused).

use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Component, Path, PathBuf};
use std::time::{Duration, SystemTime};

use crate::OutputError;

/// The marker file that every result set holds. A non-empty directory
/// without it is never replaced: it is not ours.
pub(crate) const MARKER: &str = ".rill-results";
const MARKER_TEXT: &str = "This directory was written by rill. Every run replaces it as a whole:\n\
do not keep other files in it.\n";

/// Leftover staging directories older than this are removed by later
/// writes even when a process with their writer's id runs.
pub(crate) const STALE_AFTER: Duration = Duration::from_secs(3600);

#[cfg(test)]
thread_local! {
    /// Test-only failure point: writing the file with this relative path fails.
    pub(crate) static FAIL_ON: std::cell::RefCell<Option<String>> = const { std::cell::RefCell::new(None) };
    /// Test-only kill point: `publish` stops right after the swap, as a
    /// process killed there would (nothing removed, nothing swept).
    pub(crate) static STOP_AFTER_SWAP: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
}

/// The lexically normalised absolute form of `path`, with the longest
/// existing prefix resolved through the filesystem (symbolic links, `..`).
pub(crate) fn resolve(path: &Path) -> io::Result<PathBuf> {
    let abs = std::path::absolute(path)?;
    let mut existing = abs.clone();
    let mut rest: Vec<std::ffi::OsString> = Vec::new();
    loop {
        if let Ok(canon) = existing.canonicalize() {
            let mut out = canon;
            for part in rest.iter().rev() {
                out.push(part);
            }
            return Ok(normalise(&out));
        }
        match (existing.file_name(), existing.parent()) {
            (Some(name), Some(parent)) => {
                rest.push(name.to_owned());
                existing = parent.to_path_buf();
            }
            _ => return Ok(normalise(&abs)),
        }
    }
}

fn normalise(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            Component::ParentDir => {
                out.pop();
            }
            Component::CurDir => {}
            other => out.push(other.as_os_str()),
        }
    }
    out
}

fn io_err(path: &Path, source: io::Error) -> OutputError {
    OutputError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// A staging directory that files are written into before the swap.
pub(crate) struct Staging {
    dir: tempfile::TempDir,
    target: PathBuf,
    /// Relative paths, in the order written.
    files: Vec<PathBuf>,
}

impl Staging {
    /// Creates the staging directory beside `target` (whose parent is created
    /// if missing) after checking that `target` may be replaced.
    pub fn new(target: &Path) -> Result<Staging, OutputError> {
        let (parent, name) = split(target)?;
        fs::create_dir_all(&parent).map_err(|e| io_err(&parent, e))?;
        sweep_leftovers(&parent, &name);
        let dir = tempfile::Builder::new()
            .prefix(&format!(".{name}.rill-new-{}-", std::process::id()))
            .tempdir_in(&parent)
            .map_err(|e| io_err(&parent, e))?;
        let mut staging = Staging {
            dir,
            target: target.to_path_buf(),
            files: Vec::new(),
        };
        staging.file(MARKER, |w| w.write_all(MARKER_TEXT.as_bytes()))?;
        Ok(staging)
    }

    /// Creates a subdirectory (relative path).
    pub fn subdir(&self, rel: &str) -> Result<(), OutputError> {
        let p = self.dir.path().join(rel);
        fs::create_dir_all(&p).map_err(|e| io_err(&p, e))
    }

    /// Writes the file `rel` through `write`, then flushes and syncs it.
    pub fn file(
        &mut self,
        rel: &str,
        write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
    ) -> Result<(), OutputError> {
        let path = self.dir.path().join(rel);
        let result = (|| {
            #[cfg(test)]
            if FAIL_ON.with(|f| f.borrow().as_deref() == Some(rel)) {
                return Err(io::Error::other("injected failure (test)"));
            }
            let file = File::create(&path)?;
            let mut w = BufWriter::with_capacity(1 << 20, file);
            write(&mut w)?;
            let file = w.into_inner().map_err(|e| e.into_error())?;
            file.sync_all()
        })();
        result.map_err(|e| io_err(&path, e))?;
        self.files.push(PathBuf::from(rel));
        Ok(())
    }

    /// Syncs the staging directories, swaps the set into place and returns
    /// the final paths of the files written plus any notes (a previous set
    /// that could not be removed).
    pub fn publish(self, subdirs: &[&str]) -> Result<(Vec<PathBuf>, Vec<String>), OutputError> {
        for sub in subdirs {
            sync_dir(&self.dir.path().join(sub))?;
        }
        sync_dir(self.dir.path())?;
        let (parent, name) = split(&self.target)?;
        let target = &self.target;
        let mut notes = Vec::new();

        let old = match fs::symlink_metadata(target) {
            Ok(_) => match exchange(self.dir.path(), target) {
                // The staging path now holds the previous set.
                Ok(()) => Some(self.dir.path().to_path_buf()),
                Err(_) => Some(swap_by_renames(self.dir.path(), &parent, &name, target)?),
            },
            Err(e) if e.kind() == io::ErrorKind::NotFound => {
                fs::rename(self.dir.path(), target).map_err(|e| io_err(target, e))?;
                None
            }
            Err(e) => return Err(io_err(target, e)),
        };
        let _kept = self.dir.keep();
        #[cfg(test)]
        if STOP_AFTER_SWAP.with(|s| s.get()) {
            let files = self.files.iter().map(|rel| target.join(rel)).collect();
            return Ok((files, notes));
        }
        sync_dir(&parent)?;
        if let Some(aside) = old {
            if let Err(e) = fs::remove_dir_all(&aside) {
                notes.push(format!(
                    "could not remove the previous results moved aside to {}: {e}",
                    aside.display()
                ));
            }
        }
        sweep_leftovers(&parent, &name);
        let files = self.files.iter().map(|rel| target.join(rel)).collect();
        Ok((files, notes))
    }
}

/// Exchanges `new` and `target` atomically: both exist before and after.
#[cfg(target_os = "linux")]
pub(crate) fn exchange(new: &Path, target: &Path) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let cstr = |p: &Path| {
        CString::new(p.as_os_str().as_bytes())
            .map_err(|_| io::Error::from(io::ErrorKind::InvalidInput))
    };
    let (from, to) = (cstr(new)?, cstr(target)?);
    // SAFETY: both paths are NUL-terminated strings that outlive the call.
    let rc = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            from.as_ptr(),
            libc::AT_FDCWD,
            to.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if rc == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

/// No atomic exchange here: [`swap_by_renames`] does it in two steps.
#[cfg(not(target_os = "linux"))]
pub(crate) fn exchange(_new: &Path, _target: &Path) -> io::Result<()> {
    Err(io::Error::from(io::ErrorKind::Unsupported))
}

/// The previous set renamed aside, the new one renamed in; on failure the
/// previous set goes back. Returns where the previous set now is.
fn swap_by_renames(
    new: &Path,
    parent: &Path,
    name: &str,
    target: &Path,
) -> Result<PathBuf, OutputError> {
    let aside = unique_sibling(parent, &format!(".{name}.rill-old-"));
    fs::rename(target, &aside).map_err(|e| io_err(target, e))?;
    if let Err(e) = fs::rename(new, target) {
        let _ = fs::rename(&aside, target);
        return Err(io_err(target, e));
    }
    Ok(aside)
}

/// Parent directory and final component of a target path.
fn split(target: &Path) -> Result<(PathBuf, String), OutputError> {
    let name = target
        .file_name()
        .and_then(|n| n.to_str())
        .map(str::to_string);
    match (target.parent(), name) {
        (Some(parent), Some(name)) if !parent.as_os_str().is_empty() => {
            Ok((parent.to_path_buf(), name))
        }
        (Some(_), Some(name)) => Ok((PathBuf::from("."), name)),
        _ => Err(OutputError::Refused {
            path: target.to_path_buf(),
            reason:
                "it has no parent directory (or no valid UTF-8 name) to build the results beside"
                    .into(),
        }),
    }
}

fn unique_sibling(parent: &Path, prefix: &str) -> PathBuf {
    let nanos = SystemTime::now()
        .duration_since(SystemTime::UNIX_EPOCH)
        .map(|d| d.as_nanos())
        .unwrap_or(0);
    let pid = std::process::id();
    let mut n = 0u32;
    loop {
        let p = parent.join(format!("{prefix}{pid}-{nanos}-{n}"));
        if fs::symlink_metadata(&p).is_err() {
            return p;
        }
        n += 1;
    }
}

/// Removes `.NAME.rill-new-*` and `.NAME.rill-old-*` directories left by
/// killed processes: those whose writer (the process id after the prefix)
/// is gone, and any older than [`STALE_AFTER`]. Best effort, errors ignored.
pub(crate) fn sweep_leftovers(parent: &Path, name: &str) {
    let Ok(entries) = fs::read_dir(parent) else {
        return;
    };
    let prefixes = [format!(".{name}.rill-new-"), format!(".{name}.rill-old-")];
    for entry in entries.flatten() {
        let file_name = entry.file_name();
        let Some(file_name) = file_name.to_str() else {
            continue;
        };
        let Some(rest) = prefixes
            .iter()
            .find_map(|p| file_name.strip_prefix(p.as_str()))
        else {
            continue;
        };
        let writer_gone = rest
            .split('-')
            .next()
            .and_then(|pid| pid.parse::<u32>().ok())
            .is_some_and(|pid| pid != std::process::id() && !process_runs(pid));
        if writer_gone {
            let _ = fs::remove_dir_all(entry.path());
            continue;
        }
        let old_enough = entry
            .metadata()
            .and_then(|m| m.modified())
            .ok()
            .and_then(|t| t.elapsed().ok())
            .is_some_and(|age| age > STALE_AFTER);
        if old_enough {
            let _ = fs::remove_dir_all(entry.path());
        }
    }
}

/// Whether process `pid` exists (unknown counts as running).
#[cfg(unix)]
fn process_runs(pid: u32) -> bool {
    let Ok(pid) = libc::pid_t::try_from(pid) else {
        return true;
    };
    if pid <= 0 {
        return true;
    }
    // SAFETY: signal 0 only checks that the process exists; nothing is sent.
    let rc = unsafe { libc::kill(pid, 0) };
    rc == 0 || io::Error::last_os_error().raw_os_error() != Some(libc::ESRCH)
}

#[cfg(not(unix))]
fn process_runs(_pid: u32) -> bool {
    true
}

fn sync_dir(dir: &Path) -> Result<(), OutputError> {
    // Directory fsync makes the renames durable; Windows cannot open a directory for it.
    #[cfg(unix)]
    File::open(dir)
        .and_then(|f| f.sync_all())
        .map_err(|e| io_err(dir, e))?;
    #[cfg(not(unix))]
    let _ = dir;
    Ok(())
}

/// Writes the contents of one file.
pub(crate) type FileWriter<'a> = Box<dyn FnOnce(&mut dyn Write) -> io::Result<()> + 'a>;

/// Writes several files into `dir` (created if missing), each atomically:
/// all are written to temporary files in `dir` and synced first, then each is
/// renamed over its final name. A failure before the renames leaves every
/// previous file untouched.
pub(crate) fn write_files_atomically(
    dir: &Path,
    files: Vec<(&str, FileWriter<'_>)>,
) -> Result<Vec<PathBuf>, OutputError> {
    fs::create_dir_all(dir).map_err(|e| io_err(dir, e))?;
    let mut pending = Vec::new();
    for (name, write) in files {
        let final_path = dir.join(name);
        let result = (|| {
            #[cfg(test)]
            if FAIL_ON.with(|f| f.borrow().as_deref() == Some(name)) {
                return Err(io::Error::other("injected failure (test)"));
            }
            let prefix = format!(".{name}.");
            let mut builder = tempfile::Builder::new();
            builder.prefix(&prefix).suffix(".tmp");
            // A temporary file is private (0600); once renamed it is a
            // result like any other, readable as the umask allows.
            #[cfg(unix)]
            {
                use std::os::unix::fs::PermissionsExt;
                builder.permissions(fs::Permissions::from_mode(0o666));
            }
            let tmp = builder.tempfile_in(dir)?;
            let mut w = BufWriter::with_capacity(1 << 20, tmp);
            write(&mut w)?;
            let tmp = w.into_inner().map_err(|e| e.into_error())?;
            tmp.as_file().sync_all()?;
            Ok(tmp)
        })();
        pending.push((result.map_err(|e| io_err(&final_path, e))?, final_path));
    }
    let mut written = Vec::new();
    for (tmp, final_path) in pending {
        tmp.persist(&final_path)
            .map_err(|e| io_err(&final_path, e.error))?;
        written.push(final_path);
    }
    sync_dir(dir)?;
    Ok(written)
}
