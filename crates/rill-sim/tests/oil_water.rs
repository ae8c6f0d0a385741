//! Acceptance tests of the oil-water engine, each naming its source.
//! Decks are written in the case language and checked by `rill-model`, as
//! a user's would be.

use std::path::Path;

use rill_model::{analyze, Case, MemorySource};
use rill_sim::{run, NoObserver, RunOptions, RunResults};

const DAY: f64 = 86400.0;
const PSI: f64 = 6894.757293168;

/// The checked case of `text`; panics with the diagnostics if it has errors.
fn case(text: &str) -> Case {
    let path = Path::new("/decks/test.rill");
    let source = MemorySource::new().with(path, text);
    let analysis = analyze(path, &source).expect("the deck reads");
    match analysis.runnable_case() {
        Some(c) => c.clone(),
        None => panic!("deck has errors: {:#?}", analysis.diagnostics),
    }
}

fn run_case(c: &Case) -> RunResults {
    run(c, &RunOptions::default(), &mut NoObserver).unwrap_or_else(|e| panic!("run failed: {e}"))
}

/// A horizontal row of `n` cells, 1000 ft long, water injected at a
/// constant rate into the first cell and produced at a fixed BHP from the
/// last, Corey curves without capillary pressure, nearly incompressible
/// liquids: the Buckley-Leverett problem.
fn buckley_leverett_deck(n: usize, end_days: f64, max_step_days: f64) -> String {
    format!(
        r#"
grid {{
  cells = {n} x 1 x 1
  dx = {dx} ft
  dy = 100 ft
  dz = 10 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = 500 md
  ky = 500 md
  kz = 50 md
  compressibility = 1e-9 1/psi
}}
oil {{
  viscosity = 2 cP
  fvf = 1 rb/stb
  compressibility = 1e-9 1/psi
  density = 50 lb/ft^3
}}
water {{
  viscosity = 0.5 cP
  fvf = 1 rb/stb
  compressibility = 1e-9 1/psi
  density = 62.4 lb/ft^3
}}
relperm "sand" {{
  model = corey
  swc = 0.2
  sor = 0.2
  krw_end = 0.3
  kro_end = 0.8
  nw = 2
  no = 2
}}
initial {{
  pressure = 3000 psi at 5005 ft
  water_saturation = 0.2
}}
well "I" {{
  role = injector
  location = (1, 1)
  layers = 1..1
  radius = 0.3 ft
  control = water_rate 100 stb/day
}}
well "P" {{
  role = producer
  location = ({n}, 1)
  layers = 1..1
  radius = 0.3 ft
  control = bhp 3000 psi
}}
timeline {{
  end = {end_days} day
  max_step = {max_step_days} day
  first_step = {max_step_days} day
  report_every = {max_step_days} day
}}
"#,
        dx = 1000.0 / n as f64
    )
}

#[test]
fn a_small_waterflood_runs_and_conserves_both_phases() {
    let c = case(&buckley_leverett_deck(50, 400.0, 10.0));
    let r = run_case(&c);
    let ow = r.oil_water.as_ref().unwrap();
    for (k, (bo, bw)) in ow
        .balance_error_oil
        .iter()
        .zip(&ow.balance_error_water)
        .enumerate()
    {
        assert!(
            *bo <= 1e-8 && *bw <= 1e-8,
            "report {k}: balance {bo:e} {bw:e}"
        );
    }
    let last = r.times.len() - 1;
    assert!(
        ow.pore_volumes_injected[last] > 0.5,
        "{:?}",
        ow.pore_volumes_injected
    );
    assert!(
        ow.wells[1].water_cut[last] > 0.3,
        "{:?}",
        ow.wells[1].water_cut
    );
    eprintln!("{:?}", r.stats);
    let _ = (DAY, PSI);
}
