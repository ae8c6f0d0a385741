//! Boundary selectors `i`, `j`, `k`: what they hold, what they refuse, and
//! that two boundaries never hold one face. Fixture deck of the fictional
//! 4 x 3 x 2 block.

use rill_model::{analyze_text, Analysis, Code, MemorySource};
use std::path::Path;

const BASE: &str = include_str!("../../../tests/fixtures/timeline.steps/clean.rill");

fn with(boundaries: &str) -> Analysis {
    let text = BASE.replace("timeline {", &format!("{boundaries}\ntimeline {{"));
    analyze_text(Path::new("/w/block.rill"), &text, &MemorySource::new())
}

#[test]
fn selectors_restrict_the_faces_and_inspect_shows_it() {
    let a = with(
        "boundary \"east lobe\" {\n  side = east\n  j = 2..3\n  k = 2\n  pressure = 3050 psi\n}\n",
    );
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    let b = &case.boundaries[0];
    let g = &case.grid;
    let held: Vec<(usize, usize, usize)> = b.cells(g).iter().map(|&c| g.ijk(c)).collect();
    assert_eq!(held, [(3, 1, 1), (3, 2, 1)]);
    let east = |i, j, k| {
        let r = rill_model::inspect::cell_report(&case, i, j, k).unwrap();
        r.faces
            .iter()
            .find(|f| f.side == rill_model::Side::East)
            .unwrap()
            .boundary
            .clone()
    };
    assert_eq!(east(3, 1, 1).as_deref(), Some("east lobe"));
    assert_eq!(east(3, 0, 1), None, "row 1 is closed");
    assert_eq!(east(3, 1, 0), None, "layer 1 is closed");
}

#[test]
fn a_selection_outside_the_side_or_the_grid_is_an_error() {
    // i = 1 on the east side of a 4-wide grid: no face.
    let a = with("boundary \"e\" {\n  side = east\n  i = 1\n  pressure = 3050 psi\n}\n");
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == Code::GridIndex
                && d.message.contains("selects no face on the east side")),
        "{:?}",
        a.diagnostics
    );
    let a = with("boundary \"e\" {\n  side = east\n  j = 2..9\n  pressure = 3050 psi\n}\n");
    assert!(
        a.diagnostics.iter().any(|d| d.code == Code::GridIndex),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn two_boundaries_on_one_face_are_refused_and_disjoint_ones_run() {
    let a = with(
        "boundary \"a\" {\n  side = east\n  pressure = 3000 psi\n}\nboundary \"b\" {\n  side = east\n  j = 3\n  pressure = 3050 psi\n}\n",
    );
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::BoundaryOverlap)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert!(d[0]
        .message
        .contains("\"b\" holds faces that boundary \"a\""));
    assert!(a.case.is_none() || a.has_errors());
    let a = with(
        "boundary \"a\" {\n  side = east\n  j = 1..2\n  pressure = 3000 psi\n}\nboundary \"b\" {\n  side = east\n  j = 3\n  pressure = 3050 psi\n}\n",
    );
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
}
