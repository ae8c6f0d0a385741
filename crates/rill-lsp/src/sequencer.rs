//! The order of document changes, and the end of the process.
//!
//! `tower-lsp` 0.20 runs handlers concurrently (up to four futures at a
//! time, polled in no promised order), so two `didChange` notifications
//! handled as async methods could be applied out of order. This service
//! wraps the `LspService` and applies `didOpen`, `didChange` and `didClose`
//! synchronously inside `call`, which the transport invokes once per
//! message in the order the messages were read: document mutations are
//! serialised by construction, with no lock held across an await.
//!
//! It also watches for `exit`: `tower-lsp` 0.20 keeps reading stdin after
//! it and never returns, so the `serve` loop is raced against this signal.

use crate::document::{uri_path, ChangeError};
use crate::schedule;
use crate::server::Backend;
use crate::state::{display, lock, Shared};
use serde::de::DeserializeOwned;
use std::future::Future;
use std::pin::Pin;
use std::sync::atomic::Ordering;
use std::sync::Arc;
use std::task::{Context, Poll};
use tokio::sync::oneshot;
use tower_lsp::jsonrpc::{Request, Response};
use tower_lsp::lsp_types::{
    DidChangeTextDocumentParams, DidCloseTextDocumentParams, DidOpenTextDocumentParams, MessageType,
};
use tower_lsp::{ExitedError, LspService};
use tower_service::Service;

type BoxFuture<T> = Pin<Box<dyn Future<Output = T> + Send + 'static>>;

pub struct Sequencer {
    inner: LspService<Backend>,
    shared: Arc<Shared>,
    exit: Option<oneshot::Sender<()>>,
}

impl Sequencer {
    pub fn new(inner: LspService<Backend>, shared: Arc<Shared>, exit: oneshot::Sender<()>) -> Self {
        Sequencer {
            inner,
            shared,
            exit: Some(exit),
        }
    }
}

impl Service<Request> for Sequencer {
    type Response = Option<Response>;
    type Error = ExitedError;
    type Future = BoxFuture<Result<Option<Response>, ExitedError>>;

    fn poll_ready(&mut self, cx: &mut Context<'_>) -> Poll<Result<(), Self::Error>> {
        self.inner.poll_ready(cx)
    }

    fn call(&mut self, req: Request) -> Self::Future {
        let req = without_null_params(req);
        match req.method() {
            "textDocument/didOpen" => {
                if let Some(p) = params::<DidOpenTextDocumentParams>(&req) {
                    did_open(&self.shared, p);
                }
                Box::pin(async { Ok(None) })
            }
            "textDocument/didChange" => {
                if let Some(p) = params::<DidChangeTextDocumentParams>(&req) {
                    did_change(&self.shared, p);
                }
                Box::pin(async { Ok(None) })
            }
            "textDocument/didClose" => {
                let shared = self.shared.clone();
                let targets = params::<DidCloseTextDocumentParams>(&req)
                    .map(|p| did_close(&shared, &p))
                    .unwrap_or_default();
                Box::pin(async move {
                    schedule::republish(&shared, targets).await;
                    Ok(None)
                })
            }
            "shutdown" => {
                // Noted in message order: an `exit` right behind it (a
                // client that does not wait for the answer) still ends with 0.
                self.shared.shutdown.store(true, Ordering::SeqCst);
                self.shared.runs.cancel_all();
                Box::pin(self.inner.call(req))
            }
            "exit" => {
                let fut = self.inner.call(req);
                if let Some(tx) = self.exit.take() {
                    let _ = tx.send(());
                }
                Box::pin(fut)
            }
            m if m.starts_with("$/") && req.id().is_some() => {
                // `tower-lsp` drops "method not found" for every `$/`
                // method, requests included; a request must be answered.
                let id = req.id().cloned().unwrap_or_default();
                let fut = self.inner.call(req);
                Box::pin(async move {
                    Ok(Some(fut.await?.unwrap_or_else(|| {
                        Response::from_error(id, tower_lsp::jsonrpc::Error::method_not_found())
                    })))
                })
            }
            _ => Box::pin(self.inner.call(req)),
        }
    }
}

/// `"params": null` as some clients send it with `shutdown` and `exit`:
/// `tower-lsp` 0.20 rejects it for methods without parameters
/// (`Unexpected params: null`), so it is taken as no parameters.
fn without_null_params(req: Request) -> Request {
    if req.params() != Some(&serde_json::Value::Null) {
        return req;
    }
    let (method, id, _) = req.into_parts();
    let builder = Request::build(method);
    match id {
        Some(id) => builder.id(id).finish(),
        None => builder.finish(),
    }
}

fn params<T: DeserializeOwned>(req: &Request) -> Option<T> {
    serde_json::from_value(req.params()?.clone()).ok()
}

fn did_open(shared: &Arc<Shared>, p: DidOpenTextDocumentParams) {
    if !shared.initialized.load(Ordering::SeqCst) {
        return;
    }
    let doc = p.text_document;
    lock(&shared.docs).open(doc.uri.clone(), doc.version, &doc.text);
    if let Some(path) = uri_path(&doc.uri) {
        if shared.add_fallback_root(&path) {
            shared.rebuild_source();
            crate::includers::rescan(shared);
        } else {
            shared.source().set_overlay(&path, &doc.text);
        }
    }
    schedule::document_changed(shared, &doc.uri);
}

fn did_change(shared: &Arc<Shared>, p: DidChangeTextDocumentParams) {
    if !shared.initialized.load(Ordering::SeqCst) {
        return;
    }
    let uri = p.text_document.uri;
    let enc = shared.encoding();
    let outcome = {
        let mut docs = lock(&shared.docs);
        docs.change(&uri, p.text_document.version, &p.content_changes, enc)
            .map(|doc| (doc.path.clone(), doc.text()))
    };
    match outcome {
        Ok((path, text)) => {
            if let Some(path) = path {
                shared.source().set_overlay(&path, &text);
            }
            schedule::document_changed(shared, &uri);
        }
        Err(e @ ChangeError::Stale { .. }) => {
            shared.log(MessageType::WARNING, format!("{}: {e}", display(&uri)));
        }
        Err(e) => shared.log(MessageType::WARNING, format!("{}: {e}", display(&uri))),
    }
}

fn did_close(
    shared: &Arc<Shared>,
    p: &DidCloseTextDocumentParams,
) -> Vec<tower_lsp::lsp_types::Url> {
    let uri = &p.text_document.uri;
    let doc = lock(&shared.docs).close(uri);
    let mut index_changed = false;
    if let Some(path) = doc.and_then(|d| d.path) {
        shared.source().clear_overlay(&path);
        // The index knew the buffer's includes; the disk's count now.
        index_changed = crate::includers::refresh(shared, &path, false);
    }
    let out = schedule::document_closed(shared, uri);
    if index_changed {
        schedule::all_changed(shared);
    }
    out
}
