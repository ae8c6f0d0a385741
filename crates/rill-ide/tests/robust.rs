//! No query panics: multi-byte text, offsets inside characters and past the
//! end, mutated example decks; and hover stays fast on a 1.12-million-cell deck.

mod common;
use common::*;
use proptest::prelude::*;
use rill_ide::{Config, Snapshot, Span};
use rill_model::MemorySource;
use std::path::Path;
use std::time::{Duration, Instant};

const LARKSPUR: &str = include_str!("../../../examples/larkspur-east.rill");
const TEACHING: &str = include_str!("../../../examples/teaching-block.rill");
const TAMSIN: &str = include_str!("../../../examples/tamsin-ridge/tamsin-ridge.rill");

fn tamsin_source() -> MemorySource {
    MemorySource::new()
        .with(
            "tamsin-ridge/wells.rill",
            include_str!("../../../examples/tamsin-ridge/wells.rill"),
        )
        .with(
            "tamsin-ridge/kx.txt",
            include_str!("../../../examples/tamsin-ridge/kx.txt"),
        )
        .with(
            "tamsin-ridge/porosity.txt",
            include_str!("../../../examples/tamsin-ridge/porosity.txt"),
        )
        .with(
            "tamsin-ridge/top.txt",
            include_str!("../../../examples/tamsin-ridge/top.txt"),
        )
}

fn in_text(text: &str, s: Span) -> bool {
    s.start <= s.end
        && s.end <= text.len()
        && text.is_char_boundary(s.start)
        && text.is_char_boundary(s.end)
}

/// Every query at every offset (and a few past the end); all answers in
/// bounds and on character boundaries.
fn query_everywhere(s: &Snapshot) {
    let text = s.text();
    let config = Config {
        inlay_hints: true,
        hint_system: None,
    };
    for off in 0..=text.len() + 3 {
        if let Some(h) = s.hover(off) {
            assert!(in_text(text, h.range), "hover range {:?} at {off}", h.range);
            assert!(!h.markdown.is_empty());
        }
        for c in s.completion(off) {
            assert!(in_text(text, c.replace), "replace {:?} at {off}", c.replace);
        }
        // With files to list: names in the deck's folder and a subfolder.
        let files = rill_model::MemorySource::new()
            .with("a/kx.txt", "1")
            .with("wells.rill", "")
            .with("Ω😀/x.txt", "1");
        for c in s.completion_with_files(off, &files) {
            assert!(in_text(text, c.replace), "replace {:?} at {off}", c.replace);
        }
        if let Some(t) = s.definition(off) {
            if t.file == s.path() {
                assert!(in_text(text, t.span));
            }
        }
        for r in s.references(off) {
            assert!(in_text(text, r));
        }
        for a in s.code_actions(Span::new(off, off + 3)) {
            for e in &a.edits {
                assert!(in_text(text, e.span), "{a:?}");
            }
        }
    }
    let toks = s.semantic_tokens();
    assert!(toks.windows(2).all(|w| w[0].span.end <= w[1].span.start));
    assert!(toks.iter().all(|t| in_text(text, t.span)));
    for h in s.inlay_hints(Span::new(0, text.len()), &config) {
        assert!(h.offset <= text.len() && text.is_char_boundary(h.offset));
    }
    if let Some(edits) = s.format() {
        assert!(edits.iter().all(|e| in_text(text, e.span)));
        let formatted = apply(text, &edits);
        assert_eq!(formatted, rill_syntax::format(s.tree(), text));
    }
    assert!(s.folding_ranges().iter().all(|f| in_text(text, *f)));
    let _ = s.symbols();
    let _ = s.code_lenses();
}

const UNICODE: &str = "case \"Ω\" {\n  title = \"Ω reservoir 🛢\"\n}\n\ngrid {\n  cells = 2 x 1 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 10 ft\n  top = 1000 ft\n}\n\nrock {\n  porosity = 0.2\n  kx = cells [100 50] md\n}\n\nfluid {\n  viscosity = 1 cP\n  fvf = 1 rb/stb\n  density = 62.4 lb/ft^3\n}\n\ninitial {\n  pressure = 1000 psi at 1000 ft\n}\n\nwell \"Ω-🛢 1\" {\n  role = producer\n  location = (1, 1)\n  radius = 0.3 ft\n  control = rate 10 stb/day\n}\n\ntimeline {\n  end = 10 day\n  at 5 day {\n    well \"Ω-🛢 1\" { control = bhp 500 psi }\n  }\n}\n";

#[test]
fn multibyte_text_every_offset() {
    let s = snap(UNICODE);
    assert!(!s.analysis().has_errors(), "{:?}", s.diagnostics());
    query_everywhere(&s);
    // Right after the line holding `Ω`: the next line's `}` and the grid block.
    let after = at(UNICODE, "🛢\"\n}", 0) + "🛢\"\n".len();
    assert!(s
        .hover(after + 3)
        .is_some_and(|h| h.markdown.contains("**grid**")));
    // The well named with an emoji: hover and completion in the event.
    let inside = at(UNICODE, "\"Ω-🛢 1\" { control", 1);
    let h = s.hover(inside + 1).expect("hover inside Ω");
    assert!(h.markdown.contains("**well \"Ω-🛢 1\"**"), "{}", h.markdown);
    let items = s.completion(inside + 2);
    assert_eq!(items.len(), 1);
    assert_eq!(items[0].label, "Ω-🛢 1");
    // A cell item right after a line with multi-byte characters.
    let h = s.hover(at(UNICODE, "50] md", 0)).expect("cell hover");
    assert!(h.markdown.contains("**cell (2, 1, 1)**"), "{}", h.markdown);
    // Far past the end.
    // Far past the end: no panic, answers in bounds.
    if let Some(h) = s.hover(usize::MAX) {
        assert!(in_text(UNICODE, h.range));
    }
    assert!(s
        .completion(usize::MAX)
        .iter()
        .all(|c| in_text(UNICODE, c.replace)));
}

#[test]
fn example_decks_are_clean_and_every_query_answers() {
    for (path, text, src) in [
        ("larkspur-east.rill", LARKSPUR, MemorySource::new()),
        ("teaching-block.rill", TEACHING, MemorySource::new()),
        ("tamsin-ridge/tamsin-ridge.rill", TAMSIN, tamsin_source()),
    ] {
        let s = Snapshot::new(Path::new(path), text, &src);
        assert!(!s.analysis().has_errors(), "{path}: {:?}", s.diagnostics());
        query_everywhere(&s);
    }
    // The tamsin kx file hover: 288 values (12 x 8 x 3).
    let s = Snapshot::new(
        Path::new("tamsin-ridge/tamsin-ridge.rill"),
        TAMSIN,
        &tamsin_source(),
    );
    let h = s.hover(at(TAMSIN, "\"kx.txt\"", 1)).expect("file hover");
    assert!(h.markdown.contains("288 values"), "{}", h.markdown);
}

fn mutated() -> impl Strategy<Value = (usize, String)> {
    let pieces = prop::sample::select(vec![
        "{", "}", "[", "]", "(", ")", "\"", "=", "#", "\n", " ", "x", "..", "-", "*", "/", "Ω",
        "🛢", "é", "1", "kx", "md", "at", ";", "\\",
    ]);
    (
        0usize..3,
        0.0f64..1.0,
        0usize..12,
        prop::collection::vec(pieces, 0..4),
    )
        .prop_map(|(deck, pos, del, ins)| {
            let text = [LARKSPUR, TEACHING, TAMSIN][deck];
            let mut at = ((text.len() as f64) * pos) as usize;
            while !text.is_char_boundary(at) {
                at -= 1;
            }
            let mut end = (at + del).min(text.len());
            while !text.is_char_boundary(end) {
                end += 1;
            }
            let mut out = String::from(&text[..at]);
            out.push_str(&ins.concat());
            out.push_str(&text[end..]);
            (deck, out)
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]
    #[test]
    fn mutated_examples_never_panic((deck, text) in mutated()) {
        let (path, src) = match deck {
            0 => ("larkspur-east.rill", MemorySource::new()),
            1 => ("teaching-block.rill", MemorySource::new()),
            _ => ("tamsin-ridge/tamsin-ridge.rill", tamsin_source()),
        };
        let s = Snapshot::new(Path::new(path), &text, &src);
        query_everywhere(&s);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]
    #[test]
    fn arbitrary_text_never_panics(text in "([a-z]{1,6}|[ =\\[\\](){}\"#;,.*/x\\-]|[0-9]{1,3}|\n|Ω|🛢|é){0,60}") {
        query_everywhere(&snap(&text));
    }
}

#[test]
fn hover_is_fast_on_a_million_cell_deck() {
    // 140 x 100 x 80 = 1,120,000 cells, kx given cell by cell.
    let (nx, ny, nz) = (140usize, 100usize, 80usize);
    let n = nx * ny * nz;
    let mut text = format!(
        "grid {{\n  cells = {nx} x {ny} x {nz}\n  dx = 50 ft\n  dy = 50 ft\n  dz = 5 ft\n  top = 8000 ft\n}}\n\nrock {{\n  porosity = 0.2\n  kx = cells ["
    );
    text.reserve(n * 5);
    for c in 0..n {
        if c % 20 == 0 {
            text.push_str("\n    ");
        }
        text.push_str(["100 ", "120 ", "90 ", "80 ", "250 "][c % 5]);
    }
    text.push_str("\n  ] md\n  kz = 0.1 * kx\n}\n\nfluid {\n  viscosity = 1 cP\n  fvf = 1 rb/stb\n  density = 62.4 lb/ft^3\n}\n\ninitial {\n  pressure = 3600 psi at 8000 ft\n}\n\nwell \"D-1\" {\n  role = producer\n  location = (70, 50)\n  radius = 0.3 ft\n  control = rate 500 stb/day\n}\n\ntimeline {\n  end = 30 day\n}\n");
    let built = Instant::now();
    let s = snap(&text);
    eprintln!(
        "Snapshot::new on {} bytes: {:?}",
        text.len(),
        built.elapsed()
    );
    assert!(
        s.analysis().case.is_some(),
        "{:?}",
        &s.diagnostics()[..s.diagnostics().len().min(3)]
    );
    // The last item of the list, and one in the middle.
    let last = text.find("\n  ] md").unwrap() - 4;
    let mut middle = text.len() / 2;
    while !text.as_bytes()[middle].is_ascii_digit() {
        middle += 1;
    }
    let mut times = Vec::new();
    for _ in 0..5 {
        for off in [last, middle] {
            let t = Instant::now();
            let h = s.hover(off).expect("hover on a list item");
            times.push(t.elapsed());
            assert!(h.markdown.contains("of 1120000"), "{}", h.markdown);
        }
    }
    let t = Instant::now();
    let h = s.hover(at(&text, "\"D-1\"", 1)).expect("well hover");
    times.push(t.elapsed());
    assert!(h.markdown.contains("(70, 50, 80)"));
    // Completion deep inside the list scans only near the cursor.
    let t = Instant::now();
    let items = s.completion(last + 4);
    let completion_time = t.elapsed();
    assert!(items.iter().any(|i| i.label == "md"), "{items:?}");
    assert!(
        completion_time < Duration::from_millis(50),
        "{completion_time:?}"
    );
    times.sort();
    let median = times[times.len() / 2];
    eprintln!(
        "hover on 1.12 million cells: median {median:?}, max {:?}",
        times[times.len() - 1]
    );
    assert!(
        median < Duration::from_millis(10),
        "median hover {median:?}"
    );
    let h = s.hover(last).unwrap();
    assert!(
        h.markdown.contains("**cell (140, 100, 80)**"),
        "{}",
        h.markdown
    );
}
