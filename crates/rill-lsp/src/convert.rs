//! Analysis answers (byte offsets, model diagnostics) to protocol types.
//! Wording is never invented here: messages, notes and fix titles come
//! from the model as they are.

use crate::position::{self, Encoding};
use rill_model::{Diagnostic, Fix, Severity};
use rill_syntax::LineIndex;
use ropey::Rope;
use serde_json::{json, Value};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use tower_lsp::lsp_types as lsp;
use tower_lsp::lsp_types::Url;

/// The texts of the files that took part in one analysis: the document as
/// a rope, the other files (included decks, array files, which can be
/// large) with a line index made only when a diagnostic or an edit needs
/// one.
pub struct FileTexts<'a> {
    files: Vec<(&'a Path, &'a str)>,
    main: Rope,
    /// The file `main` is the text of: 0, or a fragment's index when it was
    /// analysed through its deck.
    main_index: usize,
    lines: HashMap<usize, LineIndex>,
}

impl<'a> FileTexts<'a> {
    /// `main` is the rope of file 0 (the document as analysed).
    pub fn new(files: Vec<(&'a Path, &'a str)>, main: &Rope) -> Self {
        FileTexts {
            files,
            main: main.clone(),
            main_index: 0,
            lines: HashMap::new(),
        }
    }

    /// `main` is the rope of file `index` instead of file 0.
    pub fn with_main_index(mut self, index: usize) -> Self {
        self.main_index = index;
        self
    }

    pub fn len(&self) -> usize {
        self.files.len()
    }

    pub fn path(&self, file: usize) -> Option<&'a Path> {
        self.files.get(file).map(|f| f.0)
    }

    pub fn uri(&self, file: usize) -> Option<Url> {
        self.path(file).and_then(path_uri)
    }

    pub fn range(
        &mut self,
        file: usize,
        start: usize,
        end: usize,
        enc: Encoding,
    ) -> Option<lsp::Range> {
        if file == self.main_index {
            return Some(position::range(&self.main, start, end, enc));
        }
        let text = self.files.get(file)?.1;
        let lines = self
            .lines
            .entry(file)
            .or_insert_with(|| LineIndex::new(text));
        Some(position::text_range(text, lines, start, end, enc))
    }
}

pub fn path_uri(path: &Path) -> Option<Url> {
    Url::from_file_path(path).ok()
}

fn severity(s: Severity) -> lsp::DiagnosticSeverity {
    match s {
        Severity::Error => lsp::DiagnosticSeverity::ERROR,
        Severity::Warning => lsp::DiagnosticSeverity::WARNING,
        Severity::Info => lsp::DiagnosticSeverity::INFORMATION,
    }
}

/// Every diagnostic of an analysis, grouped by the file it points at
/// (main deck, includes, array files). Each file of the analysis gets an
/// entry, empty when clean, so that fixed files get their diagnostics cleared.
pub fn diagnostics(
    diags: &[Diagnostic],
    texts: &mut FileTexts,
    enc: Encoding,
    related_information: bool,
) -> Vec<(PathBuf, Vec<lsp::Diagnostic>)> {
    let mut by_file: Vec<Vec<lsp::Diagnostic>> = vec![Vec::new(); texts.len()];
    for d in diags {
        let file = d.location.file;
        let Some(range) = texts.range(file, d.location.start, d.location.end, enc) else {
            continue;
        };
        let mut message = d.message.clone();
        for note in &d.notes {
            message.push('\n');
            message.push_str(note);
        }
        let related: Vec<lsp::DiagnosticRelatedInformation> = d
            .labels
            .iter()
            .filter_map(|l| {
                let uri = texts.uri(l.location.file)?;
                let range = texts.range(l.location.file, l.location.start, l.location.end, enc)?;
                Some(lsp::DiagnosticRelatedInformation {
                    location: lsp::Location { uri, range },
                    message: l.message.clone(),
                })
            })
            .collect();
        if !related_information {
            // Clients that cannot show related places still get their words.
            for l in &d.labels {
                message.push('\n');
                message.push_str(&l.message);
            }
        }
        let fixes: Vec<Value> = d
            .fixes
            .iter()
            .filter_map(|f| fix_json(f, texts, enc))
            .collect();
        let out = lsp::Diagnostic {
            range,
            severity: Some(severity(d.severity)),
            code: Some(lsp::NumberOrString::String(d.code.to_string())),
            code_description: None,
            source: Some("rill".into()),
            message,
            related_information: (related_information && !related.is_empty()).then_some(related),
            tags: None,
            data: (!fixes.is_empty()).then(|| json!({ "fixes": fixes })),
        };
        if let Some(slot) = by_file.get_mut(file) {
            slot.push(out);
        }
    }
    by_file
        .into_iter()
        .enumerate()
        .filter_map(|(i, d)| Some((texts.path(i)?.to_path_buf(), d)))
        .collect()
}

/// A fix as JSON data on the diagnostic: `{title, edits: [{uri, range, newText}]}`.
fn fix_json(fix: &Fix, texts: &mut FileTexts, enc: Encoding) -> Option<Value> {
    let mut edits = Vec::new();
    for e in &fix.edits {
        let uri = texts.uri(e.location.file)?;
        let range = texts.range(e.location.file, e.location.start, e.location.end, enc)?;
        edits.push(json!({ "uri": uri, "range": range, "newText": e.replacement }));
    }
    Some(json!({ "title": fix.title, "edits": edits }))
}

/// Quick fixes carried in the `data` of diagnostics that the client sends
/// back with a code action request.
pub fn fixes_from_data(diag: &lsp::Diagnostic) -> Vec<lsp::CodeAction> {
    let Some(fixes) = diag
        .data
        .as_ref()
        .and_then(|d| d.get("fixes"))
        .and_then(Value::as_array)
    else {
        return Vec::new();
    };
    fixes
        .iter()
        .filter_map(|f| {
            let title = f.get("title")?.as_str()?.to_string();
            let mut changes: HashMap<Url, Vec<lsp::TextEdit>> = HashMap::new();
            for e in f.get("edits")?.as_array()? {
                let uri: Url = serde_json::from_value(e.get("uri")?.clone()).ok()?;
                let range: lsp::Range = serde_json::from_value(e.get("range")?.clone()).ok()?;
                let new_text = e.get("newText")?.as_str()?.to_string();
                changes
                    .entry(uri)
                    .or_default()
                    .push(lsp::TextEdit { range, new_text });
            }
            Some(lsp::CodeAction {
                title,
                kind: Some(lsp::CodeActionKind::QUICKFIX),
                diagnostics: Some(vec![diag.clone()]),
                edit: Some(lsp::WorkspaceEdit {
                    changes: Some(changes),
                    ..Default::default()
                }),
                is_preferred: None,
                ..Default::default()
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rill_model::{Diagnostic, Location};

    #[test]
    fn diagnostics_land_in_their_files_with_labels_and_fixes() {
        let main_text = "kx = 150 psi # Ω\n";
        let inc_text = "well \"A\" {}\n";
        let main = Rope::from_str(main_text);
        let files = vec![
            (Path::new("/w/deck.rill"), main_text),
            (Path::new("/w/inc.rill"), inc_text),
        ];
        let mut texts = FileTexts::new(files, &main);
        let d = Diagnostic::error(
            rill_model::Code::UnitDimension,
            Location {
                file: 0,
                start: 9,
                end: 12,
            },
            "expected a permeability, found a pressure (psi)",
        )
        .with_note("accepted units: md, darcy")
        .with_label(
            Location {
                file: 1,
                start: 5,
                end: 8,
            },
            "see here",
        )
        .with_replacement(
            "use md",
            Location {
                file: 0,
                start: 9,
                end: 12,
            },
            "md",
        );
        let out = diagnostics(&[d], &mut texts, Encoding::Utf16, true);
        assert_eq!(out.len(), 2);
        assert_eq!(out[0].0, PathBuf::from("/w/deck.rill"));
        assert!(
            out[1].1.is_empty(),
            "the include is clean and listed to clear it"
        );
        let lsp_d = &out[0].1[0];
        assert_eq!(
            lsp_d.range,
            lsp::Range::new(lsp::Position::new(0, 9), lsp::Position::new(0, 12))
        );
        assert_eq!(
            lsp_d.code,
            Some(lsp::NumberOrString::String("unit.dimension".into()))
        );
        assert!(lsp_d.message.ends_with("accepted units: md, darcy"));
        let rel = lsp_d.related_information.as_ref().unwrap();
        assert_eq!(rel[0].location.uri.path(), "/w/inc.rill");
        assert_eq!(rel[0].location.range.start, lsp::Position::new(0, 5));
        let actions = fixes_from_data(lsp_d);
        assert_eq!(actions.len(), 1);
        assert_eq!(actions[0].title, "use md");
        let changes = actions[0].edit.as_ref().unwrap().changes.as_ref().unwrap();
        let edits = &changes[&Url::from_file_path("/w/deck.rill").unwrap()];
        assert_eq!(edits[0].new_text, "md");
        assert_eq!(edits[0].range, lsp_d.range);
    }
}
