//! The server's includer index (`rill_workspace::Includers`): which decks
//! of the workspace include which files, so that a fragment opened alone
//! is analysed through the deck that includes it (`state::Input`).
//!
//! Built by walking the workspace folders (or, with none, the folders of
//! open documents) on a blocking thread, through a `DiskSource` with the
//! server's confinement and a cache of its own that is dropped after the
//! walk. Kept current from every analysis (the include directives of each
//! deck it parsed: open buffers as typed), from watched-file changes, and
//! from the disk when a buffer closes.

use crate::schedule;
use crate::state::{lock, Shared};
use rill_workspace::{includers::includes_in, DiskSource, Includers};
use std::path::Path;
use std::sync::atomic::Ordering;
use std::sync::Arc;
use tower_lsp::lsp_types::MessageType;

/// Walk the folders again (they or the allowed paths changed). Analyses
/// wait for the new index briefly (`schedule`); when it is in, every root
/// is analysed again. A walk overtaken by a newer one is dropped.
pub fn rescan(shared: &Arc<Shared>) {
    shared.index_ready.send_replace(false);
    let generation = shared.scan_generation.fetch_add(1, Ordering::SeqCst) + 1;
    let config = shared.config();
    let folders = config.confinement_roots();
    let allowed = config.settings.allowed_paths(config.base());
    let shared = shared.clone();
    tokio::spawn(async move {
        let walked = tokio::task::spawn_blocking(move || {
            let source = DiskSource::confined(folders.clone(), allowed);
            let started = std::time::Instant::now();
            let index = Includers::scan(&folders, &source);
            (index, folders, started.elapsed())
        })
        .await;
        if shared.scan_generation.load(Ordering::SeqCst) != generation {
            return;
        }
        match walked {
            Ok((index, folders, took)) => {
                // Only a partial index is worth a line in the client's log.
                if index.is_truncated() {
                    let folders: Vec<String> =
                        folders.iter().map(|f| f.display().to_string()).collect();
                    shared.log(
                        MessageType::WARNING,
                        format!(
                            "includer index: {} deck(s) under {} in {} ms; stopped after {} entries, decks beyond are not indexed",
                            index.len(),
                            folders.join(", "),
                            took.as_millis(),
                            rill_workspace::includers::MAX_ENTRIES
                        ),
                    );
                }
                *shared.includers.write().unwrap_or_else(|e| e.into_inner()) = index;
            }
            Err(e) => shared.log(
                MessageType::ERROR,
                format!("includer index: the walk failed: {e}"),
            ),
        }
        shared.index_ready.send_replace(true);
        schedule::all_changed(&shared);
    });
}

/// Take the include directives of every deck `snap` parsed into the index.
/// Returns whether any deck's includes changed (then every root must be
/// analysed again: a fragment may have gained or lost its deck).
pub fn learn(shared: &Shared, snap: &rill_ide::Snapshot) -> bool {
    if !*shared.index_ready.borrow() {
        return false; // the walk in progress replaces the index
    }
    let source = shared.source();
    let mut index = shared.includers.write().unwrap_or_else(|e| e.into_inner());
    let mut changed = false;
    for (i, f) in snap.analysis().files.iter().enumerate() {
        // The open document's path, as the editor names it.
        let path = if i == snap.focus() {
            snap.path()
        } else {
            &f.path
        };
        if let Some(tree) = &f.tree {
            changed |= index.set_includes(path, includes_in(path, &tree.items, &*source));
        }
    }
    changed
}

/// A deck changed on disk (`deleted`: it is gone), or its buffer closed:
/// read its includes again. Returns whether they changed.
pub fn refresh(shared: &Shared, path: &Path, deleted: bool) -> bool {
    if path.extension().is_none_or(|x| x != "rill") {
        return false;
    }
    // An open buffer stays what the index knows of it.
    if !deleted && lock(&shared.docs).by_path(path).is_some() {
        return false;
    }
    let mut index = shared.includers.write().unwrap_or_else(|e| e.into_inner());
    if deleted {
        index.remove(path)
    } else {
        index.refresh(path, &*shared.source())
    }
}
