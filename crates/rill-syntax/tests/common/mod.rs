//! Shared by the integration tests: the spec's example deck and the
//! invariants every parse must keep.
#![allow(dead_code)]

use rill_syntax::*;

/// The example deck of `case-language.md` (section Blocks and keys), verbatim.
/// Its `dy = [40 40 60 60 ...] ft` uses `...` as an elision, which the
/// language does not have: it is the deck's one syntax error.
pub const SPEC_DECK: &str = r#"case "Larkspur east lobe" {           # optional metadata
  title = "pilot producer, 1 year"
}

grid {
  cells = 30 x 20 x 4                 # NX x NY x NZ
  dx = 50 ft                          # scalar, or a list of NX widths
  dy = [40 40 60 60 ...] ft           # scalar, or a list of NY widths
  dz = [20 15 15 30] ft               # scalar, list of NZ, or per-cell
  top = 7150 ft                       # depth of the top face of layer 1: scalar or per-column
}

rock {
  porosity = 0.22                     # fraction, or with %
  kx = layers [150 40 300 90] md
  ky = kx
  kz = 0.1 * kx
  compressibility = 4e-6 1/psi
  ref_pressure = 3000 psi
  patch i = 12..14 k = 3 {            # overrides inside a sub-block; omitted axes mean all
    kz = 0 md                         # a sealing streak
  }
}

fluid "formation water" {             # one slightly compressible liquid (v1)
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb                   # reservoir volume per surface volume
  compressibility = 3e-6 1/psi
  density = 62.4 lb/ft^3
  ref_pressure = 3000 psi
}

initial {
  pressure = 3200 psi at 7150 ft      # datum; hydrostatic equilibrium from the fluid density
}

well "LE-1" {
  role = producer                     # producer | injector
  location = (15, 10)                 # vertical well: column plus layers
  layers = 1..4
  # completions = [(15, 10, 1), (16, 10, 2)]   # alternative: explicit cells
  radius = 0.3 ft
  skin = 1.5
  control = rate 600 stb/day          # rate <surface rate> | bhp <pressure>
  bhp_limit = 1200 psi                # producer: lowest BHP; injector: highest
}

boundary "east aquifer" {
  side = east                         # west | east | south | north | top | bottom
  pressure = 3150 psi at 7150 ft      # constant pressure, hydrostatic along the face;
                                      # without `at`, the value holds at every face centre
}

timeline {
  kind = transient                    # transient | steady
  end = 365 day
  first_step = 0.1 day
  max_step = 30 day
  growth = 1.5
  report_every = 30 day
  at 180 day {                        # a change of controls
    well "LE-1" { control = bhp 1500 psi }
  }
}

report {
  units = field                       # field | metric | si : how results are shown
}

include "more-wells.rill"             # top level only; relative to this file
"#;

/// The spec deck with the elision written out, so that it parses cleanly.
pub fn clean_deck() -> String {
    SPEC_DECK.replace(
        "[40 40 60 60 ...] ft",
        "[40 40 60 60 60 60 40 40 40 40 40 40 40 40 40 40 40 40 40 40] ft",
    )
}

fn check_span(text: &str, span: Span, what: &str) {
    assert!(span.start <= span.end, "{what}: reversed span {span:?}");
    assert!(
        span.end <= text.len(),
        "{what}: span {span:?} past the end {}",
        text.len()
    );
    assert!(
        text.is_char_boundary(span.start) && text.is_char_boundary(span.end),
        "{what}: span {span:?} not on char boundaries"
    );
}

fn within(outer: Span, inner: Span, what: &str) {
    assert!(
        outer.start <= inner.start && inner.end <= outer.end,
        "{what}: {inner:?} outside {outer:?}"
    );
}

fn check_atom(text: &str, a: &Atom) {
    check_span(text, a.span, "atom");
    match &a.kind {
        AtomKind::Number { unit, .. } | AtomKind::Str { unit, .. } => {
            if let Some(u) = unit {
                check_span(text, u.span, "unit");
                within(a.span, u.span, "unit");
                assert_eq!(&text[u.span.start..u.span.end], u.text);
            }
        }
        AtomKind::List { items, unit, close } => {
            for it in items {
                check_atom(text, it);
                within(a.span, it.span, "list item");
            }
            if let Some(u) = unit {
                check_span(text, u.span, "unit");
                within(a.span, u.span, "list unit");
                assert_eq!(&text[u.span.start..u.span.end], u.text);
            }
            if let Some(c) = close {
                within(a.span, *c, "list close");
                assert_eq!(&text[c.start..c.end], "]");
            }
        }
        AtomKind::Tuple { items, close } => {
            for it in items {
                check_atom(text, it);
                within(a.span, it.span, "tuple item");
            }
            if let Some(c) = close {
                within(a.span, *c, "tuple close");
                assert_eq!(&text[c.start..c.end], ")");
            }
        }
        AtomKind::Selector { key, value } => {
            check_span(text, key.span, "selector key");
            assert_eq!(&text[key.span.start..key.span.end], key.name);
            check_atom(text, value);
            within(a.span, value.span, "selector value");
        }
        AtomKind::Ident(name) => assert_eq!(&text[a.span.start..a.span.end], name),
        AtomKind::Op(op) => assert_eq!(&text[a.span.start..a.span.end], op.as_char().to_string()),
        AtomKind::Range { .. } | AtomKind::Size(_) => {}
    }
}

fn check_items(text: &str, items: &[Item], parent: Option<Span>) {
    let mut prev_end = 0;
    for item in items {
        let span = item.span();
        check_span(text, span, "item");
        assert!(span.start >= prev_end, "items overlap or out of order");
        prev_end = span.end;
        if let Some(p) = parent {
            within(p, span, "item in block");
        }
        match item {
            Item::Statement(s) => {
                check_span(text, s.key.span, "key");
                assert_eq!(&text[s.key.span.start..s.key.span.end], s.key.name);
                assert_eq!(&text[s.eq.start..s.eq.end], "=");
                check_span(text, s.value.span, "value");
                within(s.span, s.value.span, "value");
                for a in &s.value.atoms {
                    check_atom(text, a);
                    within(s.value.span, a.span, "value atom");
                }
            }
            Item::Directive(d) => {
                assert_eq!(&text[d.name.span.start..d.name.span.end], d.name.name);
                for a in &d.args {
                    check_atom(text, a);
                    within(d.span, a.span, "directive arg");
                }
            }
            Item::Block(b) => {
                assert_eq!(&text[b.name.span.start..b.name.span.end], b.name.name);
                assert_eq!(&text[b.open.start..b.open.end], "{");
                within(b.span, b.open, "open");
                if let Some(c) = b.close {
                    assert_eq!(&text[c.start..c.end], "}");
                    within(b.span, c, "close");
                }
                for a in &b.args {
                    check_atom(text, a);
                    within(b.span, a.span, "header arg");
                }
                check_items(text, &b.items, Some(b.span));
            }
        }
    }
}

/// Every span in range, on char boundaries, nested in its parent; every
/// comment is `#` and its text; errors sorted by position.
pub fn check_invariants(text: &str, file: &SourceFile) {
    assert_eq!(file.len, text.len());
    check_items(text, &file.items, None);
    let mut prev = 0;
    for c in &file.comments {
        check_span(text, c.span, "comment");
        assert!(c.span.start >= prev, "comments out of order");
        prev = c.span.end;
        assert_eq!(&text[c.span.start..c.span.end], format!("#{}", c.text));
    }
    let mut prev = 0;
    for e in &file.errors {
        check_span(text, e.span, "error");
        assert!(e.span.start >= prev, "errors not sorted");
        prev = e.span.start;
        assert!(!e.expected.is_empty() && !e.found.is_empty());
    }
}

/// Parses, checks the invariants, and when the file is clean also checks
/// that formatting is idempotent, keeps the comments and keeps the meaning.
pub fn check_all(text: &str) -> SourceFile {
    let file = parse(text);
    check_invariants(text, &file);
    if file.errors.is_empty() {
        check_format(text, &file);
    } else {
        assert_eq!(
            format(&file, text),
            text,
            "a file with errors is returned unchanged"
        );
    }
    file
}

pub fn comment_texts(file: &SourceFile) -> Vec<String> {
    file.comments
        .iter()
        .map(|c| c.text.trim_end().to_string())
        .collect()
}

pub fn check_format(text: &str, file: &SourceFile) -> String {
    let once = format(file, text);
    let again = parse(&once);
    assert!(
        again.errors.is_empty(),
        "formatted text has errors {:?}\n--- input\n{text}\n--- output\n{once}",
        again.errors
    );
    assert!(
        same_meaning(file, &again),
        "formatting changed the meaning\n--- input\n{text:?}\n--- output\n{once}"
    );
    assert_eq!(
        comment_texts(file),
        comment_texts(&again),
        "formatting lost or moved comments\n--- input\n{text}\n--- output\n{once}"
    );
    let twice = format(&again, &once);
    assert_eq!(
        once, twice,
        "formatting is not idempotent\n--- input\n{text:?}"
    );
    if !once.is_empty() {
        assert!(
            once.ends_with('\n') && !once.ends_with("\n\n"),
            "output must end with one line break"
        );
    }
    once
}
