//! `initial.pressure` and `sanity.pressure`: an initial state or a given
//! absolute pressure that cannot hold a liquid. Fictional two-layer block
//! near 8000 ft (the "Kestrel" field of the fixtures).

use rill_model::{analyze_text, Code, Diagnostic, MemorySource, Severity};
use std::path::Path;

fn deck(initial: &str, well_extra: &str, extra: &str) -> String {
    format!(
        r#"grid {{
  cells = 3 x 3 x 2
  dx = 200 ft
  dy = 200 ft
  dz = 40 ft
  top = 8000 ft
}}

rock {{
  porosity = 0.18
  kx = 80 md
}}

fluid {{
  viscosity = 0.6 cP
  fvf = 1.03 rb/stb
  density = 64 lb/ft^3
}}

initial {{
  pressure = {initial}
}}

well "K-1" {{
  role = producer
  location = (2, 2)
  radius = 0.35 ft
  {well_extra}
}}
{extra}
timeline {{
  end = 100 day
}}
"#
    )
}

fn found(text: &str, code: Code) -> Vec<Diagnostic> {
    analyze_text(Path::new("/w/k.rill"), text, &MemorySource::new())
        .diagnostics
        .into_iter()
        .filter(|d| d.code == code)
        .collect()
}

#[test]
fn datum_in_metres_on_a_grid_in_feet_is_an_error_naming_depths() {
    let text = deck("3850 psi at 8450 m", "control = rate 300 stb/day", "");
    let d = found(&text, Code::InitialPressure);
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(d[0].severity, Severity::Error);
    let m = &d[0].message;
    // 8450 m is 27723 ft: the column above it loses 64 lb/ft^3 * 19700 ft
    // (about 8760 psi) before it reaches the grid, so the pressure at the
    // top cell centre is negative.
    assert!(m.contains("zero or negative"), "{m}");
    assert!(m.contains("8020 ft") && m.contains("8060 ft"), "{m}");
    assert!(m.contains("27723.1 ft") || m.contains("27723 ft"), "{m}");
    assert!(
        d[0].notes.iter().any(|n| n.contains("below the grid")),
        "{:?}",
        d[0].notes
    );
}

#[test]
fn datum_with_the_wrong_sign_is_an_error() {
    let text = deck("-3850 psi at 8050 ft", "control = rate 300 stb/day", "");
    let d = found(&text, Code::InitialPressure);
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(
        d[0].message.contains("zero or negative"),
        "{}",
        d[0].message
    );
    assert!(d[0].message.contains("-3850 psi"), "{}", d[0].message);
    // The datum inside the grid: no note about its place.
    assert!(d[0].notes.is_empty(), "{:?}", d[0].notes);
}

#[test]
fn below_one_atmosphere_is_an_error_and_a_sound_datum_is_not() {
    // 10 psi at the top cell centre, 8020 ft: below 14.696 psi.
    let text = deck("10 psi at 8020 ft", "control = rate 300 stb/day", "");
    let d = found(&text, Code::InitialPressure);
    assert_eq!(d.len(), 1, "{d:?}");
    assert!(d[0].message.contains("below 1 atm"), "{}", d[0].message);
    let clean = deck("3850 psi at 8450 ft", "control = rate 300 stb/day", "");
    assert!(found(&clean, Code::InitialPressure).is_empty());
}

#[test]
fn cell_pressures_below_one_atmosphere_name_the_cell() {
    let mut values = vec!["3500"; 18];
    values[13] = "-20";
    let init = format!("cells [{}] psi", values.join(" "));
    let d = found(
        &deck(&init, "control = rate 300 stb/day", ""),
        Code::InitialPressure,
    );
    assert_eq!(d.len(), 1, "{d:?}");
    // Cell 13 (0-based) is (2, 2, 2).
    assert!(d[0].message.contains("(2, 2, 2)"), "{}", d[0].message);
}

#[test]
fn non_positive_bhp_limits_controls_and_boundaries_are_errors() {
    let boundary = "boundary \"K aquifer\" {\n  side = east\n  pressure = 0 psi at 8000 ft\n}\n";
    let event = "";
    let text = deck(
        "3850 psi at 8450 ft",
        "control = bhp -100 psi\n  bhp_limit = -14.7 psig",
        &format!("{boundary}{event}"),
    );
    let d = found(&text, Code::SanityPressure);
    let msgs: Vec<&str> = d.iter().map(|d| d.message.as_str()).collect();
    assert_eq!(d.len(), 3, "{msgs:?}");
    assert!(d.iter().all(|d| d.severity == Severity::Error));
    assert!(msgs.iter().any(|m| m.contains("BHP control of \"K-1\"")));
    assert!(msgs.iter().any(|m| m.contains("`bhp_limit` of \"K-1\"")));
    assert!(msgs.iter().any(|m| m.contains("boundary \"K aquifer\"")));
    // The primary span is the value.
    let first = &d
        .iter()
        .find(|d| d.message.contains("BHP control"))
        .unwrap();
    assert_eq!(
        &text[first.location.start..first.location.end],
        "bhp -100 psi"
    );
}

#[test]
fn event_pressures_are_checked_too() {
    let text = deck("3850 psi at 8450 ft", "control = rate 300 stb/day", "").replace(
        "  end = 100 day\n",
        "  end = 100 day\n  at 50 day {\n    well \"K-1\" { bhp_limit = 0 psi }\n  }\n",
    );
    let d = found(&text, Code::SanityPressure);
    assert_eq!(d.len(), 1, "{d:?}");
    assert_eq!(&text[d[0].location.start..d[0].location.end], "0 psi");
    assert!(d[0].message.contains("in an event"));
}

#[test]
fn shut_is_a_control_from_the_start_and_in_events() {
    let text = deck("3850 psi at 8450 ft", "control = shut\n  bhp_limit = 1500 psi", "")
        .replace(
            "  end = 100 day\n",
            "  end = 100 day\n  at 50 day {\n    well \"K-1\" { control = rate 300 stb/day }\n  }\n  at 80 day {\n    well \"K-1\" { control = shut }\n  }\n",
        );
    let a = analyze_text(Path::new("/w/k.rill"), &text, &MemorySource::new());
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.unwrap();
    assert_eq!(case.wells[0].control, rill_model::Control::Shut);
    let controls: Vec<_> = case
        .timeline
        .events
        .iter()
        .map(|e| e.changes[0].control)
        .collect();
    assert_eq!(
        controls,
        vec![
            Some(rill_model::Control::Rate(300.0 * 0.158987294928 / 86400.0)),
            Some(rill_model::Control::Shut)
        ]
    );
}
