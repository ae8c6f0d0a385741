//! Edge cases of the oil-water engine its no-panic campaign
//! (`oil_water_robust.rs`) found, each as the smallest deck that showed
//! it, with the result the engine gives: wells with nothing of their phase
//! to take, limits held through switches, incompressible regions nothing
//! holds, tables whose curves do not end at zero, and the checker's word
//! on a curve Newton cannot follow.

use std::path::Path;

use rill_model::{analyze_text, Case, MemorySource};
use rill_sim::{run, RunOptions, RunResults};

const PSI: f64 = 6894.757293168;
const STB: f64 = 0.158987294928;

/// The checked case of `text`; `None` if the checker refuses it.
fn checked(text: &str) -> Option<Case> {
    let a = analyze_text(Path::new("/decks/defect.rill"), text, &MemorySource::new());
    a.runnable_case().cloned()
}

fn run_ok(text: &str) -> RunResults {
    let case = checked(text).expect("the deck checks clean");
    run(&case, &RunOptions::default(), &mut rill_sim::NoObserver)
        .unwrap_or_else(|e| panic!("the run stopped: {e}"))
}

/// Three cells in a row, 100 ft apart, one layer at 5000 ft: `rock`,
/// `fluids` (the `oil` and `water` blocks), `curves`, the initial
/// saturation line, the wells and the timeline's extra lines.
fn row(
    rock: &str,
    fluid_c: (f64, f64),
    curves: &str,
    sat: &str,
    wells: &str,
    timeline: &str,
) -> String {
    format!(
        r#"grid {{
  cells = 3 x 1 x 1
  dx = 100 ft
  dy = 100 ft
  dz = 20 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = 100 md
{rock}}}
oil {{
  viscosity = 2 cP
  fvf = 1.2 rb/stb
  compressibility = {} 1/psi
  density = 50 lb/ft^3
}}
water {{
  viscosity = 0.5 cP
  fvf = 1 rb/stb
  compressibility = {} 1/psi
  density = 62.4 lb/ft^3
}}
{curves}
initial {{
  pressure = 2500 psi at 5000 ft
  {sat}
}}
{wells}
timeline {{
  end = 10 day
{timeline}}}
"#,
        fluid_c.0, fluid_c.1
    )
}

const COREY: &str = r#"relperm "sand" {
  model = corey
  swc = 0.2
  sor = 0.2
  krw_end = 0.3
  kro_end = 0.8
  nw = 2
  no = 2
}"#;
const COMPRESSIBLE: &str = "  compressibility = 5e-6 1/psi\n";
const LIQUIDS: (f64, f64) = (1e-5, 3e-6);

fn producer(control: &str, limit: Option<f64>) -> String {
    let limit = limit.map_or(String::new(), |l| format!("  bhp_limit = {l} psi\n"));
    format!(
        "well \"P\" {{\n  role = producer\n  location = (3, 1)\n  radius = 0.3 ft\n  control = {control}\n{limit}}}\n"
    )
}

/// An `oil_rate` producer whose cells hold no mobile oil (`sw = 1`, so
/// `kro = 0`): no BHP meets its target, so it goes to its BHP limit and
/// produces water there, no oil (the same with the 1 atm floor of a
/// producer without a limit, and for producers whose cells water out).
#[test]
fn an_oil_rate_producer_in_water_goes_to_its_limit() {
    let deck = row(
        COMPRESSIBLE,
        LIQUIDS,
        COREY,
        "water_saturation = 1",
        &producer("oil_rate 100 stb/day", Some(1000.0)),
        "",
    );
    let r = run_ok(&deck);
    let ow = r.oil_water.as_ref().unwrap();
    assert!(ow.wells[0].cumulative_oil.iter().all(|q| q.abs() < 1e-9));
    assert!(ow.wells[0].cumulative_water.last().unwrap() > &(100.0 * STB));
}

/// A `liquid_rate` producer with `bhp_limit = 1000 psi` in a closed,
/// water-filled, compressible row: the limit is a hard constraint, the
/// average pressure never falls below it, and the water produced is the
/// expansion of the row's water and pores from the initial pressure to the
/// limit, `PV (1 - exp(-(c_w + c_r) dp))` (the definition of
/// compressibility; material balance of a closed tank).
#[test]
fn a_rate_well_never_draws_the_reservoir_below_its_limit() {
    let deck = row(
        COMPRESSIBLE,
        LIQUIDS,
        COREY,
        "water_saturation = 1",
        &producer("liquid_rate 100 stb/day", Some(1000.0)),
        "",
    );
    let r = run_ok(&deck);
    let lowest = r.pressure_avg.iter().copied().fold(f64::INFINITY, f64::min);
    assert!(
        lowest >= 999.0 * PSI,
        "average pressure {} psi",
        lowest / PSI
    );
    let produced = r.wells[0].cumulative.last().unwrap() / STB;
    // Three cells of 100 x 100 x 20 ft at porosity 0.2; B_w = 1 rb/stb.
    let pore_rb = 3.0 * 100.0 * 100.0 * 20.0 * 0.2 / 5.614_583;
    let dp = r.pressure_avg[0] / PSI - 1000.0;
    let expansion = pore_rb * (1.0 - (-(LIQUIDS.1 + 5e-6) * dp).exp());
    assert!(
        (produced / expansion - 1.0).abs() < 0.01,
        "{produced} stb produced, {expansion} stb of expansion to the limit"
    );
}

/// With rock, oil and water all incompressible, a cell no well, boundary
/// or aquifer reaches (here the middle cell has no permeability and cuts
/// off the first) keeps its initial pressure (`oilwater/floating.rs`), as
/// in the single-phase engine, while the producer drains the third.
#[test]
fn cells_nothing_holds_in_an_incompressible_deck_keep_their_state() {
    let rock = "  patch i = 2 {\n    kx = 0 md\n  }\n";
    let deck = row(
        rock,
        (0.0, 0.0),
        COREY,
        "water_saturation = 0.2",
        &producer("bhp 1000 psi", None),
        "",
    );
    let r = run_ok(&deck);
    let p = r.pressure.last().unwrap();
    assert!(
        (p[0] - r.pressure[0][0]).abs() < 1e-3,
        "the cut-off cell keeps its pressure"
    );
}

/// A table whose last `kro` is above 0 (a `relperm.endpoints` warning)
/// does not let oil flow where there is none: above its last row `kro`
/// falls linearly to 0 at sw = 1, so in a row full of water the producer
/// takes water only.
#[test]
fn a_table_with_a_last_kro_above_zero_runs_in_water() {
    let curves = "relperm \"sand\" {\n  model = table\n  sw = [0.2 0.5 0.8]\n  krw = [0 0.1 0.3]\n  kro = [0.8 0.2 0.01]\n}";
    let deck = row(
        COMPRESSIBLE,
        LIQUIDS,
        curves,
        "water_saturation = 1",
        &producer("bhp 2000 psi", None),
        "",
    );
    let r = run_ok(&deck);
    let ow = r.oil_water.as_ref().unwrap();
    assert!(ow.wells[0].cumulative_oil.iter().all(|q| q.abs() < 1e-9));
    assert!(ow.wells[0].cumulative_water.last().unwrap() > &0.0);
}

/// A Corey `nw` far below 1 makes `krw` rise with an infinite slope from
/// `swc`; Newton cannot follow it where water starts to flow, and one oil
/// producer above a water contact takes thousands of short steps (about
/// 100,000 for these 20 days; 490 with nw = 0.5, 16 with nw = 1). The
/// checker warns at the exponent (`relperm.shape`), and the run's step
/// guard stops it with its message rather than letting it run on.
#[test]
fn a_water_exponent_far_below_one_is_flagged_and_its_run_stopped_by_the_guard() {
    let deck = r#"grid {
  cells = 3 x 3 x 3
  dx = 484 ft
  dy = 153 ft
  dz = layers [4.23 55.8 2.31] ft
  top = 2069 ft
}
rock {
  porosity = layers [0.153 0.274 0.0572]
  kx = layers [99 0.825 0.154] md
  kz = layers [99 0.61 0.0199] md
}
oil {
  viscosity = 4.73 cP
  fvf = 1.31 rb/stb
  compressibility = 1.9e-5 1/psi
  density = 56.3 lb/ft^3
}
water {
  viscosity = 1.24 cP
  fvf = 0.99 rb/stb
  density = 57.5 lb/ft^3
}
relperm "a" {
  model = corey
  swc = 0.298
  sor = 0.44
  krw_end = 0.449
  kro_end = 0.193
  nw = 0.206
  no = 1.39
}
initial {
  pressure = 862.773 psi at 2069 ft
  water_contact = 2104.41 ft
}
well "W1" {
  role = producer
  location = (1, 3)
  layers = 1..1
  radius = 0.5 ft
  control = oil_rate 35.9 stb/day
}
timeline {
  end = 19.9 day
  max_steps = 200
}
"#;
    let a = analyze_text(Path::new("/decks/defect.rill"), deck, &MemorySource::new());
    let flagged = a
        .diagnostics
        .iter()
        .find(|d| d.code == rill_model::Code::RelpermShape);
    let flagged = flagged.expect("a relperm.shape warning");
    assert_eq!(flagged.severity, rill_model::Severity::Warning);
    let at = flagged.location.start;
    assert!(
        deck[at..].starts_with("0.206"),
        "flagged at {:?}",
        &deck[at..at + 10]
    );
    let case = a.runnable_case().expect("warnings only");
    let err = run(case, &RunOptions::default(), &mut rill_sim::NoObserver)
        .expect_err("the guard stops it");
    assert!(err.to_string().contains("max_steps"), "{err}");
}
