//! The `LanguageServer` implementation: capabilities, settings, and the
//! requests, each answered from the analysis of the document's current
//! version (`schedule::analyzed`) and mapped by `answers`.
//!
//! Document notifications (`didOpen`, `didChange`, `didClose`) never reach
//! this type: `sequencer` applies them in order before dispatch.

use crate::answers;
use crate::convert;
use crate::document::uri_path;
use crate::position::{self, Encoding};
use crate::runner;
use crate::schedule;
use crate::settings::Settings;
use crate::state::{ClientCaps, Shared};
use serde_json::Value;
use std::path::PathBuf;
use std::sync::atomic::Ordering;
use std::sync::Arc;
use tower_lsp::jsonrpc::Result;
use tower_lsp::lsp_types::*;
use tower_lsp::{Client, LanguageServer};

pub struct Backend {
    pub shared: Arc<Shared>,
}

impl Backend {
    pub fn new(client: Client) -> Self {
        Backend {
            shared: Arc::new(Shared::new(client)),
        }
    }

    /// `window/workDoneProgress/cancel` (not in `tower-lsp` 0.20's trait).
    pub async fn work_done_progress_cancel(&self, params: WorkDoneProgressCancelParams) {
        runner::cancel(&self.shared, params);
    }

    /// `rill/documentText`: the server's copy of an open document and its
    /// version, to check that incremental sync kept it identical to the
    /// editor's (a diagnostic aid, and what the sync tests compare).
    pub async fn document_text(&self, params: TextDocumentIdentifier) -> Result<Option<Value>> {
        let mut docs = crate::state::lock(&self.shared.docs);
        Ok(docs
            .get_mut(&params.uri)
            .map(|d| serde_json::json!({ "version": d.version, "text": &*d.text() })))
    }

    fn caps(params: &InitializeParams) -> ClientCaps {
        let c = &params.capabilities;
        let td = c.text_document.as_ref();
        ClientCaps {
            watch_dynamic: c
                .workspace
                .as_ref()
                .and_then(|w| w.did_change_watched_files.as_ref())
                .and_then(|d| d.dynamic_registration)
                .unwrap_or(false),
            work_done_progress: c
                .window
                .as_ref()
                .and_then(|w| w.work_done_progress)
                .unwrap_or(false),
            show_document: c
                .window
                .as_ref()
                .and_then(|w| w.show_document.as_ref())
                .is_some_and(|s| s.support),
            configuration: c
                .workspace
                .as_ref()
                .and_then(|w| w.configuration)
                .unwrap_or(false),
            related_information: td
                .and_then(|t| t.publish_diagnostics.as_ref())
                .and_then(|p| p.related_information)
                .unwrap_or(false),
            snippets: td
                .and_then(|t| t.completion.as_ref())
                .and_then(|c| c.completion_item.as_ref())
                .and_then(|i| i.snippet_support)
                .unwrap_or(false),
            inlay_hint_refresh: c
                .workspace
                .as_ref()
                .and_then(|w| w.inlay_hint.as_ref())
                .and_then(|i| i.refresh_support)
                .unwrap_or(false),
            hierarchical_symbols: td
                .and_then(|t| t.document_symbol.as_ref())
                .and_then(|d| d.hierarchical_document_symbol_support)
                .unwrap_or(false),
        }
    }

    /// New settings: rebuild what depends on them and tell the client.
    async fn apply_settings(&self, settings: Settings) {
        let old = {
            let mut c = self
                .shared
                .config
                .write()
                .unwrap_or_else(|e| e.into_inner());
            std::mem::replace(&mut c.settings, settings.clone())
        };
        if old.allowed_include_paths != settings.allowed_include_paths {
            self.shared.rebuild_source();
            crate::includers::rescan(&self.shared);
            schedule::all_changed(&self.shared);
        }
        if old.inlay_hints != settings.inlay_hints && self.shared.config().caps.inlay_hint_refresh {
            let _ = self.shared.client.inlay_hint_refresh().await;
        }
    }

    /// Ask the client for the `rill` section (pull model).
    async fn pull_settings(&self) {
        if !self.shared.config().caps.configuration {
            return;
        }
        let items = vec![ConfigurationItem {
            scope_uri: None,
            section: Some("rill".into()),
        }];
        if let Ok(values) = self.shared.client.configuration(items).await {
            if let Some(s) = values.first().and_then(|v| match v {
                Value::Object(_) => Settings::from_json(&serde_json::json!({ "rill": v })),
                _ => None,
            }) {
                self.apply_settings(s).await;
            }
        }
    }

    fn uri_roots(params: &InitializeParams) -> Vec<PathBuf> {
        if let Some(folders) = &params.workspace_folders {
            let roots: Vec<PathBuf> = folders.iter().filter_map(|f| uri_path(&f.uri)).collect();
            if !roots.is_empty() {
                return roots;
            }
        }
        #[allow(deprecated)] // `rootUri` is the fallback the protocol keeps.
        params
            .root_uri
            .as_ref()
            .and_then(uri_path)
            .into_iter()
            .collect()
    }
}

/// Trigger characters for completion: `=` (a value after a key), `/` and
/// `*` (the next term of a unit), `"` (an include path or a well name), and
/// space (a unit after a number, a value form after `=`).
const TRIGGERS: &[&str] = &["=", "/", "*", "\"", " "];

/// Files whose changes on disk matter: decks and the usual array-file
/// extensions. Changes of open buffers come through the editor instead.
const WATCHED: &[&str] = &["**/*.rill", "**/*.{txt,dat,csv,asc,grd,inc,arr,prop}"];

#[tower_lsp::async_trait]
impl LanguageServer for Backend {
    async fn initialize(&self, params: InitializeParams) -> Result<InitializeResult> {
        let encoding = Encoding::negotiate(
            params
                .capabilities
                .general
                .as_ref()
                .and_then(|g| g.position_encodings.as_deref()),
        );
        {
            let mut c = self
                .shared
                .config
                .write()
                .unwrap_or_else(|e| e.into_inner());
            c.encoding = encoding;
            c.roots = Self::uri_roots(&params);
            c.caps = Self::caps(&params);
            if let Some(s) = params
                .initialization_options
                .as_ref()
                .and_then(Settings::from_json)
            {
                c.settings = s;
            }
        }
        self.shared.rebuild_source();
        crate::includers::rescan(&self.shared);
        self.shared.initialized.store(true, Ordering::SeqCst);
        let legend = answers::legend();
        Ok(InitializeResult {
            server_info: Some(ServerInfo {
                name: "rill".into(),
                version: Some(env!("CARGO_PKG_VERSION").into()),
            }),
            capabilities: ServerCapabilities {
                position_encoding: Some(encoding.kind()),
                text_document_sync: Some(TextDocumentSyncCapability::Options(
                    TextDocumentSyncOptions {
                        open_close: Some(true),
                        change: Some(TextDocumentSyncKind::INCREMENTAL),
                        ..Default::default()
                    },
                )),
                hover_provider: Some(HoverProviderCapability::Simple(true)),
                completion_provider: Some(CompletionOptions {
                    trigger_characters: Some(TRIGGERS.iter().map(|s| s.to_string()).collect()),
                    ..Default::default()
                }),
                code_action_provider: Some(CodeActionProviderCapability::Options(
                    CodeActionOptions {
                        code_action_kinds: Some(vec![
                            CodeActionKind::QUICKFIX,
                            CodeActionKind::REFACTOR_REWRITE,
                        ]),
                        ..Default::default()
                    },
                )),
                document_formatting_provider: Some(OneOf::Left(true)),
                document_range_formatting_provider: Some(OneOf::Left(true)),
                document_symbol_provider: Some(OneOf::Left(true)),
                definition_provider: Some(OneOf::Left(true)),
                references_provider: Some(OneOf::Left(true)),
                rename_provider: Some(OneOf::Right(RenameOptions {
                    prepare_provider: Some(true),
                    work_done_progress_options: Default::default(),
                })),
                semantic_tokens_provider: Some(
                    SemanticTokensServerCapabilities::SemanticTokensOptions(
                        SemanticTokensOptions {
                            legend,
                            full: Some(SemanticTokensFullOptions::Bool(true)),
                            range: Some(true),
                            ..Default::default()
                        },
                    ),
                ),
                inlay_hint_provider: Some(OneOf::Left(true)),
                folding_range_provider: Some(FoldingRangeProviderCapability::Simple(true)),
                code_lens_provider: Some(CodeLensOptions {
                    resolve_provider: Some(false),
                }),
                execute_command_provider: Some(ExecuteCommandOptions {
                    commands: vec![runner::COMMAND.into()],
                    ..Default::default()
                }),
                workspace: Some(WorkspaceServerCapabilities {
                    workspace_folders: Some(WorkspaceFoldersServerCapabilities {
                        supported: Some(true),
                        change_notifications: Some(OneOf::Left(true)),
                    }),
                    file_operations: None,
                }),
                ..Default::default()
            },
        })
    }

    async fn initialized(&self, _: InitializedParams) {
        if self.shared.config().caps.watch_dynamic {
            let options = DidChangeWatchedFilesRegistrationOptions {
                watchers: WATCHED
                    .iter()
                    .map(|g| FileSystemWatcher {
                        glob_pattern: GlobPattern::String(g.to_string()),
                        kind: None,
                    })
                    .collect(),
            };
            let registration = Registration {
                id: "rill-watched-files".into(),
                method: "workspace/didChangeWatchedFiles".into(),
                register_options: serde_json::to_value(options).ok(),
            };
            if let Err(e) = self
                .shared
                .client
                .register_capability(vec![registration])
                .await
            {
                self.shared
                    .log(MessageType::WARNING, format!("could not watch files: {e}"));
            }
        }
        self.pull_settings().await;
    }

    async fn shutdown(&self) -> Result<()> {
        self.shared.shutdown.store(true, Ordering::SeqCst);
        self.shared.runs.cancel_all();
        Ok(())
    }

    async fn did_change_configuration(&self, params: DidChangeConfigurationParams) {
        match Settings::from_json(&params.settings) {
            Some(s) => self.apply_settings(s).await,
            None => self.pull_settings().await,
        }
    }

    async fn did_change_workspace_folders(&self, params: DidChangeWorkspaceFoldersParams) {
        {
            let mut c = self
                .shared
                .config
                .write()
                .unwrap_or_else(|e| e.into_inner());
            for f in &params.event.removed {
                if let Some(p) = uri_path(&f.uri) {
                    c.roots.retain(|r| r != &p);
                }
            }
            for f in &params.event.added {
                if let Some(p) = uri_path(&f.uri) {
                    if !c.roots.contains(&p) {
                        c.roots.push(p);
                    }
                }
            }
        }
        self.shared.rebuild_source();
        crate::includers::rescan(&self.shared);
        schedule::all_changed(&self.shared);
    }

    async fn did_change_watched_files(&self, params: DidChangeWatchedFilesParams) {
        let source = self.shared.source();
        let mut any = false;
        for change in &params.changes {
            if let Some(path) = uri_path(&change.uri) {
                // An open buffer is an overlay and wins over the disk anyway.
                source.invalidate(&path);
                self.shared.cache.forget_file(&path);
                crate::includers::refresh(
                    &self.shared,
                    &path,
                    change.typ == FileChangeType::DELETED,
                );
                any = true;
            }
        }
        if any {
            schedule::all_changed(&self.shared);
        }
    }

    async fn hover(&self, params: HoverParams) -> Result<Option<Hover>> {
        let p = params.text_document_position_params;
        let Some(a) = schedule::analyzed(&self.shared, &p.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let offset = crate::position::offset(&a.rope, p.position, enc);
        // Reading a result set and hashing the case stay off the runtime.
        let (shared, analyzed) = (self.shared.clone(), a.clone());
        let run =
            tokio::task::spawn_blocking(move || crate::last_run::for_hover(&shared, &analyzed))
                .await
                .ok()
                .flatten();
        Ok(a.snap
            .hover_with_run(offset, run.as_deref())
            .map(|h| answers::hover(&a.rope, h, enc)))
    }

    async fn completion(&self, params: CompletionParams) -> Result<Option<CompletionResponse>> {
        let p = params.text_document_position;
        let Some(a) = schedule::analyzed(&self.shared, &p.text_document.uri).await else {
            return Ok(None);
        };
        let config = self.shared.config();
        let offset = crate::position::offset(&a.rope, p.position, config.encoding);
        // File names come from the source, which keeps to the workspace.
        let source = self
            .shared
            .source_for(uri_path(&p.text_document.uri).as_deref());
        let items: Vec<CompletionItem> = a
            .snap
            .completion_with_files(offset, &*source)
            .into_iter()
            .map(|i| answers::completion(&a.rope, i, config.encoding, config.caps.snippets))
            .collect();
        Ok(Some(CompletionResponse::Array(items)))
    }

    async fn code_action(&self, params: CodeActionParams) -> Result<Option<CodeActionResponse>> {
        let uri = &params.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let span = answers::span(&a.rope, params.range, enc);
        let snap_diags = a.snap.diagnostics();
        let mut seen_diag: std::collections::HashSet<usize> = Default::default();
        let mut out: Vec<CodeActionOrCommand> = Vec::new();
        let mut titles: std::collections::HashSet<String> = Default::default();
        for action in a.snap.code_actions(span) {
            // Link the action to the client's copy of its diagnostic.
            let diag = action.diagnostic.and_then(|i| {
                let d = snap_diags.get(i)?;
                let range = crate::position::range(&a.rope, d.location.start, d.location.end, enc);
                params
                    .context
                    .diagnostics
                    .iter()
                    .find(|c| {
                        c.range == range
                            && c.code == Some(NumberOrString::String(d.code.to_string()))
                    })
                    .cloned()
            });
            let preferred = action.kind == rill_ide::CodeActionKind::QuickFix
                && action.diagnostic.is_some_and(|i| seen_diag.insert(i));
            titles.insert(action.title.clone());
            out.push(CodeActionOrCommand::CodeAction(answers::code_action(
                uri, &a.rope, action, diag, preferred, enc,
            )));
        }
        // Fixes carried in the diagnostics' data (e.g. for another file),
        // unless the analysis already offered them.
        for d in &params.context.diagnostics {
            for action in convert::fixes_from_data(d) {
                if titles.insert(action.title.clone()) {
                    out.push(CodeActionOrCommand::CodeAction(action));
                }
            }
        }
        if let Some(only) = &params.context.only {
            out.retain(|a| match a {
                CodeActionOrCommand::CodeAction(a) => a
                    .kind
                    .as_ref()
                    .is_some_and(|k| only.iter().any(|o| k.as_str().starts_with(o.as_str()))),
                CodeActionOrCommand::Command(_) => true,
            });
        }
        Ok(Some(out))
    }

    async fn formatting(&self, params: DocumentFormattingParams) -> Result<Option<Vec<TextEdit>>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        Ok(a.snap
            .format()
            .map(|edits| answers::text_edits(&a.rope, edits, enc)))
    }

    /// The formatting edits that lie within the lines of the range (the
    /// formatter works on whole documents; an edit reaching outside the
    /// selection is not applied, so nothing outside it ever changes).
    async fn range_formatting(
        &self,
        params: DocumentRangeFormattingParams,
    ) -> Result<Option<Vec<TextEdit>>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let mut r = params.range;
        r.start.character = 0;
        r.end = Position::new(r.end.line.saturating_add(1), 0);
        let span = answers::span(&a.rope, r, enc);
        Ok(a.snap.format().map(|edits| {
            let inside = edits
                .into_iter()
                .filter(|e| e.span.start >= span.start && e.span.end <= span.end)
                .collect();
            answers::text_edits(&a.rope, inside, enc)
        }))
    }

    async fn document_symbol(
        &self,
        params: DocumentSymbolParams,
    ) -> Result<Option<DocumentSymbolResponse>> {
        let uri = &params.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let config = self.shared.config();
        let symbols: Vec<DocumentSymbol> = a
            .snap
            .symbols()
            .into_iter()
            .map(|s| answers::symbol(&a.rope, s, config.encoding))
            .collect();
        if config.caps.hierarchical_symbols {
            Ok(Some(DocumentSymbolResponse::Nested(symbols)))
        } else {
            let mut flat = Vec::new();
            answers::flatten(uri, symbols, None, &mut flat);
            Ok(Some(DocumentSymbolResponse::Flat(flat)))
        }
    }

    async fn goto_definition(
        &self,
        params: GotoDefinitionParams,
    ) -> Result<Option<GotoDefinitionResponse>> {
        let p = params.text_document_position_params;
        let uri = &p.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let offset = crate::position::offset(&a.rope, p.position, enc);
        let Some(target) = a.snap.definition(offset) else {
            return Ok(None);
        };
        let Some((target_uri, range)) = place(uri, &a, &target.file, target.span, enc) else {
            return Ok(None);
        };
        Ok(Some(GotoDefinitionResponse::Scalar(Location {
            uri: target_uri,
            range,
        })))
    }

    async fn references(&self, params: ReferenceParams) -> Result<Option<Vec<Location>>> {
        let p = params.text_document_position;
        let uri = &p.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let offset = crate::position::offset(&a.rope, p.position, enc);
        Ok(Some(
            a.snap
                .references_everywhere(offset)
                .into_iter()
                .filter_map(|t| {
                    let (uri, range) = place(uri, &a, &t.file, t.span, enc)?;
                    Some(Location { uri, range })
                })
                .collect(),
        ))
    }

    async fn prepare_rename(
        &self,
        params: TextDocumentPositionParams,
    ) -> Result<Option<PrepareRenameResponse>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let offset = crate::position::offset(&a.rope, params.position, enc);
        Ok(a.snap.prepare_rename(offset).map(|(span, name)| {
            PrepareRenameResponse::RangeWithPlaceholder {
                range: answers::range(&a.rope, span, enc),
                placeholder: name,
            }
        }))
    }

    /// Renames a well or boundary in every deck of the analysis: the
    /// document's deck, its includes and, from a fragment, the deck that
    /// includes it.
    async fn rename(&self, params: RenameParams) -> Result<Option<WorkspaceEdit>> {
        let p = params.text_document_position;
        let uri = &p.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let offset = crate::position::offset(&a.rope, p.position, enc);
        let edits = a
            .snap
            .rename(offset, &params.new_name)
            .map_err(tower_lsp::jsonrpc::Error::invalid_params)?;
        let mut changes: std::collections::HashMap<Url, Vec<TextEdit>> = Default::default();
        for e in edits {
            let Some((target, range)) = place(uri, &a, &e.file, e.edit.span, enc) else {
                continue;
            };
            changes.entry(target).or_default().push(TextEdit {
                range,
                new_text: e.edit.new_text,
            });
        }
        Ok(Some(WorkspaceEdit {
            changes: Some(changes),
            ..Default::default()
        }))
    }

    async fn semantic_tokens_full(
        &self,
        params: SemanticTokensParams,
    ) -> Result<Option<SemanticTokensResult>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let data = answers::semantic_tokens(&a.rope, a.snap.semantic_tokens(), enc);
        Ok(Some(SemanticTokensResult::Tokens(SemanticTokens {
            result_id: None,
            data,
        })))
    }

    async fn semantic_tokens_range(
        &self,
        params: SemanticTokensRangeParams,
    ) -> Result<Option<SemanticTokensRangeResult>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        let span = answers::span(&a.rope, params.range, enc);
        let data = answers::semantic_tokens(&a.rope, a.snap.semantic_tokens_in(span), enc);
        Ok(Some(SemanticTokensRangeResult::Tokens(SemanticTokens {
            result_id: None,
            data,
        })))
    }

    async fn inlay_hint(&self, params: InlayHintParams) -> Result<Option<Vec<InlayHint>>> {
        let config = self.shared.config();
        if !config.settings.inlay_hints.enabled {
            return Ok(Some(Vec::new()));
        }
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let span = answers::span(&a.rope, params.range, config.encoding);
        let ide_config = rill_ide::Config {
            inlay_hints: true,
            hint_system: None,
        };
        Ok(Some(
            a.snap
                .inlay_hints(span, &ide_config)
                .into_iter()
                .map(|h| answers::inlay_hint(&a.rope, h, config.encoding))
                .collect(),
        ))
    }

    async fn folding_range(&self, params: FoldingRangeParams) -> Result<Option<Vec<FoldingRange>>> {
        let Some(a) = schedule::analyzed(&self.shared, &params.text_document.uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        Ok(Some(
            a.snap
                .folding_ranges()
                .into_iter()
                .filter_map(|s| answers::folding_range(&a.rope, s, enc))
                .collect(),
        ))
    }

    async fn code_lens(&self, params: CodeLensParams) -> Result<Option<Vec<CodeLens>>> {
        let uri = &params.text_document.uri;
        let Some(a) = schedule::analyzed(&self.shared, uri).await else {
            return Ok(None);
        };
        let enc = self.shared.encoding();
        Ok(Some(
            a.snap
                .code_lenses()
                .into_iter()
                .map(|l| CodeLens {
                    range: answers::range(&a.rope, l.span, enc),
                    command: Some(Command {
                        title: l.title,
                        // An empty command shows the lens as plain text.
                        command: l.command.unwrap_or_default(),
                        arguments: Some(vec![Value::String(uri.to_string())]),
                    }),
                    data: None,
                })
                .collect(),
        ))
    }

    async fn execute_command(&self, params: ExecuteCommandParams) -> Result<Option<Value>> {
        if params.command == runner::COMMAND {
            runner::execute(&self.shared, &params.arguments).await
        } else {
            Err(tower_lsp::jsonrpc::Error::invalid_params(format!(
                "unknown command `{}`",
                params.command
            )))
        }
    }
}

/// The URI and range of `span` in `file`, a file of the analysis `a` of the
/// document `uri`: the document's own rope, or the text the analysis read.
fn place(
    uri: &Url,
    a: &crate::state::Analyzed,
    file: &std::path::Path,
    span: rill_ide::Span,
    enc: Encoding,
) -> Option<(Url, Range)> {
    let focus = a.snap.analysis().files.get(a.snap.focus());
    if file == a.snap.path() || focus.is_some_and(|f| f.path == file) {
        return Some((uri.clone(), answers::range(&a.rope, span, enc)));
    }
    let target = convert::path_uri(file)?;
    let range = match a.snap.analysis().files.iter().find(|f| f.path == file) {
        Some(f) if span.end > 0 => {
            let lines = rill_syntax::LineIndex::new(&f.text);
            position::text_range(&f.text, &lines, span.start, span.end, enc)
        }
        _ => Range::default(),
    };
    Some((target, range))
}
