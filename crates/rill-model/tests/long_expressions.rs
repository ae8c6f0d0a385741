//! Long and deep property expressions: a chain of any length parses, checks
//! and formats without recursing in proportion to its length (proved on a
//! thread with a small stack), and a unit power out of range is a
//! diagnostic, never a panic.
//!
//! Case counts of the property test come from `PROPTEST_CASES`.

use proptest::prelude::*;
use rill_model::{analyze_text, Analysis, MemorySource, Severity};
use std::path::Path;

/// A clean deck whose rock block ends with `{rock}`.
fn deck(rock: &str) -> String {
    format!(
        "grid {{\n  cells = 3 x 3 x 1\n  dx = 100 ft\n  dy = 100 ft\n  dz = 30 ft\n  top = 5000 ft\n}}\n\
         rock {{\n  porosity = 0.2\n{rock}\n}}\n\
         fluid \"brine\" {{\n  viscosity = 0.7 cP\n  fvf = 1.01 rb/stb\n  density = 64.0 lb/ft^3\n}}\n\
         initial {{\n  pressure = 2500 psi at 5015 ft\n}}\n\
         well \"P\" {{\n  role = producer\n  location = (2, 2)\n  radius = 0.3 ft\n  control = rate 150 stb/day\n}}\n\
         timeline {{\n  end = 10 day\n}}\n"
    )
}

fn analyze(text: &str) -> Analysis {
    analyze_text(Path::new("/deck.rill"), text, &MemorySource::new())
}

fn errors(a: &Analysis) -> Vec<&rill_model::Diagnostic> {
    a.diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .collect()
}

/// Runs `f` on a thread with a 256 KiB stack: any walk that recursed once
/// per operand of a 100 000-operand chain would overflow it.
fn on_small_stack<T: Send + 'static>(f: impl FnOnce() -> T + Send + 'static) -> T {
    std::thread::Builder::new()
        .stack_size(256 * 1024)
        .spawn(f)
        .expect("spawn a test thread")
        .join()
        .expect("the analysis finished without a panic or a stack overflow")
}

/// Parse, check and format; the formatted text means the same and checks the same.
fn parse_check_format(text: String) -> Analysis {
    let tree = rill_syntax::parse(&text);
    assert!(tree.errors.is_empty(), "{:?}", tree.errors.first());
    let formatted = rill_syntax::format(&tree, &text);
    assert!(rill_syntax::same_meaning(
        &tree,
        &rill_syntax::parse(&formatted)
    ));
    let a = analyze(&text);
    // The layout moves offsets, never what is found.
    let found = |a: &Analysis| -> Vec<(String, Severity)> {
        a.diagnostics
            .iter()
            .map(|d| (d.message.clone(), d.severity))
            .collect()
    };
    assert_eq!(found(&a), found(&analyze(&formatted)));
    a
}

#[test]
fn product_of_100_000_factors() {
    let a = on_small_stack(|| {
        let chain = " * 1".repeat(99_999);
        parse_check_format(deck(&format!("  kx = 50 md{chain}")))
    });
    assert!(errors(&a).is_empty(), "{:?}", errors(&a));
    let kx = &a.case.expect("a checked case").rock.kx;
    assert!((kx[0] - 50.0 * 9.869233e-16).abs() < 1e-25, "{}", kx[0]);
}

#[test]
fn sum_of_100_000_terms() {
    let a = on_small_stack(|| {
        let chain = " + 1 md".repeat(99_999);
        parse_check_format(deck(&format!("  kx = 1 md{chain}")))
    });
    assert!(errors(&a).is_empty(), "{:?}", errors(&a));
    let kx = &a.case.expect("a checked case").rock.kx;
    let want = 100_000.0 * 9.869233e-16;
    assert!((kx[0] - want).abs() < 1e-9 * want, "{}", kx[0]);
}

#[test]
fn product_of_70_permeabilities_is_a_unit_power_out_of_range() {
    let chain = vec!["kx"; 70].join(" * ");
    let text = deck(&format!("  kx = 50 md\n  kz = {chain}"));
    let a = analyze(&text);
    let start = text.find("kz =").unwrap() + 5;
    let errs = errors(&a);
    assert!(
        errs.iter().any(|d| d.message.contains("out of range")
            && d.location.start == start
            && d.location.end <= start + chain.len()),
        "{errs:?}"
    );
}

/// An operand with its dimension (L, M, T, S) as the test computes it, or
/// `None` when the operand is itself invalid.
fn operand() -> impl Strategy<Value = (String, Option<[i64; 4]>)> {
    prop_oneof![
        Just(("kx".to_string(), Some([2, 0, 0, 0]))),
        Just(("2".to_string(), Some([0; 4]))),
        Just(("3 md".to_string(), Some([2, 0, 0, 0]))),
        Just(("2 ft".to_string(), Some([1, 0, 0, 0]))),
        Just(("1 1/psi".to_string(), Some([1, -1, 2, 0]))),
        Just(("1 stb^12".to_string(), Some([0, 0, 0, 12]))),
        Just(("1 day^-12".to_string(), Some([0, 0, -12, 0]))),
        (1i64..=12, 1i64..=10)
            .prop_map(|(p, q)| { (format!("1 (m^{p})^{q}"), Some([p * q, 0, 0, 0]),) }),
        // Unit nesting: the unit parser accepts 32 levels.
        (1usize..40).prop_map(|d| {
            let text = format!("1 {}ft{}", "(".repeat(d), ")".repeat(d));
            (text, (d <= 32).then_some([1, 0, 0, 0]))
        }),
    ]
}

/// The dimension of `terms` (sums of products, each operand with the
/// operator before it), or `None` when the expression is invalid.
fn expected_dim(first: &Option<[i64; 4]>, rest: &[(char, Option<[i64; 4]>)]) -> Option<[i64; 4]> {
    let mut sum: Option<[i64; 4]> = None;
    let mut product = (*first)?;
    let close = |sum: &mut Option<[i64; 4]>, p: [i64; 4]| match sum {
        Some(s) if *s != p => false,
        _ => {
            *sum = Some(p);
            true
        }
    };
    for (op, d) in rest {
        let d = (*d)?;
        match op {
            '*' | '/' => {
                let sign = if *op == '*' { 1 } else { -1 };
                for (a, b) in product.iter_mut().zip(d) {
                    *a += sign * b;
                    if !(-128..=127).contains(a) {
                        return None;
                    }
                }
            }
            _ => {
                if !close(&mut sum, product) {
                    return None;
                }
                product = d;
            }
        }
    }
    if !close(&mut sum, product) {
        return None;
    }
    sum
}

proptest! {
    /// Random chains of products and sums, with large unit powers and
    /// nested units: never a panic, and an invalid `kz` is always an error
    /// inside its expression.
    #[test]
    fn random_chains_check_without_panic(
        first in operand(),
        rest in prop::collection::vec((prop::sample::select(vec!['*', '/', '+', '-']), operand()), 0..200),
    ) {
        let mut expr = first.0.clone();
        for (op, (text, _)) in &rest {
            expr.push_str(&format!(" {op} {text}"));
        }
        let text = deck(&format!("  kx = 50 md\n  kz = {expr}"));
        let a = analyze(&text);
        let dims: Vec<(char, Option<[i64; 4]>)> = rest.iter().map(|(op, (_, d))| (*op, *d)).collect();
        let valid = expected_dim(&first.1, &dims) == Some([2, 0, 0, 0]);
        let start = text.find("kz =").unwrap() + 5;
        let end = start + expr.len();
        let in_expr = errors(&a)
            .into_iter()
            .any(|d| d.location.start >= start && d.location.end <= end);
        // A chain of the right dimension may still be a value no rock has
        // (`3 md - kx` is negative: `sanity.permeability`) or overflow
        // (`deck.out-of-range`); what it may never get is a unit error.
        let unit_error = errors(&a).into_iter().any(|d| {
            d.location.start >= start && d.location.end <= end && d.code.area() == "unit"
        });
        if !valid {
            prop_assert!(in_expr, "no error for `kz = {}`: {:?}", expr, a.diagnostics);
        } else {
            prop_assert!(!unit_error, "a unit error for valid `kz = {}`: {:?}", expr, a.diagnostics);
        }
    }
}
