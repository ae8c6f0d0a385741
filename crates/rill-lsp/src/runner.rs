//! `workspace/executeCommand rill.run`: runs the embedded simulator on the
//! deck as it stands in the editor, on a blocking thread, with work-done
//! progress (percentage = simulated time / end time), cancellation (the
//! progress token's cancel, or shutdown), one run per deck at a time, a
//! summary message and an offer to open `report.html`.
//!
//! The only files the server ever writes are the result set, through
//! `rill_output::write_results` (atomic, into `<deck>.out/` or the
//! `rill.runOutputDir` setting).

use crate::document::uri_path;
use crate::schedule;
use crate::state::{lock, Analyzed, Shared};
use rill_units::{display_unit, format_number, Kind};
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

type Outcome = Result<(rill_sim::RunResults, rill_output::WrittenFiles, f64), String>;

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

    let (tx, mut rx) = mpsc::unbounded_channel();
    let observer_cancel = cancel.clone();
    let deck_path = deck.to_path_buf();
    let out = out_dir.to_path_buf();
    let for_job = analyzed.clone();
    let job = tokio::task::spawn_blocking(move || -> Outcome {
        let analyzed = for_job;
        let Some(case) = analyzed.snap.analysis().runnable_case() else {
            return Err("the deck has errors".into());
        };
        let started = Instant::now();
        let mut observer = Observer {
            cancel: observer_cancel,
            tx,
        };
        let results = rill_sim::run(case, &rill_sim::RunOptions::default(), &mut observer)
            .map_err(|e| e.to_string())?;
        let wall = started.elapsed().as_secs_f64();
        let mut meta = rill_output::RunMeta::new(deck_path);
        meta.wall_seconds = Some(wall);
        meta.cautions = analyzed
            .snap
            .diagnostics()
            .iter()
            .filter(|d| d.severity == rill_model::Severity::Warning)
            .map(|d| format!("{}: {}", d.code, d.message))
            .collect();
        let written =
            rill_output::write_results(&out, case, &results, &meta).map_err(|e| e.to_string())?;
        Ok((results, written, wall))
    });
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
        Ok((results, written, wall)) => {
            send(WorkDoneProgress::End(WorkDoneProgressEnd {
                message: Some("finished".into()),
            }))
            .await;
            let summary = summary(deck, &results, &written, wall, &analyzed);
            shared.client.show_message(MessageType::INFO, summary).await;
            if caps.show_document {
                if let Ok(uri) = Url::from_file_path(&written.report_html) {
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

/// The message at the end of a run: steps, final rates and pressures, where
/// the results are, and the standing caution.
fn summary(
    deck: &Path,
    results: &rill_sim::RunResults,
    written: &rill_output::WrittenFiles,
    wall: f64,
    analyzed: &Analyzed,
) -> String {
    let system = analyzed
        .snap
        .analysis()
        .case
        .as_ref()
        .map(|c| c.report.units)
        .unwrap_or(rill_units::System::Field);
    let show = |v: f64, kind: Kind| {
        let u = display_unit(kind, system);
        format!("{} {}", format_number(v / u.factor), u.name)
    };
    let mut parts = vec![format!(
        "Run of {} finished: {} steps in {} s.",
        name(deck),
        results.stats.steps,
        format_number((wall * 10.0).round() / 10.0)
    )];
    if let Some(t) = results.times.last() {
        let mut fin = vec![format!("at {}", show(*t, Kind::Time))];
        if let Some(p) = results.pressure_avg.last() {
            fin.push(format!("average pressure {}", show(*p, Kind::Pressure)));
        }
        for w in &results.wells {
            if let (Some(q), Some(b)) = (w.rate.last(), w.bhp.last()) {
                fin.push(format!(
                    "{} rate {}, BHP {}",
                    w.name,
                    show(*q, Kind::SurfaceRate),
                    show(*b, Kind::Pressure)
                ));
            }
        }
        for b in &results.boundaries {
            if let Some(q) = b.rate.last() {
                fin.push(format!("{} rate {}", b.name, show(*q, Kind::SurfaceRate)));
            }
        }
        parts.push(format!("Final state {}.", fin.join("; ")));
    }
    parts.push(format!(
        "Results in {} (report.html).",
        written.dir.display()
    ));
    for n in &written.notes {
        parts.push(n.clone());
    }
    parts.push(rill_output::CAUTION.to_string());
    parts.join(" ")
}

/// `window/workDoneProgress/cancel`.
pub fn cancel(shared: &Shared, params: lsp::WorkDoneProgressCancelParams) {
    if let NumberOrString::String(t) = &params.token {
        shared.runs.cancel_token(t);
    }
}
