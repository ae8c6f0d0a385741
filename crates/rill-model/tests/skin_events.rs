//! `skin` in an event: lowered into the event's well change, and refused
//! like the well block's skin when it leaves Peaceman's denominator
//! ln(r_eq / r_w) + s not positive. Fictional "Osprey" block.

use rill_model::{analyze_text, Code, MemorySource, Severity};
use std::path::Path;

fn deck(skin: &str) -> String {
    format!(
        r#"grid {{
  cells = 5 x 5 x 1
  dx = 100 ft
  dy = 100 ft
  dz = 30 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = 80 md
}}
fluid {{
  viscosity = 0.9 cP
  fvf = 1.0 rb/stb
  compressibility = 3e-6 1/psi
  density = 63 lb/ft^3
}}
initial {{
  pressure = 2800 psi at 5000 ft
}}
well "Osprey-2" {{
  role = producer
  location = (3, 3)
  radius = 0.3 ft
  control = rate 150 stb/day
  bhp_limit = 500 psi
}}
timeline {{
  end = 100 day
  at 40 day {{
    well "Osprey-2" {{ skin = {skin} }}
  }}
}}
"#
    )
}

#[test]
fn an_event_skin_is_lowered_into_the_well_change() {
    let a = analyze_text(Path::new("/w/o.rill"), &deck("4.5"), &MemorySource::new());
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.runnable_case().unwrap();
    let ch = &case.timeline.events[0].changes[0];
    assert_eq!(
        (ch.well, ch.skin, ch.control, ch.bhp_limit),
        (0, Some(4.5), None, None)
    );
}

#[test]
fn an_event_skin_that_leaves_no_positive_index_is_refused_where_it_is_written() {
    // r_eq = 0.198 * 100 ft = 19.8 ft, ln(19.8 / 0.3) = 4.19: a skin of -5 leaves no index.
    let text = deck("-5");
    let a = analyze_text(Path::new("/w/o.rill"), &text, &MemorySource::new());
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::SanityRadius)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert_eq!(d[0].severity, Severity::Error);
    assert!(d[0].message.contains("with skin -5"), "{}", d[0].message);
    let at = text.find("skin = -5").unwrap() + "skin = ".len();
    assert_eq!(d[0].location.span().start, at);
    // A stimulation that keeps it positive is fine.
    let a = analyze_text(Path::new("/w/o.rill"), &deck("-3"), &MemorySource::new());
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
}
