//! `flow.isolated`: an active cell whose every interior face carries no
//! flow is isolated unless a well is completed in it or a constant-pressure
//! boundary touches it through a face of positive transmissibility
//! (common practice, no published source). Fictional three-cell row.

use rill_model::{analyze_text, MemorySource};
use std::path::Path;

/// A 3 x 1 x 1 row whose middle cell has no permeability in x: its two faces
/// carry nothing, so the middle and the east cell are cut off from the well
/// in the west cell; `extra` adds blocks. (`ky` and `kz` cross no face of a
/// one-row grid; they give a wellbore along x in the middle cell its index.)
fn deck(extra: &str) -> String {
    format!(
        r#"grid {{
  cells = 3 x 1 x 1
  dx = 100 ft
  dy = 100 ft
  dz = 20 ft
  top = 6000 ft
}}

rock {{
  porosity = 0.2
  kx = cells [100 0 100] md
  ky = 100 md
  kz = 100 md
  compressibility = 4e-6 1/psi
}}

fluid {{
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 62.4 lb/ft^3
}}

initial {{
  pressure = 3000 psi at 6000 ft
}}

well "W-1" {{
  role = producer
  location = (1, 1)
  radius = 0.3 ft
  control = bhp 2000 psi
}}
{extra}
timeline {{
  end = 10 day
}}
"#
    )
}

/// The `flow.isolated` message, if any.
fn isolated(text: &str) -> Option<String> {
    let a = analyze_text(Path::new("row.rill"), text, &MemorySource::new());
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    a.diagnostics
        .iter()
        .find(|d| d.code == "flow.isolated")
        .map(|d| d.message.clone())
}

#[test]
fn cells_behind_a_sealed_cell_are_isolated() {
    let m = isolated(&deck("")).expect("flow.isolated");
    assert!(m.starts_with("2 active cell(s)"), "{m}");
    assert!(m.contains("the first (2, 1, 1)"), "{m}");
}

#[test]
fn a_boundary_through_a_permeable_face_rescues_the_cell_it_touches() {
    let east =
        "\nboundary \"east aquifer\" {\n  side = east\n  pressure = 3000 psi at 6000 ft\n}\n";
    let m = isolated(&deck(east)).expect("the middle cell stays isolated");
    assert!(m.starts_with("1 active cell(s)"), "{m}");
    assert!(m.contains("the first (2, 1, 1)"), "{m}");
    // On the west side the boundary touches the well's cell, which flows anyway.
    let west = east.replace("east", "west");
    let m = isolated(&deck(&west)).expect("flow.isolated");
    assert!(m.starts_with("2 active cell(s)"), "{m}");
}

#[test]
fn a_well_in_the_cell_rescues_it() {
    let well = "\nwell \"W-2\" {\n  role = injector\n  completions = [(2, 1, 1)]\n  direction = x\n  radius = 0.3 ft\n  control = bhp 3500 psi\n}\n";
    let m = isolated(&deck(well)).expect("the east cell stays isolated");
    assert!(m.starts_with("1 active cell(s)"), "{m}");
    assert!(m.contains("the first (3, 1, 1)"), "{m}");
    let east =
        "\nboundary \"east aquifer\" {\n  side = east\n  pressure = 3000 psi at 6000 ft\n}\n";
    assert_eq!(isolated(&deck(&format!("{well}{east}"))), None);
}
