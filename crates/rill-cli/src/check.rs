//! `rill check`: diagnostics rendered with source snippets, or as JSON.

use crate::positions::Sources;
use crate::Format;
use codespan_reporting::diagnostic::{
    Diagnostic as CsDiagnostic, Label, LabelStyle, Severity as CsSeverity,
};
use codespan_reporting::term::{self, termcolor};
use rill_model::{Analysis, Severity};
use rill_workspace::DiskSource;
use serde_json::{json, Value};
use std::io::IsTerminal;
use std::path::Path;

/// Analyse a deck from disk; an unreadable main file is an I/O error.
pub fn load(path: &Path, source: &DiskSource) -> Result<Analysis, String> {
    rill_model::analyze(path, source).map_err(|e| format!("cannot read {}: {e}", path.display()))
}

pub fn run(files: &[std::path::PathBuf], format: Format) -> u8 {
    let source = DiskSource::unconfined();
    let mut worst = 0u8;
    let mut json_diags = Vec::new();
    for path in files {
        let analysis = match load(path, &source) {
            Ok(a) => a,
            Err(e) => {
                eprintln!("error: {e}");
                worst = 2;
                continue;
            }
        };
        if analysis.has_errors() && worst < 1 {
            worst = 1;
        }
        match format {
            Format::Text => render_text(&analysis),
            Format::Json => json_diags.extend(to_json(&analysis)),
        }
    }
    if format == Format::Json {
        println!(
            "{}",
            serde_json::to_string_pretty(&json!({ "diagnostics": json_diags })).unwrap_or_default()
        );
    }
    worst
}

fn severity(s: Severity) -> CsSeverity {
    match s {
        Severity::Error => CsSeverity::Error,
        Severity::Warning => CsSeverity::Warning,
        Severity::Info => CsSeverity::Note,
    }
}

/// Render every diagnostic with codespan-reporting, then a one-line summary.
pub fn render_text(analysis: &Analysis) {
    let files = Sources::new(analysis);
    let ids: Vec<usize> = (0..analysis.files.len()).collect();
    let choice = if std::io::stderr().is_terminal() {
        termcolor::ColorChoice::Auto
    } else {
        termcolor::ColorChoice::Never
    };
    let writer = termcolor::StandardStream::stderr(choice);
    let config = term::Config::default();
    for d in &analysis.diagnostics {
        let file = ids.get(d.location.file).copied().unwrap_or(0);
        let mut labels = vec![Label::new(
            LabelStyle::Primary,
            file,
            d.location.start..d.location.end,
        )];
        for l in &d.labels {
            if let Some(&f) = ids.get(l.location.file) {
                labels.push(
                    Label::new(LabelStyle::Secondary, f, l.location.start..l.location.end)
                        .with_message(&l.message),
                );
            }
        }
        let mut notes: Vec<String> = d.notes.iter().map(|n| format!("note: {n}")).collect();
        notes.extend(d.fixes.iter().map(|f| format!("fix: {}", f.title)));
        let cs = CsDiagnostic::new(severity(d.severity))
            .with_code(d.code.as_str())
            .with_message(&d.message)
            .with_labels(labels)
            .with_notes(notes);
        let _ = term::emit(&mut writer.lock(), &config, &files, &cs);
    }
    let count = |s: Severity| {
        analysis
            .diagnostics
            .iter()
            .filter(|d| d.severity == s)
            .count()
    };
    let (e, w, i) = (
        count(Severity::Error),
        count(Severity::Warning),
        count(Severity::Info),
    );
    let name = analysis
        .files
        .first()
        .map(|f| f.path.display().to_string())
        .unwrap_or_default();
    if e + w + i == 0 {
        eprintln!("{name}: clean");
    } else {
        eprintln!("{name}: {e} error(s), {w} warning(s), {i} note(s)");
    }
}

/// The JSON form of the specification: 1-based lines and columns in Unicode scalar values.
pub fn to_json(analysis: &Analysis) -> Vec<Value> {
    let sources = Sources::new(analysis);
    let place = |file: usize, start: usize, end: usize| -> (String, usize, usize, usize, usize) {
        let (l, c) = sources.line_col(file, start);
        let (el, ec) = sources.line_col(file, end);
        (sources.name_of(file), l, c, el, ec)
    };
    analysis
        .diagnostics
        .iter()
        .map(|d| {
            let (file, line, column, end_line, end_column) = place(d.location.file, d.location.start, d.location.end);
            let fixes: Vec<Value> = d
                .fixes
                .iter()
                .map(|f| {
                    let edits: Vec<Value> = f
                        .edits
                        .iter()
                        .map(|e| {
                            let (file, line, column, end_line, end_column) = place(e.location.file, e.location.start, e.location.end);
                            json!({"file": file, "line": line, "column": column, "end_line": end_line,
                                   "end_column": end_column, "replacement": e.replacement})
                        })
                        .collect();
                    json!({"title": f.title, "edits": edits})
                })
                .collect();
            json!({
                "code": d.code,
                "severity": d.severity.name(),
                "message": d.message,
                "file": file,
                "line": line,
                "column": column,
                "end_line": end_line,
                "end_column": end_column,
                "fixes": fixes,
            })
        })
        .collect()
}
