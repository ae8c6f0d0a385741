//! `rill check FRAGMENT`: finding the deck that includes a fragment (a file
//! of well or boundary blocks), so that it is checked as part of that deck.
//!
//! The search starts in the fragment's folder and widens one parent folder
//! at a time, each time walking that folder's tree (through
//! `rill_workspace::Includers`), and stops at the first folder where a deck
//! including the fragment is found. It never climbs above the project
//! root: the nearest folder holding a `.git` entry, or else the current
//! directory when the fragment lies inside it, or else the fragment's own
//! folder.

use rill_workspace::{DiskSource, Includers};
use std::path::{Path, PathBuf};

/// What the search found for a fragment.
pub struct Found {
    /// The outermost decks that include it, the one to check first
    /// (fewest folders, then alphabetical).
    pub decks: Vec<PathBuf>,
    /// The highest folder walked.
    pub searched: PathBuf,
}

/// The folder the search may climb to (see the module comment).
pub fn project_root(folder: &Path) -> PathBuf {
    if let Some(marked) = folder.ancestors().find(|a| a.join(".git").exists()) {
        return marked.to_path_buf();
    }
    match std::env::current_dir().and_then(std::fs::canonicalize) {
        Ok(cwd) if folder.starts_with(&cwd) => cwd,
        _ => folder.to_path_buf(),
    }
}

/// The decks including `fragment`, read through `source`.
pub fn find(fragment: &Path, source: &DiskSource) -> Option<Found> {
    let fragment = std::fs::canonicalize(fragment).ok()?;
    let folder = fragment.parent()?.to_path_buf();
    let top = project_root(&folder);
    let mut index = Includers::new();
    let mut done: Option<PathBuf> = None;
    for level in folder.ancestors() {
        index.scan_folder(level, done.as_deref(), source);
        let decks = index.top_decks(&fragment);
        if !decks.is_empty() || level == top || !level.starts_with(&top) {
            return Some(Found {
                decks,
                searched: level.to_path_buf(),
            });
        }
        done = Some(level.to_path_buf());
    }
    None
}

/// `path` relative to the current directory when it lies inside it.
pub fn shown(path: &Path) -> String {
    std::env::current_dir()
        .and_then(std::fs::canonicalize)
        .ok()
        .and_then(|cwd| path.strip_prefix(cwd).ok().map(Path::to_path_buf))
        .unwrap_or_else(|| path.to_path_buf())
        .display()
        .to_string()
}
