//! Byte offsets to 1-based line and column, columns counted in Unicode
//! scalar values as the JSON output of `check` promises.

pub struct LineIndex<'a> {
    text: &'a str,
    starts: Vec<usize>,
}

impl<'a> LineIndex<'a> {
    pub fn new(text: &'a str) -> Self {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { text, starts }
    }

    /// 1-based (line, column) of a byte offset; offsets inside a character
    /// or past the end are clamped.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let mut offset = offset.min(self.text.len());
        while !self.text.is_char_boundary(offset) {
            offset -= 1;
        }
        let line = self.starts.partition_point(|&s| s <= offset) - 1;
        let col = self.text[self.starts[line]..offset].chars().count();
        (line + 1, col + 1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_scalar_values_not_bytes() {
        let t = "ab\nΩ😀x\n";
        let idx = LineIndex::new(t);
        assert_eq!(idx.line_col(0), (1, 1));
        assert_eq!(idx.line_col(3), (2, 1));
        let x = t.find('x').unwrap();
        assert_eq!(idx.line_col(x), (2, 3));
        assert_eq!(idx.line_col(t.len()), (3, 1));
        assert_eq!(idx.line_col(4), (2, 1)); // inside Ω: clamped back
    }
}
