//! What the pipeline does with an oil-water run's results: the maps are
//! streamed with the saturations that follow each report time's
//! pressures, the summary gives recovery, water cuts and breakthrough, and
//! the last state holds the water saturations. The writer's tests take
//! results made by hand (invented round numbers in field units), so that
//! every line of the summary has a known value; the last state's test runs
//! the deck.

use super::*;
use rill_model::MemorySource;
use rill_sim::{ControlMode, OilWaterResults, PhaseWellSeries, SolverStats, WellSeries};

const PSI: f64 = 6894.757293168;
const STB: f64 = 0.158987294928;
const DAY: f64 = 86400.0;

/// The reference's oil-water deck with a second producer in the far corner.
const DECK: &str = r#"grid {
  cells = 4 x 3 x 2
  dx = 100 ft
  dy = 100 ft
  dz = [20 30] ft
  top = 6000 ft
}

rock {
  porosity = 0.2
  kx = layers [100 50] md
  kz = 0.1 * kx
  compressibility = 4e-6 1/psi
}

oil {
  viscosity = 2 cP
  fvf = 1.2 rb/stb
  compressibility = 1e-5 1/psi
  density = 52 lb/ft^3
}

water {
  viscosity = 0.5 cP
  fvf = 1.01 rb/stb
  compressibility = 3e-6 1/psi
  density = 63.5 lb/ft^3
}

relperm "sand" {
  model = corey
  swc = 0.2
  sor = 0.25
  krw_end = 0.3
  kro_end = 0.8
  nw = 2
  no = 2
}

initial {
  pressure = 3000 psi at 6000 ft
  water_contact = 6040 ft
}

well "I-1" {
  role = injector
  location = (1, 1)
  radius = 0.3 ft
  control = water_rate 400 stb/day
  bhp_limit = 4500 psi
}

well "P-1" {
  role = producer
  location = (4, 3)
  radius = 0.3 ft
  control = liquid_rate 600 stb/day
  bhp_limit = 1000 psi
}

well "P-2" {
  role = producer
  location = (1, 3)
  radius = 0.3 ft
  control = oil_rate 100 stb/day
  bhp_limit = 1000 psi
}

timeline {
  end = 20 day
  report_every = 10 day
}
"#;

fn checked() -> (tempfile::TempDir, PathBuf, Analysis) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("flood.rill");
    std::fs::write(&path, DECK).unwrap();
    let source = MemorySource::new().with(&path, DECK);
    let analysis = rill_model::analyze(&path, &source).unwrap();
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    (dir, path, analysis)
}

/// The water saturation of cell `c` at report time `t`.
fn sw(t: usize, c: usize) -> f64 {
    0.2 + 0.1 * t as f64 + 0.01 * c as f64
}

/// Three report times (0, 10, 20 days); the wells in deck order. P-1
/// breaks through at 5 days, P-2 not at all; recovery 9500 of 100 000 stb.
fn results(cells: usize) -> RunResults {
    let rate = |v: [f64; 3]| v.map(|x| x * STB / DAY).to_vec();
    let volume = |v: [f64; 3]| v.map(|x| x * STB).to_vec();
    let well = |name: &str, q: [f64; 3], cum: [f64; 3], bhp: f64| WellSeries {
        name: name.into(),
        bhp: vec![3000.0 * PSI, bhp * PSI, bhp * PSI],
        rate: rate(q),
        cumulative: volume(cum),
        mode: vec![ControlMode::Rate; 3],
    };
    let phases = |oil: [f64; 3], water: [f64; 3], cut: [f64; 3], bt: Option<f64>| {
        let sum = |q: [f64; 3]| [0.0, q[1] * 10.0, q[1] * 10.0 + q[2] * 10.0];
        PhaseWellSeries {
            oil_rate: rate(oil),
            water_rate: rate(water),
            water_cut: cut.to_vec(),
            cumulative_oil: volume(sum(oil)),
            cumulative_water: volume(sum(water)),
            breakthrough: bt.map(|d| d * DAY),
        }
    };
    RunResults {
        times: vec![0.0, 10.0 * DAY, 20.0 * DAY],
        pressure_avg: vec![3000.0 * PSI, 2990.0 * PSI, 2985.0 * PSI],
        wells: vec![
            well(
                "I-1",
                [0.0, -400.0, -400.0],
                [0.0, -4000.0, -8000.0],
                3400.0,
            ),
            well("P-1", [0.0, 600.0, 600.0], [0.0, 6000.0, 12000.0], 2450.0),
            well("P-2", [0.0, 100.0, 100.0], [0.0, 1000.0, 2000.0], 2900.0),
        ],
        boundaries: Vec::new(),
        aquifers: Vec::new(),
        balance_error: vec![0.0, 1.5e-9, 2.25e-9],
        pressure: vec![vec![2985.0 * PSI; cells]],
        events: Vec::new(),
        stats: SolverStats {
            steps: 12,
            step_cuts: 0,
            newton_iterations: 30,
            linear_iterations: 30,
            linear_solver: "direct".into(),
            wall_seconds: 0.5,
        },
        flow_per_pascal: 0.0,
        oil_water: Some(OilWaterResults {
            wells: vec![
                phases([0.0; 3], [0.0, -400.0, -400.0], [0.0, 1.0, 1.0], None),
                phases(
                    [0.0, 450.0, 300.0],
                    [0.0, 150.0, 300.0],
                    [0.0, 0.25, 0.5],
                    Some(5.0),
                ),
                phases([0.0, 100.0, 100.0], [0.0; 3], [0.0; 3], None),
            ],
            oil_in_place: volume([100_000.0, 94_500.0, 90_500.0]),
            water_in_place: volume([40_000.0, 42_500.0, 43_500.0]),
            recovery: vec![0.0, 0.055, 0.095],
            pore_volumes_injected: vec![0.0, 0.02, 0.04],
            sw_avg: vec![0.2, 0.21, 0.22],
            balance_error_oil: vec![0.0, 1e-9, 2e-9],
            balance_error_water: vec![0.0, 1.5e-9, 2.25e-9],
            saturation: vec![(0..cells).map(|c| sw(2, c)).collect()],
        }),
    }
}

/// Counts the saturations that reach the caller's observer.
#[derive(Default)]
struct Seen {
    saturations: usize,
}

impl Observer for Seen {
    fn report_saturation(&mut self, _time: f64, water_saturation: &[f64]) {
        assert!(!water_saturation.is_empty());
        self.saturations += 1;
    }
}

fn watch<'a>(inner: &'a mut dyn Observer, writer: ResultWriter) -> Watch<'a> {
    Watch {
        inner,
        maps: writer,
        map_error: None,
        export: None,
        exported: SystemExport::NotAsked,
        timings: Timings::default(),
    }
}

#[test]
fn saturations_are_streamed_into_the_maps_and_the_summary_tells_the_flood() {
    let (dir, path, analysis) = checked();
    let case = analysis.runnable_case().unwrap();
    let cells = case.grid.cell_count();
    let results = results(cells);
    let out = dir.path().join("flood.out");
    let mut seen = Seen::default();
    let mut w = watch(&mut seen, ResultWriter::begin(&out, case, &path).unwrap());
    for (t, &time) in results.times.iter().enumerate() {
        w.report_time(time, &vec![(3000.0 - t as f64) * PSI; cells]);
        let sat: Vec<f64> = (0..cells).map(|c| sw(t, c)).collect();
        w.report_saturation(time, &sat);
    }
    assert!(w.map_error.is_none(), "{:?}", w.map_error);
    let writer = w.maps;
    assert_eq!(seen.saturations, 3, "the caller's observer hears them too");
    let written = writer.finish(case, &results, &RunMeta::new(&path)).unwrap();
    assert_eq!(written.maps.len(), 3);
    let map = std::fs::read_to_string(&written.maps[1]).unwrap();
    assert!(map.contains("Name=\"sw\"") && map.contains("Name=\"so\""));
    let csv = std::fs::read_to_string(&written.series_csv).unwrap();
    assert!(csv
        .lines()
        .next()
        .unwrap()
        .contains("P-1 oil_rate [stb/day],P-1 water_rate [stb/day],P-1 water_cut [-]"));

    let summary = Summary::new(case, &path, &results, &written, &[], 0.5);
    let lines = &summary.lines;
    for want in [
        "  I-1 liquid rate -400 stb/day, BHP 3400 psi, cumulative liquid -8000 stb (on rate)",
        "  P-1 liquid rate 600 stb/day, BHP 2450 psi, cumulative liquid 12000 stb (on rate)",
        "  P-1 water cut 0.5 (oil 300 stb/day, water 300 stb/day), water breakthrough at 5 day",
        "  P-2 water cut 0 (oil 100 stb/day, water 0 stb/day), no water breakthrough yet",
        "  recovery 0.095 of the initial oil in place (9500 stb produced), 0.04 pore volumes injected",
        "  largest mass balance error 2.25e-9 (oil 2.00e-9, water 2.25e-9)",
    ] {
        assert!(lines.iter().any(|l| l == want), "{want:?} not in\n{}", summary.text());
    }
    assert!(
        !lines.iter().any(|l| l.starts_with("  I-1 water cut")),
        "injectors have no water cut"
    );
    assert_eq!(
        lines.last().unwrap(),
        &format!("Caution: {}", rill_output::CAUTION_OIL_WATER)
    );
}

/// Saturations that do not come stop the run like a map that cannot be
/// written.
#[test]
fn a_report_time_without_its_saturations_stops_the_run() {
    let (dir, path, analysis) = checked();
    let case = analysis.runnable_case().unwrap();
    let cells = case.grid.cell_count();
    let mut seen = Seen::default();
    let writer = ResultWriter::begin(&dir.path().join("flood.out"), case, &path).unwrap();
    let mut w = watch(&mut seen, writer);
    w.report_time(0.0, &vec![3000.0 * PSI; cells]);
    assert!(!w.cancelled());
    w.report_time(DAY, &vec![3000.0 * PSI; cells]);
    assert!(w.cancelled(), "the run is asked to stop");
    let e = w.map_error.as_ref().unwrap().to_string();
    assert!(e.contains("water saturations of report time 0"), "{e}");
}

/// A run of the deck leaves its last saturations in `last_state.f64`, the
/// fifth array, named in the header; hover reads them from there.
#[test]
fn the_last_state_of_an_oil_water_run_holds_its_water_saturations() {
    let (dir, path, analysis) = checked();
    let out = dir.path().join("flood.out");
    let done = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap_or_else(|e| panic!("{e:?}"));
    let head = json(&out.join("last_state.json"));
    assert_eq!(
        head["arrays"]["order"],
        serde_json::json!(rill_output::LAST_STATE_OIL_WATER_ARRAYS)
    );
    let n = 4 * 3 * 2;
    let a = super::last_state_arrays(&out);
    assert_eq!(a.len(), 5 * n);
    let ow = done.results.oil_water.as_ref().unwrap();
    let last = ow.saturation.last().unwrap();
    assert_eq!(&a[4 * n..], &last[..]);
    assert_eq!(&a[..n], &done.results.pressure.last().unwrap()[..]);
    // The injector's cell has taken water beyond its initial saturation.
    let case = analysis.runnable_case().unwrap();
    let initial = rill_model::derived::saturation::initial_water_saturation(case, 0).unwrap();
    assert!(last[0] > initial + 0.01, "{} vs {initial}", last[0]);
}

/// Values of a MatrixMarket array file (one column).
fn market_vector(path: &Path) -> Vec<f64> {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines().filter(|l| !l.starts_with('%'));
    let n: usize = lines
        .next()
        .unwrap()
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    let v: Vec<f64> = lines.map(|l| l.trim().parse().unwrap()).collect();
    assert_eq!(v.len(), n);
    v
}

#[test]
fn an_oil_water_export_adds_the_accumulation_blocks() {
    let (dir, path, analysis) = checked();
    let sys = dir.path().join("system");
    let out = dir.path().join("flood.out");
    let mut request = Request::new(&analysis, &path, &out);
    request.export_system = Some(sys.clone());
    let outcome = run(&request, &mut rill_sim::NoObserver);
    assert!(outcome.result.is_ok());
    let SystemExport::Written(files) = outcome.export else {
        panic!("expected the export, got {:?}", outcome.export);
    };
    assert_eq!(files.len(), 3);
    let rhs = market_vector(&sys.join("rhs.mtx"));
    let acc = market_vector(&sys.join("accumulation.mtx"));
    // One 2 x 2 block a block row: 24 cells and three wells, two unknowns each.
    assert_eq!(rhs.len(), 2 * (24 + 3));
    assert_eq!(acc.len(), 2 * rhs.len());
    // In every cell, more water saturation holds more water and less oil;
    // the wells' block rows hold no fluid.
    for (i, b) in acc.chunks(4).enumerate() {
        if i < 24 {
            assert!(b[3] > 0.0 && b[1] < 0.0, "cell {i}: {b:?}");
        } else {
            assert_eq!(b, [0.0; 4], "well row {i}");
        }
    }
}
