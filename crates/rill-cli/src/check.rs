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
use std::io::{IsTerminal, Write};
use std::path::Path;

/// Analyse a deck from disk; an unreadable main file is an I/O error.
pub fn load(path: &Path, source: &DiskSource) -> Result<Analysis, String> {
    rill_model::analyze(path, source).map_err(|e| format!("cannot read {}: {e}", path.display()))
}

/// A fragment (none of the case's blocks) is checked through the deck
/// that includes it, said in a line before its diagnostics (on standard
/// error with `--format json`, to keep standard output JSON); with no
/// such deck it gets one error saying so.
fn through_deck(
    path: &Path,
    analysis: Analysis,
    source: &DiskSource,
    format: Format,
) -> Result<Analysis, String> {
    if !rill_model::fragment::is_fragment(&analysis) {
        return Ok(analysis);
    }
    let mut analysis = analysis;
    let Some(found) = crate::includers::find(path, source) else {
        rill_model::fragment::mark_unincluded(&mut analysis, None);
        return Ok(analysis);
    };
    let Some(deck) = found.decks.first() else {
        let note = format!(
            "searched the decks under {}",
            crate::includers::shown(&found.searched)
        );
        rill_model::fragment::mark_unincluded(&mut analysis, Some(note));
        return Ok(analysis);
    };
    let name = |p: &Path| crate::includers::shown(p);
    let mut line = format!(
        "{} is included by {}; checked that deck",
        path.display(),
        name(deck)
    );
    if found.decks.len() > 1 {
        let others: Vec<String> = found.decks[1..].iter().map(|d| name(d)).collect();
        line.push_str(&format!(
            " (also included by {}: check them by name)",
            others.join(", ")
        ));
    }
    match format {
        Format::Text => println!("{line}\n"),
        Format::Json => eprintln!("{line}"),
    }
    load(deck, source)
}

pub fn run(files: &[std::path::PathBuf], format: Format) -> u8 {
    let source = DiskSource::unconfined();
    let mut worst = 0u8;
    let mut json_diags = Vec::new();
    for path in files {
        let analysis =
            match load(path, &source).and_then(|a| through_deck(path, a, &source, format)) {
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

/// Source lines longer than this (in bytes) are shown cut: a window of
/// about this width around the labels, with `…` where text was left out.
pub const MAX_LINE: usize = 160;
/// Bytes of a long line shown before the first label.
const LEAD: usize = 60;
/// Messages, labels and notes longer than this (in characters) are cut:
/// they may quote a found token, which can be megabytes long.
pub const MAX_MESSAGE: usize = 200;
/// Diagnostics with the same code and message beyond this many are
/// counted rather than shown.
pub const MAX_SAME: usize = 20;

fn cut_message(m: &str) -> String {
    match m.char_indices().nth(MAX_MESSAGE) {
        Some((at, _)) => format!("{}…", &m[..at]),
        None => m.to_string(),
    }
}

fn floor_boundary(text: &str, mut i: usize) -> usize {
    i = i.min(text.len());
    while !text.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// A file as shown for one diagnostic: every line kept (so line numbers
/// hold), long lines cut around the positions the diagnostic points at.
struct CutFile {
    text: String,
    starts: Vec<usize>,
    /// Per line: (real start, real end without the break, window start,
    /// window end, where the window begins in `text`, characters of the
    /// real line before the window).
    lines: Vec<(usize, usize, usize, usize, usize, usize)>,
}

impl CutFile {
    fn new(text: &str, index: &rill_syntax::LineIndex, points: &[usize]) -> CutFile {
        let mut out = String::new();
        let mut starts = Vec::with_capacity(index.len_lines());
        let mut lines = Vec::with_capacity(index.len_lines());
        let mut points: Vec<usize> = points.to_vec();
        points.sort_unstable();
        for line in 0..index.len_lines() {
            let range = index.line_range(line).unwrap_or(0..0);
            let (ls, mut le) = (range.start, range.end);
            while le > ls && matches!(text.as_bytes()[le - 1], b'\n' | b'\r') {
                le -= 1;
            }
            starts.push(out.len());
            if le - ls <= MAX_LINE {
                lines.push((ls, le, ls, le, out.len(), 0));
                out.push_str(&text[ls..le]);
            } else {
                let first = points.partition_point(|&p| p < ls);
                let a = match points.get(first) {
                    Some(&p) if p <= le => floor_boundary(text, p.saturating_sub(LEAD).max(ls)),
                    _ => ls,
                };
                let b = floor_boundary(text, (a + MAX_LINE).min(le));
                if a > ls {
                    out.push_str("… ");
                }
                let before = text[ls..a].chars().count();
                lines.push((ls, le, a, b, out.len(), before));
                out.push_str(&text[a..b]);
                if b < le {
                    out.push_str(" …");
                }
            }
            out.push('\n');
        }
        CutFile {
            text: out,
            starts,
            lines,
        }
    }

    /// Where real offset `o` is shown (clamped into its line's window).
    fn map(&self, o: usize) -> usize {
        let line = self.lines.partition_point(|l| l.0 <= o).saturating_sub(1);
        let (_, _, a, b, at, _) = self.lines[line];
        at + o.clamp(a, b) - a
    }
}

/// The files of one diagnostic for codespan: long lines cut, the rest as is.
struct Shown<'s, 'a> {
    sources: &'s Sources<'a>,
    cut: std::collections::HashMap<usize, CutFile>,
}

impl<'f> codespan_reporting::files::Files<'f> for Shown<'_, '_> {
    type FileId = usize;
    type Name = &'f str;
    type Source = &'f str;

    fn name(&'f self, id: usize) -> Result<&'f str, codespan_reporting::files::Error> {
        self.sources.name(id)
    }

    fn source(&'f self, id: usize) -> Result<&'f str, codespan_reporting::files::Error> {
        match self.cut.get(&id) {
            Some(c) => Ok(&c.text),
            None => self.sources.source(id),
        }
    }

    fn line_index(
        &'f self,
        id: usize,
        byte: usize,
    ) -> Result<usize, codespan_reporting::files::Error> {
        match self.cut.get(&id) {
            Some(c) => Ok(c.starts.partition_point(|&s| s <= byte).saturating_sub(1)),
            None => self.sources.line_index(id, byte),
        }
    }

    fn line_range(
        &'f self,
        id: usize,
        line: usize,
    ) -> Result<std::ops::Range<usize>, codespan_reporting::files::Error> {
        match self.cut.get(&id) {
            Some(c) => {
                let start =
                    *c.starts
                        .get(line)
                        .ok_or(codespan_reporting::files::Error::LineTooLarge {
                            given: line,
                            max: c.starts.len() - 1,
                        })?;
                let end = c.starts.get(line + 1).copied().unwrap_or(c.text.len());
                Ok(start..end)
            }
            None => self.sources.line_range(id, line),
        }
    }

    /// The real column, also inside a cut line.
    fn column_number(
        &'f self,
        id: usize,
        line: usize,
        byte: usize,
    ) -> Result<usize, codespan_reporting::files::Error> {
        let Some(c) = self.cut.get(&id) else {
            let range = self.sources.line_range(id, line)?;
            let text = self.sources.source(id)?;
            let end = floor_boundary(text, byte.clamp(range.start, range.end));
            return Ok(text[range.start..end].chars().count() + 1);
        };
        let Some(&(_, _, _, _, at, before)) = c.lines.get(line) else {
            return Ok(1);
        };
        let end = floor_boundary(&c.text, byte.max(at));
        Ok(before + c.text[at..end.max(at)].chars().count() + 1)
    }
}

/// Render every diagnostic with codespan-reporting, then a one-line summary,
/// into one buffer written at once (codespan writes piecewise, and an
/// unbuffered stream made that a system call per character).
pub fn render_text(analysis: &Analysis) {
    let color = std::io::stderr().is_terminal();
    let text = render_to_string(analysis, color);
    let mut err = std::io::stderr().lock();
    let _ = err.write_all(text.as_bytes());
    let _ = err.flush();
}

/// The files among `spans` that hold a line too long to show whole, each cut
/// around the spans of this diagnostic that fall in it.
fn cut_long_files(
    sources: &Sources,
    spans: &[(usize, usize, usize)],
) -> std::collections::HashMap<usize, CutFile> {
    let mut cut = std::collections::HashMap::new();
    for &(f, _, _) in spans {
        if cut.contains_key(&f) {
            continue;
        }
        let Some((text, index)) = sources.text_and_lines(f) else {
            continue;
        };
        let starts = index.line_starts();
        let long = starts.windows(2).any(|w| w[1] - w[0] > MAX_LINE + 2)
            || text.len() - starts.last().copied().unwrap_or(0) > MAX_LINE;
        if long {
            let points: Vec<usize> = spans
                .iter()
                .filter(|s| s.0 == f)
                .flat_map(|s| [s.1, s.2])
                .collect();
            cut.insert(f, CutFile::new(text, index, &points));
        }
    }
    cut
}

/// The last line: the deck's name and its count of each severity.
fn summary_line(analysis: &Analysis) -> String {
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
        format!("{name}: clean\n")
    } else {
        format!("{name}: {e} error(s), {w} warning(s), {i} note(s)\n")
    }
}

/// The text `render_text` writes (with colour codes when `color`).
pub fn render_to_string(analysis: &Analysis, color: bool) -> String {
    let sources = Sources::new(analysis);
    let mut buffer = if color {
        termcolor::Buffer::ansi()
    } else {
        termcolor::Buffer::no_color()
    };
    let config = term::Config::default();
    let mut seen: std::collections::HashMap<(&str, &str), usize> = Default::default();
    for d in &analysis.diagnostics {
        let n = seen
            .entry((d.code.as_str(), d.message.as_str()))
            .or_default();
        *n += 1;
        if *n > MAX_SAME {
            continue;
        }
        let file = if d.location.file < sources.file_count() {
            d.location.file
        } else {
            0
        };
        let mut spans = vec![(file, d.location.start, d.location.end)];
        for l in &d.labels {
            if l.location.file < sources.file_count() {
                spans.push((l.location.file, l.location.start, l.location.end));
            }
        }
        let cut = cut_long_files(&sources, &spans);
        let range = |f: usize, s: usize, e: usize| match cut.get(&f) {
            Some(c) => {
                let (a, b) = (c.map(s), c.map(e));
                a..b.max(a)
            }
            None => s..e,
        };
        let mut labels = vec![Label::new(
            LabelStyle::Primary,
            file,
            range(file, d.location.start, d.location.end),
        )];
        for l in &d.labels {
            if l.location.file < sources.file_count() {
                labels.push(
                    Label::new(
                        LabelStyle::Secondary,
                        l.location.file,
                        range(l.location.file, l.location.start, l.location.end),
                    )
                    .with_message(cut_message(&l.message)),
                );
            }
        }
        let mut notes: Vec<String> = d
            .notes
            .iter()
            .map(|n| format!("note: {}", cut_message(n)))
            .collect();
        notes.extend(
            d.fixes
                .iter()
                .map(|f| format!("fix: {}", cut_message(&f.title))),
        );
        let cs = CsDiagnostic::new(severity(d.severity))
            .with_code(d.code.as_str())
            .with_message(cut_message(&d.message))
            .with_labels(labels)
            .with_notes(notes);
        let shown = Shown {
            sources: &sources,
            cut,
        };
        let _ = term::emit(&mut buffer, &config, &shown, &cs);
    }
    let mut out = String::from_utf8_lossy(buffer.as_slice()).into_owned();
    let mut repeated: Vec<(&(&str, &str), &usize)> =
        seen.iter().filter(|(_, n)| **n > MAX_SAME).collect();
    repeated.sort();
    for ((code, message), n) in repeated {
        out += &format!(
            "… and {} more [{code}] {}\n",
            n - MAX_SAME,
            cut_message(message)
        );
    }
    out += &summary_line(analysis);
    out
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

#[cfg(test)]
mod tests {
    use super::*;
    use rill_model::{Diagnostic, FileInfo, Location};

    fn analysis(text: &str, diagnostics: Vec<Diagnostic>) -> Analysis {
        Analysis {
            files: vec![FileInfo {
                path: "deck.rill".into(),
                text: text.into(),
                tree: None,
            }],
            diagnostics,
            case: None,
            spans: Default::default(),
        }
    }

    fn at(start: usize, end: usize) -> Location {
        Location {
            file: 0,
            start,
            end,
        }
    }

    #[test]
    fn identical_diagnostics_beyond_the_cap_are_counted() {
        let text = "{\n".repeat(100);
        let diags = (0..100)
            .map(|i| {
                Diagnostic::error(
                    rill_model::Code::SyntaxUnclosed,
                    at(2 * i, 2 * i + 1),
                    "unclosed `{`",
                )
            })
            .collect();
        let out = render_to_string(&analysis(&text, diags), false);
        assert_eq!(out.matches("error[syntax.unclosed]").count(), MAX_SAME);
        assert!(
            out.contains(&format!(
                "… and {} more [syntax.unclosed] unclosed `{{`",
                100 - MAX_SAME
            )),
            "{out}"
        );
        assert!(
            out.ends_with("deck.rill: 100 error(s), 0 warning(s), 0 note(s)\n"),
            "{out}"
        );
    }

    #[test]
    fn a_cut_line_keeps_the_real_line_and_column() {
        // The span sits 50 000 characters into line 2, after multi-byte text.
        let text = format!(
            "first\n{}{}X{}\n",
            "é".repeat(25_000),
            "b".repeat(25_000),
            "c".repeat(9_000)
        );
        let start = text.find('X').unwrap();
        let long_message = format!("found `{}`", "z".repeat(10_000));
        let d = Diagnostic::error(
            rill_model::Code::DeckValue,
            at(start, start + 1),
            long_message,
        );
        let out = render_to_string(&analysis(&text, vec![d]), false);
        assert!(out.contains("deck.rill:2:50001"), "{out}");
        let shown = out
            .lines()
            .find(|l| l.starts_with("2 │"))
            .expect("the line is shown");
        assert!(
            shown.starts_with("2 │ … ") && shown.ends_with(" …"),
            "{shown}"
        );
        assert!(shown.contains('X'), "{shown}");
        let caret = out.lines().find(|l| l.contains('^')).unwrap();
        // The caret sits under the X.
        let col = |l: &str, c: char| l.chars().position(|x| x == c).unwrap();
        assert_eq!(col(caret, '^'), col(shown, 'X'));
        assert!(
            out.lines().all(|l| l.chars().count() <= MAX_MESSAGE + 40),
            "{out}"
        );
    }
}
