//! A fault between two blocks in series, end to end through the run
//! pipeline: the steady rate between two constant-pressure faces is
//! dp / (R_a + R_b + R_face / m), the half-cell resistances to the
//! boundaries in series with the interface scaled by the fault's
//! multiplier m (beds in series, Ahmed 2010, from memory). The
//! resistances are computed here by hand from the deck's numbers, not with
//! rill's own functions. Fictional "Crane Gap" pair of blocks.

use rill_model::{Analysis, Code};
use rill_run::{run, Request};
use rill_sim::NoObserver;

// NIST SP 811 conversion factors.
const FT: f64 = 0.3048;
const MD: f64 = 9.869233e-16;
const CP: f64 = 1e-3;
const PSI: f64 = 6894.757293168361;

fn deck(cells: &str, dx: &str, kx: &str, extra: &str) -> String {
    format!(
        r#"grid {{
  cells = {cells}
  dx = {dx}
  dy = 200 ft
  dz = 25 ft
  top = 5000 ft
}}

rock {{
  porosity = 0.2
  kx = {kx}
}}

fluid {{
  viscosity = 1.3 cP
  fvf = 1.1 rb/stb
  density = 62 lb/ft^3
}}

initial {{
  pressure = 2500 psi at 5012.5 ft
}}

boundary "west inflow" {{
  side = west
  pressure = 2600 psi
}}
{extra}
timeline {{
  kind = steady
}}
"#
    )
}

fn pair(m: f64) -> String {
    let extra = format!(
        "\nboundary \"east outflow\" {{\n  side = east\n  pressure = 2400 psi\n}}\n\nfault \"Crane\" {{\n  side = east\n  i = 1\n  multiplier = {m}\n}}\n"
    );
    deck("2 x 1 x 1", "[300 500] ft", "cells [40 150] md", &extra)
}

fn analyze(text: &str) -> (tempfile::TempDir, std::path::PathBuf, Analysis) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("crane.rill");
    std::fs::write(&path, text).unwrap();
    let source = rill_model::MemorySource::new().with(&path, text);
    let analysis = rill_model::analyze(&path, &source).unwrap();
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    (dir, path, analysis)
}

/// Steady surface rates (west, east) out through the boundaries, m^3/s.
fn rates(text: &str) -> (f64, f64) {
    let (dir, path, analysis) = analyze(text);
    let out = dir.path().join("crane.out");
    let done = run(&Request::new(&analysis, &path, &out), &mut NoObserver)
        .result
        .unwrap();
    let rate = |name: &str| {
        let b = done
            .results
            .boundaries
            .iter()
            .find(|b| b.name == name)
            .unwrap();
        *b.rate.last().unwrap()
    };
    (rate("west inflow"), rate("east outflow"))
}

/// The series rate by hand, surface m^3/s.
fn by_hand(m: f64) -> f64 {
    let area = 200.0 * FT * 25.0 * FT;
    let (la, lb) = (0.5 * 300.0 * FT, 0.5 * 500.0 * FT);
    let (ka, kb) = (40.0 * MD, 150.0 * MD);
    // Each half-cell a linear Darcy bed L / (k A); the interface is the two
    // half-cells beside it in series, scaled by the multiplier.
    let r_a = la / (ka * area);
    let r_b = lb / (kb * area);
    let r_face = la / (ka * area) + lb / (kb * area);
    let dp = (2600.0 - 2400.0) * PSI;
    dp / (1.3 * CP * 1.1 * (r_a + r_b + r_face / m))
}

#[test]
fn the_rate_through_a_fault_is_that_of_beds_in_series() {
    for m in [0.02, 0.3, 1.0, 4.0] {
        let (west, east) = rates(&pair(m));
        let want = by_hand(m);
        assert!(
            (east - want).abs() <= 1e-3 * want,
            "m = {m}: east {east}, by hand {want}"
        );
        assert!(
            (west + want).abs() <= 1e-3 * want,
            "m = {m}: west {west}, by hand {}",
            -want
        );
    }
    // The multiplier matters: 0.02 cuts the rate well below the open pair.
    assert!(by_hand(0.02) < 0.1 * by_hand(1.0));
}

#[test]
fn a_sealing_fault_stops_the_flow_without_isolating_cells_a_boundary_holds() {
    let text = pair(0.0);
    let (_dir, _path, analysis) = analyze(&text);
    assert!(
        !analysis
            .diagnostics
            .iter()
            .any(|d| d.code == Code::FlowIsolated),
        "{:?}",
        analysis.diagnostics
    );
    let (west, east) = rates(&text);
    let open = by_hand(1.0);
    assert!(
        west.abs() <= 1e-9 * open && east.abs() <= 1e-9 * open,
        "{west} {east}"
    );
}

#[test]
fn a_sealing_fault_leaves_a_cell_a_well_reaches_connected() {
    // Three blocks, the boundary west; the fault seals the last block off,
    // where a well at a fixed BHP still reaches it.
    let extra = "\nwell \"C-1\" {\n  role = producer\n  location = (3, 1)\n  radius = 0.3 ft\n  control = bhp 2300 psi\n}\n\nfault \"Crane\" {\n  side = west\n  i = 3\n  multiplier = 0\n}\n";
    let text = deck("3 x 1 x 1", "[300 500 400] ft", "80 md", extra);
    let (dir, path, analysis) = analyze(&text);
    assert!(
        !analysis
            .diagnostics
            .iter()
            .any(|d| d.code == Code::FlowIsolated),
        "{:?}",
        analysis.diagnostics
    );
    let out = dir.path().join("crane.out");
    let done = run(&Request::new(&analysis, &path, &out), &mut NoObserver)
        .result
        .unwrap();
    // Nothing crosses the sealed face: the west boundary carries no flow.
    let west = &done.results.boundaries[0];
    assert!(west.rate.last().unwrap().abs() < 1e-12, "{:?}", west.rate);
    // The same deck without the well: the cut-off block is isolated, and
    // the warning names the fault.
    let text = deck(
        "3 x 1 x 1",
        "[300 500 400] ft",
        "80 md",
        "\nfault \"Crane\" {\n  side = west\n  i = 3\n  multiplier = 0\n}\n",
    );
    let (_dir, _path, analysis) = analyze(&text);
    let d = analysis
        .diagnostics
        .iter()
        .find(|d| d.code == Code::FlowIsolated)
        .unwrap_or_else(|| panic!("{:?}", analysis.diagnostics));
    assert!(
        d.message.contains("the first (3, 1, 1)") && d.message.contains("fault \"Crane\""),
        "{}",
        d.message
    );
}
