//! Scheduling of analyses and publishing of diagnostics.
//!
//! Each open document that is not included by another open deck is a
//! *root* with one worker task. A change wakes the worker; after a short
//! debounce it analyses the latest text on a pool thread, and publishes
//! only if no newer version arrived meanwhile (the newer change has woken
//! the worker again). The check and the publication happen under one lock,
//! so diagnostics of an older version never follow those of a newer one.
//! A root's analysis also yields the diagnostics of its includes and array
//! files, published to their own URIs and cleared when they disappear.
//!
//! Analyses run on a bounded pool (`pool`): a worker takes one of
//! `Shared::analysis_slots` before it reads the document, so however many
//! documents are open, only a few threads analyse at once; the
//! others queue, each for the newest version of its document (read once a
//! slot is free), and a closed document leaves the queue at once.

use crate::convert::{self, FileTexts};
use crate::document::uri_path;
use crate::state::{display, lock, Analyzed, Shared, Worker};
use std::collections::HashSet;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::Duration;
use tokio::sync::{watch, Notify};
use tower_lsp::lsp_types::{self as lsp, MessageType, Url};

/// How long a request waits for the analysis of the version it is about
/// before analysing that version itself.
const REQUEST_WAIT: Duration = Duration::from_secs(5);

/// A document changed (or opened): analyse the decks it belongs to.
pub fn document_changed(shared: &Arc<Shared>, uri: &Url) {
    let path = uri_path(uri);
    let (roots, readers) = {
        let mut a = lock(&shared.analyses);
        a.standalone.remove(uri);
        match &path {
            Some(p) => (a.roots_including(p, uri), a.context_roots_reading(p, uri)),
            None => (Vec::new(), Vec::new()),
        }
    };
    if roots.is_empty() {
        wake(shared, uri);
    } else {
        for r in &roots {
            wake(shared, r);
        }
    }
    // Fragments analysed through a deck that reads this document (a
    // sibling fragment, the deck itself) see the change too.
    for r in readers.iter().filter(|r| !roots.contains(r)) {
        wake(shared, r);
    }
}

/// How long a first analysis waits for the includer index.
const INDEX_WAIT: Duration = Duration::from_secs(5);

/// Analyse every root again (a watched file or the settings changed).
pub fn all_changed(shared: &Arc<Shared>) {
    let roots: Vec<Url> = {
        let mut a = lock(&shared.analyses);
        a.standalone.clear();
        a.workers.keys().cloned().collect()
    };
    for r in roots {
        wake(shared, &r);
    }
}

/// Wake the worker of root `uri`, starting one if needed.
fn wake(shared: &Arc<Shared>, uri: &Url) {
    let notify = {
        let mut a = lock(&shared.analyses);
        match a.workers.get(uri) {
            Some(w) => w.notify.clone(),
            None => {
                let notify = Arc::new(Notify::new());
                let stop = Arc::new(AtomicBool::new(false));
                let (latest, _) = watch::channel(None);
                a.workers.insert(
                    uri.clone(),
                    Worker {
                        notify: notify.clone(),
                        stop: stop.clone(),
                        latest: latest.clone(),
                    },
                );
                tokio::spawn(worker(
                    shared.clone(),
                    uri.clone(),
                    notify.clone(),
                    stop,
                    latest,
                ));
                notify
            }
        }
    };
    notify.notify_one();
}

async fn worker(
    shared: Arc<Shared>,
    uri: Url,
    notify: Arc<Notify>,
    stop: Arc<AtomicBool>,
    latest: watch::Sender<Option<Arc<Analyzed>>>,
) {
    let mut prepared = false;
    loop {
        notify.notified().await;
        if stop.load(Ordering::SeqCst) {
            return;
        }
        tokio::time::sleep(shared.debounce).await;
        if stop.load(Ordering::SeqCst) {
            return;
        }
        // Queue for a slot; a close (or a newer change) wakes the wait.
        let slot = loop {
            tokio::select! {
                slot = shared.analysis_slots.clone().acquire_owned() => break slot,
                _ = notify.notified() => {
                    if stop.load(Ordering::SeqCst) {
                        return;
                    }
                }
            }
        };
        let Ok(slot) = slot else {
            return; // the pool is closed: the server is ending
        };
        if stop.load(Ordering::SeqCst) {
            return;
        }
        // A fragment's first diagnostics should already be its deck's.
        let mut ready = shared.index_ready.subscribe();
        let _ = tokio::time::timeout(INDEX_WAIT, ready.wait_for(|r| *r)).await;
        let Some(input) = shared.input(&uri) else {
            return;
        };
        let version = input.version;
        let prepare = !prepared;
        let analyzed = shared
            .pool
            .run(move || {
                let cache = input.cache.clone();
                let analyzed = input.analyze();
                if prepare {
                    prepare_first_edits(&analyzed, &cache);
                }
                drop(slot);
                analyzed
            })
            .await;
        let analyzed = match analyzed {
            Some(a) => {
                prepared = true;
                Arc::new(a)
            }
            None => {
                shared.log(
                    MessageType::ERROR,
                    format!("analysis of {} failed", display(&uri)),
                );
                continue;
            }
        };
        latest.send_if_modified(|cur| {
            if cur.as_ref().is_none_or(|c| c.version <= version) {
                *cur = Some(analyzed.clone());
                true
            } else {
                false
            }
        });
        if stop.load(Ordering::SeqCst) {
            return;
        }
        let includes_changed = crate::includers::learn(&shared, &analyzed.snap);
        publish(&shared, &uri, &analyzed).await;
        if includes_changed {
            all_changed(&shared);
        }
    }
}

/// After the first analysis of a deck, before its diagnostics go out, write
/// the memory that the arrays of the next edits will use
/// (`rill_model::reuse::Reuse::prepare`). Fresh pages were the slowest part
/// of the first edits after opening a million-cell deck (up to 60 ms, now
/// under 25 ms); preparing them adds about 80 ms to its 250 ms opening
/// instead. Later edits find the buffers of the arrays they replace.
fn prepare_first_edits(analyzed: &Analyzed, cache: &rill_model::Reuse) {
    let Some(case) = analyzed.snap.analysis().case.as_ref() else {
        return;
    };
    // One spare for the array typed in, one for what it makes on the way.
    cache.prepare(case.grid.cell_count(), 2);
}

/// Publish the diagnostics of root `root` from `analyzed`, unless the
/// document has moved on (then a newer analysis is on its way).
async fn publish(shared: &Arc<Shared>, root: &Url, analyzed: &Analyzed) {
    let _guard = shared.publish_lock.lock().await;
    if shared.doc_version(root) != Some(analyzed.version) {
        return;
    }
    let config = shared.config();
    let snap = &analyzed.snap;
    let files: Vec<_> = snap
        .analysis()
        .files
        .iter()
        .map(|f| (f.path.as_path(), &*f.text))
        .collect();
    // A fragment analysed through its deck: the rope is the fragment's
    // text, and only its own diagnostics are published (on its URI).
    let focus = snap.focus();
    let mut texts = FileTexts::new(files, &analyzed.rope).with_main_index(focus);
    let per_file = convert::diagnostics(
        snap.diagnostics(),
        &mut texts,
        config.encoding,
        config.caps.related_information,
    );
    let mut out: Vec<(Url, Vec<lsp::Diagnostic>, Option<i32>)> = Vec::new();
    {
        let mut a = lock(&shared.analyses);
        if !a.workers.contains_key(root) {
            return; // closed, or now included by another deck
        }
        let read: HashSet<PathBuf> = snap
            .analysis()
            .files
            .iter()
            .enumerate()
            .filter(|(i, _)| *i != focus)
            .map(|(_, f)| f.path.clone())
            .collect();
        // A fragment does not take over its deck or siblings: it only
        // listens to their changes.
        let included = if focus == 0 {
            a.context_reads.remove(root);
            read
        } else {
            a.context_reads.insert(root.clone(), read);
            HashSet::new()
        };
        // Open documents that this deck includes stop being roots: their
        // diagnostics come from this analysis from now on.
        let demoted: Vec<Url> = {
            let docs = lock(&shared.docs);
            included
                .iter()
                .filter_map(|p| docs.by_path(p).map(|(u, _)| u.clone()))
                .filter(|u| u != root && a.workers.contains_key(u))
                .collect()
        };
        let mut changed: HashSet<Url> = HashSet::new();
        for u in &demoted {
            if let Some(w) = a.workers.remove(u) {
                w.stop.store(true, Ordering::SeqCst);
                w.notify.notify_one();
            }
            a.includes.remove(u);
            a.context_reads.remove(u);
            for (target, by_root) in a.contributions.iter_mut() {
                if by_root.remove(u).is_some() {
                    changed.insert(target.clone());
                }
            }
        }
        a.includes.insert(root.clone(), included);
        let mut now: HashSet<Url> = HashSet::new();
        for (i, (path, diags)) in per_file.into_iter().enumerate() {
            if focus != 0 && i != focus {
                continue;
            }
            // The focus file is the document itself, whatever its path says.
            let uri = if i == focus {
                root.clone()
            } else {
                match convert::path_uri(&path) {
                    Some(u) => u,
                    None => continue,
                }
            };
            now.insert(uri.clone());
            changed.insert(uri.clone());
            a.contributions
                .entry(uri)
                .or_default()
                .insert(root.clone(), diags);
        }
        for (target, by_root) in a.contributions.iter_mut() {
            if !now.contains(target) && by_root.remove(root).is_some() {
                changed.insert(target.clone());
            }
        }
        for target in changed {
            let diags: Vec<lsp::Diagnostic> = a
                .contributions
                .get(&target)
                .map(|m| m.values().flatten().cloned().collect())
                .unwrap_or_default();
            let version = (&target == root).then_some(analyzed.version);
            out.push((target, diags, version));
        }
        a.contributions.retain(|_, m| !m.is_empty());
    }
    // The root first: it is what the user is typing in.
    out.sort_by_key(|(u, _, _)| u != root);
    for (uri, diags, version) in out {
        shared.client.publish_diagnostics(uri, diags, version).await;
    }
}

/// A document was closed: forget its analyses now (in message order, so
/// that a quick reopen is not undone), and return the URIs whose
/// diagnostics must be published again, for [`republish`].
pub fn document_closed(shared: &Arc<Shared>, uri: &Url) -> Vec<Url> {
    let mut out: Vec<Url> = Vec::new();
    let mut wake_next: Vec<Url> = Vec::new();
    {
        let mut a = lock(&shared.analyses);
        a.standalone.remove(uri);
        a.contexts.remove(uri);
        a.context_reads.remove(uri);
        if let Some(w) = a.workers.remove(uri) {
            w.stop.store(true, Ordering::SeqCst);
            w.notify.notify_one();
            let had = a.includes.remove(uri).unwrap_or_default();
            for (target, by_root) in a.contributions.iter_mut() {
                if by_root.remove(uri).is_some() {
                    out.push(target.clone());
                }
            }
            a.contributions.retain(|_, m| !m.is_empty());
            // Open documents that only this deck included become roots again.
            let docs = lock(&shared.docs);
            for p in had {
                if let Some((u, _)) = docs.by_path(&p) {
                    if a.roots_including(&p, u).is_empty() {
                        wake_next.push(u.clone());
                    }
                }
            }
        } else if let Some(p) = uri_path(uri) {
            // An included buffer closed: its decks now read the disk.
            wake_next = a.roots_including(&p, uri);
        }
    }
    for u in &wake_next {
        wake(shared, u);
    }
    out
}

/// Publish the diagnostics held now for `targets` (after a close).
pub async fn republish(shared: &Arc<Shared>, targets: Vec<Url>) {
    let _guard = shared.publish_lock.lock().await;
    for target in targets {
        let diags: Vec<lsp::Diagnostic> = lock(&shared.analyses)
            .contributions
            .get(&target)
            .map(|m| m.values().flatten().cloned().collect())
            .unwrap_or_default();
        shared.client.publish_diagnostics(target, diags, None).await;
    }
}

/// The analysis of the current version of an open document, for a request.
pub async fn analyzed(shared: &Arc<Shared>, uri: &Url) -> Option<Arc<Analyzed>> {
    let version = shared.doc_version(uri)?;
    let receiver = {
        let a = lock(&shared.analyses);
        if let Some(s) = a.standalone.get(uri) {
            if s.version == version {
                return Some(s.clone());
            }
        }
        a.workers.get(uri).map(|w| w.latest.subscribe())
    };
    if let Some(mut rx) = receiver {
        let waited = tokio::time::timeout(
            REQUEST_WAIT,
            rx.wait_for(|a| a.as_ref().is_some_and(|a| a.version >= version)),
        )
        .await;
        if let Ok(Ok(a)) = waited {
            if let Some(a) = a.as_ref() {
                if a.version == version {
                    return Some(a.clone());
                }
            }
        }
    }
    // Not a root (an included deck), or the document moved on while we
    // waited: analyse the document on its own.
    let slot = shared.analysis_slots.clone().acquire_owned().await.ok()?;
    let input = shared.input(uri)?;
    let analyzed = Arc::new(
        shared
            .pool
            .run(move || {
                let analyzed = input.analyze();
                drop(slot);
                analyzed
            })
            .await?,
    );
    let mut a = lock(&shared.analyses);
    if !a.workers.contains_key(uri) {
        a.standalone.insert(uri.clone(), analyzed.clone());
    }
    Some(analyzed)
}
