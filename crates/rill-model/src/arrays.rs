//! Reading array files: whitespace-separated numbers with `#` comments, in
//! the same order as `cells` (i fastest, then j, then k).
//!
//! Written by hand on bytes, with `fast-float2` for the numbers, because
//! these files reach tens of megabytes (a million-cell grid per property)
//! and must be read faster than a general text parser would.

/// A malformed token in an array file: byte range and the token text.
#[derive(Debug, Clone, PartialEq)]
pub struct BadToken {
    /// Byte offset of the start of the token.
    pub start: usize,
    /// Byte offset just past its end.
    pub end: usize,
    /// The token as written.
    pub text: String,
}

/// Parse all numbers. Stops collecting errors after the first few, since a
/// wrong file tends to be wrong everywhere.
pub fn parse_numbers(bytes: &[u8]) -> (Vec<f64>, Vec<BadToken>) {
    let mut values = Vec::with_capacity(bytes.len() / 6);
    let mut errors = Vec::new();
    let mut pos = 0;
    let n = bytes.len();
    while pos < n {
        let b = bytes[pos];
        if b.is_ascii_whitespace() || b == b',' {
            pos += 1;
            continue;
        }
        if b == b'#' {
            while pos < n && bytes[pos] != b'\n' {
                pos += 1;
            }
            continue;
        }
        let start = pos;
        while pos < n
            && !bytes[pos].is_ascii_whitespace()
            && bytes[pos] != b','
            && bytes[pos] != b'#'
        {
            pos += 1;
        }
        let token = &bytes[start..pos];
        match fast_float2::parse::<f64, _>(token) {
            Ok(v) if v.is_finite() => values.push(v),
            _ => {
                if errors.len() < 5 {
                    errors.push(BadToken {
                        start,
                        end: pos,
                        text: String::from_utf8_lossy(token).into_owned(),
                    });
                }
            }
        }
    }
    (values, errors)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_comments_and_commas() {
        let (v, e) = parse_numbers(b"# header\n1 2.5\t-3e2,4\n.5 # tail\n");
        assert_eq!(v, vec![1.0, 2.5, -300.0, 4.0, 0.5]);
        assert!(e.is_empty());
    }

    #[test]
    fn bad_tokens_are_located() {
        let (v, e) = parse_numbers(b"1 x2 3 nan");
        assert_eq!(v, vec![1.0, 3.0]);
        assert_eq!(e.len(), 2);
        assert_eq!((e[0].start, e[0].end, e[0].text.as_str()), (2, 4, "x2"));
        assert_eq!(e[1].text, "nan");
    }

    #[test]
    fn empty_and_invalid_utf8() {
        assert_eq!(parse_numbers(b"").0.len(), 0);
        let (v, e) = parse_numbers(&[b'1', b' ', 0xff, 0xfe, b' ', b'2']);
        assert_eq!(v, vec![1.0, 2.0]);
        assert_eq!(e.len(), 1);
    }
}
