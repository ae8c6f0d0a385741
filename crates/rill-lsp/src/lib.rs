//! `rill-lsp` owns the rill language server, run as `rill lsp`: the
//! document store on `ropey` with incremental sync, position encodings
//! (UTF-16, or UTF-8 when the client offers it), conversion of analysis
//! answers to protocol types, scheduling of analyses (debounce, stale
//! results dropped, a bounded pool of analysis threads), file watching, settings, and the
//! `rill.run` command with progress and cancel.
//!
//! It must never contain analysis logic: every answer comes from
//! `rill_ide::Snapshot` (which builds on `rill_model`), and files are read
//! only through `rill_workspace::DiskSource`, confined to the workspace
//! folders (with none open: the folders of saved documents, and nothing
//! for an unsaved buffer). It never writes a file except the result set of `rill.run`
//! (through `rill_output`).
//!
//! Built on `tower-lsp` 0.20 rather than its community fork
//! `tower-lsp-server`: 0.20 is the stable release, its `lsp-types` 0.94
//! already has LSP 3.17 position encodings, and its `url::Url` converts to
//! file paths directly; the fork's current line is a release candidate on
//! newly generated protocol types and a newer minimum Rust, and neither
//! fixes the two things this crate must handle itself anyway: handlers run
//! concurrently (document changes are applied in order by [`sequencer`])
//! and the server does not end after `exit` (also [`sequencer`]).
//!
//! What the client sees:
//! - sync: incremental; positions in UTF-16, or UTF-8 when offered in
//!   `general.positionEncodings`; stale versions dropped with a log line;
//! - diagnostics: after a 5 ms debounce, for the deck and, on their own
//!   URIs, for its includes and array files; `code` is the diagnostic code,
//!   labels are `relatedInformation`, fixes travel in `data`;
//! - hover, completion (triggers `=`, `/`, `*`, `"`, space), code actions,
//!   formatting (whole document, and ranges whose edits fall inside),
//!   symbols, definition, references, semantic tokens (full and range),
//!   inlay hints, folding ranges, the "Run case" code lens;
//! - `workspace/executeCommand rill.run [uri]`, see `runner`; hover adds
//!   the last run's values from its result set, see `last_run`;
//! - `rill/documentText {uri}` -> `{version, text}`: the server's copy of a
//!   buffer, to check synchronisation;
//! - settings (`initializationOptions`, `workspace/didChangeConfiguration`,
//!   or pulled with `workspace/configuration`), section `rill`:
//!   `inlayHints.enabled`, `allowedIncludePaths`, `runOutputDir`;
//! - `workspace/didChangeWatchedFiles` registered for decks and array files
//!   (dynamic registration), invalidating the `DiskSource` cache and
//!   updating the includer index;
//! - a fragment (a file another deck includes) is analysed through that
//!   deck (`includers`): its own diagnostics, and hover, completion,
//!   definition, references and rename with the whole case behind them; a
//!   fragment that nothing includes gets one error saying so;
//! - rename (with prepare) of well and boundary names across the deck and
//!   its includes;
//! - exit code 0 after `shutdown` then `exit`, 1 for `exit` alone.

#![warn(clippy::too_many_lines)]
#![warn(missing_docs)]

mod answers;
mod convert;
pub mod document;
mod framing;
mod includers;
mod last_run;
mod pool;
pub mod position;
mod runner;
mod schedule;
mod sequencer;
mod server;
pub mod settings;
mod state;

use tokio::io::{AsyncRead, AsyncWrite};
use tokio::sync::oneshot;
use tower_lsp::{LspService, Server};

/// Buffer of the in-process pipes around `tower-lsp`.
const PIPE: usize = 1 << 20;

/// Serve the protocol on `input`/`output` until `exit` (or the end of the
/// input). Returns the process exit code the protocol asks for: 0 when a
/// `shutdown` request came before, 1 otherwise.
pub async fn serve<I, O>(input: I, output: O) -> u8
where
    I: AsyncRead + Unpin,
    O: AsyncWrite,
{
    let (service, socket) = LspService::build(server::Backend::new)
        .custom_method(
            "window/workDoneProgress/cancel",
            server::Backend::work_done_progress_cancel,
        )
        .custom_method("rill/documentText", server::Backend::document_text)
        .finish();
    let shared = service.inner().shared.clone();
    let (exit_tx, exit_rx) = oneshot::channel();
    let service = sequencer::Sequencer::new(service, shared.clone(), exit_tx);
    // `tower-lsp` talks to the client through `framing`, which answers
    // malformed messages itself and keeps the session going.
    let (to_server, server_in) = tokio::io::duplex(PIPE);
    let (server_out, from_server) = tokio::io::duplex(PIPE);
    let (replies_tx, replies_rx) = tokio::sync::mpsc::channel(64);
    let server = Server::new(server_in, server_out, socket).serve(service);
    let read = framing::read_in(input, to_server, replies_tx);
    let write = framing::write_out(from_server, replies_rx, output);
    tokio::pin!(write);
    let written = tokio::select! {
        _ = async { tokio::join!(server, read) } => false,
        _ = exit_rx => false,
        _ = &mut write => true,
    };
    if !written {
        // The server's half of the pipe is gone now: send what it wrote.
        let _ = tokio::time::timeout(std::time::Duration::from_secs(2), write).await;
    }
    shared.runs.cancel_all();
    if shared.is_shut_down() {
        0
    } else {
        1
    }
}

/// Standard output written by one thread of its own. Tokio's `stdout`
/// hands every write to its blocking pool, and a burst of publications
/// (hundreds of documents opened at once) raced new pool threads into
/// being faster than idle ones were reused; one writer thread keeps the
/// thread count of the server bounded whatever the traffic. Writes are
/// queued (the queue holds what the client has not read yet, as the pipe
/// and tokio's buffer did) and written in order.
struct StdoutThread {
    tx: std::sync::mpsc::Sender<Vec<u8>>,
}

impl StdoutThread {
    fn start() -> (StdoutThread, Option<std::thread::JoinHandle<()>>) {
        let (tx, rx) = std::sync::mpsc::channel::<Vec<u8>>();
        let handle = std::thread::Builder::new()
            .name("rill-stdout".into())
            .spawn(move || {
                use std::io::Write;
                let mut out = std::io::stdout().lock();
                for chunk in rx {
                    if out.write_all(&chunk).and_then(|()| out.flush()).is_err() {
                        break;
                    }
                }
            })
            .ok();
        (StdoutThread { tx }, handle)
    }
}

impl AsyncWrite for StdoutThread {
    fn poll_write(
        self: std::pin::Pin<&mut Self>,
        _cx: &mut std::task::Context<'_>,
        buf: &[u8],
    ) -> std::task::Poll<std::io::Result<usize>> {
        std::task::Poll::Ready(match self.tx.send(buf.to_vec()) {
            Ok(()) => Ok(buf.len()),
            Err(_) => Err(std::io::ErrorKind::BrokenPipe.into()),
        })
    }

    fn poll_flush(
        self: std::pin::Pin<&mut Self>,
        _cx: &mut std::task::Context<'_>,
    ) -> std::task::Poll<std::io::Result<()>> {
        std::task::Poll::Ready(Ok(()))
    }

    fn poll_shutdown(
        self: std::pin::Pin<&mut Self>,
        _cx: &mut std::task::Context<'_>,
    ) -> std::task::Poll<std::io::Result<()>> {
        std::task::Poll::Ready(Ok(()))
    }
}

/// `rill lsp`: the server on stdin and stdout. Returns the exit code.
pub fn run_stdio() -> u8 {
    let runtime = match tokio::runtime::Builder::new_multi_thread()
        .worker_threads(2)
        .enable_all()
        .build()
    {
        Ok(rt) => rt,
        Err(e) => {
            eprintln!("rill lsp: cannot start: {e}");
            return 2;
        }
    };
    let (stdout, writer) = StdoutThread::start();
    let code = runtime.block_on(serve(tokio::io::stdin(), stdout));
    // `serve` dropped its output: the writer thread ends once the queue is
    // written; wait for it (the last replies, `shutdown`'s among them), but
    // not for ever if the client stopped reading.
    if let Some(writer) = writer {
        let deadline = std::time::Instant::now() + std::time::Duration::from_secs(2);
        while !writer.is_finished() && std::time::Instant::now() < deadline {
            std::thread::sleep(std::time::Duration::from_millis(5));
        }
    }
    // Tokio's stdin reader is a blocking thread that may sit in `read` for
    // ever; do not wait for it (nor for a cancelled run still unwinding).
    runtime.shutdown_background();
    code
}
