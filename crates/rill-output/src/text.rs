//! Number formatting and escaping shared by every writer.

use std::fmt::Write as _;

/// The shortest decimal text that parses back to exactly `x` (round trip).
///
/// Plain notation for magnitudes in `[1e-5, 1e16)`, exponent notation
/// (`1.5e-7`, `2e20`) outside; `-0` is written `0`; non-finite values are
/// `NaN`, `inf`, `-inf` (what Python, pandas and most spreadsheets read).
pub(crate) fn shortest(x: f64) -> String {
    let mut s = String::new();
    push_shortest(&mut s, x);
    s
}

/// [`shortest`], appended to `out`.
pub(crate) fn push_shortest(out: &mut String, x: f64) {
    if x.is_nan() {
        out.push_str("NaN");
    } else if x.is_infinite() {
        out.push_str(if x > 0.0 { "inf" } else { "-inf" });
    } else if x == 0.0 {
        out.push('0');
    } else if (1e-5..1e16).contains(&x.abs()) {
        // Rust's `Display` for f64 prints the shortest round-trip digits.
        let _ = write!(out, "{x}");
    } else {
        let _ = write!(out, "{x:e}");
    }
}

/// A value for a person to read: about five significant digits, trailing
/// zeros removed, exponent notation for very small or very large magnitudes.
pub(crate) fn human(x: f64) -> String {
    if !x.is_finite() {
        return if x.is_nan() {
            "–".to_string()
        } else {
            shortest(x)
        };
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let a = x.abs();
    if !(1e-3..1e9).contains(&a) {
        return trim_exp(&format!("{x:.3e}"));
    }
    let magnitude = a.log10().floor() as i32;
    let decimals = (4 - magnitude).clamp(0, 6) as usize;
    let s = format!("{x:.decimals$}");
    let s = trim_zeros(&s);
    if s == "-0" {
        "0".to_string()
    } else {
        group_thousands(&s)
    }
}

/// `1.500e-7` -> `1.5e-7`.
fn trim_exp(s: &str) -> String {
    match s.split_once('e') {
        Some((mantissa, exp)) => format!("{}e{}", trim_zeros(mantissa), exp),
        None => s.to_string(),
    }
}

/// `12.3400` -> `12.34`, `12.000` -> `12`.
pub(crate) fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// `1234567.5` -> `1 234 567.5` with narrow no-break spaces (SI style, no
/// ambiguity between decimal comma and point). Four-digit integers stay whole.
pub(crate) fn group_thousands(s: &str) -> String {
    let (sign, rest) = match s.strip_prefix('-') {
        Some(r) => ("-", r),
        None => ("", s),
    };
    let (int, frac) = match rest.split_once('.') {
        Some((i, f)) => (i, Some(f)),
        None => (rest, None),
    };
    if int.len() <= 4 || !int.bytes().all(|b| b.is_ascii_digit()) {
        return s.to_string();
    }
    let mut grouped = String::new();
    for (n, ch) in int.chars().enumerate() {
        if n > 0 && (int.len() - n) % 3 == 0 {
            grouped.push('\u{202F}');
        }
        grouped.push(ch);
    }
    match frac {
        Some(f) => format!("{sign}{grouped}.{f}"),
        None => format!("{sign}{grouped}"),
    }
}

/// Escapes text for HTML and XML content and attribute values alike:
/// `& < > " '`. Control characters that XML 1.0 forbids are replaced by
/// U+FFFD so that a hostile name cannot break the document.
pub(crate) fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 8);
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            '\t' | '\n' | '\r' => out.push(ch),
            c if (c as u32) < 0x20 || c == '\u{7F}' || c == '\u{FFFE}' || c == '\u{FFFF}' => {
                out.push('\u{FFFD}')
            }
            c => out.push(c),
        }
    }
    out
}

/// A CSV field, quoted when it needs to be (RFC 4180: a comma, a quote, a
/// line break, or surrounding spaces), with quotes doubled.
pub(crate) fn csv_field(s: &str) -> String {
    let needs = s.contains([',', '"', '\n', '\r'])
        || s.starts_with([' ', '\t'])
        || s.ends_with([' ', '\t']);
    if needs {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Shortens `s` to at most `max` characters, ending in an ellipsis.
pub(crate) fn ellipsize(s: &str, max: usize) -> String {
    if s.chars().count() <= max {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(max.saturating_sub(1)).collect();
        t.push('…');
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortest_round_trips() {
        for x in [
            0.1,
            1.0 / 3.0,
            2999.9999999999995,
            1e-7,
            6.02214076e23,
            -42.5,
            5e-324,
            f64::MAX,
        ] {
            let s = shortest(x);
            assert_eq!(s.parse::<f64>().unwrap(), x, "{s}");
        }
        assert_eq!(shortest(-0.0), "0");
        assert_eq!(shortest(3000.0), "3000");
        assert_eq!(shortest(1.5e-7), "1.5e-7");
        assert_eq!(shortest(f64::NAN), "NaN");
    }

    #[test]
    fn human_numbers() {
        assert_eq!(human(3012.456), "3012.5");
        assert_eq!(human(0.2), "0.2");
        assert_eq!(human(600.0), "600");
        assert_eq!(human(1234567.0), "1\u{202F}234\u{202F}567");
        assert_eq!(human(-0.00001), "-1e-5");
        assert_eq!(human(2.5e-7), "2.5e-7");
    }

    #[test]
    fn escapes_hostile_text() {
        assert_eq!(escape("<script>&\"'"), "&lt;script&gt;&amp;&quot;&#39;");
        assert_eq!(escape("a\u{0}b"), "a\u{FFFD}b");
        assert_eq!(escape("🛢 well"), "🛢 well");
    }

    #[test]
    fn csv_quoting() {
        assert_eq!(csv_field("LE-1 bhp [psi]"), "LE-1 bhp [psi]");
        assert_eq!(csv_field("A,B rate [stb/day]"), "\"A,B rate [stb/day]\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
    }
}
