//! Property tests. The number of cases comes from `PROPTEST_CASES` (proptest
//! reads it; default 256 per property, a few seconds in a debug build).
//!
//! 1. Random byte strings never panic; spans stay in range and on char
//!    boundaries; a clean parse formats correctly.
//! 2. The spec deck mutated (bytes and tokens inserted, deleted, replaced,
//!    lines duplicated) never panics, keeps the span invariants, and when a
//!    mutant happens to be clean it formats correctly.
//! 3. Generated valid decks parse without errors and round-trip through the
//!    formatter: idempotent, comment-preserving, meaning-preserving.
//! 4. Token soup: lexical fragments glued by random separators (nothing,
//!    space, tab, comma, line break) inside a value, a list, a tuple or a
//!    block header. Never a panic; every soup that parses cleanly must
//!    round-trip. This hunts lexing rules that depend on what is glued,
//!    which the formatter (spacing every atom) would change.
//! 5. Decks with a grid and `cells [...]` / `columns [...]` lists (laid
//!    out one grid row per line) round-trip as in 3.

mod common;

use common::*;
use proptest::prelude::*;
use proptest::sample::select;
use rill_syntax::*;

/// With `RILL_SYNTAX_COUNT` set, prints every 100 000th case of each
/// property, so that a long campaign shows how many cases really ran.
fn count(name: &str, counter: &std::sync::atomic::AtomicUsize) {
    let n = counter.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
    if n % 100_000 == 0 && std::env::var_os("RILL_SYNTAX_COUNT").is_some() {
        eprintln!("{name}: {n} cases");
    }
}

static SOUP: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
static BYTES: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
static MUTATED: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
static DECKS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

fn check_bytes(bytes: &[u8]) {
    let (text, file) = parse_bytes(bytes);
    check_invariants(&text, &file);
    if file.errors.is_empty() {
        check_format(&text, &file);
    } else {
        assert_eq!(format(&file, &text), text);
    }
}

/// Bytes that matter to the lexer, to make random input less uniform.
const INTERESTING: &[u8] = b"[](){}=;,#\"\\-+*/.x%^0123456789 \t\n\r\namdk_eE\x00\xff\xc3\xa9";

fn byte() -> impl Strategy<Value = u8> {
    prop_oneof![any::<u8>(), select(INTERESTING)]
}

/// Tokens spliced into the deck by mutations.
const TOKENS: &[&str] = &[
    "[",
    "]",
    "(",
    ")",
    "{",
    "}",
    "\"",
    "=",
    ";",
    ",",
    "#",
    "\n",
    "\r",
    "\r\n",
    "\t",
    "..",
    "x",
    " x ",
    "-",
    "-5",
    "*",
    "/",
    "1/",
    "1e999",
    "99999999999999999999",
    "é",
    "\u{0}",
    "\u{FEFF}",
    "md",
    " at ",
    "\\",
    "\\\"",
    "^",
    "%",
    "(m",
    "1..",
    "k = 3",
    "well \"A\" {",
    "a = ",
    "}\n}",
    "[[[[",
    "((((",
    "{{{{",
    " # c\n",
    "0x1",
    ".5",
    "e",
    "\u{FFFD}",
];

#[derive(Debug, Clone)]
enum Mutation {
    InsertByte(f64, u8),
    DeleteBytes(f64, usize),
    ReplaceByte(f64, u8),
    InsertToken(f64, usize),
    ReplaceWithToken(f64, usize, usize),
    DuplicateLine(f64),
    DeleteLine(f64),
    SwapHalves(f64),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    let pos = 0.0f64..1.0;
    prop_oneof![
        (pos.clone(), byte()).prop_map(|(p, b)| Mutation::InsertByte(p, b)),
        (pos.clone(), 1usize..6).prop_map(|(p, n)| Mutation::DeleteBytes(p, n)),
        (pos.clone(), byte()).prop_map(|(p, b)| Mutation::ReplaceByte(p, b)),
        (pos.clone(), 0..TOKENS.len()).prop_map(|(p, t)| Mutation::InsertToken(p, t)),
        (pos.clone(), 1usize..4, 0..TOKENS.len())
            .prop_map(|(p, n, t)| Mutation::ReplaceWithToken(p, n, t)),
        pos.clone().prop_map(Mutation::DuplicateLine),
        pos.clone().prop_map(Mutation::DeleteLine),
        pos.prop_map(Mutation::SwapHalves),
    ]
}

fn apply(bytes: &mut Vec<u8>, m: &Mutation) {
    let at = |p: f64, len: usize| ((p * len as f64) as usize).min(len);
    let line_bounds = |b: &[u8], i: usize| {
        let start = b[..i]
            .iter()
            .rposition(|&c| c == b'\n')
            .map_or(0, |s| s + 1);
        let end = b[i..]
            .iter()
            .position(|&c| c == b'\n')
            .map_or(b.len(), |e| i + e + 1);
        (start, end)
    };
    match *m {
        Mutation::InsertByte(p, b) => {
            let i = at(p, bytes.len());
            bytes.insert(i, b);
        }
        Mutation::DeleteBytes(p, n) => {
            let i = at(p, bytes.len());
            let j = (i + n).min(bytes.len());
            bytes.drain(i..j);
        }
        Mutation::ReplaceByte(p, b) => {
            if !bytes.is_empty() {
                let i = at(p, bytes.len() - 1);
                bytes[i] = b;
            }
        }
        Mutation::InsertToken(p, t) => {
            let i = at(p, bytes.len());
            bytes.splice(i..i, TOKENS[t].bytes());
        }
        Mutation::ReplaceWithToken(p, n, t) => {
            let i = at(p, bytes.len());
            let j = (i + n).min(bytes.len());
            bytes.splice(i..j, TOKENS[t].bytes());
        }
        Mutation::DuplicateLine(p) => {
            let i = at(p, bytes.len());
            let (s, e) = line_bounds(bytes, i);
            let line: Vec<u8> = bytes[s..e].to_vec();
            bytes.splice(e..e, line);
        }
        Mutation::DeleteLine(p) => {
            let i = at(p, bytes.len());
            let (s, e) = line_bounds(bytes, i);
            bytes.drain(s..e);
        }
        Mutation::SwapHalves(p) => {
            let i = at(p, bytes.len());
            bytes.rotate_left(i);
        }
    }
}

// ---------------------------------------------------------------- generated valid decks

fn ident() -> impl Strategy<Value = String> {
    prop_oneof![
        select(vec![
            "kx", "ky", "producer", "layers", "cells", "file", "rate", "bhp", "at", "md", "field",
            "top"
        ])
        .prop_map(String::from),
        // `x` or `x` then a digit after an integer makes a size (`30 x 20`,
        // `30 x20`): not a name to generate.
        "[a-zA-Z][a-zA-Z0-9_]{0,6}".prop_filter("not x, x<digit>", |s| {
            !(s == "x" || (s.starts_with('x') && s[1..].starts_with(|c: char| c.is_ascii_digit())))
        }),
    ]
}

fn number() -> impl Strategy<Value = String> {
    prop_oneof![
        select(vec![
            "12", "-3", "0.25", ".5", "1.5e-6", "1E6", "0", "-0.5", "1e999", "007", "3.0", "-.25",
            "2e+3"
        ])
        .prop_map(String::from),
        (-100000i64..100000).prop_map(|n| n.to_string()),
        (any::<f64>())
            .prop_filter("finite", |f| f.is_finite())
            .prop_map(|f| format!("{f:e}")),
    ]
}

fn unit() -> impl Strategy<Value = String> {
    select(vec![
        "md",
        "ft",
        "psi",
        "1/psi",
        "lb/ft^3",
        "stb/day",
        "rb/stb",
        "Pa*s",
        "%",
        "cP",
        "m3",
        "ft^3",
        "stb/day/psi",
        "(m/s)^2",
        "m^-1",
        "day",
    ])
    .prop_map(String::from)
}

fn unit_gap() -> impl Strategy<Value = String> {
    select(vec![" ", " ", "\t", "  ", ""]).prop_map(String::from)
}

fn string_lit() -> impl Strategy<Value = String> {
    prop::collection::vec(
        prop_oneof![
            "[a-z0-9 ,.#{}\\[\\]()=;-]".prop_map(|s| s),
            Just("\\\"".to_string()),
            Just("\\\\".to_string()),
            Just("é⛽".to_string()),
            Just("\t".to_string()),
        ],
        0..6,
    )
    .prop_map(|parts| format!("\"{}\"", parts.concat()))
}

fn scalar() -> impl Strategy<Value = String> {
    prop_oneof![
        3 => number(),
        3 => (number(), unit_gap(), unit()).prop_map(|(n, g, u)| format!("{n}{g}{u}")),
        2 => ident(),
        1 => string_lit(),
        1 => (string_lit(), unit()).prop_map(|(s, u)| format!("{s} {u}")),
        1 => (-50i64..50, -50i64..50).prop_map(|(a, b)| format!("{a}..{b}")),
        1 => (prop::collection::vec(0u64..1000, 2..4), select(vec![" x ", "x", " x", "\tx "]))
            .prop_map(|(v, sep)| v.iter().map(|n| n.to_string()).collect::<Vec<_>>().join(sep)),
    ]
}

/// Separators inside brackets: whitespace, commas, line breaks, comments.
fn list_sep() -> impl Strategy<Value = String> {
    prop_oneof![
        6 => Just(" ".to_string()),
        2 => Just(", ".to_string()),
        1 => Just(",".to_string()),
        1 => Just("\n    ".to_string()),
        1 => Just(" ,\n".to_string()),
        1 => "[a-z ]{0,8}".prop_map(|c| format!("  # {c}\n  ")),
    ]
}

fn atom() -> impl Strategy<Value = String> {
    scalar().prop_recursive(4, 48, 8, |inner| {
        prop_oneof![
            (
                prop::collection::vec((inner.clone(), list_sep()), 0..8),
                prop::option::of(unit()),
                list_sep()
            )
                .prop_map(|(items, u, first)| {
                    let mut s = String::from("[");
                    if first.contains('#') {
                        s.push_str(&first);
                    }
                    for (i, (it, sep)) in items.iter().enumerate() {
                        s.push_str(it);
                        if i + 1 < items.len() {
                            s.push_str(sep);
                        }
                    }
                    s.push(']');
                    if let Some(u) = u {
                        s.push(' ');
                        s.push_str(&u);
                    }
                    s
                }),
            (prop::collection::vec((inner, list_sep()), 1..4)).prop_map(|items| {
                let parts: Vec<String> = items.iter().map(|(a, _)| a.clone()).collect();
                let sep = if items[0].1.contains('\n') {
                    ",\n  "
                } else {
                    ", "
                };
                format!("({})", parts.join(sep))
            }),
        ]
    })
}

fn value() -> impl Strategy<Value = String> {
    let op = select(vec![" * ", " + ", " - ", " / ", "*", "-", "+", " -"]);
    (
        atom(),
        prop::collection::vec((op, atom()), 0..3),
        prop::collection::vec(atom(), 0..2),
    )
        .prop_map(|(first, rest, more)| {
            let mut s = first;
            for (o, a) in rest {
                s.push_str(o);
                s.push_str(&a);
            }
            for a in more {
                s.push(' ');
                s.push_str(&a);
            }
            s
        })
}

fn trailing() -> impl Strategy<Value = String> {
    prop_oneof![4 => Just(String::new()), 1 => "[a-z #]{0,10}".prop_map(|c| format!("   # {c}"))]
}

fn statement() -> impl Strategy<Value = String> {
    (ident(), select(vec![" = ", "=", "\t= ", " =  "]), value())
        .prop_map(|(k, eq, v)| format!("{k}{eq}{v}"))
}

fn header_arg() -> impl Strategy<Value = String> {
    prop_oneof![
        string_lit(),
        (number(), unit()).prop_map(|(n, u)| format!("{n} {u}")),
        (select(vec!["i", "j", "k"]), scalar()).prop_map(|(k, v)| format!("{k} = {v}")),
        ident(),
    ]
}

#[derive(Debug, Clone)]
enum GenItem {
    Statement(String, String),
    Directive(String, String),
    Block {
        head: String,
        items: Vec<GenItem>,
        one_line: bool,
        comment: String,
    },
    Comment(String),
}

fn item() -> impl Strategy<Value = GenItem> {
    let leaf = prop_oneof![
        6 => (statement(), trailing()).prop_map(|(s, t)| GenItem::Statement(s, t)),
        1 => (ident(), prop::collection::vec(header_arg(), 0..2), trailing())
            .prop_map(|(n, a, t)| GenItem::Directive(format!("{n} {}", a.join(" ")), t)),
        1 => "[a-z #]{0,12}".prop_map(|c| GenItem::Comment(format!("# {c}"))),
    ];
    leaf.prop_recursive(3, 40, 6, |inner| {
        (
            ident(),
            prop::collection::vec(header_arg(), 0..3),
            prop::collection::vec(inner, 0..6),
            any::<bool>(),
            trailing(),
        )
            .prop_map(|(n, args, items, one_line, comment)| GenItem::Block {
                head: format!("{n} {}", args.join(" ")),
                items,
                one_line,
                comment,
            })
    })
}

fn render(
    item: &GenItem,
    level: usize,
    out: &mut String,
    seps: &mut impl Iterator<Item = &'static str>,
) {
    let ind = "  ".repeat(level);
    match item {
        GenItem::Statement(s, t) | GenItem::Directive(s, t) => {
            out.push_str(&ind);
            out.push_str(s);
            out.push_str(t);
        }
        GenItem::Comment(c) => {
            out.push_str(&ind);
            out.push_str(c);
        }
        GenItem::Block {
            head,
            items,
            one_line,
            comment,
        } => {
            out.push_str(&ind);
            out.push_str(head);
            out.push_str(" {");
            let inline = *one_line && items.iter().all(|i| !matches!(i, GenItem::Comment(_)));
            if inline {
                for (n, it) in items.iter().enumerate() {
                    out.push_str(if n == 0 { " " } else { "; " });
                    let mut s = String::new();
                    match it {
                        // Inline: no trailing comments (they would eat the `}`).
                        GenItem::Statement(st, _) | GenItem::Directive(st, _) => s.push_str(st),
                        other => render(other, 0, &mut s, seps),
                    }
                    out.push_str(&s);
                }
                out.push_str(" }");
            } else {
                out.push_str(comment);
                out.push('\n');
                for it in items {
                    render(it, level + 1, out, seps);
                    out.push_str(seps.next().unwrap_or("\n"));
                }
                out.push_str(&ind);
                out.push('}');
            }
        }
    }
}

fn deck() -> impl Strategy<Value = String> {
    (
        prop::collection::vec(item(), 0..8),
        prop::collection::vec(
            select(vec!["\n", "\n", "\n", "\n\n", "\n\n\n", ";\n", "\n \t\n"]),
            64,
        ),
        any::<bool>(),
        select(vec!["", "\n", "\n\n"]),
    )
        .prop_map(|(items, seps, crlf, lead)| {
            let mut out = String::from(lead);
            let mut it = seps.into_iter().cycle();
            for item in &items {
                let mut s = String::new();
                render(item, 0, &mut s, &mut it);
                out.push_str(&s);
                // `;` cannot follow a comment on the same line: it would be part of it.
                let sep = it.next().unwrap_or("\n");
                out.push_str(
                    if sep.starts_with(';') && s.lines().last().is_some_and(|l| l.contains('#')) {
                        "\n"
                    } else {
                        sep
                    },
                );
            }
            if crlf {
                out = out.replace('\n', "\r\n");
            }
            out
        })
}

const FRAGMENTS: &[&str] = &[
    "0",
    "1",
    "12",
    "007",
    ".5",
    "1.5",
    "1e3",
    "2e+3",
    "-3",
    "-",
    "+",
    "*",
    "/",
    "..",
    "%",
    "^",
    "^2",
    "(",
    ")",
    "[",
    "]",
    ",",
    "x",
    "x1",
    "x 2",
    "md",
    "at",
    "e",
    "e3",
    "ft",
    "m",
    "1/",
    "\"s\"",
    "\"a\\\"b\"",
    "=",
    "k =",
    ";",
    "#c\n",
    "{",
    "}",
    "(m)",
    "(1)",
    "1/(",
    "-.5",
    "1..",
    "..3",
    "x2",
    "\r",
    "\r\n",
    "m^-1",
    "1*",
    "_",
    "é",
    "\u{0}",
    "1..5",
    "3 x 4",
];

fn soup() -> impl Strategy<Value = String> {
    (
        prop::collection::vec(
            (
                0..FRAGMENTS.len(),
                select(vec!["", "", " ", " ", "\t", ",", "\n"]),
            ),
            1..16,
        ),
        select(vec![
            "x = {}\n",
            "x = [{}]\n",
            "x = ({})\n",
            "p {} {{\n}}\n",
            "x = [{}] md\n",
            "w {{ x = {} }}\n",
        ]),
    )
        .prop_map(|(parts, shape)| {
            let mut body = String::new();
            for (f, sep) in parts {
                body.push_str(FRAGMENTS[f]);
                body.push_str(sep);
            }
            shape
                .replace("{}", &body)
                .replace("{{", "{")
                .replace("}}", "}")
        })
}

static GRID_ARRAYS: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

/// A deck with a grid and `cells [...]` / `columns [...]` lists of numbers
/// (some with units, some wide, with commas, line breaks and comments
/// between items), nested at a random depth, sometimes in a one-line block.
fn grid_array_deck() -> impl Strategy<Value = String> {
    (
        1u64..40,
        1u64..4,
        1u64..3,
        select(vec!["cells", "columns"]),
        prop::collection::vec(
            (
                prop_oneof![
                    4 => number(),
                    1 => (number(), unit()).prop_map(|(n, u)| format!("{n} {u}")),
                ],
                list_sep(),
            ),
            0..90,
        ),
        0usize..3,
        any::<bool>(),
        prop::option::of(unit()),
    )
        .prop_map(|(nx, ny, nz, form, items, depth, one_line, unit)| {
            let list: String = items.iter().map(|(v, sep)| format!("{v}{sep}")).collect();
            let unit = unit.map(|u| format!(" {u}")).unwrap_or_default();
            let statement = format!("kx = {form} [{list}]{unit} * 2");
            let mut body = statement;
            for level in 0..depth {
                body = if one_line && level == 0 && !body.contains('\n') && !body.contains('#') {
                    format!("patch i = 1 {{ {body} }}")
                } else {
                    format!("patch i = 1 {{\n{body}\n}}")
                };
            }
            format!("grid {{\n  cells = {nx} x {ny} x {nz}\n}}\n\nrock {{\n{body}\n}}\n")
        })
}

proptest! {
    #[test]
    fn grid_arrays_round_trip(text in grid_array_deck()) {
        count("grid_arrays_round_trip", &GRID_ARRAYS);
        let file = parse(&text);
        prop_assert!(file.errors.is_empty(), "generated deck has errors {:#?}\n{}", file.errors, text);
        check_invariants(&text, &file);
        check_format(&text, &file);
    }

    #[test]
    fn token_soup_round_trips(text in soup()) {
        count("token_soup_round_trips", &SOUP);
        check_bytes(text.as_bytes());
    }

    #[test]
    fn random_bytes_never_panic(bytes in prop::collection::vec(byte(), 0..400)) {
        count("random_bytes_never_panic", &BYTES);
        check_bytes(&bytes);
    }

    #[test]
    fn mutated_deck_never_panics(
        clean in any::<bool>(),
        muts in prop::collection::vec(mutation(), 1..8),
    ) {
        count("mutated_deck_never_panics", &MUTATED);
        let mut bytes = if clean { clean_deck().into_bytes() } else { SPEC_DECK.as_bytes().to_vec() };
        for m in &muts {
            apply(&mut bytes, m);
        }
        check_bytes(&bytes);
    }

    #[test]
    fn generated_decks_round_trip(text in deck()) {
        count("generated_decks_round_trip", &DECKS);
        let file = parse(&text);
        prop_assert!(file.errors.is_empty(), "generated deck has errors {:#?}\n{}", file.errors, text);
        check_invariants(&text, &file);
        check_format(&text, &file);
    }
}
