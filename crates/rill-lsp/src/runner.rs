//! `workspace/executeCommand rill.run`: runs the embedded simulator on the
//! deck as it stands in the editor, on a blocking thread, with work-done
//! progress (percentage = simulated time / end time), cancellation (the
//! progress token's cancel, or shutdown), one run per deck at a time, the
//! pipeline's summary as the message and an offer to open `report.html`.
//!
//! The run itself, its cautions, its summary and the result set come from
//! `rill_run::run`, the pipeline `rill run` uses too. The only files the
//! server ever writes are that result set (atomic, into `<deck>.out/` or the
//! `rill.runOutputDir` setting).

use crate::document::uri_path;
use crate::schedule;
use crate::state::{lock, Analyzed, Shared};
use rill_units::format_number;
use serde_json::Value;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};
use tokio::sync::mpsc;
use tower_lsp::lsp_types::{
    self as lsp, notification, request, MessageType, NumberOrString, ProgressParams,
    ProgressParamsValue, ShowDocumentParams, Url, WorkDoneProgress, WorkDoneProgressBegin,
    WorkDoneProgressCreateParams, WorkDoneProgressEnd, WorkDoneProgressReport,
};

pub const COMMAND: &str = "rill.run";

/// Runs going on: one per deck path, with its cancel flag and progress token.
#[derive(Default)]
pub struct Runs {
    active: Mutex<HashMap<PathBuf, (String, Arc<AtomicBool>)>>,
    next: AtomicU64,
}

impl Runs {
    /// Cancel the run whose progress token is `token`.
    pub fn cancel_token(&self, token: &str) -> bool {
        let active = lock(&self.active);
        match active.values().find(|(t, _)| t == token) {
            Some((_, flag)) => {
                flag.store(true, Ordering::SeqCst);
                true
            }
            None => false,
        }
    }

    pub fn cancel_all(&self) {
        for (_, flag) in lock(&self.active).values() {
            flag.store(true, Ordering::SeqCst);
        }
    }

    /// Claim the deck; `None` when a run of it is going on.
    fn claim(&self, deck: &Path) -> Option<(String, Arc<AtomicBool>)> {
        let mut active = lock(&self.active);
        if active.contains_key(deck) {
            return None;
        }
        let n = self.next.fetch_add(1, Ordering::SeqCst);
        let entry = (format!("rill.run/{n}"), Arc::new(AtomicBool::new(false)));
        active.insert(deck.to_path_buf(), entry.clone());
        Some(entry)
    }

    fn release(&self, deck: &Path) {
        lock(&self.active).remove(deck);
    }
}

/// Start a run of the document `uri` (the first command argument). Returns
/// at once; the run goes on in the background.
pub async fn execute(
    shared: &Arc<Shared>,
    args: &[Value],
) -> tower_lsp::jsonrpc::Result<Option<Value>> {
    let Some(uri) = args
        .first()
        .and_then(Value::as_str)
        .and_then(|s| Url::parse(s).ok())
    else {
        return Err(tower_lsp::jsonrpc::Error::invalid_params(
            "rill.run takes the URI of an open deck as its argument",
        ));
    };
    let Some(deck) = uri_path(&uri) else {
        shared
            .client
            .show_message(
                MessageType::ERROR,
                "Save the deck to a file before running it.",
            )
            .await;
        return Ok(None);
    };
    let Some(analyzed) = schedule::analyzed(shared, &uri).await else {
        shared
            .client
            .show_message(
                MessageType::ERROR,
                format!("{} is not open in the editor.", deck.display()),
            )
            .await;
        return Ok(None);
    };
    let errors = analyzed
        .snap
        .diagnostics()
        .iter()
        .filter(|d| d.severity == rill_model::Severity::Error)
        .count();
    if analyzed.snap.analysis().runnable_case().is_none() {
        let msg = if errors > 0 {
            format!(
                "{} has {errors} error{}: fix {} before running.",
                name(&deck),
                if errors == 1 { "" } else { "s" },
                if errors == 1 { "it" } else { "them" }
            )
        } else {
            format!("{} is not a complete case and cannot run.", name(&deck))
        };
        shared.client.show_message(MessageType::ERROR, msg).await;
        return Ok(None);
    }
    let Some((token, cancel)) = shared.runs.claim(&deck) else {
        shared
            .client
            .show_message(
                MessageType::WARNING,
                format!(
                    "{} is already running; one run per case at a time. Cancel it from its progress notification to start again.",
                    name(&deck)
                ),
            )
            .await;
        return Ok(None);
    };
    let config = shared.config();
    let out_dir = config.settings.output_dir(&deck, config.base());
    let shared = shared.clone();
    tokio::spawn(async move {
        run(&shared, analyzed, &deck, &out_dir, token, cancel).await;
        shared.runs.release(&deck);
    });
    Ok(None)
}

fn name(deck: &Path) -> String {
    deck.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| deck.display().to_string())
}

enum Event {
    Progress(rill_sim::Progress),
}

struct Observer {
    cancel: Arc<AtomicBool>,
    tx: mpsc::UnboundedSender<Event>,
}

impl rill_sim::Observer for Observer {
    fn progress(&mut self, p: &rill_sim::Progress) {
        let _ = self.tx.send(Event::Progress(p.clone()));
    }
    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::SeqCst)
    }
}

type Outcome = Result<rill_run::Finished, String>;

/// Runs the deck through the shared pipeline on a blocking thread; its
/// progress comes through the receiver.
fn start(
    analyzed: Arc<Analyzed>,
    deck: &Path,
    out_dir: &Path,
    cancel: Arc<AtomicBool>,
) -> (
    tokio::task::JoinHandle<Outcome>,
    mpsc::UnboundedReceiver<Event>,
) {
    let (tx, rx) = mpsc::unbounded_channel();
    let deck = deck.to_path_buf();
    let out = out_dir.to_path_buf();
    let job = tokio::task::spawn_blocking(move || -> Outcome {
        let mut observer = Observer { cancel, tx };
        let request = rill_run::Request::new(analyzed.snap.analysis(), &deck, &out);
        match rill_run::run(&request, &mut observer).result {
            Ok(done) => Ok(done),
            // The message names the run already ("Run of ... failed: ").
            Err(rill_run::Failure::Run(e)) => Err(e.to_string()),
            Err(e) => Err(e.to_string()),
        }
    });
    (job, rx)
}

async fn run(
    shared: &Arc<Shared>,
    analyzed: Arc<Analyzed>,
    deck: &Path,
    out_dir: &Path,
    token: String,
    cancel: Arc<AtomicBool>,
) {
    let caps = shared.config().caps;
    let token = NumberOrString::String(token);
    let progress = caps.work_done_progress
        && shared
            .client
            .send_request::<request::WorkDoneProgressCreate>(WorkDoneProgressCreateParams {
                token: token.clone(),
            })
            .await
            .is_ok();
    let send = |value: WorkDoneProgress| {
        let client = shared.client.clone();
        let token = token.clone();
        async move {
            if progress {
                client
                    .send_notification::<notification::Progress>(ProgressParams {
                        token,
                        value: ProgressParamsValue::WorkDone(value),
                    })
                    .await;
            }
        }
    };
    send(WorkDoneProgress::Begin(WorkDoneProgressBegin {
        title: format!("Running {}", name(deck)),
        cancellable: Some(true),
        message: Some("starting".into()),
        percentage: Some(0),
    }))
    .await;

    let (job, mut rx) = start(analyzed, deck, out_dir, cancel.clone());
    tokio::pin!(job);

    // Relay progress, at most every 100 ms, until the run ends.
    let mut last_sent: Option<Instant> = None;
    let mut last_pct = 0u32;
    let outcome: Outcome = loop {
        tokio::select! {
            done = &mut job => break done.unwrap_or_else(|e| Err(format!("the run stopped unexpectedly: {e}"))),
            Some(Event::Progress(p)) = rx.recv() => {
                let pct = if p.end > 0.0 { ((p.time / p.end) * 100.0).clamp(0.0, 100.0) as u32 } else { 0 };
                let due = last_sent.is_none_or(|t| t.elapsed() >= Duration::from_millis(100));
                if due && pct >= last_pct {
                    last_sent = Some(Instant::now());
                    last_pct = pct;
                    let day = p.time / 86400.0;
                    send(WorkDoneProgress::Report(WorkDoneProgressReport {
                        cancellable: Some(true),
                        message: Some(format!("step {}, t = {} day", p.step, format_number(day))),
                        percentage: Some(pct),
                    }))
                    .await;
                }
            }
        }
    };
    let cancelled = cancel.load(Ordering::SeqCst);
    match outcome {
        Ok(done) => {
            send(WorkDoneProgress::End(WorkDoneProgressEnd {
                message: Some("finished".into()),
            }))
            .await;
            shared
                .client
                .show_message(MessageType::INFO, done.summary.text())
                .await;
            if caps.show_document {
                if let Ok(uri) = Url::from_file_path(&done.written.report_html) {
                    let _ = shared
                        .client
                        .show_document(ShowDocumentParams {
                            uri,
                            external: Some(true),
                            take_focus: Some(false),
                            selection: None,
                        })
                        .await;
                }
            }
        }
        Err(e) => {
            send(WorkDoneProgress::End(WorkDoneProgressEnd {
                message: Some(if cancelled {
                    "cancelled".into()
                } else {
                    "failed".into()
                }),
            }))
            .await;
            let (typ, msg) = if cancelled {
                (
                    MessageType::INFO,
                    format!(
                        "Run of {} cancelled; earlier results, if any, are unchanged.",
                        name(deck)
                    ),
                )
            } else {
                (
                    MessageType::ERROR,
                    format!("Run of {} failed: {e}", name(deck)),
                )
            };
            shared.client.show_message(typ, msg).await;
        }
    }
}

/// `window/workDoneProgress/cancel`.
pub fn cancel(shared: &Shared, params: lsp::WorkDoneProgressCancelParams) {
    if let NumberOrString::String(t) = &params.token {
        shared.runs.cancel_token(t);
    }
}
