//! Tokens, constructs, spans, errors and recovery of the parser.

mod common;

use common::*;
use rill_syntax::*;

// ---------------------------------------------------------------- helpers

fn clean(text: &str) -> SourceFile {
    let f = check_all(text);
    assert!(
        f.errors.is_empty(),
        "unexpected errors in {text:?}: {:#?}",
        f.errors
    );
    f
}

/// The atoms of the only statement of `key = <value>`, without spans.
fn value(v: &str) -> Vec<AtomKind> {
    let text = format!("key = {v}\n");
    let f = clean(&text);
    assert_eq!(f.items.len(), 1, "{text:?}");
    match &strip_spans(&f.items)[0] {
        Item::Statement(s) => s.value.atoms.iter().map(|a| a.kind.clone()).collect(),
        other => panic!("not a statement: {other:?}"),
    }
}

fn one(v: &str) -> AtomKind {
    let mut atoms = value(v);
    assert_eq!(atoms.len(), 1, "{v:?} gave {atoms:?}");
    atoms.remove(0)
}

fn unit(text: &str) -> Option<UnitExpr> {
    Some(UnitExpr {
        text: text.to_string(),
        span: Span::default(),
    })
}

fn num(raw: &str) -> AtomKind {
    AtomKind::Number {
        value: raw.parse().unwrap(),
        raw: raw.to_string(),
        unit: None,
    }
}

fn qty(raw: &str, u: &str) -> AtomKind {
    AtomKind::Number {
        value: raw.parse().unwrap(),
        raw: raw.to_string(),
        unit: unit(u),
    }
}

fn id(name: &str) -> AtomKind {
    AtomKind::Ident(name.to_string())
}

fn atom(kind: AtomKind) -> Atom {
    Atom {
        kind,
        span: Span::default(),
    }
}

fn list(items: Vec<AtomKind>, u: Option<&str>) -> AtomKind {
    AtomKind::List {
        items: items.into_iter().map(atom).collect(),
        unit: u.and_then(unit),
        close: Some(Span::default()),
    }
}

fn tuple(items: Vec<AtomKind>) -> AtomKind {
    AtomKind::Tuple {
        items: items.into_iter().map(atom).collect(),
        close: Some(Span::default()),
    }
}

fn errors(text: &str) -> Vec<(SyntaxErrorKind, usize, usize, String, String)> {
    let f = check_all(text);
    f.errors
        .iter()
        .map(|e| {
            (
                e.kind.clone(),
                e.span.start,
                e.span.end,
                e.expected.clone(),
                e.found.clone(),
            )
        })
        .collect()
}

fn at(text: &str, needle: &str) -> usize {
    text.find(needle)
        .unwrap_or_else(|| panic!("{needle:?} not in text"))
}

// ---------------------------------------------------------------- tokens

#[test]
fn numbers() {
    for raw in [
        "12", "-3", "0.25", ".5", "1.5e-6", "1E6", "1e+3", "-.5", "007", "0",
    ] {
        assert_eq!(one(raw), num(raw), "{raw}");
    }
    match one("1e999") {
        AtomKind::Number { value, raw, .. } => {
            assert!(value.is_infinite());
            assert_eq!(raw, "1e999");
        }
        other => panic!("{other:?}"),
    }
    let long = "9".repeat(400);
    assert_eq!(
        one(&long),
        AtomKind::Number {
            value: long.parse().unwrap(),
            raw: long.clone(),
            unit: None
        }
    );
}

#[test]
fn identifiers() {
    assert_eq!(one("producer"), id("producer"));
    assert_eq!(one("bhp_limit2"), id("bhp_limit2"));
    assert_eq!(one("at"), id("at"));
    // `_` or a digit cannot start an identifier.
    assert!(!errors("key = _x\n").is_empty());
}

#[test]
fn strings_and_escapes() {
    assert_eq!(
        one(r#""pilot producer, 1 year""#),
        AtomKind::Str {
            value: "pilot producer, 1 year".into(),
            unit: None
        }
    );
    assert_eq!(
        one(r#""say \"hi\" \\ bye""#),
        AtomKind::Str {
            value: r#"say "hi" \ bye"#.into(),
            unit: None
        }
    );
    assert_eq!(
        one(r#""""#),
        AtomKind::Str {
            value: String::new(),
            unit: None
        }
    );
    assert_eq!(
        one("\"héllo # not a comment\""),
        AtomKind::Str {
            value: "héllo # not a comment".into(),
            unit: None
        }
    );
    assert_eq!(
        value(r#"file "kx.txt" md"#),
        vec![
            id("file"),
            AtomKind::Str {
                value: "kx.txt".into(),
                unit: unit("md")
            }
        ]
    );
}

#[test]
fn quantities_and_units() {
    for (text, raw, u) in [
        ("250 md", "250", "md"),
        ("4.5e-6 1/psi", "4.5e-6", "1/psi"),
        ("62.4 lb/ft^3", "62.4", "lb/ft^3"),
        ("800 stb/day", "800", "stb/day"),
        ("0.8 cP", "0.8", "cP"),
        ("1 m3", "1", "m3"),
        ("3 ft^3", "3", "ft^3"),
        ("1.02 rb/stb", "1.02", "rb/stb"),
        ("1e-3 Pa*s", "1e-3", "Pa*s"),
        ("22 %", "22", "%"),
        ("22%", "22", "%"),
        ("250md", "250", "md"),
        ("2 stb/day/psi", "2", "stb/day/psi"),
        ("5\tft", "5", "ft"),
        ("1 (m/s)^2", "1", "(m/s)^2"),
        ("1 m^-1", "1", "m^-1"),
        ("-600 stb/day", "-600", "stb/day"),
    ] {
        assert_eq!(one(text), qty(raw, u), "{text}");
    }
}

#[test]
fn at_is_not_a_unit() {
    assert_eq!(
        value("3200 psi at 7150 ft"),
        vec![qty("3200", "psi"), id("at"), qty("7150", "ft")]
    );
    assert_eq!(
        value("3200 at 7150"),
        vec![num("3200"), id("at"), num("7150")]
    );
}

#[test]
fn sizes() {
    let size = AtomKind::Size(vec![30, 20, 4]);
    for text in [
        "30 x 20 x 4",
        "30x20x4",
        "30 x20 x 4",
        "30x 20 x4",
        "30\tx\t20 x 4",
    ] {
        assert_eq!(one(text), size, "{text}");
    }
    assert_eq!(one("30 x 20"), AtomKind::Size(vec![30, 20]));
    // `x` not followed by an integer is a unit (or a name).
    assert_eq!(one("3 x"), qty("3", "x"));
    assert_eq!(value("30 x 20 x 4 y"), vec![size.clone(), id("y")]);
    // What is glued after the last integer does not change the size.
    assert_eq!(
        value("30 x20a"),
        vec![AtomKind::Size(vec![30, 20]), id("a")]
    );
    assert_eq!(
        value("30 x 20Ux 4"),
        vec![AtomKind::Size(vec![30, 20]), id("Ux"), num("4")]
    );
    // Glued text after a part does not matter, except `..`.
    assert_eq!(
        value("30 x 2.5"),
        vec![AtomKind::Size(vec![30, 2]), num(".5")]
    );
    assert_eq!(
        value("30 x 2e3"),
        vec![AtomKind::Size(vec![30, 2]), id("e3")]
    );
    assert_eq!(
        value("0x10.1 day"),
        vec![AtomKind::Size(vec![0, 10]), qty(".1", "day")]
    );
    assert_eq!(
        value("0 x 0 x 1..2"),
        vec![
            AtomKind::Size(vec![0, 0]),
            id("x"),
            AtomKind::Range { start: 1, end: 2 }
        ]
    );
    assert_eq!(
        value("0 x 1..2"),
        vec![qty("0", "x"), AtomKind::Range { start: 1, end: 2 }]
    );
    // A negative or decimal number never starts a size.
    assert_eq!(value("2.5 x 3"), vec![qty("2.5", "x"), num("3")]);
    assert_eq!(value("-2 x 3"), vec![qty("-2", "x"), num("3")]);
}

#[test]
fn ranges() {
    assert_eq!(one("1..5"), AtomKind::Range { start: 1, end: 5 });
    assert_eq!(one("-2..-1"), AtomKind::Range { start: -2, end: -1 });
    assert_eq!(one("12..14"), AtomKind::Range { start: 12, end: 14 });
    // `1..5` is not `1.` then `.5`.
    assert_ne!(one("1..5"), num("1."));
}

#[test]
fn lists() {
    let l = list(
        vec![num("150"), num("40"), num("300"), num("90")],
        Some("md"),
    );
    assert_eq!(
        value("layers [150 40 300 90] md"),
        vec![id("layers"), l.clone()]
    );
    assert_eq!(
        value("layers [150, 40,300 ,90] md"),
        vec![id("layers"), l.clone()]
    );
    assert_eq!(
        value("layers [\n  150 40   # first two\n  300\n  90\n] md"),
        vec![id("layers"), l]
    );
    assert_eq!(one("[]"), list(vec![], None));
    assert_eq!(one("[1, 2,]"), list(vec![num("1"), num("2")], None));
    assert_eq!(
        one("[[1 2] [3]] ft"),
        list(
            vec![
                list(vec![num("1"), num("2")], None),
                list(vec![num("3")], None)
            ],
            Some("ft")
        )
    );
    assert_eq!(
        one("[1 md 2 md]"),
        list(vec![qty("1", "md"), qty("2", "md")], None)
    );
    assert_eq!(one("[1, md]"), list(vec![num("1"), id("md")], None));
    // A unit never crosses a line break.
    assert_eq!(one("[1\nmd]"), list(vec![num("1"), id("md")], None));
    assert_eq!(
        one("[(15, 10, 1), (16, 10, 2)]"),
        list(
            vec![
                tuple(vec![num("15"), num("10"), num("1")]),
                tuple(vec![num("16"), num("10"), num("2")]),
            ],
            None
        )
    );
}

#[test]
fn tuples() {
    assert_eq!(
        one("(15, 10, 1)"),
        tuple(vec![num("15"), num("10"), num("1")])
    );
    assert_eq!(one("(15, 10)"), tuple(vec![num("15"), num("10")]));
    assert_eq!(
        one("(1..3, 2, 4..5)"),
        tuple(vec![
            AtomKind::Range { start: 1, end: 3 },
            num("2"),
            AtomKind::Range { start: 4, end: 5 }
        ])
    );
    assert_eq!(one("(15,\n 10)"), tuple(vec![num("15"), num("10")]));
    assert_eq!(one("(1,-2)"), tuple(vec![num("1"), num("-2")]));
}

#[test]
fn operators_and_signs() {
    let op = AtomKind::Op;
    assert_eq!(value("0.1 * kx"), vec![num("0.1"), op(Op::Mul), id("kx")]);
    assert_eq!(
        value("kx * 2 + 5 md"),
        vec![id("kx"), op(Op::Mul), num("2"), op(Op::Add), qty("5", "md")]
    );
    assert_eq!(
        value("kx - 5 md"),
        vec![id("kx"), op(Op::Sub), qty("5", "md")]
    );
    assert_eq!(
        value("kx-5 md"),
        vec![id("kx"), op(Op::Sub), qty("5", "md")]
    );
    assert_eq!(value("kx * -1"), vec![id("kx"), op(Op::Mul), num("-1")]);
    assert_eq!(value("kx / 2"), vec![id("kx"), op(Op::Div), num("2")]);
    assert_eq!(value("2*kx"), vec![num("2"), op(Op::Mul), id("kx")]);
    assert_eq!(value("10 / 2"), vec![num("10"), op(Op::Div), num("2")]);
    // A spaced `-` glued to a digit is a sign: two atoms, no operator.
    assert_eq!(value("kx -5 md"), vec![id("kx"), qty("-5", "md")]);
    assert_eq!(value("- kx"), vec![op(Op::Sub), id("kx")]);
    assert_eq!(
        value("rate -600 stb/day"),
        vec![id("rate"), qty("-600", "stb/day")]
    );
    assert_eq!(
        one("[1 -2 - 3 -4]"),
        list(
            vec![num("1"), num("-2"), op(Op::Sub), num("3"), num("-4")],
            None
        )
    );
    assert_eq!(
        value("[1]-2"),
        vec![list(vec![num("1")], None), op(Op::Sub), num("2")]
    );
    assert_eq!(
        value("300 1/90"),
        vec![num("300"), num("1"), op(Op::Div), num("90")]
    );
    assert_eq!(
        value("[] md*1..3"),
        vec![
            list(vec![], Some("md")),
            op(Op::Mul),
            AtomKind::Range { start: 1, end: 3 }
        ]
    );
    assert_eq!(value("5 md*2"), vec![qty("5", "md"), op(Op::Mul), num("2")]);
}

#[test]
fn statements_end_at_newline_semicolon_and_brace() {
    let f = clean("a = 1; b = 2\nc = 3\r\nd = 4\re = 5");
    let keys: Vec<&str> = f
        .items
        .iter()
        .map(|i| match i {
            Item::Statement(s) => s.key.name.as_str(),
            _ => "?",
        })
        .collect();
    assert_eq!(keys, ["a", "b", "c", "d", "e"]);
    let f = clean("well \"A\" { control = bhp 1500 psi }\n");
    let Item::Block(b) = &f.items[0] else {
        panic!()
    };
    assert_eq!(b.items.len(), 1);
    let f = clean("at 180 day { well \"LE-1\" { control = bhp 1500 psi } }");
    let Item::Block(b) = &f.items[0] else {
        panic!()
    };
    assert_eq!((b.name.name.as_str(), b.args.len()), ("at", 1));
    let Item::Block(inner) = &b.items[0] else {
        panic!()
    };
    assert_eq!(inner.items.len(), 1);
    clean(";;\n;\n");
}

#[test]
fn blocks_and_headers() {
    let f = clean("patch i = 12..14 k = 3 {\n  kz = 0 md\n}\n");
    let stripped = strip_spans(&f.items);
    let Item::Block(b) = &stripped[0] else {
        panic!()
    };
    assert_eq!(b.name.name, "patch");
    let sel = |k: &str, v: AtomKind| {
        atom(AtomKind::Selector {
            key: Ident {
                name: k.into(),
                span: Span::default(),
            },
            value: Box::new(atom(v)),
        })
    };
    assert_eq!(
        b.args,
        vec![
            sel("i", AtomKind::Range { start: 12, end: 14 }),
            sel("k", num("3"))
        ]
    );
    let f = clean("well \"LE-1\" {}\nfluid \"formation water\" {\n}\nat 180 day {\n}\n");
    let Item::Block(b) = &strip_spans(&f.items)[2] else {
        panic!()
    };
    assert_eq!(b.args, vec![atom(qty("180", "day"))]);
    assert_eq!(b.name.name, "at");
}

#[test]
fn directives() {
    let f = clean("include \"more-wells.rill\"   # top level only\nrock\n");
    let stripped = strip_spans(&f.items);
    let Item::Directive(d) = &stripped[0] else {
        panic!()
    };
    assert_eq!(d.name.name, "include");
    assert_eq!(
        d.args,
        vec![atom(AtomKind::Str {
            value: "more-wells.rill".into(),
            unit: None
        })]
    );
    let Item::Directive(d) = &stripped[1] else {
        panic!()
    };
    assert!(d.args.is_empty());
}

#[test]
fn comments_are_collected() {
    let text = "# head\na = 1 # trailing\nb = [1 # in list\n 2]\n#\n";
    let f = clean(text);
    let texts: Vec<&str> = f.comments.iter().map(|c| c.text.as_str()).collect();
    assert_eq!(texts, [" head", " trailing", " in list", ""]);
    assert_eq!(
        f.comments[1].span,
        Span::new(at(text, "# trailing"), at(text, "# trailing") + 10)
    );
    let f = clean("a = 1 # crlf\r\n");
    assert_eq!(f.comments[0].text, " crlf");
}

// ---------------------------------------------------------------- the spec deck

#[test]
fn spec_deck_parses_with_one_error_for_the_elision() {
    let text = SPEC_DECK;
    let f = check_all(text);
    assert_eq!(f.errors.len(), 1, "{:#?}", f.errors);
    let e = &f.errors[0];
    assert_eq!(e.kind, SyntaxErrorKind::Unexpected);
    assert_eq!(e.span, Span::new(at(text, "..."), at(text, "...") + 3));
    assert_eq!(e.found, "`...`");
    let names: Vec<&str> = f
        .items
        .iter()
        .map(|i| match i {
            Item::Block(b) => b.name.name.as_str(),
            Item::Directive(d) => d.name.name.as_str(),
            Item::Statement(s) => s.key.name.as_str(),
        })
        .collect();
    assert_eq!(
        names,
        [
            "case", "grid", "rock", "fluid", "initial", "well", "boundary", "timeline", "report",
            "include"
        ]
    );
    assert_eq!(f.comments.len(), 24);
}

fn find_statement<'a>(items: &'a [Item], key: &str) -> Option<&'a Statement> {
    for item in items {
        match item {
            Item::Statement(s) if s.key.name == key => return Some(s),
            Item::Block(b) => {
                if let Some(s) = find_statement(&b.items, key) {
                    return Some(s);
                }
            }
            _ => {}
        }
    }
    None
}

#[test]
fn spec_deck_values() {
    let text = clean_deck();
    let f = clean(&text);
    let v = |key: &str| -> Vec<AtomKind> {
        let s = find_statement(&f.items, key).unwrap_or_else(|| panic!("{key}"));
        strip_spans(&[Item::Statement(s.clone())])
            .into_iter()
            .next()
            .map(|i| match i {
                Item::Statement(s) => s.value.atoms.into_iter().map(|a| a.kind).collect(),
                _ => unreachable!(),
            })
            .unwrap()
    };
    assert_eq!(
        v("title"),
        vec![AtomKind::Str {
            value: "pilot producer, 1 year".into(),
            unit: None
        }]
    );
    assert_eq!(v("cells"), vec![AtomKind::Size(vec![30, 20, 4])]);
    assert_eq!(v("dx"), vec![qty("50", "ft")]);
    assert_eq!(
        v("dz"),
        vec![list(
            vec![num("20"), num("15"), num("15"), num("30")],
            Some("ft")
        )]
    );
    assert_eq!(v("porosity"), vec![num("0.22")]);
    assert_eq!(v("ky"), vec![id("kx")]);
    assert_eq!(v("kz"), vec![num("0.1"), AtomKind::Op(Op::Mul), id("kx")]);
    assert_eq!(v("compressibility"), vec![qty("4e-6", "1/psi")]);
    assert_eq!(v("density"), vec![qty("62.4", "lb/ft^3")]);
    assert_eq!(v("viscosity"), vec![qty("0.8", "cP")]);
    assert_eq!(v("fvf"), vec![qty("1.02", "rb/stb")]);
    assert_eq!(
        v("pressure"),
        vec![qty("3200", "psi"), id("at"), qty("7150", "ft")]
    );
    assert_eq!(v("location"), vec![tuple(vec![num("15"), num("10")])]);
    assert_eq!(v("layers"), vec![AtomKind::Range { start: 1, end: 4 }]);
    assert_eq!(v("control"), vec![id("rate"), qty("600", "stb/day")]);
    assert_eq!(v("growth"), vec![num("1.5")]);
    assert_eq!(v("units"), vec![id("field")]);
}

#[test]
fn spec_deck_spans() {
    let text = clean_deck();
    let f = clean(&text);
    // `grid {` block: name, open, close.
    let Item::Block(grid) = &f.items[1] else {
        panic!()
    };
    let g = at(&text, "grid {");
    assert_eq!(grid.name.span, Span::new(g, g + 4));
    assert_eq!(grid.open, Span::new(g + 5, g + 6));
    let close = g + text[g..].find('}').unwrap();
    assert_eq!(grid.close, Some(Span::new(close, close + 1)));
    assert_eq!(grid.span, Span::new(g, close + 1));
    // `cells = 30 x 20 x 4`
    let Item::Statement(cells) = &grid.items[0] else {
        panic!()
    };
    let c = at(&text, "cells =");
    assert_eq!(cells.key.span, Span::new(c, c + 5));
    assert_eq!(cells.eq, Span::new(c + 6, c + 7));
    assert_eq!(cells.value.atoms[0].span, Span::new(c + 8, c + 19));
    assert_eq!(cells.span, Span::new(c, c + 19));
    // `dz = [20 15 15 30] ft`: list span includes its unit; unit and `]` spans.
    let dz = find_statement(&f.items, "dz").unwrap();
    let d = at(&text, "[20 15 15 30] ft");
    let l = &dz.value.atoms[0];
    assert_eq!(l.span, Span::new(d, d + 16));
    let AtomKind::List { items, unit, close } = &l.kind else {
        panic!()
    };
    assert_eq!(items[1].span, Span::new(d + 4, d + 6));
    assert_eq!(unit.as_ref().unwrap().span, Span::new(d + 14, d + 16));
    assert_eq!(*close, Some(Span::new(d + 12, d + 13)));
    // `density = 62.4 lb/ft^3`: number span includes the unit.
    let den = find_statement(&f.items, "density").unwrap();
    let n = at(&text, "62.4 lb/ft^3");
    assert_eq!(den.value.atoms[0].span, Span::new(n, n + 12));
    let AtomKind::Number { unit, .. } = &den.value.atoms[0].kind else {
        panic!()
    };
    assert_eq!(unit.as_ref().unwrap().span, Span::new(n + 5, n + 12));
    // `patch i = 12..14 k = 3 {`: selector spans.
    let p = at(&text, "patch i");
    let Item::Block(rock) = &f.items[2] else {
        panic!()
    };
    let Some(Item::Block(patch)) = rock.items.last() else {
        panic!()
    };
    assert_eq!(patch.args[0].span, Span::new(p + 6, p + 16));
    let AtomKind::Selector { key, value } = &patch.args[0].kind else {
        panic!()
    };
    assert_eq!(key.span, Span::new(p + 6, p + 7));
    assert_eq!(value.span, Span::new(p + 10, p + 16));
    // `location = (15, 10)`.
    let loc = find_statement(&f.items, "location").unwrap();
    let t = at(&text, "(15, 10)");
    assert_eq!(loc.value.span, Span::new(t, t + 8));
    // `include "more-wells.rill"`.
    let Some(Item::Directive(inc)) = f.items.last() else {
        panic!()
    };
    let i = at(&text, "include");
    assert_eq!(inc.span, Span::new(i, i + 25));
}

#[test]
fn spans_with_non_ascii_and_crlf() {
    let text = "title = \"Ölfeld ⛽\"\r\nx = 1 # ünïcode\r\n";
    let f = clean(text);
    let Item::Statement(s) = &f.items[1] else {
        panic!()
    };
    assert_eq!(s.key.span.start, at(text, "x ="));
    assert_eq!(f.comments[0].text, " ünïcode");
}

// ---------------------------------------------------------------- errors

#[test]
fn error_unexpected_after_block_name() {
    let e = errors("rock ]\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            5,
            6,
            "`=` or `{` after `rock`".into(),
            "`]`".into()
        )]
    );
}

#[test]
fn error_empty_value() {
    let e = errors("a =\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            3,
            4,
            "a value after `=`".into(),
            "end of line".into()
        )]
    );
    let e = errors("a =");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            3,
            3,
            "a value after `=`".into(),
            "end of file".into()
        )]
    );
    let f = parse("a = ;b = 1");
    let Item::Statement(s) = &f.items[0] else {
        panic!()
    };
    assert!(s.value.atoms.is_empty());
    assert_eq!(s.value.span, Span::new(3, 3));
    assert_eq!(f.items.len(), 2);
}

#[test]
fn error_stray_tokens() {
    let e = errors("a = 1 = 2\n");
    assert_eq!(e[0].1, 6);
    assert_eq!(e[0].4, "`=`");
    let e = errors("= 3\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            0,
            1,
            "a key, a block or a directive".into(),
            "`=`".into()
        )]
    );
    let e = errors("[1\n 2]\nx = 1\n");
    assert_eq!(e.len(), 1, "{e:?}");
    let e = errors("}\n");
    assert_eq!((e[0].1, e[0].2), (0, 1));
    let e = errors("a = @@@ 4\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            4,
            7,
            "a value after `=`".into(),
            "`@@@`".into()
        )]
    );
    let e = errors("a = 1 @@@ 4\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            6,
            9,
            "a value, an operator or the end of the statement".into(),
            "`@@@`".into()
        )]
    );
    let e = errors("x = [1 2)]\n");
    assert_eq!(e.len(), 1);
    assert_eq!((e[0].1, e[0].4.as_str()), (8, "`)`"));
    let e = errors("porosité = 1\n");
    assert_eq!(e[0].4, "`é`");
    assert_eq!((e[0].1, e[0].2), (7, 9));
    let e = errors("x = [1,,2]\n");
    assert_eq!((e.len(), e[0].1), (1, 7));
}

#[test]
fn error_bad_escape_and_numbers() {
    let e = errors(r#"x = "a\nb""#);
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unexpected,
            6,
            8,
            "`\\\"` or `\\\\` after a backslash in a string".into(),
            "`\\n`".into()
        )]
    );
    let e = errors("r = 99999999999999999999..2\n");
    assert_eq!((e.len(), e[0].1, e[0].2), (1, 4, 24));
    let e = errors("s = 99999999999999999999 x 2\n");
    assert_eq!((e.len(), e[0].1, e[0].2), (1, 4, 24));
    let e = errors("r = 1..\n");
    assert_eq!(e.len(), 1);
    let e = errors("r = 1.5..3\n");
    assert_eq!(e.len(), 1);
}

#[test]
fn error_unclosed_each_kind() {
    // Unclosed block: span on `{`, found end of file.
    let e = errors("grid {\n  dx = 50 ft\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unclosed,
            5,
            6,
            "`}` closing the block `grid`".into(),
            "end of file".into()
        )]
    );
    // Unclosed list, next line starts a statement.
    let e = errors("dz = [20 15\ntop = 7150 ft\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unclosed,
            5,
            6,
            "`]` closing this `[`".into(),
            "end of line".into()
        )]
    );
    // Unclosed tuple.
    let e = errors("location = (15, 10\nlayers = 1..4\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unclosed,
            11,
            12,
            "`)` closing this `(`".into(),
            "end of line".into()
        )]
    );
    // Unclosed string: ends at the end of its line.
    let e = errors("title = \"pilot\nx = 1\n");
    assert_eq!(
        e,
        vec![(
            SyntaxErrorKind::Unclosed,
            8,
            9,
            "`\"` closing the string".into(),
            "end of line".into()
        )]
    );
    let e = errors("title = \"pilot");
    assert_eq!(e[0].4, "end of file");
}

#[test]
fn unclosed_recovery_keeps_following_statements() {
    let text = "grid {\n  dy = [40 40\n    60 60\n  dz = [20 15] ft\n  top = (1, 2\n}\nrock {\n  kx = 1 md\n}\n";
    let f = check_all(text);
    assert_eq!(f.errors.len(), 2, "{:#?}", f.errors);
    assert!(f.errors.iter().all(|e| e.kind == SyntaxErrorKind::Unclosed));
    let Item::Block(grid) = &f.items[0] else {
        panic!()
    };
    assert_eq!(grid.items.len(), 3);
    assert!(grid.close.is_some());
    let Item::Statement(dy) = &grid.items[0] else {
        panic!()
    };
    let AtomKind::List { items, close, .. } = &dy.value.atoms[0].kind else {
        panic!()
    };
    assert_eq!((items.len(), *close), (4, None));
    let Item::Statement(dz) = &grid.items[1] else {
        panic!()
    };
    assert_eq!(dz.key.name, "dz");
    assert_eq!(f.items.len(), 2);
    // An open list before a block header line, a `}` or a one-line block.
    for next in ["well \"A\" {\n}\n", "}\n", "well \"A\" { x = 1 }\n"] {
        let text = format!("a = [1 2\n{next}");
        let f = check_all(&text);
        assert_eq!(f.errors[0].kind, SyntaxErrorKind::Unclosed, "{text:?}");
    }
    // Continuation lines of a list that do not look like items stay in it.
    let f = check_all("a = [1 2\n  foo bar\n  \"s\"\n  3]\nb = 1\n");
    assert!(f.errors.is_empty());
    // An unclosed string does not swallow the next line.
    let f = check_all("title = \"pilot\nx = 1\n");
    assert_eq!(f.items.len(), 2);
    // A `}` ends an open list in a one-line block, which then closes.
    let f = check_all("well \"A\" { x = [1 2 }\ny = 3\n");
    assert_eq!(f.errors.len(), 1);
    assert_eq!(f.items.len(), 2);
}

#[test]
fn three_errors_all_reported_and_statements_between_parse() {
    let text = "grid {\n  cells = 30 x 20 x 4\n  dx = ]\n  dy = 40 ft\n}\nrock ) {\n  porosity = 0.22\n  kx = 150 md {\n  ky = kx\n}\nfluid {\n  viscosity = 0.8 cP\n}\n";
    let f = check_all(text);
    let spans: Vec<usize> = f.errors.iter().map(|e| e.span.start).collect();
    assert_eq!(
        spans,
        vec![at(text, "]"), at(text, ")"), at(text, "{\n  ky")],
        "{:#?}",
        f.errors
    );
    assert!(f
        .errors
        .iter()
        .all(|e| e.kind == SyntaxErrorKind::Unexpected));
    let keys = |b: &Item| -> Vec<String> {
        let Item::Block(b) = b else { panic!() };
        b.items
            .iter()
            .map(|i| match i {
                Item::Statement(s) => s.key.name.clone(),
                _ => "?".into(),
            })
            .collect()
    };
    assert_eq!(keys(&f.items[0]), ["cells", "dx", "dy"]);
    // The header error still opens the block at `{`.
    assert_eq!(keys(&f.items[1]), ["porosity", "kx", "ky"]);
    assert_eq!(keys(&f.items[2]), ["viscosity"]);
    // The statement with the error keeps what came before it.
    let Item::Block(rock) = &f.items[1] else {
        panic!()
    };
    let Item::Statement(kx) = &rock.items[1] else {
        panic!()
    };
    assert_eq!(kx.value.atoms.len(), 1);
}

#[test]
fn nesting_limit() {
    let ok = format!(
        "x = {}1{}\n",
        "[".repeat(MAX_DEPTH - 1),
        "]".repeat(MAX_DEPTH - 1)
    );
    assert!(parse(&ok).errors.is_empty());
    let deep = format!(
        "x = {}1{}\ny = 2\n",
        "[".repeat(MAX_DEPTH + 5),
        "]".repeat(MAX_DEPTH + 5)
    );
    let f = check_all(&deep);
    assert_eq!(f.errors.len(), 1, "{:#?}", f.errors);
    assert!(f.errors[0].expected.contains("levels of nesting"));
    assert_eq!(f.items.len(), 2);
    let blocks = format!(
        "{}{}y = 1\n",
        "a {\n".repeat(MAX_DEPTH + 3),
        "}\n".repeat(MAX_DEPTH + 3)
    );
    let f = check_all(&blocks);
    assert_eq!(f.errors.len(), 1, "{:#?}", f.errors);
    assert_eq!(f.items.len(), 2);
}

#[test]
fn parse_bytes_reports_invalid_utf8() {
    let (text, f) = parse_bytes(b"title = \"caf\xE9\"\nx = 1 \xFF\xFE\n");
    check_invariants(&text, &f);
    assert_eq!(text, "title = \"caf\u{FFFD}\"\nx = 1 \u{FFFD}\u{FFFD}\n");
    let bad: Vec<_> = f
        .errors
        .iter()
        .filter(|e| e.expected == "UTF-8 text")
        .collect();
    assert_eq!(bad.len(), 3);
    assert_eq!(bad[0].found, "invalid byte 0xE9");
    assert_eq!(bad[0].span, Span::new(12, 15));
    assert_eq!(bad[0].kind, SyntaxErrorKind::Unexpected);
    let (text, f) = parse_bytes(b"a = 1\n\xE2\x82\n");
    assert_eq!(text, "a = 1\n\u{FFFD}\n");
    assert_eq!(f.errors.len(), 1, "{:#?}", f.errors);
    assert_eq!(f.errors[0].found, "invalid bytes 0xE2 0x82");
    let (text, f) = parse_bytes(b"a = 1\n");
    assert_eq!(text, "a = 1\n");
    assert!(f.errors.is_empty());
}

#[test]
fn odd_whitespace_and_controls() {
    clean("");
    clean("\n\n\r\n\r");
    clean("\u{FEFF}a = 1\n");
    clean("\ta\t=\t1\t\n");
    let f = check_all("a = 1\0\nb = 2\n");
    assert_eq!(f.errors.len(), 1);
    assert_eq!(f.errors[0].found, "`U+0000`");
    assert_eq!(f.items.len(), 2);
    let f = check_all("\0\0\0");
    assert_eq!(f.errors.len(), 1);
}

#[test]
fn two_statements_on_a_line_without_a_semicolon_are_one_error_with_a_fix_and_both_parse() {
    let text = "fault \"A\" { side = east  i = 2 }\n";
    let f = parse(text);
    assert_eq!(f.errors.len(), 1, "{:#?}", f.errors);
    let e = &f.errors[0];
    assert_eq!(&text[e.span.start..e.span.end], "i");
    assert_eq!(e.expected, "`;` or a line break before the next statement");
    assert_eq!(e.found, "`i =`, a new statement on the same line");
    // Both statements are in the tree: nothing after the slip is lost.
    let Item::Block(b) = &f.items[0] else {
        panic!("{:?}", f.items)
    };
    let keys: Vec<&str> = b
        .items
        .iter()
        .filter_map(|i| match i {
            Item::Statement(s) => Some(s.key.name.as_str()),
            _ => None,
        })
        .collect();
    assert_eq!(keys, ["side", "i"]);
    // The fix puts `;` right after the value, and the result is clean and
    // means what the two statements on two lines mean.
    let fix = e.fix.as_ref().expect("a fix");
    assert_eq!(fix.title, "insert `;`");
    let mut fixed = text.to_string();
    fixed.replace_range(fix.span.start..fix.span.end, &fix.replacement);
    assert_eq!(fixed, "fault \"A\" { side = east;  i = 2 }\n");
    let two_lines = "fault \"A\" {\n  side = east\n  i = 2\n}\n";
    assert!(same_meaning(&clean(&fixed), &clean(two_lines)));
}
