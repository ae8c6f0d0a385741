//! The server's only mutable state: open documents, the configuration
//! negotiated at `initialize`, the `DiskSource`, and the analyses.
//! Synchronous locks only, never held across an `.await`.

use crate::document::{uri_path, Documents};
use crate::position::Encoding;
use crate::settings::Settings;
use rill_model::{Reuse, Source};
use rill_workspace::{DiskSource, Includers};
use ropey::Rope;
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, MutexGuard, RwLock};
use std::time::Duration;
use tokio::sync::{watch, Notify};
use tower_lsp::lsp_types::{self as lsp, MessageType, Url};
use tower_lsp::Client;

/// What the client can do, from its capabilities.
#[derive(Debug, Clone, Default)]
pub struct ClientCaps {
    pub watch_dynamic: bool,
    pub work_done_progress: bool,
    pub show_document: bool,
    pub configuration: bool,
    pub related_information: bool,
    pub snippets: bool,
    pub inlay_hint_refresh: bool,
    pub hierarchical_symbols: bool,
}

#[derive(Debug, Clone, Default)]
pub struct Config {
    pub encoding: Encoding,
    /// Workspace folders (or the root URI).
    pub roots: Vec<PathBuf>,
    /// Folders of open documents, used as roots when there are no workspace folders.
    pub fallback_roots: Vec<PathBuf>,
    pub settings: Settings,
    pub caps: ClientCaps,
}

impl Config {
    pub fn confinement_roots(&self) -> Vec<PathBuf> {
        if self.roots.is_empty() {
            self.fallback_roots.clone()
        } else {
            self.roots.clone()
        }
    }
    /// The folder relative settings are taken from.
    pub fn base(&self) -> Option<&Path> {
        self.roots
            .first()
            .or(self.fallback_roots.first())
            .map(PathBuf::as_path)
    }
}

/// One analysed version of a document.
pub struct Analyzed {
    pub version: i32,
    /// The text that was analysed, for position conversion.
    pub rope: Rope,
    pub snap: rill_ide::Snapshot,
}

/// How a document is analysed: on its own, or through a deck that includes it.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Context {
    /// On its own; the includer index is not complete yet, or the document
    /// has no path.
    Alone,
    /// On its own, and no deck in the workspace includes it (a fragment
    /// then gets one error saying so).
    Unincluded,
    /// Through this deck, which includes it.
    Deck(PathBuf),
}

/// The input of one analysis.
pub struct Input {
    pub version: i32,
    pub path: PathBuf,
    pub text: Arc<str>,
    pub rope: Rope,
    pub source: Arc<DiskSource>,
    /// The server's cache, kept between analyses.
    pub cache: Arc<Reuse>,
    pub context: Context,
}

impl Input {
    pub fn analyze(self) -> Analyzed {
        let source = &*self.source;
        let in_deck = match &self.context {
            Context::Deck(deck) => source.read(deck).ok().and_then(|bytes| {
                let (deck_text, _) = rill_syntax::parse_bytes(&bytes);
                rill_ide::Snapshot::in_deck(
                    deck,
                    &deck_text,
                    &self.path,
                    &self.text,
                    source,
                    &self.cache,
                )
            }),
            _ => None,
        };
        // A deck that no longer reads the document: analyse it alone.
        let snap = in_deck.unwrap_or_else(|| {
            let mut snap =
                rill_ide::Snapshot::with_cache(&self.path, &self.text, source, &self.cache);
            if self.context == Context::Unincluded {
                snap.mark_unincluded(None);
            }
            snap
        });
        Analyzed {
            version: self.version,
            rope: self.rope,
            snap,
        }
    }
}

/// A background analysis loop for one root document.
pub struct Worker {
    pub notify: Arc<Notify>,
    pub stop: Arc<AtomicBool>,
    pub latest: watch::Sender<Option<Arc<Analyzed>>>,
}

#[derive(Default)]
pub struct Analyses {
    /// Open documents analysed as decks of their own ("roots").
    pub workers: HashMap<Url, Worker>,
    /// The other files (includes, array files with diagnostics) of each root's last analysis.
    pub includes: HashMap<Url, HashSet<PathBuf>>,
    /// Diagnostics per target URI, per root that produced them.
    pub contributions: HashMap<Url, HashMap<Url, Vec<lsp::Diagnostic>>>,
    /// Analyses of open documents that are included by a root, through
    /// their deck, for requests on them (hover in an included deck).
    pub standalone: HashMap<Url, Arc<Analyzed>>,
    /// Roots analysed through a deck that includes them: every file that
    /// analysis read, so that a change to any of them (a sibling fragment
    /// open beside it) analyses the root again.
    pub context_reads: HashMap<Url, HashSet<PathBuf>>,
    /// The deck each document was last analysed through, to log a change.
    pub contexts: HashMap<Url, PathBuf>,
}

impl Analyses {
    /// Roots whose last analysis read `path`.
    pub fn roots_including(&self, path: &Path, except: &Url) -> Vec<Url> {
        self.includes
            .iter()
            .filter(|(r, set)| *r != except && set.contains(path))
            .map(|(r, _)| r.clone())
            .collect()
    }

    /// Roots analysed through a deck whose last analysis read `path`.
    pub fn context_roots_reading(&self, path: &Path, except: &Url) -> Vec<Url> {
        self.context_reads
            .iter()
            .filter(|(r, set)| *r != except && set.contains(path))
            .map(|(r, _)| r.clone())
            .collect()
    }
}

pub struct Shared {
    pub client: Client,
    pub docs: Mutex<Documents>,
    pub config: RwLock<Config>,
    pub source: RwLock<Arc<DiskSource>>,
    /// Parsed arrays and derived results kept between analyses (the one
    /// cache; the source only reads).
    pub cache: Arc<Reuse>,
    pub analyses: Mutex<Analyses>,
    /// Held while checking that an analysis is current and publishing it,
    /// so that an older version can never be published after a newer one.
    pub publish_lock: tokio::sync::Mutex<()>,
    pub initialized: AtomicBool,
    pub shutdown: AtomicBool,
    pub debounce: Duration,
    pub runs: crate::runner::Runs,
    /// Analyses running at once: a few pool threads, whatever the
    /// number of open documents (the others queue, see `schedule`).
    pub analysis_slots: Arc<tokio::sync::Semaphore>,
    /// The threads analyses run on, as many as there are slots.
    pub pool: crate::pool::Pool,
    /// Which decks of the workspace include which files (see `includers`).
    pub includers: RwLock<Includers>,
    /// True once the includer index has been built for the current
    /// folders; analyses wait for it (briefly), so that a fragment's first
    /// diagnostics are already those of its deck.
    pub index_ready: watch::Sender<bool>,
    /// Counts walks of the folders, so that an overtaken walk is dropped.
    pub scan_generation: std::sync::atomic::AtomicU64,
    /// The last runs' values shown on hover (see `last_run`).
    pub last_runs: crate::last_run::LastRuns,
}

/// How many analyses run at once: one per core, at most four (each may be
/// a million-cell deck; more at once would only share the cores).
pub fn analysis_slots() -> usize {
    std::thread::available_parallelism()
        .map(|n| n.get())
        .unwrap_or(1)
        .clamp(1, 4)
}

/// Lock a mutex, recovering from poisoning: the data are plain maps whose
/// invariants hold between statements, and the server must not die.
pub fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    m.lock().unwrap_or_else(|e| e.into_inner())
}

impl Shared {
    pub fn new(client: Client) -> Self {
        Shared {
            client,
            docs: Mutex::new(Documents::default()),
            config: RwLock::new(Config::default()),
            // Nothing is read before `initialize` says where the workspace is.
            source: RwLock::new(Arc::new(DiskSource::confined(Vec::new(), Vec::new()))),
            cache: Arc::new(Reuse::new()),
            analyses: Mutex::new(Analyses::default()),
            publish_lock: tokio::sync::Mutex::new(()),
            initialized: AtomicBool::new(false),
            shutdown: AtomicBool::new(false),
            // Short: bursts coalesce anyway, since a change that arrives during an
            // analysis is taken up by the next one.
            debounce: Duration::from_millis(5),
            runs: Default::default(),
            analysis_slots: Arc::new(tokio::sync::Semaphore::new(analysis_slots())),
            pool: crate::pool::Pool::new(analysis_slots()),
            includers: RwLock::new(Includers::new()),
            index_ready: watch::channel(false).0,
            scan_generation: std::sync::atomic::AtomicU64::new(0),
            last_runs: Default::default(),
        }
    }

    pub fn config(&self) -> Config {
        self.config
            .read()
            .unwrap_or_else(|e| e.into_inner())
            .clone()
    }

    pub fn encoding(&self) -> Encoding {
        self.config
            .read()
            .unwrap_or_else(|e| e.into_inner())
            .encoding
    }

    pub fn source(&self) -> Arc<DiskSource> {
        self.source
            .read()
            .unwrap_or_else(|e| e.into_inner())
            .clone()
    }

    /// The source for a document at `path` (`None`: an unsaved buffer).
    /// An unsaved buffer has no folder of its own: with no workspace folder
    /// open either, there is nowhere on disk it may read.
    pub fn source_for(&self, path: Option<&Path>) -> Arc<DiskSource> {
        if path.is_none() && self.config().roots.is_empty() {
            Arc::new(DiskSource::unsaved())
        } else {
            self.source()
        }
    }

    /// A log line in the client's output (not a popup).
    pub fn log(&self, typ: MessageType, message: String) {
        let client = self.client.clone();
        tokio::spawn(async move { client.log_message(typ, message).await });
    }

    /// Build the `DiskSource` again (roots or allowed folders changed), with
    /// the open buffers as overlays. The file cache starts empty.
    pub fn rebuild_source(&self) {
        let config = self.config();
        let source = DiskSource::confined(
            config.confinement_roots(),
            config.settings.allowed_paths(config.base()),
        );
        {
            let mut docs = lock(&self.docs);
            for uri in docs.uris() {
                if let Some(doc) = docs.get_mut(&uri) {
                    if let Some(path) = doc.path.clone() {
                        source.set_overlay(&path, &doc.text());
                    }
                }
            }
        }
        *self.source.write().unwrap_or_else(|e| e.into_inner()) = Arc::new(source);
        // The new source reads every file afresh, so parsed arrays could not
        // match its bytes any more; derived results age out by themselves.
        self.cache.clear_files();
    }

    /// When there are no workspace folders, the folder of each open
    /// document is a root. Returns true when a new one was added.
    pub fn add_fallback_root(&self, path: &Path) -> bool {
        let Some(dir) = path.parent() else {
            return false;
        };
        let mut config = self.config.write().unwrap_or_else(|e| e.into_inner());
        if !config.roots.is_empty() || config.fallback_roots.iter().any(|r| r == dir) {
            return false;
        }
        config.fallback_roots.push(dir.to_path_buf());
        true
    }

    pub fn doc_version(&self, uri: &Url) -> Option<i32> {
        lock(&self.docs).get(uri).map(|d| d.version)
    }

    /// The current text of an open document, ready to analyse, with the
    /// deck it is analysed through (see `includers`).
    pub fn input(&self, uri: &Url) -> Option<Input> {
        let mut note = None;
        let input = {
            let mut docs = lock(&self.docs);
            let doc = docs.get_mut(uri)?;
            let source = self.source_for(doc.path.as_deref());
            let saved = doc.path.clone();
            let path = saved.clone().unwrap_or_else(|| PathBuf::from(uri.path()));
            let (version, text, rope) = (doc.version, doc.text(), doc.rope.clone());
            let context = match &saved {
                Some(p) if *self.index_ready.borrow() => {
                    let index = self.includers.read().unwrap_or_else(|e| e.into_inner());
                    let is_open = |deck: &Path| docs.by_path(deck).is_some();
                    match index.choose(p, &is_open) {
                        Some(deck) => {
                            let all = index.top_decks(p);
                            if all.len() > 1 {
                                note = Some((deck.clone(), all));
                            }
                            Context::Deck(deck)
                        }
                        None => Context::Unincluded,
                    }
                }
                _ => Context::Alone,
            };
            Input {
                version,
                text,
                rope,
                path,
                source,
                cache: self.cache.clone(),
                context,
            }
        };
        // Outside the documents' lock: `publish` takes the analyses first.
        if let Some((deck, all)) = note {
            self.note_context(uri, &deck, &all);
        }
        Some(input)
    }

    /// Log, once per change, which of several including decks a document
    /// is analysed through.
    fn note_context(&self, uri: &Url, deck: &Path, all: &[PathBuf]) {
        let mut a = lock(&self.analyses);
        if a.contexts.get(uri).is_some_and(|d| d == deck) {
            return;
        }
        a.contexts.insert(uri.clone(), deck.to_path_buf());
        let names: Vec<String> = all.iter().map(|p| p.display().to_string()).collect();
        self.log(
            MessageType::INFO,
            format!(
                "{} is included by {}; analysed through {} (an open deck first, then the shortest path)",
                display(uri),
                names.join(", "),
                deck.display()
            ),
        );
    }

    pub fn is_shut_down(&self) -> bool {
        self.shutdown.load(Ordering::SeqCst)
    }
}

/// File path of a URI, for messages.
pub fn display(uri: &Url) -> String {
    uri_path(uri)
        .map(|p| p.display().to_string())
        .unwrap_or_else(|| uri.to_string())
}
