//! Byte offsets (what the analysis speaks) to protocol positions (line and
//! column in the negotiated encoding) and back, through `ropey`.
//!
//! Rules: offsets past the end clamp to the end, offsets inside a character
//! clamp back to its start; a column past the end of its line clamps to the
//! line's end (before `\n`, `\r\n` or `\r`), a line past the last one means
//! the end of the document, and a UTF-16 column inside a surrogate pair
//! clamps back to the start of that character.

use rill_syntax::LineIndex;
use ropey::Rope;
use tower_lsp::lsp_types::{Position, PositionEncodingKind, Range};

/// How columns are counted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Encoding {
    /// UTF-8 code units (bytes), when the client offers it.
    Utf8,
    /// UTF-16 code units, the protocol's default.
    #[default]
    Utf16,
}

impl Encoding {
    /// The encoding to use given what the client offers in
    /// `general.positionEncodings` (LSP 3.17): UTF-8 when offered, since it
    /// needs no conversion, else UTF-16, which every client must support.
    pub fn negotiate(offered: Option<&[PositionEncodingKind]>) -> Encoding {
        match offered {
            Some(list) if list.contains(&PositionEncodingKind::UTF8) => Encoding::Utf8,
            _ => Encoding::Utf16,
        }
    }

    /// The protocol's name for this encoding, as announced to the client.
    pub fn kind(self) -> PositionEncodingKind {
        match self {
            Encoding::Utf8 => PositionEncodingKind::UTF8,
            Encoding::Utf16 => PositionEncodingKind::UTF16,
        }
    }
}

/// The protocol position of byte `offset` in `rope`.
pub fn position(rope: &Rope, offset: usize, enc: Encoding) -> Position {
    let offset = offset.min(rope.len_bytes());
    // `byte_to_char` gives the character that contains the byte: this is
    // the clamp back to a character boundary.
    let ch = rope.byte_to_char(offset);
    let line = rope.char_to_line(ch);
    let col = match enc {
        Encoding::Utf8 => rope.char_to_byte(ch) - rope.line_to_byte(line),
        Encoding::Utf16 => {
            rope.char_to_utf16_cu(ch) - rope.char_to_utf16_cu(rope.line_to_char(line))
        }
    };
    Position::new(to_u32(line), to_u32(col))
}

/// The byte offset of protocol position `pos` in `rope`.
pub fn offset(rope: &Rope, pos: Position, enc: Encoding) -> usize {
    let line = pos.line as usize;
    if line >= rope.len_lines() {
        return rope.len_bytes();
    }
    let start_char = rope.line_to_char(line);
    let slice = rope.line(line);
    let content_chars = slice.len_chars() - line_ending_chars(&slice);
    let end_char = start_char + content_chars;
    let col = pos.character as usize;
    let ch = match enc {
        Encoding::Utf8 => {
            let start = rope.char_to_byte(start_char);
            let end = rope.char_to_byte(end_char);
            let target = (start + col).min(end);
            rope.byte_to_char(target)
        }
        Encoding::Utf16 => {
            let start = rope.char_to_utf16_cu(start_char);
            let end = rope.char_to_utf16_cu(end_char);
            let target = (start + col).min(end);
            // Inside a surrogate pair this gives the pair's character.
            rope.utf16_cu_to_char(target)
        }
    };
    rope.char_to_byte(ch)
}

/// The protocol position of byte `offset` in a text that is not an open
/// document (an included deck, an array file), without building a rope
/// for it: lines from the language's [`LineIndex`], which breaks lines
/// where the ropes (`cr_lines`) do, at `\n`, `\r\n` and a lone `\r`.
pub fn text_position(text: &str, lines: &LineIndex, offset: usize, enc: Encoding) -> Position {
    let (line, col) = match enc {
        Encoding::Utf8 => lines.line_col_utf8(text, offset),
        Encoding::Utf16 => lines.line_col_utf16(text, offset),
    };
    Position::new(to_u32(line), to_u32(col))
}

/// The protocol range of bytes `start..end` of a text that is not an open
/// document (see [`text_position`]).
pub fn text_range(text: &str, lines: &LineIndex, start: usize, end: usize, enc: Encoding) -> Range {
    Range::new(
        text_position(text, lines, start, enc),
        text_position(text, lines, end, enc),
    )
}

/// The protocol range of bytes `start..end` in `rope`.
pub fn range(rope: &Rope, start: usize, end: usize, enc: Encoding) -> Range {
    Range::new(position(rope, start, enc), position(rope, end, enc))
}

/// Byte span of a protocol range; a reversed range is put in order.
pub fn span(rope: &Rope, range: Range, enc: Encoding) -> (usize, usize) {
    let a = offset(rope, range.start, enc);
    let b = offset(rope, range.end, enc);
    (a.min(b), a.max(b))
}

fn line_ending_chars(line: &ropey::RopeSlice) -> usize {
    let n = line.len_chars();
    if n == 0 {
        return 0;
    }
    match line.char(n - 1) {
        '\n' if n >= 2 && line.char(n - 2) == '\r' => 2,
        '\n' | '\r' => 1,
        _ => 0,
    }
}

fn to_u32(n: usize) -> u32 {
    u32::try_from(n).unwrap_or(u32::MAX)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(line: u32, character: u32) -> Position {
        Position::new(line, character)
    }

    #[test]
    fn ascii_round_trip() {
        let r = Rope::from_str("ab\ncd\n");
        for enc in [Encoding::Utf8, Encoding::Utf16] {
            assert_eq!(position(&r, 0, enc), p(0, 0));
            assert_eq!(position(&r, 4, enc), p(1, 1));
            assert_eq!(position(&r, 6, enc), p(2, 0));
            assert_eq!(offset(&r, p(1, 1), enc), 4);
            assert_eq!(offset(&r, p(2, 0), enc), 6);
        }
    }

    #[test]
    fn columns_after_omega_and_an_emoji() {
        // Ω is 2 bytes and 1 UTF-16 unit; 😀 is 4 bytes and 2 UTF-16 units.
        let text = "kx = 1 # Ω😀x\nnext";
        let r = Rope::from_str(text);
        let x2 = text.find("x\n").unwrap();
        assert_eq!(position(&r, 1, Encoding::Utf16), p(0, 1));
        assert_eq!(position(&r, x2, Encoding::Utf16), p(0, 12));
        assert_eq!(position(&r, x2, Encoding::Utf8), p(0, 15));
        assert_eq!(offset(&r, p(0, 12), Encoding::Utf16), x2);
        assert_eq!(offset(&r, p(0, 15), Encoding::Utf8), x2);
        let emoji = text.find('😀').unwrap();
        assert_eq!(position(&r, emoji, Encoding::Utf16), p(0, 10));
        assert_eq!(offset(&r, p(0, 10), Encoding::Utf16), emoji);
        // The line after keeps plain columns.
        let n = text.find("next").unwrap();
        assert_eq!(position(&r, n + 2, Encoding::Utf16), p(1, 2));
        assert_eq!(position(&r, n + 2, Encoding::Utf8), p(1, 2));
    }

    #[test]
    fn inside_a_character_clamps_back() {
        let text = "Ω😀";
        let r = Rope::from_str(text);
        // Byte 1 is inside Ω, byte 4 inside the emoji.
        assert_eq!(position(&r, 1, Encoding::Utf16), p(0, 0));
        assert_eq!(position(&r, 4, Encoding::Utf16), p(0, 1));
        assert_eq!(position(&r, 4, Encoding::Utf8), p(0, 2));
        // UTF-16 column 2 is between the surrogates of the emoji.
        assert_eq!(offset(&r, p(0, 2), Encoding::Utf16), 2);
        // UTF-8 column 3 is inside the emoji.
        assert_eq!(offset(&r, p(0, 3), Encoding::Utf8), 2);
    }

    #[test]
    fn past_line_end_and_document_end_clamp() {
        let text = "ab\r\ncd\rΩ\n";
        let r = Rope::from_str(text);
        for enc in [Encoding::Utf8, Encoding::Utf16] {
            // Column past the end of a CRLF line stops before `\r`.
            assert_eq!(offset(&r, p(0, 99), enc), 2);
            // A lone CR ends a line too.
            assert_eq!(offset(&r, p(1, 99), enc), 6);
            assert_eq!(offset(&r, p(2, 99), enc), text.len() - 1);
            // Past the last line: end of the document.
            assert_eq!(offset(&r, p(9, 0), enc), text.len());
            assert_eq!(position(&r, 999, enc), p(3, 0));
        }
        assert_eq!(position(&r, text.len() - 1, Encoding::Utf16), p(2, 1));
        assert_eq!(position(&r, text.len() - 1, Encoding::Utf8), p(2, 2));
    }

    #[test]
    fn only_protocol_line_ends_break_lines() {
        // U+2028 and form feed are not line ends in the protocol.
        let text = "a\u{2028}b\u{c}c\nd";
        let r = Rope::from_str(text);
        let d = text.find('d').unwrap();
        assert_eq!(position(&r, d, Encoding::Utf16), p(1, 0));
        let c = text.find('c').unwrap();
        assert_eq!(position(&r, c, Encoding::Utf16), p(0, 4));
    }

    #[test]
    fn negotiation_prefers_utf8_when_offered() {
        assert_eq!(Encoding::negotiate(None), Encoding::Utf16);
        assert_eq!(
            Encoding::negotiate(Some(&[PositionEncodingKind::UTF16])),
            Encoding::Utf16
        );
        assert_eq!(
            Encoding::negotiate(Some(&[
                PositionEncodingKind::UTF16,
                PositionEncodingKind::UTF8
            ])),
            Encoding::Utf8
        );
    }

    #[test]
    fn shared_line_index_agrees_with_the_rope() {
        // Every kind of line end, empty lines, a BOM-free multibyte mix,
        // U+2028 (not a line end for either), and a text without a final break.
        let text = "a\rΩ\r\n😀b\n\r\r\nx\u{2028}y\u{c}z\r\n\n\ré😀";
        let r = Rope::from_str(text);
        let lines = LineIndex::new(text);
        for offset in 0..=text.len() + 2 {
            for enc in [Encoding::Utf8, Encoding::Utf16] {
                assert_eq!(
                    text_position(text, &lines, offset, enc),
                    position(&r, offset, enc),
                    "offset {offset}, {enc:?}"
                );
            }
        }
    }
}
