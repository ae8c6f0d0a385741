//! The analysis' files with their line index, for both outputs of `check`:
//! 1-based line and column (in Unicode scalar values, as the JSON output
//! promises) and the snippets of the text output.
//!
//! Lines break where the language breaks them (`\n`, `\r\n`, lone `\r`),
//! through the one [`rill_syntax::LineIndex`] the server also uses.
//! codespan-reporting's own `SimpleFiles` breaks only at `\n`, so a file
//! with lone `\r` line ends would show every diagnostic on line 1; this
//! [`Files`] implementation gives it the language's line starts instead.

use codespan_reporting::files::{Error, Files};
use rill_model::Analysis;
use rill_syntax::LineIndex;
use std::ops::Range;

/// One file: its shown name, its text and its line starts.
struct Entry<'a> {
    name: String,
    text: &'a str,
    lines: LineIndex,
}

/// Every file of an analysis, indexed as the analysis numbers them.
pub struct Sources<'a> {
    files: Vec<Entry<'a>>,
}

impl<'a> Sources<'a> {
    pub fn new(analysis: &'a Analysis) -> Self {
        let files = analysis
            .files
            .iter()
            .map(|f| Entry {
                name: f.path.display().to_string(),
                text: &f.text,
                lines: LineIndex::new(&f.text),
            })
            .collect();
        Sources { files }
    }

    /// The shown name of file `file` (empty when there is no such file).
    pub fn name_of(&self, file: usize) -> String {
        self.files
            .get(file)
            .map(|e| e.name.clone())
            .unwrap_or_default()
    }

    /// 1-based (line, column) of byte `offset` in file `file`; offsets
    /// inside a character or past the end are clamped, an unknown file is
    /// (1, 1).
    pub fn line_col(&self, file: usize, offset: usize) -> (usize, usize) {
        match self.files.get(file) {
            Some(e) => e.lines.line_col(e.text, offset),
            None => (1, 1),
        }
    }

    /// Text and line index of `file`, for excerpts of long lines.
    pub fn text_and_lines(&self, file: usize) -> Option<(&'a str, &LineIndex)> {
        self.files.get(file).map(|e| (e.text, &e.lines))
    }

    pub fn file_count(&self) -> usize {
        self.files.len()
    }

    fn entry(&self, id: usize) -> Result<&Entry<'a>, Error> {
        self.files.get(id).ok_or(Error::FileMissing)
    }
}

impl<'f> Files<'f> for Sources<'_> {
    type FileId = usize;
    type Name = &'f str;
    type Source = &'f str;

    fn name(&'f self, id: usize) -> Result<&'f str, Error> {
        Ok(&self.entry(id)?.name)
    }

    fn source(&'f self, id: usize) -> Result<&'f str, Error> {
        Ok(self.entry(id)?.text)
    }

    fn line_index(&'f self, id: usize, byte_index: usize) -> Result<usize, Error> {
        Ok(self.entry(id)?.lines.line_of(byte_index))
    }

    fn line_range(&'f self, id: usize, line_index: usize) -> Result<Range<usize>, Error> {
        let e = self.entry(id)?;
        e.lines.line_range(line_index).ok_or(Error::LineTooLarge {
            given: line_index,
            max: e.lines.len_lines() - 1,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rill_model::FileInfo;

    fn analysis(text: &str) -> Analysis {
        Analysis {
            files: vec![FileInfo {
                path: "deck.rill".into(),
                text: text.into(),
                tree: None,
            }],
            diagnostics: Vec::new(),
            case: None,
            spans: Default::default(),
        }
    }

    #[test]
    fn counts_scalar_values_not_bytes() {
        let t = "ab\nΩ😀x\n";
        let a = analysis(t);
        let s = Sources::new(&a);
        assert_eq!(s.line_col(0, 0), (1, 1));
        assert_eq!(s.line_col(0, 3), (2, 1));
        let x = t.find('x').unwrap();
        assert_eq!(s.line_col(0, x), (2, 3));
        assert_eq!(s.line_col(0, t.len()), (3, 1));
        assert_eq!(s.line_col(0, 4), (2, 1)); // inside Ω: clamped back
    }

    #[test]
    fn snippets_break_lines_as_the_language_does() {
        let t = "a = 1\rb = 2\r\nc = 3\n";
        let a = analysis(t);
        let s = Sources::new(&a);
        let c = t.find('c').unwrap();
        assert_eq!(s.line_index(0, c).unwrap(), 2);
        assert_eq!(s.line_number(0, 2).unwrap(), 3);
        assert_eq!(s.column_number(0, 2, c + 4).unwrap(), 5);
        assert_eq!(&t[s.line_range(0, 1).unwrap()], "b = 2\r\n");
        assert!(s.line_range(0, 9).is_err());
    }
}
