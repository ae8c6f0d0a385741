//! Arithmetic values in the tree: a flat sum of products with the
//! operators' spans, the reasons a value with an operator is no
//! expression, and chains of 100 000 operands parsed and formatted on a
//! small stack.

use rill_syntax::{parse, AtomKind, ExprError, Item, Op, Span, Value};

fn value(text: &str) -> (String, Value) {
    let src = format!("k = {text}\n");
    let file = parse(&src);
    assert!(file.errors.is_empty(), "{:?}", file.errors);
    match file.items.into_iter().next() {
        Some(Item::Statement(s)) => (src, s.value),
        other => panic!("not a statement: {other:?}"),
    }
}

/// A term as (operator before it, its operands with theirs, its text).
type TermWords<'a> = (Option<Op>, Vec<(Option<Op>, &'a str)>, &'a str);

fn words(src: &str, span: Span) -> &str {
    &src[span.start..span.end]
}

#[test]
fn a_sum_of_products_with_spans() {
    let (src, v) = value("kx * 2 + 5 md - ky / 3");
    let e = v.expr.expect("an operator makes an expression").unwrap();
    assert_eq!(words(&src, e.span), "kx * 2 + 5 md - ky / 3");
    let terms: Vec<TermWords> = e
        .terms
        .iter()
        .map(|t| {
            let factors = t
                .factors
                .iter()
                .map(|f| (f.op.map(|o| o.op), words(&src, f.operand.span)))
                .collect();
            (t.op.map(|o| o.op), factors, words(&src, t.span))
        })
        .collect();
    assert_eq!(
        terms,
        vec![
            (None, vec![(None, "kx"), (Some(Op::Mul), "2")], "kx * 2"),
            (Some(Op::Add), vec![(None, "5 md")], "5 md"),
            (
                Some(Op::Sub),
                vec![(None, "ky"), (Some(Op::Div), "3")],
                "ky / 3"
            ),
        ]
    );
    // Each operator's span is the operator itself.
    let ops: Vec<&str> = e
        .operands()
        .filter_map(|(op, _)| op.map(|o| words(&src, o.span)))
        .collect();
    assert_eq!(ops, vec!["*", "+", "-", "/"]);
    assert!(matches!(
        e.terms[1].factors[0].operand.kind,
        AtomKind::Number { unit: Some(_), .. }
    ));
}

#[test]
fn values_without_an_operator_have_no_expression() {
    for text in [
        "120 md",
        "kx",
        "rate 600 stb/day",
        "kx -5",
        "layers [1 2] md",
    ] {
        assert_eq!(value(text).1.expr, None, "{text}");
    }
}

#[test]
fn malformed_arithmetic_says_where() {
    let (src, v) = value("kx *");
    match v.expr {
        Some(Err(ExprError::MissingOperand { at })) => {
            assert_eq!(at.start, src.find('*').unwrap() + 1);
            assert!(at.is_empty());
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(
        value("* kx").1.expr,
        Some(Err(ExprError::OperatorForOperand { index: 0 }))
    );
    assert_eq!(
        value("kx * * 2").1.expr,
        Some(Err(ExprError::OperatorForOperand { index: 2 }))
    );
    assert_eq!(
        value("kx * 2 5").1.expr,
        Some(Err(ExprError::Extra { index: 3 }))
    );
    assert_eq!(
        value("kx + 1 md 5").1.expr,
        Some(Err(ExprError::Extra { index: 3 }))
    );
}

/// Parse and format `text` on a thread with a 256 KiB stack.
fn parse_and_format_on_small_stack(text: String) -> usize {
    std::thread::Builder::new()
        .stack_size(256 * 1024)
        .spawn(move || {
            let file = parse(&text);
            assert!(file.errors.is_empty(), "{:?}", file.errors.first());
            let formatted = rill_syntax::format(&file, &text);
            let again = parse(&formatted);
            assert!(rill_syntax::same_meaning(&file, &again));
            match &file.items[0] {
                Item::Statement(s) => match &s.value.expr {
                    Some(Ok(e)) => e.operands().count(),
                    other => panic!("{other:?}"),
                },
                other => panic!("{other:?}"),
            }
        })
        .unwrap()
        .join()
        .expect("no stack overflow")
}

#[test]
fn a_100_000_factor_product_and_a_100_000_term_sum() {
    let product = format!("kx = 50 md{}\n", " * 1".repeat(99_999));
    assert_eq!(parse_and_format_on_small_stack(product), 100_000);
    let sum = format!("kx = 1 md{}\n", " + 1 md".repeat(99_999));
    assert_eq!(parse_and_format_on_small_stack(sum), 100_000);
}
