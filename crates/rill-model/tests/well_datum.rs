//! One well datum for the checker and the simulator: the centre of the
//! shallowest active completed cell. With a dipping top, the completion in
//! the first layer index need not be the shallowest.

use rill_model::{analyze_text, derived, MemorySource};
use std::path::Path;

const DECK: &str = r#"grid {
  cells = 2 x 1 x 2
  dx = 300 ft
  dy = 300 ft
  dz = 20 ft
  top = columns [6000 5900] ft
}

rock {
  porosity = 0.2
  kx = 100 md
}

fluid {
  viscosity = 1 cP
  fvf = 1 rb/stb
  density = 62.4 lb/ft^3
}

initial {
  pressure = 3000 psi at 6000 ft
}

well "Heron-2" {
  role = producer
  completions = [(1, 1, 1) (2, 1, 2)]
  radius = 0.3 ft
  control = bhp BHP
}

timeline {
  end = 10 day
}
"#;

fn analyze(bhp: &str) -> rill_model::Analysis {
    let text = DECK.replace("BHP", bhp);
    analyze_text(Path::new("datum.rill"), &text, &MemorySource::new())
}

#[test]
fn the_datum_is_the_shallowest_active_completion_not_the_first_layer() {
    let a = analyze("1000 psi");
    let case = a.case.as_ref().expect("the case");
    let depth = derived::well_datum_depth(&case.grid, &case.rock, &case.wells[0]).unwrap();
    // (2, 1, 2): top 5900 ft + 20 ft of layer 1 + half of 20 ft = 5930 ft,
    // shallower than (1, 1, 1) at 6010 ft.
    assert!((depth / 0.3048 - 5930.0).abs() < 1e-9, "{}", depth / 0.3048);
}

#[test]
fn the_bhp_check_uses_the_same_datum_as_the_run() {
    // 62.4 lb/ft^3 of water is about 0.433 psi/ft: 3000 psi at 6000 ft is
    // about 2970 psi at 5930 ft and 3004 psi at 6010 ft. A producer held at
    // 2990 psi stands above the initial pressure at the 5930 ft datum: it
    // would inject there.
    let a = analyze("2990 psi");
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == "well.bhp")
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert!(d[0].message.contains("5930"), "{}", d[0].message);
}
