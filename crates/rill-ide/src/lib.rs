//! `rill-ide` owns the editor questions on a rill case file, answered on
//! the model: hover text (cell reports, well indices, unit conversions,
//! schema docs), completion items, document symbols, semantic tokens,
//! inlay hints, code actions (diagnostic fixes and unit conversions), go to
//! definition and references, formatting edits, folding ranges and code
//! lenses.
//!
//! Positions are byte offsets into the text of the open document; every
//! answer carries byte spans. The open document is file 0 of the analysis,
//! or, for a fragment analysed through the deck that includes it
//! ([`Snapshot::in_deck`]), the file of that deck's analysis that it is
//! ([`Snapshot::focus`]). The language server
//! (`rill-lsp`) converts positions and maps these types to the protocol.
//!
//! It must never depend on protocol types, never do I/O (included decks and
//! array files come through `rill_model::Source`, once, in
//! [`Snapshot::new`]), never panic on any input (an offset inside a
//! multi-byte character or past the end is moved to a character boundary),
//! and keep no global state. Heavy work happens once per document version
//! in [`Snapshot::new`]; queries look things up by binary search on the
//! syntax tree, so that hover stays fast on million-cell decks.
//!
//! Conventions for the server:
//! - An offset inside a multi-byte character is moved back to its start; an
//!   offset past the end means the end. Every span returned lies on
//!   character boundaries of [`Snapshot::text`].
//! - `hover(offset)` describes the node under the character at `offset`, or
//!   the one that ends right before it (the cursor after `250 md|`).
//! - `completion(offset)` takes the cursor between characters; each item
//!   replaces its `replace` span (the word typed so far) with `insert_text`,
//!   in snippet syntax when `snippet` is set; `sort_text` orders them.
//! - Diagnostics keep their file index (`location.file` into
//!   `analysis().files`; the open document's is [`Snapshot::focus`]); code
//!   actions only carry fixes whose edits are all in the open document.
//! - Cell numbers come from `rill_model::inspect::cell_report` and
//!   `rill_model::derived`, shown with `rill_units::format_number` in the
//!   deck's report units and in SI, as `rill inspect` prints them.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

mod actions;
mod aquifer;
mod complete;
mod hints;
mod hover;
mod locate;
mod nav;
mod outline;
mod present;
mod relperm;
mod run_values;
mod tokens;

use rill_model::{Analysis, Diagnostic, Source};
use rill_syntax::{AtomKind, Item, SourceFile};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::Arc;

pub use rill_syntax::Span;
pub use run_values::{RunFlow, RunValues, RunWell};

/// Editor settings that change answers.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Config {
    /// Show inlay hints at all.
    pub inlay_hints: bool,
    /// The unit system of conversion hints; `None`: the other system than
    /// the one written (field for metric and SI units, metric for field
    /// units), or SI when that is written the same (`md`).
    pub hint_system: Option<rill_units::System>,
}

/// Markdown shown on hover, and the span it describes.
#[derive(Debug, Clone, PartialEq)]
pub struct Hover {
    /// The text the hover describes, byte offsets in the open document.
    pub range: Span,
    /// The hover's contents, Markdown.
    pub markdown: String,
}

/// What a completion item inserts; the server maps it to the editor's icons.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CompletionKind {
    /// A block name (`grid`, `well`, `patch`).
    Block,
    /// A key of the block at the cursor.
    Key,
    /// A unit expression.
    Unit,
    /// One of the names a key takes (`producer`, `east`, `rate`).
    EnumValue,
    /// A well name (in an event).
    Well,
    /// A value form or connective (`layers`, `cells`, `file`, `at`, `include`).
    Keyword,
    /// Another property of the same block, for arithmetic (`0.1 * kx`).
    Reference,
    /// A file name inside `include "..."` or `file "..."`.
    File,
    /// A folder name there (its item ends with `/`).
    Folder,
}

/// One completion proposal at the cursor.
#[derive(Debug, Clone, PartialEq)]
pub struct CompletionItem {
    /// What the list shows and the editor filters on (a key, a unit name).
    pub label: String,
    /// What the item is.
    pub kind: CompletionKind,
    /// One line beside the label (a unit's description, "value form").
    pub detail: Option<String>,
    /// The longer description, Markdown (a key's documentation).
    pub documentation: Option<String>,
    /// Text that replaces `replace`. When `snippet` is true it uses the
    /// snippet syntax `${1:placeholder}`, `$0`.
    pub insert_text: String,
    /// `insert_text` is a snippet with tab stops, not plain text.
    pub snippet: bool,
    /// The text the item replaces (the word typed so far; empty at the cursor).
    pub replace: Span,
    /// Orders the items (common units and required keys first).
    pub sort_text: String,
}

/// What a block of the outline is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SymbolKind {
    /// `case` metadata.
    Case,
    /// The `grid` block: cell counts and sizes.
    Grid,
    /// The `rock` block: porosity, permeability, compressibility.
    Rock,
    /// A `patch` inside `rock`.
    Patch,
    /// The `fluid` block.
    Fluid,
    /// The `oil` block of an oil-water deck.
    Oil,
    /// The `water` block of an oil-water deck.
    Water,
    /// A `relperm` block: saturation functions.
    Relperm,
    /// The `initial` block: the initial pressure.
    Initial,
    /// A `well` block.
    Well,
    /// A `boundary` block (a constant-pressure side).
    Boundary,
    /// A `fault` block (a transmissibility multiplier on interior faces).
    Fault,
    /// An `aquifer` block (a finite aquifer on a side).
    Aquifer,
    /// The `timeline` block: the schedule of events.
    Timeline,
    /// An `at` event inside `timeline`.
    Event,
    /// A well change inside an event.
    WellChange,
    /// The `report` block: how results are shown (their unit system).
    Report,
    /// An `include` directive.
    Include,
    /// A block the schema does not know.
    Unknown,
}

/// A block in the outline of the open document, with the blocks inside it.
#[derive(Debug, Clone, PartialEq)]
pub struct Symbol {
    /// The name shown: a well's or boundary's label, `patch` or `at` with
    /// its header, or the block name.
    pub name: String,
    /// A short summary beside the name (a well's role, a boundary's side,
    /// the grid's cells).
    pub detail: Option<String>,
    /// What the block is.
    pub kind: SymbolKind,
    /// The whole block.
    pub range: Span,
    /// The part to select: the label, or the block name.
    pub selection: Span,
    /// The blocks and includes inside this one, in text order.
    pub children: Vec<Symbol>,
}

/// A place in some file of the analysis.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Target {
    /// The open document, a deck it includes, or an array file (resolved
    /// against the open document's folder).
    pub file: PathBuf,
    /// Byte offsets in `file`; empty at 0 when the target is the whole file
    /// (an included deck, an array file).
    pub span: Span,
}

/// The class of a semantic token, for the editor's colours.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TokenKind {
    /// A block name (`grid`, `well`).
    Block,
    /// A key before `=`, or another property named in arithmetic (`kx`).
    Key,
    /// A unit expression after a value.
    Unit,
    /// A number, or each number of a list.
    Number,
    /// A label string (`well "LE-1"`).
    Name,
    /// Any other string (a file name), without its unit.
    String,
    /// A comment, to the end of its line.
    Comment,
    /// One of the names a key takes (`producer`, `east`).
    EnumValue,
    /// `=`, arithmetic, the `..` of ranges and the `x` of grid sizes.
    Operator,
    /// `at`, `layers`, `cells`, `file`, `columns`, `include`.
    Keyword,
}

/// A classified piece of the open document.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SemanticToken {
    /// Byte offsets in the open document.
    pub span: Span,
    /// What the token is.
    pub kind: TokenKind,
}

/// What an inlay hint tells.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum InlayHintKind {
    /// A quantity in another unit system (`≈ 220.6 bar`).
    Conversion,
    /// The number of cells of a grid size (`= 2400 cells`).
    Count,
}

/// A short note the editor shows inside the text, after a value.
#[derive(Debug, Clone, PartialEq)]
pub struct InlayHint {
    /// Byte offset the hint stands after.
    pub offset: usize,
    /// The hint text, without padding: the server adds a space before it.
    pub label: String,
    /// What the hint tells.
    pub kind: InlayHintKind,
}

/// Whether a code action repairs a diagnostic or only rewrites correct text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CodeActionKind {
    /// Fixes a diagnostic (its own suggested fix, or a list of the wrong
    /// length padded or cut).
    QuickFix,
    /// Changes correct text without changing its meaning (a value in
    /// another unit system).
    Refactor,
}

/// A replacement of part of the open document.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TextEdit {
    /// The bytes replaced (empty: an insertion at `span.start`).
    pub span: Span,
    /// The text put in their place.
    pub new_text: String,
}

/// An edit the editor offers for a range of the open document.
#[derive(Debug, Clone, PartialEq)]
pub struct CodeAction {
    /// What the action does, as the editor's menu shows it.
    pub title: String,
    /// Whether it fixes a diagnostic or rewrites correct text.
    pub kind: CodeActionKind,
    /// Edits of the open document, not overlapping.
    pub edits: Vec<TextEdit>,
    /// Index into [`Snapshot::diagnostics`] of the diagnostic this fixes.
    pub diagnostic: Option<usize>,
}

/// A line of text the editor shows above a block, optionally runnable.
#[derive(Debug, Clone, PartialEq)]
pub struct CodeLens {
    /// The text the lens stands above (the case's first block name).
    pub span: Span,
    /// What the lens shows ("▶ Run case", or the errors to fix first).
    pub title: String,
    /// The command to run (`rill.run`); `None` for a lens that only informs
    /// (the case has errors and cannot run).
    pub command: Option<String>,
}

/// Values of an array file used by a `file "..."` property: what hover shows.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct ArrayStats {
    pub count: usize,
    pub min: f64,
    pub mean: f64,
    pub max: f64,
}

/// One version of an open document with its analysis. Built once per
/// version; every query borrows it and never re-runs the analysis.
#[derive(Debug, Clone)]
pub struct Snapshot {
    path: PathBuf,
    text: Arc<str>,
    analysis: Analysis,
    tree: Arc<SourceFile>,
    /// Array files named by `file "..."` in any deck of the analysis, by
    /// (file index, span of the string atom), in the values' own unit.
    arrays: HashMap<(usize, Span), Result<ArrayStats, String>>,
    /// The index of the open document in `analysis.files`.
    focus: usize,
    /// The deck analysed when the open document is a fragment read through it.
    context: Option<PathBuf>,
}

/// An edit of some file of the analysis (a rename across a deck and its includes).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FileEdit {
    /// The file: the open document's path, or a deck of the analysis.
    pub file: PathBuf,
    /// The replacement, in byte offsets of that file's analysed text.
    pub edit: TextEdit,
}

impl Snapshot {
    /// Analyses `text`, the document at `path`, reading includes and array
    /// files through `source` (the only reads, all done here).
    pub fn new(path: &Path, text: &str, source: &dyn Source) -> Snapshot {
        Self::with_cache(path, text, source, &rill_model::Reuse::new())
    }

    /// [`Snapshot::new`] with the caller's cache: parsed arrays and derived
    /// results are kept there for the next snapshot (a server re-checking
    /// on every edit), and those the last one kept are used.
    pub fn with_cache(
        path: &Path,
        text: &str,
        source: &dyn Source,
        cache: &rill_model::Reuse,
    ) -> Snapshot {
        let analysis = rill_model::analyze_text_with(path, text, source, cache);
        // The analysis parses the text it was given; keep its tree (file 0).
        let tree = analysis
            .files
            .first()
            .and_then(|f| f.tree.clone())
            .unwrap_or_else(|| Arc::new(rill_syntax::parse(text)));
        let text: Arc<str> = analysis
            .files
            .first()
            .map(|f| f.text.clone())
            .unwrap_or_else(|| text.into());
        let arrays = read_arrays(&analysis, source, cache);
        Snapshot {
            path: path.to_path_buf(),
            text,
            analysis,
            tree,
            arrays,
            focus: 0,
            context: None,
        }
    }

    /// The fragment at `path` (with the text `text`, an open buffer)
    /// analysed as part of `deck` (with the text `deck_text`), which
    /// includes it directly or through other includes: every answer is
    /// about the fragment, with the whole case behind it (the well-index
    /// table on hover, the deck's wells in completion). `None` when the
    /// deck's analysis does not read the fragment as a deck, or read a
    /// different text than `text` (the buffer moved on).
    pub fn in_deck(
        deck: &Path,
        deck_text: &str,
        path: &Path,
        text: &str,
        source: &dyn Source,
        cache: &rill_model::Reuse,
    ) -> Option<Snapshot> {
        let mut snap = Self::with_cache(deck, deck_text, source, cache);
        let want = rill_model::source::normalize(path);
        let focus = snap
            .analysis
            .files
            .iter()
            .enumerate()
            .skip(1)
            .find(|(_, f)| f.path == want && f.tree.is_some())
            .map(|(i, _)| i)?;
        let file = &snap.analysis.files[focus];
        if &*file.text != text {
            return None;
        }
        snap.text = file.text.clone();
        snap.tree = file.tree.clone()?;
        snap.focus = focus;
        snap.context = Some(snap.path.clone());
        snap.path = path.to_path_buf();
        Some(snap)
    }

    /// The index of the open document in `analysis().files`: 0, or the
    /// fragment's index when analysed through its deck.
    pub fn focus(&self) -> usize {
        self.focus
    }

    /// The deck this fragment was analysed through ([`Snapshot::in_deck`]);
    /// `None` for a document analysed on its own.
    pub fn context(&self) -> Option<&Path> {
        self.context.as_deref()
    }

    /// For a document analysed on its own that no deck includes: when it
    /// is a fragment (none of the case's blocks), its missing-block errors
    /// become one that says so (`rill_model::fragment::mark_unincluded`,
    /// with `note` saying where includers were looked for). Returns
    /// whether it did.
    pub fn mark_unincluded(&mut self, note: Option<String>) -> bool {
        self.context.is_none() && rill_model::fragment::mark_unincluded(&mut self.analysis, note)
    }

    /// The open document's path, as given to [`Snapshot::new`].
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The text analysed: the open document's version of this snapshot.
    pub fn text(&self) -> &str {
        &self.text
    }

    /// The analysis of the document and of every file it reads.
    pub fn analysis(&self) -> &Analysis {
        &self.analysis
    }

    /// The syntax tree of the open document.
    pub fn tree(&self) -> &SourceFile {
        &self.tree
    }

    /// Every diagnostic of the analysis, in all files (`location.file`
    /// indexes `analysis().files`); sorted by file, then position.
    pub fn diagnostics(&self) -> &[Diagnostic] {
        &self.analysis.diagnostics
    }

    /// What is under the cursor: a cell, a well, a quantity, a unit, a key or a block.
    pub fn hover(&self, offset: usize) -> Option<Hover> {
        hover::hover(self, offset, None)
    }

    /// [`Snapshot::hover`] with what the last run gave beside the computed
    /// values (a cell's pressure and face fluxes, a well's rate, BHP and
    /// cumulative, a boundary's or an aquifer's rate). `run` must come from
    /// a result set of this very case (the front end checks the digest).
    pub fn hover_with_run(&self, offset: usize, run: Option<&RunValues>) -> Option<Hover> {
        hover::hover(self, offset, run)
    }

    /// Completion items at the cursor; works on incomplete text.
    pub fn completion(&self, offset: usize) -> Vec<CompletionItem> {
        complete::completion(self, offset, None)
    }

    /// [`Snapshot::completion`], with file and folder names from `files`
    /// inside `include "..."` (decks) and `file "..."` (array files).
    pub fn completion_with_files(&self, offset: usize, files: &dyn Source) -> Vec<CompletionItem> {
        complete::completion(self, offset, Some(files))
    }

    /// The outline of the open document.
    pub fn symbols(&self) -> Vec<Symbol> {
        outline::symbols(self)
    }

    /// Where the name under the cursor is defined: a well name in an event
    /// goes to its well block, an include path to the included file (span
    /// `0..0`), a property reference (`ky = kx`) to the key it names.
    pub fn definition(&self, offset: usize) -> Option<Target> {
        nav::definition(self, offset)
    }

    /// For a well or boundary name (its block label or, for a well, its
    /// name in an event): every place in the open document that names it.
    pub fn references(&self, offset: usize) -> Vec<Span> {
        nav::references(self, offset)
    }

    /// [`Snapshot::references`] in every deck of the analysis: the main
    /// deck, its includes, and the open document, sorted by file, then
    /// position.
    pub fn references_everywhere(&self, offset: usize) -> Vec<Target> {
        nav::references_everywhere(self, offset)
    }

    /// The well or boundary name under the cursor that can be renamed:
    /// the span of its label (with the quotes) and the name.
    pub fn prepare_rename(&self, offset: usize) -> Option<(Span, String)> {
        nav::prepare_rename(self, offset)
    }

    /// Renaming the well or boundary under the cursor to `new_name`: one
    /// edit per place that names it, in every deck of the analysis. An
    /// error in words when nothing renamable is under the cursor, the name
    /// cannot be written as a label, or another well (boundary) has it.
    pub fn rename(&self, offset: usize, new_name: &str) -> Result<Vec<FileEdit>, String> {
        nav::rename(self, offset, new_name)
    }

    /// Semantic tokens of the whole document, sorted and non-overlapping.
    pub fn semantic_tokens(&self) -> Vec<SemanticToken> {
        tokens::semantic_tokens(self, Span::new(0, self.text.len()))
    }

    /// Semantic tokens overlapping `range` (for a visible range of a large deck).
    pub fn semantic_tokens_in(&self, range: Span) -> Vec<SemanticToken> {
        tokens::semantic_tokens(self, range)
    }

    /// Inlay hints inside `range`; none unless `config.inlay_hints`.
    pub fn inlay_hints(&self, range: Span, config: &Config) -> Vec<InlayHint> {
        hints::inlay_hints(self, range, config)
    }

    /// Fixes of the diagnostics overlapping `range`, and refactors of the
    /// quantity at `range.start`.
    pub fn code_actions(&self, range: Span) -> Vec<CodeAction> {
        actions::code_actions(self, range)
    }

    /// Edits that turn the document into its canonical layout
    /// (`rill_syntax::format`), one per run of changed lines, sorted and not
    /// overlapping; `None` when it has syntax errors, an empty list when it
    /// is already formatted.
    pub fn format(&self) -> Option<Vec<TextEdit>> {
        if !self.tree.errors.is_empty() {
            return None;
        }
        let formatted = rill_syntax::format(&self.tree, &self.text);
        Some(line_edits(&self.text, &formatted))
    }

    /// Foldable spans: blocks, lists over several lines, runs of comment lines.
    pub fn folding_ranges(&self) -> Vec<Span> {
        outline::folding_ranges(self)
    }

    /// "Run case" above the first block when the document is a case.
    pub fn code_lenses(&self) -> Vec<CodeLens> {
        outline::code_lenses(self)
    }

    /// The byte offset moved into the text and onto a character boundary (backwards).
    pub(crate) fn clamp(&self, offset: usize) -> usize {
        floor_boundary(&self.text, offset)
    }
}

/// `offset` moved into `text` and back onto a character boundary.
pub(crate) fn floor_boundary(text: &str, offset: usize) -> usize {
    let mut o = offset.min(text.len());
    while o > 0 && !text.is_char_boundary(o) {
        o -= 1;
    }
    o
}

/// One edit turning `old` into `new`: the changed middle between the common
/// prefix and suffix (on character boundaries). `None` when equal.
pub(crate) fn minimal_edit(old: &str, new: &str) -> Option<TextEdit> {
    if old == new {
        return None;
    }
    let mut prefix = old
        .bytes()
        .zip(new.bytes())
        .take_while(|(a, b)| a == b)
        .count();
    while prefix > 0 && !(old.is_char_boundary(prefix) && new.is_char_boundary(prefix)) {
        prefix -= 1;
    }
    let max_suffix = (old.len() - prefix).min(new.len() - prefix);
    let mut suffix = old
        .bytes()
        .rev()
        .zip(new.bytes().rev())
        .take(max_suffix)
        .take_while(|(a, b)| a == b)
        .count();
    while suffix > 0
        && !(old.is_char_boundary(old.len() - suffix) && new.is_char_boundary(new.len() - suffix))
    {
        suffix -= 1;
    }
    Some(TextEdit {
        span: Span::new(prefix, old.len() - suffix),
        new_text: new[prefix..new.len() - suffix].to_string(),
    })
}

/// Largest product of changed line counts diffed line by line (the table
/// of the longest common subsequence); beyond it one edit replaces the
/// changed middle.
const MAX_DIFF_CELLS: usize = 4_000_000;

/// Edits turning `old` into `new`, one per run of changed lines (a longest
/// common subsequence of lines), so that editors keep the cursor and folds
/// on the lines that did not change. Hand-written: a few dozen lines, no
/// diff crate needed for line granularity.
pub(crate) fn line_edits(old: &str, new: &str) -> Vec<TextEdit> {
    if old == new {
        return Vec::new();
    }
    let a: Vec<&str> = old.split_inclusive('\n').collect();
    let b: Vec<&str> = new.split_inclusive('\n').collect();
    let mut p = 0;
    while p < a.len() && p < b.len() && a[p] == b[p] {
        p += 1;
    }
    let mut q = 0;
    while q < a.len() - p && q < b.len() - p && a[a.len() - 1 - q] == b[b.len() - 1 - q] {
        q += 1;
    }
    let (am, bm) = (&a[p..a.len() - q], &b[p..b.len() - q]);
    let (n, m) = (am.len(), bm.len());
    if n.saturating_mul(m) > MAX_DIFF_CELLS {
        return minimal_edit(old, new).into_iter().collect();
    }
    let w = m + 1;
    let mut lcs = vec![0u32; (n + 1) * w];
    for i in (0..n).rev() {
        for j in (0..m).rev() {
            lcs[i * w + j] = if am[i] == bm[j] {
                lcs[(i + 1) * w + j + 1] + 1
            } else {
                lcs[(i + 1) * w + j].max(lcs[i * w + j + 1])
            };
        }
    }
    let mut edits = Vec::new();
    let mut pos: usize = a[..p].iter().map(|l| l.len()).sum();
    // The run being built: start in `old`, end in `old`, replacement.
    let mut run: Option<(usize, usize, String)> = None;
    let (mut i, mut j) = (0, 0);
    while i < n || j < m {
        if i < n && j < m && am[i] == bm[j] {
            if let Some((s, e, t)) = run.take() {
                edits.push(TextEdit {
                    span: Span::new(s, e),
                    new_text: t,
                });
            }
            pos += am[i].len();
            i += 1;
            j += 1;
        } else if j < m && (i == n || lcs[i * w + j + 1] >= lcs[(i + 1) * w + j]) {
            run.get_or_insert_with(|| (pos, pos, String::new()))
                .2
                .push_str(bm[j]);
            j += 1;
        } else {
            let r = run.get_or_insert_with(|| (pos, pos, String::new()));
            r.1 += am[i].len();
            pos += am[i].len();
            i += 1;
        }
    }
    if let Some((s, e, t)) = run {
        edits.push(TextEdit {
            span: Span::new(s, e),
            new_text: t,
        });
    }
    edits
}

/// Reads (through `source`, once) every array file named by a `file "..."`
/// value in the decks of the analysis, for hover statistics.
fn read_arrays(
    analysis: &Analysis,
    source: &dyn Source,
    cache: &rill_model::Reuse,
) -> HashMap<(usize, Span), Result<ArrayStats, String>> {
    let mut out = HashMap::new();
    let mut by_path: HashMap<PathBuf, Result<ArrayStats, String>> = HashMap::new();
    for (index, file) in analysis.files.iter().enumerate() {
        let Some(tree) = &file.tree else { continue };
        let mut found = Vec::new();
        collect_file_refs(&tree.items, &mut found);
        for (span, name) in found {
            let path = source.resolve(&file.path, &name);
            let stats = by_path
                .entry(path.clone())
                .or_insert_with(|| match source.read(&path) {
                    // The analysis has just parsed this file into the cache;
                    // it is handed back without a second parse.
                    Ok(bytes) => match cache.parsed_numbers(&path, &bytes) {
                        Some(kept) => rill_model::reuse::kept(
                            Some(cache),
                            "array file statistics",
                            std::slice::from_ref(&kept),
                            &[],
                            || stats_of(&kept),
                        ),
                        None => {
                            let (values, bad) = rill_model::arrays::parse_numbers(&bytes);
                            if bad.is_empty() {
                                stats_of(&values)
                            } else {
                                Err(format!("{} malformed value(s)", bad.len()))
                            }
                        }
                    },
                    Err(e) => Err(e.to_string()),
                });
            out.insert((index, span), stats.clone());
        }
    }
    out
}

/// Count, min, mean and max of an array file's values.
fn stats_of(values: &[f64]) -> Result<ArrayStats, String> {
    if values.is_empty() {
        return Err("no values".to_string());
    }
    let (mut min, mut max, mut sum) = (f64::INFINITY, f64::NEG_INFINITY, 0.0);
    for v in values {
        min = min.min(*v);
        max = max.max(*v);
        sum += v;
    }
    Ok(ArrayStats {
        count: values.len(),
        min,
        mean: sum / values.len() as f64,
        max,
    })
}

/// `(span of the string atom, file name)` of every `key = file "..."`.
fn collect_file_refs(items: &[Item], out: &mut Vec<(Span, String)>) {
    for item in items {
        match item {
            Item::Block(b) => collect_file_refs(&b.items, out),
            Item::Statement(s) => {
                if let [first, second, ..] = s.value.atoms.as_slice() {
                    if let (AtomKind::Ident(word), AtomKind::Str { value, .. }) =
                        (&first.kind, &second.kind)
                    {
                        if word == "file" {
                            out.push((second.span, value.clone()));
                        }
                    }
                }
            }
            Item::Directive(_) => {}
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn apply(text: &str, edits: &[TextEdit]) -> String {
        let mut out = text.to_string();
        for e in edits.iter().rev() {
            out.replace_range(e.span.start..e.span.end, &e.new_text);
        }
        out
    }

    proptest! {
        #[test]
        fn line_edits_turn_old_into_new(old in "([ab]{0,3}\n?|Ω|\r\n){0,12}", new in "([ab]{0,3}\n?|Ω|\r\n){0,12}") {
            let edits = line_edits(&old, &new);
            prop_assert!(edits.windows(2).all(|w| w[0].span.end <= w[1].span.start));
            prop_assert_eq!(apply(&old, &edits), new.clone());
            let one: Vec<TextEdit> = minimal_edit(&old, &new).into_iter().collect();
            prop_assert_eq!(apply(&old, &one), new);
        }
    }
}
