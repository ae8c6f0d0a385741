//! Line starts and byte offset to line and column, with the language's own
//! line breaks: `\n`, `\r\n` and a lone `\r`.
//!
//! Every front end that turns a span into a line number goes through
//! [`LineIndex`], so that the command line (text and JSON) and the server
//! agree on every file, whatever its line ends.

/// The start of every line of a text.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct LineIndex {
    /// Byte offset of the first character of each line; the first is 0.
    starts: Vec<usize>,
    len: usize,
}

impl LineIndex {
    /// Indexes `text`: a line ends after `\n`, after `\r\n`, or after a `\r`
    /// not followed by `\n`.
    pub fn new(text: &str) -> Self {
        let bytes = text.as_bytes();
        let mut starts = vec![0];
        let mut i = 0;
        while let Some(p) = bytes[i..].iter().position(|&b| b == b'\n' || b == b'\r') {
            let at = i + p;
            let next = if bytes[at] == b'\r' && bytes.get(at + 1) == Some(&b'\n') {
                at + 2
            } else {
                at + 1
            };
            starts.push(next);
            i = next;
        }
        LineIndex {
            starts,
            len: text.len(),
        }
    }

    /// Byte offsets where the lines start, the first being 0. A text that
    /// ends with a line break has an empty last line starting at its length.
    pub fn line_starts(&self) -> &[usize] {
        &self.starts
    }

    /// Number of lines (at least 1).
    pub fn len_lines(&self) -> usize {
        self.starts.len()
    }

    /// 0-based line that contains byte `offset` (clamped to the text).
    pub fn line_of(&self, offset: usize) -> usize {
        let offset = offset.min(self.len);
        self.starts.partition_point(|&s| s <= offset) - 1
    }

    /// Byte range of 0-based line `line` including its line break, or
    /// `None` past the last line.
    pub fn line_range(&self, line: usize) -> Option<std::ops::Range<usize>> {
        let start = *self.starts.get(line)?;
        let end = self.starts.get(line + 1).copied().unwrap_or(self.len);
        Some(start..end)
    }

    /// 1-based (line, column) of byte `offset` in `text` (the text that was
    /// indexed), the column counted in Unicode scalar values. Offsets past
    /// the end clamp to the end, offsets inside a character to its start.
    pub fn line_col(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(text, offset);
        let line = self.line_of(offset);
        let col = text[self.starts[line]..offset].chars().count();
        (line + 1, col + 1)
    }

    /// 0-based (line, column) of byte `offset` in `text`, the column counted
    /// in UTF-16 code units (the language server protocol's default), with
    /// the same clamping as [`LineIndex::line_col`].
    pub fn line_col_utf16(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(text, offset);
        let line = self.line_of(offset);
        let col = text[self.starts[line]..offset]
            .chars()
            .map(char::len_utf16)
            .sum();
        (line, col)
    }
}

impl LineIndex {
    /// 0-based (line, column) of byte `offset` in `text`, the column in
    /// bytes (UTF-8 code units), with the same clamping as
    /// [`LineIndex::line_col`].
    pub fn line_col_utf8(&self, text: &str, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(text, offset);
        let line = self.line_of(offset);
        (line, offset - self.starts[line])
    }
}

/// `offset` clamped into `text` and moved back to a character boundary.
fn floor_char_boundary(text: &str, offset: usize) -> usize {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    offset
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn breaks_at_lf_crlf_and_lone_cr() {
        let t = "a\nb\r\nc\rd";
        let idx = LineIndex::new(t);
        assert_eq!(idx.line_starts(), &[0, 2, 5, 7]);
        assert_eq!(idx.line_col(t, t.find('d').unwrap()), (4, 1));
        assert_eq!(idx.line_col(t, t.find('c').unwrap()), (3, 1));
        // The `\n` of a `\r\n` belongs to the line it ends.
        assert_eq!(idx.line_col(t, 4), (2, 3));
        assert_eq!(idx.line_range(1), Some(2..5));
        assert_eq!(idx.line_range(3), Some(7..8));
        assert_eq!(idx.line_range(4), None);
    }

    #[test]
    fn counts_scalar_values_and_utf16_units() {
        let t = "ab\r😀x\n";
        let idx = LineIndex::new(t);
        let x = t.find('x').unwrap();
        assert_eq!(idx.line_col(t, x), (2, 2));
        assert_eq!(idx.line_col_utf16(t, x), (1, 2));
        // Inside the emoji: back to its start.
        assert_eq!(idx.line_col(t, 4), (2, 1));
        assert_eq!(idx.line_col(t, t.len() + 5), (3, 1));
        assert_eq!(idx.len_lines(), 3);
    }
}
