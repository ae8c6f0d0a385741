//! `fault` blocks: which faces they name, how their multipliers combine,
//! what they refuse, and that assembly, `inspect` and `flow.isolated` read
//! the same multipliers. Fixture deck of the fictional 4 x 3 x 2 block.

use rill_model::derived::{case_connections, connections, interior_face, FaceMultipliers};
use rill_model::{analyze_text, inspect::cell_report, Analysis, Code, MemorySource, Side};
use std::path::Path;

const BASE: &str = include_str!("../../../tests/fixtures/timeline.steps/clean.rill");

fn with(faults: &str) -> Analysis {
    let text = BASE.replace("timeline {", &format!("{faults}\ntimeline {{"));
    analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new())
}

fn fault(name: &str, body: &str) -> String {
    format!("fault \"{name}\" {{\n{body}\n}}\n")
}

fn codes(a: &Analysis) -> Vec<Code> {
    a.diagnostics.iter().map(|d| d.code).collect()
}

#[test]
fn a_fault_scales_the_faces_on_its_side_of_the_selected_cells() {
    let a = with(&fault(
        "Crane",
        "  side = east\n  i = 2\n  j = 1..2\n  k = 2\n  multiplier = 0.02",
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    let g = &case.grid;
    let m = FaceMultipliers::of(&case);
    // 0-based: column 1, rows 0..=1, layer 1.
    for j in 0..3 {
        for k in 0..2 {
            let c = g.index(1, j, k);
            let want = if j <= 1 && k == 1 { 0.02 } else { 1.0 };
            assert_eq!(m.at(g, c, Side::East), want, "({j}, {k})");
            // The same face named from the cell across it.
            assert_eq!(m.at(g, g.index(2, j, k), Side::West), want, "({j}, {k})");
            // Other faces of the cell are untouched.
            assert_eq!(m.at(g, c, Side::West), 1.0);
            assert_eq!(m.at(g, c, Side::North), 1.0);
        }
    }
    // Assembly: exactly the named faces change, by the multiplier.
    let base = connections(g, &case.rock);
    let scaled = case_connections(&case);
    assert_eq!(base.len(), scaled.len());
    let mut changed = 0;
    for (b, s) in base.iter().zip(&scaled) {
        assert_eq!((b.a, b.b), (s.a, s.b));
        if b.geometric_trans != s.geometric_trans {
            changed += 1;
            assert_eq!(s.b, b.a + 1, "an east face");
            assert!(
                (s.geometric_trans - 0.02 * b.geometric_trans).abs() <= 1e-15 * b.geometric_trans
            );
        }
    }
    assert_eq!(changed, 2);
}

#[test]
fn multipliers_of_two_faults_on_one_face_multiply_from_either_side() {
    // One named from the west cell, one from the east cell of the same faces.
    let a = with(&format!(
        "{}{}",
        fault("A", "  side = east\n  i = 1\n  multiplier = 0.5"),
        fault("B", "  side = west\n  i = 2\n  j = 2\n  multiplier = 0.1")
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    let g = &case.grid;
    let m = FaceMultipliers::of(&case);
    for j in 0..3 {
        for k in 0..2 {
            let want = if j == 1 { 0.05 } else { 0.5 };
            let got = m.at(g, g.index(0, j, k), Side::East);
            assert!((got - want).abs() < 1e-15, "({j}, {k}): {got}");
            assert_eq!(got, m.at(g, g.index(1, j, k), Side::West));
        }
    }
    // What the simulator assembles on one of them is the rock's face times both.
    let c = g.index(0, 1, 0);
    let face = interior_face(g, &case.rock, c, Side::East).unwrap();
    let conn = case_connections(&case)
        .into_iter()
        .find(|cn| cn.a == c && cn.b == c + 1)
        .unwrap();
    assert!(
        (conn.geometric_trans - 0.05 * face.geometric_trans).abs() <= 1e-15 * face.geometric_trans
    );
}

#[test]
fn inspect_shows_the_multiplied_value_the_multiplier_and_the_value_before() {
    let a = with(&fault(
        "Crane",
        "  side = north\n  j = 1\n  multiplier = 0.25",
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    let g = &case.grid;
    let c = g.index(2, 0, 1);
    let r = cell_report(&case, 2, 0, 1).unwrap();
    let north = r.faces.iter().find(|f| f.side == Side::North).unwrap();
    let face = interior_face(g, &case.rock, c, Side::North).unwrap();
    let t0 = face.geometric_trans / (case.fluid.viscosity * case.fluid.fvf);
    assert_eq!(north.multiplier, 0.25);
    assert!((north.unmodified_trans - t0).abs() <= 1e-12 * t0);
    assert!((north.trans - 0.25 * t0).abs() <= 1e-12 * t0);
    assert!(
        (north.geometric_trans - 0.25 * face.geometric_trans).abs() <= 1e-12 * face.geometric_trans
    );
    // The same face seen from the cell across it.
    let r = cell_report(&case, 2, 1, 1).unwrap();
    let south = r.faces.iter().find(|f| f.side == Side::South).unwrap();
    assert_eq!(
        (south.multiplier, south.trans),
        (north.multiplier, north.trans)
    );
    // A face without a fault keeps 1 and its own value.
    let east = r.faces.iter().find(|f| f.side == Side::East).unwrap();
    assert_eq!(east.multiplier, 1.0);
    assert_eq!(east.trans, east.unmodified_trans);
}

#[test]
fn a_fault_on_the_grids_edge_is_fault_faces() {
    // `side = east` without `i` reaches the last column, which has no cell across.
    let a = with(&fault(
        "Edge",
        "  side = east\n  j = 1..2\n  multiplier = 0.1",
    ));
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::FaultFaces)
        .unwrap_or_else(|| panic!("{:?}", a.diagnostics));
    assert!(
        d.message
            .contains("fault \"Edge\" selects 4 of 16 face(s) on the grid's east edge")
            && d.message.contains("cell (4, 1, 1)"),
        "{}",
        d.message
    );
    assert!(a.case.is_none(), "a refused fault leaves no case to run");
    // The top side of layer 1 is the grid's top.
    let a = with(&fault("Cap", "  side = top\n  k = 1..2\n  multiplier = 0"));
    assert!(codes(&a).contains(&Code::FaultFaces), "{:?}", a.diagnostics);
    // Inside, it is fine.
    let a = with(&fault(
        "Inner",
        "  side = bottom\n  k = 1\n  multiplier = 0.3",
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
}

#[test]
fn a_negative_multiplier_is_out_of_range_and_a_selector_outside_the_grid_is_grid_index() {
    let a = with(&fault("Neg", "  side = east\n  i = 2\n  multiplier = -0.5"));
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::DeckOutOfRange)
        .unwrap_or_else(|| panic!("{:?}", a.diagnostics));
    assert!(d.message.contains("found -0.5"), "{}", d.message);
    let a = with(&fault(
        "Far",
        "  side = east\n  i = 2\n  j = 2..9\n  multiplier = 0.5",
    ));
    assert!(codes(&a).contains(&Code::GridIndex), "{:?}", a.diagnostics);
    let a = with(&fault("NoSide", "  i = 2\n  multiplier = 0.5"));
    assert!(
        codes(&a).contains(&Code::DeckMissingKey),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn two_faults_with_one_name_are_a_duplicate_name() {
    let a = with(&format!(
        "{}{}",
        fault("Crane", "  side = east\n  i = 1\n  multiplier = 0.5"),
        fault("Crane", "  side = east\n  i = 2\n  multiplier = 0.5")
    ));
    assert!(
        codes(&a).contains(&Code::DeckDuplicateName),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn cells_sealed_off_by_faults_are_isolated_and_the_warning_points_at_the_fault() {
    // Column (1, 1) sealed on its east and north faces, the only faces it
    // has inside the grid besides the vertical one, sealed too.
    let seal = format!(
        "{}{}{}",
        fault(
            "East seal",
            "  side = east\n  i = 1\n  j = 1\n  multiplier = 0"
        ),
        fault(
            "North seal",
            "  side = north\n  i = 1\n  j = 1\n  multiplier = 0"
        ),
        fault(
            "Layer seal",
            "  side = bottom\n  i = 1\n  j = 1\n  k = 1\n  multiplier = 0"
        )
    );
    let text = BASE.replace("timeline {", &format!("{seal}\ntimeline {{"));
    let a = analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new());
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::FlowIsolated)
        .unwrap_or_else(|| panic!("{:?}", a.diagnostics));
    assert!(
        d.message.starts_with("2 active cell(s)") && d.message.contains("the first (1, 1, 1)"),
        "{}",
        d.message
    );
    assert!(
        d.message.contains("fault \"East seal\" seals them off"),
        "{}",
        d.message
    );
    // The primary span is the sealing fault's multiplier; the related one the base kx.
    let at = &text[d.location.start..d.location.end];
    assert_eq!(at, "0");
    assert!(text[..d.location.start]
        .ends_with("fault \"East seal\" {\n  side = east\n  i = 1\n  j = 1\n  multiplier = "));
    let label = &d.labels[0];
    assert_eq!(
        &text[label.location.start..label.location.end],
        "layers [100 50] md"
    );
}

#[test]
fn a_sealed_cell_that_a_boundary_or_a_well_still_reaches_is_not_isolated() {
    // Column (4, 1) sealed from the rest, but on the east edge where a boundary holds it.
    let seal = format!(
        "{}{}{}",
        fault("W", "  side = west\n  i = 4\n  j = 1\n  multiplier = 0"),
        fault("N", "  side = north\n  i = 4\n  j = 1\n  multiplier = 0"),
        fault(
            "V",
            "  side = bottom\n  i = 4\n  j = 1\n  k = 1\n  multiplier = 0"
        )
    );
    let boundary = "boundary \"east\" {\n  side = east\n  pressure = 3000 psi at 6000 ft\n}\n";
    let text = BASE.replace("timeline {", &format!("{seal}{boundary}\ntimeline {{"));
    let a = analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new());
    assert!(
        !codes(&a).contains(&Code::FlowIsolated),
        "{:?}",
        a.diagnostics
    );
    // The same cut without the boundary: both cells of the column are isolated.
    let text = BASE.replace("timeline {", &format!("{seal}\ntimeline {{"));
    let a = analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new());
    assert!(
        codes(&a).contains(&Code::FlowIsolated),
        "{:?}",
        a.diagnostics
    );
    // The well "P-1" sits in column (2, 2), both layers: sealing every face
    // of both its cells leaves them reached by the well.
    let around = format!(
        "{}{}{}{}{}",
        fault("a", "  side = west\n  i = 2\n  j = 2\n  multiplier = 0"),
        fault("b", "  side = east\n  i = 2\n  j = 2\n  multiplier = 0"),
        fault("c", "  side = south\n  i = 2\n  j = 2\n  multiplier = 0"),
        fault("d", "  side = north\n  i = 2\n  j = 2\n  multiplier = 0"),
        fault(
            "e",
            "  side = bottom\n  i = 2\n  j = 2\n  k = 1\n  multiplier = 0"
        ),
    );
    let text = BASE.replace("timeline {", &format!("{around}\ntimeline {{"));
    let a = analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new());
    assert!(
        !codes(&a).contains(&Code::FlowIsolated),
        "{:?}",
        a.diagnostics
    );
}
