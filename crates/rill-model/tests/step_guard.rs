//! `timeline.steps` and the step guard's keys: `min_step` (the shortest
//! step a cut may leave) and `max_steps` (the most steps a run may take),
//! with their defaults. Fictional one-well block (the "Wrenfield" test
//! lease).

use rill_model::{analyze_text, Analysis, Code, MemorySource, Severity, Timeline};
use std::path::Path;

fn deck(timeline: &str) -> String {
    format!(
        r#"grid {{
  cells = 3 x 3 x 1
  dx = 200 ft
  dy = 200 ft
  dz = 40 ft
  top = 6000 ft
}}

rock {{
  porosity = 0.2
  kx = 80 md
}}

fluid {{
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  density = 63 lb/ft^3
}}

initial {{
  pressure = 2800 psi at 6020 ft
}}

well "W-1" {{
  role = producer
  location = (2, 2)
  radius = 0.3 ft
  control = rate 100 stb/day
  bhp_limit = 800 psi
}}

timeline {{
{timeline}
}}
"#
    )
}

fn analyze(text: &str) -> Analysis {
    analyze_text(Path::new("/w/wrenfield.rill"), text, &MemorySource::new())
}

fn errors(text: &str, code: Code) -> Vec<String> {
    analyze(text)
        .diagnostics
        .into_iter()
        .filter(|d| d.code == code && d.severity == Severity::Error)
        .map(|d| d.message)
        .collect()
}

#[test]
fn a_million_steps_at_max_step_are_refused_before_the_run() {
    // end / max_step = 100 day / 1e-4 day = 10^6 steps > 100000.
    let text = deck("  end = 100 day\n  max_step = 1e-4 day");
    let a = analyze(&text);
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::TimelineSteps)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert!(d[0].message.contains("1000000 steps"), "{}", d[0].message);
    assert!(d[0].message.contains("`max_steps` = 100000"));
    assert_eq!(
        &text[d[0].location.start..d[0].location.end],
        "1e-4 day",
        "the primary span is the max_step value"
    );
    // The note says how long max_step must be: 100 day / 100000 = 0.001 day.
    assert!(
        d[0].notes.iter().any(|n| n.contains("0.001 day")),
        "{:?}",
        d[0].notes
    );
}

#[test]
fn a_million_years_in_one_day_steps_is_refused() {
    let text = deck("  end = 1e6 yr\n  max_step = 1 day");
    assert_eq!(errors(&text, Code::TimelineSteps).len(), 1);
}

#[test]
fn raising_max_steps_allows_a_long_run_on_purpose() {
    let text = deck("  end = 100 day\n  max_step = 1e-4 day\n  max_steps = 2000000");
    let a = analyze(&text);
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    assert_eq!(a.case.unwrap().timeline.max_steps, 2_000_000);
}

#[test]
fn defaults_are_one_second_and_a_hundred_thousand_steps() {
    let a = analyze(&deck("  end = 100 day"));
    let tl = a.case.unwrap().timeline;
    assert_eq!(tl.min_step, 1.0);
    assert_eq!(tl.max_steps, Timeline::DEFAULT_MAX_STEPS);
    assert_eq!(tl.max_steps, 100_000);
    // A first step shorter than a second lowers the default floor to it.
    let a = analyze(&deck("  end = 1 hr\n  first_step = 0.25 s"));
    assert_eq!(a.case.unwrap().timeline.min_step, 0.25);
}

#[test]
fn min_step_must_fit_under_the_other_steps() {
    let text = deck("  end = 100 day\n  first_step = 0.01 day\n  min_step = 1 day");
    let e = errors(&text, Code::TimelineSteps);
    assert_eq!(e.len(), 1);
    assert!(e[0].contains("longer than `first_step`"), "{e:?}");
    let ok = deck("  end = 100 day\n  min_step = 10 s");
    let a = analyze(&ok);
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    assert_eq!(a.case.unwrap().timeline.min_step, 10.0);
}

#[test]
fn max_steps_is_a_whole_positive_number() {
    for bad in ["0", "2.5", "-3"] {
        let text = deck(&format!("  end = 100 day\n  max_steps = {bad}"));
        let d: Vec<_> = analyze(&text)
            .diagnostics
            .into_iter()
            .filter(|d| d.severity == Severity::Error)
            .collect();
        assert!(
            d.iter()
                .any(|d| d.code == Code::DeckOutOfRange && d.message.contains("max_steps")),
            "{bad}: {d:?}"
        );
    }
}
