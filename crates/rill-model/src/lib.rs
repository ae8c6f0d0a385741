//! `rill-model` owns the meaning of a case file: the schema of blocks and
//! keys, lowering of a syntax tree to a checked [`Case`] in SI, include and
//! array files read through the [`source::Source`] trait, every diagnostic
//! with its stable code, and the derived quantities (face transmissibility,
//! well index, pore volume) that the checker, the editor and the simulator
//! all share.
//!
//! It must never do I/O directly (only through `Source`), never print, and
//! never panic on any input.

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

pub mod aquifer;
pub mod arrays;
pub mod case;
pub mod checks;
pub mod derived;
pub mod diagnostic;
pub mod digest;
pub mod explain;
pub mod fragment;
pub mod inspect;
pub mod lower;
pub mod props;
pub mod reuse;
pub mod schema;
pub mod source;
pub mod values;

pub use case::*;
pub use diagnostic::{Code, Diagnostic, Edit, Fix, Label, Location, Severity};
pub use reuse::Reuse;
pub use source::{MemorySource, Source, SourceError};

use std::path::{Path, PathBuf};
use std::sync::Arc;

/// A file that took part in an analysis: the main deck (index 0), its
/// includes, and array files that have diagnostics.
#[derive(Debug, Clone)]
pub struct FileInfo {
    /// The path it stands at (normalised).
    pub path: PathBuf,
    /// Its text (invalid UTF-8 replaced).
    pub text: Arc<str>,
    /// The syntax tree, for decks.
    pub tree: Option<Arc<rill_syntax::SourceFile>>,
}

/// Everything known about a deck after checking it.
#[derive(Debug, Clone)]
pub struct Analysis {
    /// The files read: the main deck first, then includes and array files in the order read.
    pub files: Vec<FileInfo>,
    /// Sorted by file, then position.
    pub diagnostics: Vec<Diagnostic>,
    /// The checked case, when lowering got that far (it may still carry
    /// warnings, and physical errors from the sanity checks).
    pub case: Option<Case>,
    /// Where lowering found the definitions that checks and the editor point back at.
    pub spans: lower::Spans,
}

impl Analysis {
    /// Whether any diagnostic is an error.
    pub fn has_errors(&self) -> bool {
        self.diagnostics
            .iter()
            .any(|d| d.severity == Severity::Error)
    }
    /// The case, only if there are no errors at all.
    pub fn runnable_case(&self) -> Option<&Case> {
        if self.has_errors() {
            None
        } else {
            self.case.as_ref()
        }
    }
}

/// Check the deck at `path`, reading it and everything it refers to through `source`.
pub fn analyze(path: &Path, source: &dyn Source) -> Result<Analysis, SourceError> {
    analyze_with(path, source, &Reuse::new())
}

/// [`analyze`] keeping parsed arrays and derived results in `cache` for
/// the next analysis, and using what the last one kept there.
pub fn analyze_with(
    path: &Path,
    source: &dyn Source,
    cache: &Reuse,
) -> Result<Analysis, SourceError> {
    let bytes = source.read(path)?;
    let (text, _) = rill_syntax::parse_bytes(&bytes);
    Ok(analyze_text_with(path, &text, source, cache))
}

/// Check deck text (e.g. an editor buffer) that stands at `path`.
pub fn analyze_text(path: &Path, text: &str, source: &dyn Source) -> Analysis {
    analyze_text_with(path, text, source, &Reuse::new())
}

/// [`analyze_text`] keeping parsed arrays and derived results in `cache`
/// for the next analysis (an editor re-checking on every edit), and using
/// what the last one kept there.
pub fn analyze_text_with(path: &Path, text: &str, source: &dyn Source, cache: &Reuse) -> Analysis {
    cache.begin();
    let mut lowerer = lower::Lowerer {
        source,
        reuse: cache,
        files: Vec::new(),
        diags: Vec::new(),
        fvf: None,
        written_wells: Vec::new(),
        two_phase: false,
    };
    let (case, spans) = lowerer.lower(source::normalize(path), text);
    let mut diagnostics = lowerer.diags;
    // Sanity checks need a whole case and no lowering errors to be meaningful.
    if let Some(case) = &case {
        if !diagnostics.iter().any(|d| d.severity == Severity::Error) {
            checks::run(case, &spans, Some(cache), &mut diagnostics);
        }
    }
    drop_cascades(&lowerer.files, &mut diagnostics);
    diagnostics.sort_by(|a, b| {
        (a.location.file, a.location.start, a.location.end, a.code).cmp(&(
            b.location.file,
            b.location.start,
            b.location.end,
            b.code,
        ))
    });
    merge_repeats(&mut diagnostics);
    Analysis {
        files: lowerer.files,
        diagnostics,
        case,
        spans,
    }
}

/// Identical diagnostics on one span (a file included twice, one value read
/// for several uses) become one that says how many times it arose.
fn merge_repeats(diagnostics: &mut Vec<Diagnostic>) {
    let mut merged: Vec<(Diagnostic, usize)> = Vec::with_capacity(diagnostics.len());
    for d in diagnostics.drain(..) {
        match merged.last_mut() {
            Some((last, count)) if *last == d => *count += 1,
            _ => merged.push((d, 1)),
        }
    }
    diagnostics.extend(merged.into_iter().map(|(d, count)| {
        if count > 1 {
            d.with_note(format!("reported {count} times at this place"))
        } else {
            d
        }
    }));
}

/// A statement with a syntax error inside has no reliable value: drop the
/// other diagnostics on it, which would only repeat the syntax error in
/// other words (a list left open that lost its unit, say).
fn drop_cascades(files: &[FileInfo], diagnostics: &mut Vec<Diagnostic>) {
    fn broken(
        items: &[rill_syntax::Item],
        errors: &[rill_syntax::SyntaxError],
        out: &mut Vec<rill_syntax::Span>,
    ) {
        for item in items {
            match item {
                rill_syntax::Item::Statement(s) => {
                    if errors
                        .iter()
                        .any(|e| e.span.start < s.span.end && s.span.start <= e.span.start)
                    {
                        out.push(s.span);
                    }
                }
                rill_syntax::Item::Block(b) => broken(&b.items, errors, out),
                rill_syntax::Item::Directive(_) => {}
            }
        }
    }
    let mut spans: Vec<(usize, rill_syntax::Span)> = Vec::new();
    for (index, file) in files.iter().enumerate() {
        if let Some(tree) = &file.tree {
            if !tree.errors.is_empty() {
                let mut out = Vec::new();
                broken(&tree.items, &tree.errors, &mut out);
                spans.extend(out.into_iter().map(|s| (index, s)));
            }
        }
    }
    if spans.is_empty() {
        return;
    }
    diagnostics.retain(|d| {
        d.code.area() == "syntax"
            || !spans.iter().any(|(f, s)| {
                *f == d.location.file && s.start <= d.location.start && d.location.end <= s.end
            })
    });
}

#[cfg(test)]
mod merge_tests {
    use super::*;

    #[test]
    fn identical_diagnostics_on_one_span_merge_with_a_count() {
        let at = Location::new(0, rill_syntax::Span::new(3, 9));
        let d = Diagnostic::error(Code::DeckValue, at, "the same words");
        let other = Diagnostic::error(Code::DeckValue, at, "other words");
        let mut list = vec![d.clone(), d.clone(), d.clone(), other.clone()];
        merge_repeats(&mut list);
        assert_eq!(list.len(), 2);
        assert_eq!(list[0].notes, vec!["reported 3 times at this place"]);
        assert_eq!(list[1], other);
    }
}
