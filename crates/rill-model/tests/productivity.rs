//! `well.productivity`: a well whose every completion has a zero well index
//! (Peaceman's index needs both permeabilities normal to the wellbore; a
//! zero one gives no inflow). Fictional three-layer "Heron" block.

use rill_model::{analyze_text, Code, MemorySource, Severity};
use std::path::Path;

fn deck(kx: &str, completions: &str) -> String {
    format!(
        r#"grid {{
  cells = 3 x 3 x 3
  dx = 150 ft
  dy = 150 ft
  dz = 20 ft
  top = 5200 ft
}}

rock {{
  porosity = layers [0.2 0.2 0]
  kx = {kx}
  kz = 5 md
}}

fluid {{
  viscosity = 0.9 cP
  fvf = 1.01 rb/stb
  density = 63 lb/ft^3
}}

initial {{
  pressure = 2300 psi at 5200 ft
}}

well "Heron-4" {{
  role = producer
  completions = {completions}
  radius = 0.3 ft
  control = rate 250 stb/day
}}

timeline {{
  end = 90 day
}}
"#
    )
}

#[test]
fn every_completion_without_index_names_each_and_why() {
    let text = deck("layers [90 0 60] md", "[(2, 2, 2) (2, 2, 3)]");
    let a = analyze_text(Path::new("/w/h.rill"), &text, &MemorySource::new());
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::WellProductivity)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert_eq!(d[0].severity, Severity::Error);
    assert!(d[0].message.contains("\"Heron-4\""));
    let notes = d[0].notes.join("\n");
    assert!(
        notes.contains("(2, 2, 2): kx and ky are zero normal to the wellbore"),
        "{notes}"
    );
    assert!(notes.contains("(2, 2, 3): the cell is inactive"), "{notes}");
}

#[test]
fn one_productive_completion_is_enough() {
    let text = deck("layers [90 0 60] md", "[(2, 2, 1) (2, 2, 2)]");
    let a = analyze_text(Path::new("/w/h.rill"), &text, &MemorySource::new());
    assert!(
        !a.diagnostics
            .iter()
            .any(|d| d.code == Code::WellProductivity),
        "{:?}",
        a.diagnostics
    );
}
