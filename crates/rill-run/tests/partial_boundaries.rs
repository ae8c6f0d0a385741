//! Partial boundaries: `i`, `j`, `k` selectors restrict a boundary to part
//! of its side. Two rows that cannot exchange fluid (ky = 0) between a
//! west boundary and an east one: an east boundary on row 1 only carries
//! exactly half the flow of one on the whole side (beds in parallel, each
//! row a linear Darcy path; hand reasoning, no published source needed).
//! Fictional "Tarn Reach" strip.

use rill_run::{run, Request};
use rill_sim::NoObserver;

fn deck(east_select: &str) -> String {
    format!(
        r#"grid {{
  cells = 10 x 2 x 1
  dx = 100 ft
  dy = 200 ft
  dz = 25 ft
  top = 5000 ft
}}

rock {{
  porosity = 0.2
  kx = 80 md
  ky = 0 md
}}

fluid {{
  viscosity = 1.1 cP
  fvf = 1.0 rb/stb
  density = 62 lb/ft^3
}}

initial {{
  pressure = 2500 psi at 5012.5 ft
}}

boundary "west inflow" {{
  side = west
  pressure = 2600 psi
}}

boundary "east outflow" {{
  side = east
{east_select}
  pressure = 2400 psi
}}

timeline {{
  kind = steady
}}
"#
    )
}

/// Steady rate out through the east boundary, m^3/s.
fn east_rate(text: &str) -> f64 {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("tarn.rill");
    std::fs::write(&path, text).unwrap();
    let source = rill_model::MemorySource::new().with(&path, text);
    let analysis = rill_model::analyze(&path, &source).unwrap();
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    let out = dir.path().join("tarn.out");
    let done = run(&Request::new(&analysis, &path, &out), &mut NoObserver)
        .result
        .unwrap();
    let b = done
        .results
        .boundaries
        .iter()
        .find(|b| b.name == "east outflow")
        .unwrap();
    *b.rate.last().unwrap()
}

#[test]
fn a_boundary_on_one_row_carries_that_row_only() {
    let whole = east_rate(&deck(""));
    let half = east_rate(&deck("  j = 1"));
    assert!(whole > 0.0);
    assert!(
        (half - 0.5 * whole).abs() <= 1e-9 * whole,
        "row 1 only: {half}, whole side: {whole}"
    );
    // The same by the other row.
    let other = east_rate(&deck("  j = 2..2"));
    assert!((other - half).abs() <= 1e-9 * whole);
}
