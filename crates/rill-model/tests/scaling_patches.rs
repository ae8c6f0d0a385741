//! Scaling patches: inside a `patch`, a property's own name is its value
//! before that patch, so `kx = 0.01 * kx` scales the selected cells (a
//! partly sealing streak) whatever the base form. Other references keep
//! their meaning (the final value). Fictional "Corran Shoal" block.

use rill_model::{analyze_text, Analysis, Code, MemorySource};
use std::path::Path;

const MD: f64 = 9.869233e-16;

fn deck(rock: &str) -> String {
    format!(
        r#"grid {{
  cells = 4 x 2 x 3
  dx = 100 ft
  dy = 100 ft
  dz = 20 ft
  top = 7000 ft
}}

rock {{
{rock}
}}

fluid {{
  viscosity = 0.7 cP
  fvf = 1.02 rb/stb
  density = 62 lb/ft^3
}}

initial {{
  pressure = 3100 psi at 7030 ft
}}

timeline {{
  end = 30 day
}}
"#
    )
}

fn analyze(text: &str) -> Analysis {
    analyze_text(Path::new("/w/corran.rill"), text, &MemorySource::new())
}

/// kx in md at 1-based (i, j, k) of the 4 x 2 x 3 grid.
fn kx_md(a: &Analysis, i: usize, j: usize, k: usize) -> f64 {
    let case = a.case.as_ref().unwrap();
    case.rock.kx[case.grid.index(i - 1, j - 1, k - 1)] / MD
}

#[test]
fn a_patch_scales_each_layer_of_a_layered_property() {
    let text = deck(
        "  porosity = 0.2\n  kx = layers [50 120 300] md\n  patch i = 3 {\n    kx = 0.01 * kx\n  }",
    );
    let a = analyze(&text);
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    for (k, base) in [(1, 50.0), (2, 120.0), (3, 300.0)] {
        for j in 1..=2 {
            let scaled = kx_md(&a, 3, j, k);
            assert!(
                (scaled - 0.01 * base).abs() <= 1e-12 * base,
                "k={k}: {scaled}"
            );
            assert!((kx_md(&a, 2, j, k) - base).abs() <= 1e-12 * base);
        }
    }
    // ky defaults to kx: the final kx, patch included.
    let case = a.case.as_ref().unwrap();
    let c = case.grid.index(2, 0, 1);
    assert_eq!(case.rock.ky[c], case.rock.kx[c]);
}

#[test]
fn patches_scale_in_order_and_other_names_mean_their_final_value() {
    let text = deck(
        "  porosity = 0.2\n  kx = 100 md\n  kz = 0.1 * kx\n  patch i = 2..3 {\n    kx = 0.5 * kx\n  }\n  patch i = 3 {\n    kx = 0.1 * kx\n  }",
    );
    let a = analyze(&text);
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    assert!((kx_md(&a, 1, 1, 1) - 100.0).abs() < 1e-9);
    assert!((kx_md(&a, 2, 1, 1) - 50.0).abs() < 1e-9);
    // 100 * 0.5 * 0.1: the second patch scales what the first left.
    assert!((kx_md(&a, 3, 1, 1) - 5.0).abs() < 1e-9);
    // kz refers to the final kx.
    let case = a.case.as_ref().unwrap();
    let c = case.grid.index(2, 0, 0);
    assert!((case.rock.kz[c] / MD - 0.5).abs() < 1e-9);
}

#[test]
fn a_base_value_naming_itself_is_still_a_cycle() {
    let a = analyze(&deck("  porosity = 0.2\n  kx = 2 * kx"));
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == Code::DeckReference && d.message.contains("cycle")),
        "{:?}",
        a.diagnostics
    );
}
