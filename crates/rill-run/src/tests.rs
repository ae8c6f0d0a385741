//! The pipeline on small decks written to a temporary directory.

use super::*;
use rill_model::{Code, Diagnostic, Location, MemorySource};
use std::sync::atomic::{AtomicUsize, Ordering};

mod oil_water;

const BLOCK: &str = include_str!("../../../examples/teaching-block.rill");

/// Writes `text` as `block.rill` in a fresh directory and checks it.
fn deck(text: &str) -> (tempfile::TempDir, PathBuf, Analysis) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("block.rill");
    std::fs::write(&path, text).unwrap();
    let source = MemorySource::new().with(&path, text);
    let analysis = rill_model::analyze(&path, &source).unwrap();
    (dir, path, analysis)
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

#[test]
fn cautions_keep_warnings_and_notes_about_what_was_simulated() {
    let at = Location::default();
    let diags = vec![
        Diagnostic::warning(Code::DeckInclude, at, "read once"),
        Diagnostic::warning(Code::SanityPorosity, at, "porosity above 0.45"),
        Diagnostic::error(Code::UnitUnknown, at, "no such unit"),
        Diagnostic::info(Code::FlowNoDrive, at, "nothing drives flow"),
        Diagnostic::warning(Code::WellInjectionPressure, at, "may fracture"),
    ];
    assert_eq!(
        cautions(&diags),
        vec![
            "sanity.porosity: porosity above 0.45",
            "flow.no-drive: nothing drives flow",
            "well.injection-pressure: may fracture",
        ]
    );
}

#[test]
fn a_transient_run_writes_its_set_with_the_cautions_and_summarises_it() {
    let (dir, path, analysis) = deck(&BLOCK.replace("porosity = 0.2", "porosity = 0.5"));
    let out = dir.path().join("block.out");
    let outcome = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    );
    assert_eq!(outcome.export, SystemExport::NotAsked);
    let done = outcome.result.unwrap();
    assert_eq!(done.cautions.len(), 1, "{:?}", done.cautions);
    assert!(done.cautions[0].starts_with("sanity.porosity: "));
    let doc = json(&done.written.series_json);
    let listed: Vec<&str> = doc["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap())
        .collect();
    assert_eq!(listed[0], rill_output::CAUTION);
    assert!(listed.contains(&done.cautions[0].as_str()));
    assert_eq!(
        doc["timings"]["solver_seconds"],
        done.results.stats.wall_seconds
    );
    assert!(doc["timings"]["run_seconds"].as_f64().unwrap() > 0.0);
    let text = done.summary.text();
    assert!(
        text.starts_with("Run of block.rill finished: reached 180 day in "),
        "{text}"
    );
    assert!(text.contains("\n  MB-1 rate 150 stb/day, BHP "), "{text}");
    assert!(text.contains("\n  caution: sanity.porosity: "), "{text}");
    assert!(text.ends_with(rill_output::CAUTION), "{text}");
    assert_eq!(done.written.dir, std::fs::canonicalize(&out).unwrap());
}

#[test]
fn a_steady_run_is_summarised_by_its_solves_not_by_steps() {
    let steady = BLOCK
        .replace("control = rate 150 stb/day", "control = bhp 1500 psi")
        .replace("end = 180 day", "kind = steady");
    let (dir, path, analysis) = deck(&steady);
    let out = dir.path().join("steady.out");
    let done = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap();
    let head = &done.summary.lines[0];
    assert!(
        head.starts_with("Run of block.rill finished: steady state solved in 1 Newton iteration ("),
        "{head}"
    );
    assert!(!done.summary.text().contains("reached"));
}

#[test]
fn a_deck_with_errors_runs_nothing_and_writes_nothing() {
    let (dir, path, analysis) = deck(&BLOCK.replace("kx = 50 md", "kx = 50 psi"));
    let out = dir.path().join("block.out");
    let mut request = Request::new(&analysis, &path, &out);
    request.export_system = Some(dir.path().join("system"));
    let outcome = run(&request, &mut rill_sim::NoObserver);
    assert_eq!(outcome.export, SystemExport::NoSystem);
    match outcome.result {
        Err(Failure::NotRunnable { errors }) => assert!(errors >= 1),
        other => panic!("expected NotRunnable, got {other:?}"),
    }
    assert!(!out.exists() && !dir.path().join("system").exists());
}

#[test]
fn the_first_system_is_exported_and_still_reaches_the_observer() {
    struct Count(AtomicUsize);
    impl Observer for Count {
        fn first_system(&mut self, _m: &CsrMatrix, rhs: &[f64]) {
            self.0.store(rhs.len(), Ordering::Relaxed);
        }
    }
    let (dir, path, analysis) = deck(BLOCK);
    let out = dir.path().join("block.out");
    let mut request = Request::new(&analysis, &path, &out);
    request.export_system = Some(dir.path().join("system"));
    let mut seen = Count(AtomicUsize::new(0));
    let outcome = run(&request, &mut seen);
    assert!(outcome.result.is_ok());
    // 121 cells and one well unknown.
    assert_eq!(seen.0.load(Ordering::Relaxed), 122);
    let SystemExport::Written(files) = outcome.export else {
        panic!("expected the export, got {:?}", outcome.export);
    };
    assert_eq!(files.len(), 2);
    let rhs = std::fs::read_to_string(dir.path().join("system").join("rhs.mtx")).unwrap();
    assert!(rhs.lines().nth(1).unwrap().starts_with("122 1"));
}

#[test]
fn a_cancelled_run_writes_nothing() {
    struct Cancel;
    impl Observer for Cancel {
        fn cancelled(&self) -> bool {
            true
        }
    }
    let (dir, path, analysis) = deck(BLOCK);
    let out = dir.path().join("block.out");
    let outcome = run(&Request::new(&analysis, &path, &out), &mut Cancel);
    let failure = outcome.result.unwrap_err();
    assert!(failure.is_cancelled(), "{failure}");
    assert!(failure
        .to_string()
        .starts_with("the run failed: run cancelled"));
    assert!(!out.exists());
}

/// Counts the report times and, at the first one, removes the staging
/// folder the maps are streamed into (as a full disk or a vanished mount
/// would make the next write fail).
struct MapWatcher {
    parent: PathBuf,
    report_times: usize,
    sabotage: bool,
}

impl Observer for MapWatcher {
    fn report_time(&mut self, _time: f64, pressure: &[f64]) {
        assert!(!pressure.is_empty());
        self.report_times += 1;
        if self.sabotage && self.report_times == 1 {
            for e in std::fs::read_dir(&self.parent).unwrap().flatten() {
                if e.file_name().to_string_lossy().contains(".rill-new-") {
                    std::fs::remove_dir_all(e.path()).unwrap();
                }
            }
        }
    }
}

#[test]
fn maps_are_streamed_and_only_the_last_pressures_are_kept() {
    let (dir, path, analysis) = deck(BLOCK);
    let out = dir.path().join("block.out");
    let mut watch = MapWatcher {
        parent: dir.path().to_path_buf(),
        report_times: 0,
        sabotage: false,
    };
    let done = run(&Request::new(&analysis, &path, &out), &mut watch)
        .result
        .unwrap();
    let n = done.results.times.len();
    // t = 0 and every 15 days to 180: 13 report times, a map each.
    assert_eq!(n, 13);
    assert_eq!(watch.report_times, n);
    assert_eq!(done.written.maps.len(), n);
    assert_eq!(done.results.pressure.len(), 1, "only the last is kept");
    // The map written last holds that last array.
    let last = std::fs::read_to_string(out.join("maps/step_0012.vtr")).unwrap();
    assert!(last.contains("TimeValue"));
    // Keeping every report time's pressures is still possible.
    let mut request = Request::new(&analysis, &path, &out);
    request.options.keep_pressures = rill_sim::KeepPressures::Every;
    let every = run(&request, &mut rill_sim::NoObserver).result.unwrap();
    assert_eq!(every.results.pressure.len(), n);
    assert_eq!(every.results.pressure[n - 1], done.results.pressure[0]);
}

#[test]
fn a_map_that_cannot_be_written_stops_the_run_and_keeps_the_earlier_set() {
    let (dir, path, analysis) = deck(BLOCK);
    let out = dir.path().join("block.out");
    let first = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap();
    let csv_before = std::fs::read(&first.written.series_csv).unwrap();
    let mut watch = MapWatcher {
        parent: dir.path().to_path_buf(),
        report_times: 0,
        sabotage: true,
    };
    let outcome = run(&Request::new(&analysis, &path, &out), &mut watch);
    match outcome.result {
        Err(Failure::Output(e)) => assert!(!e.to_string().is_empty()),
        other => panic!("expected an output failure, got {other:?}"),
    }
    // Stopped at the next report time, not run to the end.
    assert_eq!(watch.report_times, 2);
    assert_eq!(std::fs::read(out.join("series.csv")).unwrap(), csv_before);
}

#[test]
fn report_at_times_appear_exactly_in_the_series() {
    let text = BLOCK.replace(
        "  report_every = 15 day\n",
        "  report_every = 15 day\n  report_at = [1 2 6 12 24 48] hr\n",
    );
    let (dir, path, analysis) = deck(&text);
    let out = dir.path().join("block.out");
    let done = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap();
    let csv = std::fs::read_to_string(&done.written.series_csv).unwrap();
    let days: Vec<f64> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap().parse().unwrap())
        .collect();
    for h in [1.0, 2.0, 6.0, 12.0, 24.0, 48.0] {
        let want = h * 3600.0 / 86400.0;
        assert!(days.contains(&want), "{want} day missing from {days:?}");
    }
    // With every 15 days from 0 to 180: 13 + 6 report times.
    assert_eq!(days.len(), 19);
}

#[test]
fn the_summary_gives_each_aquifers_last_rate_cumulative_and_pressure() {
    let text = BLOCK.replace(
        "timeline {",
        "aquifer \"Sill\" {\n  side = south\n  water_volume = 1e8 rb\n  \
         compressibility = 6e-6 1/psi\n  productivity = 5 rb/day/psi\n}\n\ntimeline {",
    );
    let (dir, path, analysis) = deck(&text);
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    let out = dir.path().join("block.out");
    let done = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap();
    let a = &done.results.aquifers[0];
    let line = done
        .summary
        .lines
        .iter()
        .find(|l| l.starts_with("  Sill rate "))
        .unwrap_or_else(|| panic!("{}", done.summary.text()));
    // The producer draws the reservoir down, so water flows in: negative.
    let (rate, cum) = (*a.rate.last().unwrap(), *a.cumulative.last().unwrap());
    assert!(rate < 0.0 && cum < 0.0, "{rate} {cum}");
    let field = |si: f64, kind: rill_units::Kind| {
        let u = rill_units::display_unit(kind, rill_model::UnitSystem::Field);
        format!("{} {}", rill_units::format_number(si / u.factor), u.name)
    };
    let expected = format!(
        "  Sill rate {}, cumulative {}, pressure {} (aquifer; negative: influx)",
        field(rate, rill_units::Kind::SurfaceRate),
        field(cum, rill_units::Kind::SurfaceVolume),
        field(*a.pressure.last().unwrap(), rill_units::Kind::Pressure)
    );
    assert_eq!(line, &expected);
}

/// The last state's arrays, as `numpy.fromfile(..., "<f8")` reads them.
fn last_state_arrays(dir: &Path) -> Vec<f64> {
    std::fs::read(dir.join("last_state.f64"))
        .unwrap()
        .chunks_exact(8)
        .map(|b| f64::from_le_bytes(b.try_into().unwrap()))
        .collect()
}

#[test]
fn the_last_state_holds_the_digest_the_pressures_and_fluxes_that_balance_the_well() {
    // Steady flow from a west boundary to the producer: every face flux is
    // what the run moved, so the flux into the well's cell is its rate.
    let text = BLOCK
        .replace(
            "timeline {\n  end = 180 day",
            "boundary \"rim\" {\n  side = west\n  pressure = 2500 psi at 5015 ft\n}\n\ntimeline {\n  kind = steady\n  end = 180 day",
        )
        .replace("  first_step = 0.05 day\n  max_step = 10 day\n  report_every = 15 day\n", "");
    let (dir, path, analysis) = deck(&text);
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    let out = dir.path().join("block.out");
    let done = run(
        &Request::new(&analysis, &path, &out),
        &mut rill_sim::NoObserver,
    )
    .result
    .unwrap();
    let head = json(&out.join("last_state.json"));
    let case = analysis.case.as_ref().unwrap();
    assert_eq!(head["case_digest"], rill_model::digest::case_digest(case));
    assert_eq!(head["grid"], serde_json::json!([11, 11, 1]));
    let well = &head["wells"][0];
    let rate = done.results.wells[0].rate.last().copied().unwrap();
    assert_eq!(well["rate_m3_s"].as_f64().unwrap(), rate);
    let n = 121;
    let a = last_state_arrays(&out);
    assert_eq!(a.len(), 4 * n);
    let (p, fx, fy) = (&a[..n], &a[n..2 * n], &a[2 * n..3 * n]);
    assert_eq!(p, &done.results.pressure.last().unwrap()[..]);
    let at = |i: usize, j: usize| i + 11 * j;
    // Net inflow of a cell from its four faces (1-based i, j).
    let inflow = |i: usize, j: usize| {
        let c = at(i - 1, j - 1);
        let west = if i > 1 { fx[at(i - 2, j - 1)] } else { 0.0 };
        let south = if j > 1 { fy[at(i - 1, j - 2)] } else { 0.0 };
        west - fx[c] + south - fy[c]
    };
    assert!(rate > 0.0);
    let well_cell = inflow(6, 6);
    assert!(
        (well_cell - rate).abs() <= 1e-9 * rate,
        "{well_cell} vs {rate}"
    );
    // An interior cell away from the well and the boundary passes its flow on.
    assert!(inflow(9, 3).abs() <= 1e-9 * rate, "{}", inflow(9, 3));
    // Through the column of faces between i = 3 and 4 passes the whole rate.
    let through: f64 = (0..11).map(|j| fx[at(2, j)]).sum();
    assert!((through - rate).abs() <= 1e-9 * rate, "{through} vs {rate}");
}
