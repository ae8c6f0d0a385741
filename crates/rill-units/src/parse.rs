//! Parsing unit expressions (the grammar is in the crate doc).
//!
//! Hand-written: the grammar is a few lines, and the errors name the
//! offending byte span and the nearest unit names, which a generic parser
//! would not give without as much code.

use crate::{lookup, suggest, Dim, Unit, UnitError, UnitErrorKind};

/// Largest magnitude of an exponent literal (`m^12`).
const MAX_EXPONENT: i64 = 12;
/// Deepest parenthesis nesting accepted.
const MAX_DEPTH: usize = 32;

const EXPECT_TERM: &str = "a unit name, `1` or `(`";
const EXPECT_OP: &str = "`*`, `/` or the end of the unit";
const EXPECT_OP_OR_CLOSE: &str = "`*`, `/` or `)`";

/// Parse a unit expression (see the crate doc for the grammar).
pub fn parse(text: &str) -> Result<Unit, UnitError> {
    let mut p = Parser {
        text,
        pos: 0,
        gauges: Vec::new(),
    };
    let e = p.expr(0)?;
    p.skip_ws();
    if p.pos < text.len() {
        return Err(p.syntax_here(EXPECT_OP));
    }
    if let Some(&(start, end, name)) = p.gauges.first() {
        // A gauge unit is fine only as the whole expression (parentheses
        // around it are harmless).
        if !(e.simple && p.gauges.len() == 1) {
            return Err(UnitError {
                kind: UnitErrorKind::GaugeInCompound {
                    name: name.to_string(),
                },
                start,
                end,
            });
        }
    }
    Ok(Unit {
        factor: e.factor,
        dim: e.dim,
        gauge: e.simple && !p.gauges.is_empty(),
    })
}

struct Parsed {
    factor: f64,
    dim: Dim,
    /// A single name with no operator and no exponent.
    simple: bool,
}

struct Parser<'a> {
    text: &'a str,
    pos: usize,
    /// Spans and names of the gauge units met.
    gauges: Vec<(usize, usize, &'static str)>,
}

impl Parser<'_> {
    fn skip_ws(&mut self) {
        let b = self.text.as_bytes();
        while self.pos < b.len() && b[self.pos].is_ascii_whitespace() {
            self.pos += 1;
        }
    }

    fn peek(&self) -> Option<char> {
        self.text[self.pos..].chars().next()
    }

    /// A syntax error at the token starting at `self.pos`.
    fn syntax_here(&self, expected: &str) -> UnitError {
        let (found, end) = self.token_at(self.pos);
        UnitError {
            kind: UnitErrorKind::Syntax {
                expected: expected.to_string(),
                found,
            },
            start: self.pos,
            end,
        }
    }

    /// Describe the token at `pos` and give its end.
    fn token_at(&self, pos: usize) -> (String, usize) {
        let rest = &self.text[pos..];
        let Some(c) = rest.chars().next() else {
            return ("end of input".to_string(), pos);
        };
        let len = if c.is_ascii_alphanumeric() || c == '_' || c == '.' {
            rest.find(|c: char| !(c.is_ascii_alphanumeric() || c == '_' || c == '.'))
                .unwrap_or(rest.len())
        } else {
            c.len_utf8()
        };
        (format!("`{}`", &rest[..len]), pos + len)
    }

    fn expr(&mut self, depth: usize) -> Result<Parsed, UnitError> {
        let mut acc = self.term(depth)?;
        loop {
            self.skip_ws();
            let op = match self.peek() {
                Some('*') => Op::Mul,
                Some('/') => Op::Div,
                _ => return Ok(acc),
            };
            let op_start = self.pos;
            self.pos += 1;
            let rhs = self.term(depth)?;
            let dim = match op {
                Op::Mul => acc.dim.checked_mul(rhs.dim),
                Op::Div => acc.dim.checked_div(rhs.dim),
            };
            let Some(dim) = dim else {
                return Err(overflow(op_start, self.pos));
            };
            acc = Parsed {
                factor: match op {
                    Op::Mul => acc.factor * rhs.factor,
                    Op::Div => acc.factor / rhs.factor,
                },
                dim,
                simple: false,
            };
        }
    }

    fn term(&mut self, depth: usize) -> Result<Parsed, UnitError> {
        self.skip_ws();
        let start = self.pos;
        let bytes = self.text.as_bytes();
        match self.peek() {
            Some('(') => {
                if depth >= MAX_DEPTH {
                    return Err(UnitError {
                        kind: UnitErrorKind::Syntax {
                            expected: format!("at most {MAX_DEPTH} nested parentheses"),
                            found: "deeper nesting".to_string(),
                        },
                        start,
                        end: start + 1,
                    });
                }
                self.pos += 1;
                let inner = self.expr(depth + 1)?;
                self.skip_ws();
                if self.peek() != Some(')') {
                    return Err(self.syntax_here(EXPECT_OP_OR_CLOSE));
                }
                self.pos += 1;
                self.exponent(inner, start)
            }
            Some('%') => {
                self.pos += 1;
                self.named("%", start)
            }
            Some(c) if c.is_ascii_alphabetic() => {
                let mut end = self.pos + 1;
                while end < bytes.len()
                    && (bytes[end].is_ascii_alphanumeric() || bytes[end] == b'_')
                {
                    end += 1;
                }
                self.pos = end;
                let name = &self.text[start..end];
                self.named(name, start)
            }
            Some(c) if c.is_ascii_digit() => {
                let (found, end) = self.token_at(start);
                if &self.text[start..end] == "1" {
                    self.pos = end;
                    Ok(Parsed {
                        factor: 1.0,
                        dim: Dim::NONE,
                        simple: false,
                    })
                } else {
                    Err(UnitError {
                        kind: UnitErrorKind::Syntax {
                            expected: EXPECT_TERM.to_string(),
                            found,
                        },
                        start,
                        end,
                    })
                }
            }
            _ => Err(self.syntax_here(EXPECT_TERM)),
        }
    }

    /// A name just read at `start..self.pos`, with its optional exponent.
    fn named(&mut self, name: &str, start: usize) -> Result<Parsed, UnitError> {
        let end = self.pos;
        let Some(def) = lookup(name) else {
            // A suggestion replaces the name in place: where it is a compound
            // (`stb/day`) after a `/` or before a `^`, bracket it so that the
            // meaning is kept (`1/(lb/ft^3)`).
            let after_slash = self.text[..start].trim_end().ends_with('/');
            let before_caret = self.text[end..].trim_start().starts_with('^');
            let suggestions = suggest(name)
                .into_iter()
                .map(|s| {
                    let compound = s.contains(['*', '/']);
                    if (after_slash && compound) || (before_caret && (compound || s.contains('^')))
                    {
                        format!("({s})")
                    } else {
                        s
                    }
                })
                .collect();
            return Err(UnitError {
                kind: UnitErrorKind::Unknown {
                    name: name.to_string(),
                    suggestions,
                },
                start,
                end,
            });
        };
        if def.gauge {
            self.gauges.push((start, end, def.name));
        }
        let base = Parsed {
            factor: def.factor,
            dim: def.dim,
            simple: true,
        };
        self.exponent(base, start)
    }

    /// An optional `^int` after a term that started at `start`.
    fn exponent(&mut self, base: Parsed, start: usize) -> Result<Parsed, UnitError> {
        let save = self.pos;
        self.skip_ws();
        if self.peek() != Some('^') {
            self.pos = save;
            return Ok(base);
        }
        self.pos += 1;
        self.skip_ws();
        let int_start = self.pos;
        let bytes = self.text.as_bytes();
        let mut end = self.pos;
        if end < bytes.len() && (bytes[end] == b'-' || bytes[end] == b'+') {
            end += 1;
        }
        let digits_start = end;
        while end < bytes.len() && bytes[end].is_ascii_digit() {
            end += 1;
        }
        if end == digits_start {
            self.pos = digits_start;
            return Err(self.syntax_here("an integer exponent"));
        }
        let lit = &self.text[int_start..end];
        // Saturate long literals; anything past the limit is rejected below.
        let n: i64 = lit.parse().unwrap_or(if lit.starts_with('-') {
            i64::MIN
        } else {
            i64::MAX
        });
        if !(-MAX_EXPONENT..=MAX_EXPONENT).contains(&n) {
            return Err(UnitError {
                kind: UnitErrorKind::Syntax {
                    expected: format!("an exponent from -{MAX_EXPONENT} to {MAX_EXPONENT}"),
                    found: format!("`{lit}`"),
                },
                start: int_start,
                end,
            });
        }
        self.pos = end;
        let n = n as i8;
        let Some(dim) = base.dim.checked_pow(n) else {
            return Err(overflow(start, end));
        };
        Ok(Parsed {
            factor: base.factor.powi(n as i32),
            dim,
            simple: false,
        })
    }
}

#[derive(Clone, Copy)]
enum Op {
    Mul,
    Div,
}

fn overflow(start: usize, end: usize) -> UnitError {
    UnitError {
        kind: UnitErrorKind::Syntax {
            expected: "a unit whose dimension exponents stay within -127..=127".to_string(),
            found: "a larger exponent".to_string(),
        },
        start,
        end,
    }
}
