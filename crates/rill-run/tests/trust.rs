//! Runs an engineer can trust, on fictional decks run through the whole
//! pipeline: skin events, shut periods in the series and the report,
//! the balance error of a clean steady run, and control switching that
//! settles.

use std::path::{Path, PathBuf};

use rill_model::{Analysis, MemorySource};
use rill_run::{run, Request};
use rill_sim::{ControlMode, NoObserver, RunResults};

const PSI: f64 = 6894.757293168;
const FT: f64 = 0.3048;
const MD: f64 = 9.869233e-16;
const CP: f64 = 1e-3;
const DAY: f64 = 86400.0;
const STB: f64 = 0.158987294928;

/// Writes `text` as `deck.rill` in a fresh directory and checks it.
fn deck(text: &str) -> (tempfile::TempDir, PathBuf, Analysis) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("deck.rill");
    std::fs::write(&path, text).unwrap();
    let source = MemorySource::new().with(&path, text);
    let analysis = rill_model::analyze(&path, &source).unwrap();
    (dir, path, analysis)
}

/// What a run of `text` wrote and returned.
struct Done {
    results: RunResults,
    cautions: Vec<String>,
    out: PathBuf,
    _dir: tempfile::TempDir,
}

fn run_deck(text: &str) -> Done {
    let (dir, path, analysis) = deck(text);
    assert!(!analysis.has_errors(), "{:#?}", analysis.diagnostics);
    let out = dir.path().join("deck.out");
    // Every report time's cell pressures: the tests compare them with hand
    // calculations (the pipeline keeps only the last by default).
    let mut request = Request::new(&analysis, &path, &out);
    request.options.keep_pressures = rill_sim::KeepPressures::Every;
    let outcome = run(&request, &mut NoObserver);
    let done = outcome.result.unwrap_or_else(|e| panic!("{e}"));
    Done {
        results: done.results,
        cautions: done.cautions,
        out,
        _dir: dir,
    }
}

fn read(dir: &Path, name: &str) -> String {
    std::fs::read_to_string(dir.join(name)).unwrap()
}

/// A closed single-layer block of the fictional Quillon field with one
/// producer in the middle and the given timeline.
fn quillon(well_extra: &str, timeline: &str) -> String {
    format!(
        r#"case "Quillon block" {{
  title = "closed block, one producer"
}}
grid {{
  cells = 9 x 9 x 1
  dx = 100 ft
  dy = 100 ft
  dz = 40 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = 60 md
  compressibility = 4e-6 1/psi
}}
fluid "brine" {{
  viscosity = 0.9 cP
  fvf = 1.0 rb/stb
  compressibility = 3e-6 1/psi
  density = 64.0 lb/ft^3
}}
initial {{
  pressure = 3000 psi at 5020 ft
}}
well "QN-1" {{
  role = producer
  location = (5, 5)
  radius = 0.3 ft
  control = rate 200 stb/day
  bhp_limit = 300 psi
{well_extra}}}
timeline {{
{timeline}}}
report {{
  units = field
}}
"#
    )
}

/// Peaceman's well index of a vertical well in a square cell of isotropic
/// permeability: WI = 2 pi k h / (ln(r_eq / r_w) + s) with
/// r_eq = 0.28 sqrt(dx^2 + dy^2) / 2 = 0.198 dx (Peaceman 1978, SPE J. 18(3);
/// the anisotropic form of Peaceman 1983, SPE J. 23(3), reduces to it).
fn peaceman_wi(k: f64, h: f64, dx: f64, r_w: f64, skin: f64) -> f64 {
    let r_eq = 0.28 * (2.0 * dx * dx).sqrt() / 2.0;
    2.0 * std::f64::consts::PI * k * h / ((r_eq / r_w).ln() + skin)
}

#[test]
fn a_skin_event_lowers_the_bhp_by_peacemans_index() {
    let done = run_deck(&quillon(
        "",
        "  end = 90 day\n  first_step = 0.5 day\n  max_step = 5 day\n  report_every = 10 day\n  at 60 day {\n    well \"QN-1\" { skin = 6 }\n  }\n",
    ));
    let r = &done.results;
    let w = &r.wells[0];
    let centre = 4 + 4 * 9;
    let (mu, b_ref, c_f, p_ref) = (0.9 * CP, 1.0, 3e-6 / PSI, 3000.0 * PSI);
    let q = 200.0 * STB / DAY;
    let mut before = None;
    let mut after = None;
    for (n, &t) in r.times.iter().enumerate().skip(1) {
        // The report at the event time closes the step before it: old skin.
        let skin = if t <= 60.0 * DAY * (1.0 + 1e-12) {
            0.0
        } else {
            6.0
        };
        let wi = peaceman_wi(60.0 * MD, 40.0 * FT, 100.0 * FT, 0.3 * FT, skin);
        assert_eq!(w.mode[n], ControlMode::Rate, "t = {} day", t / DAY);
        // q = WI / (mu B(p_cell)) (p_cell - p_wf), B(p) = B_ref e^(-c (p - p_ref)).
        let p_cell = r.pressure[n][centre];
        let b = b_ref * (-c_f * (p_cell - p_ref)).exp();
        let drawdown = q * mu * b / wi;
        let got = p_cell - w.bhp[n];
        // The rate is met to Newton's well tolerance (1e-9 relative).
        assert!(
            (got - drawdown).abs() <= 1e-7 * drawdown,
            "t = {} day: drawdown {got} Pa, Peaceman {drawdown} Pa",
            t / DAY
        );
        if (t - 60.0 * DAY).abs() < 1.0 {
            before = Some((w.bhp[n], drawdown));
        }
        if (t - 70.0 * DAY).abs() < 1.0 {
            after = Some((w.bhp[n], drawdown));
        }
    }
    let ((bhp_before, dd_before), (bhp_after, dd_after)) = (before.unwrap(), after.unwrap());
    assert!(bhp_after < bhp_before, "{bhp_after} !< {bhp_before}");
    // The drawdown grows by (ln(r_eq/r_w) + 6) / ln(r_eq/r_w) at the same rate.
    let ln = (0.198 * 100.0 / 0.3f64).ln();
    let ratio = dd_after / dd_before;
    assert!(((ratio - (ln + 6.0) / ln) / ratio).abs() < 1e-3, "{ratio}");
}

#[test]
fn a_well_shut_by_an_event_shows_zero_rates_and_the_report_lists_the_events() {
    let done = run_deck(&quillon(
        "",
        "  end = 100 day\n  first_step = 0.5 day\n  max_step = 5 day\n  report_every = 10 day\n  at 30 day {\n    well \"QN-1\" { control = shut }\n  }\n  at 70 day {\n    well \"QN-1\" { control = rate 150 stb/day }\n  }\n",
    ));
    let csv = read(&done.out, "series.csv");
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| {
        header
            .iter()
            .position(|h| h.starts_with(name))
            .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
    };
    let (ct, cq) = (col("time"), col("QN-1 rate"));
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|v| v.trim().parse().unwrap()).collect())
        .collect();
    let mut shut_rows = 0;
    for row in &rows {
        let (t, q) = (row[ct], row[cq]);
        assert!(row.iter().all(|v| v.is_finite()), "{row:?}");
        if t > 30.0 && t <= 70.0 {
            // Shut from the step after 30 day to the event at 70 day: every
            // report in between is a point at zero, not a gap.
            assert_eq!(q, 0.0, "t = {t} day");
            shut_rows += 1;
        } else if t > 0.0 && t <= 30.0 {
            assert!((q - 200.0).abs() < 1e-6, "t = {t} day: {q}");
        } else if t > 70.0 {
            assert!((q - 150.0).abs() < 1e-6, "t = {t} day: {q}");
        }
    }
    assert_eq!(shut_rows, 4, "{csv}");
    let html = read(&done.out, "report.html");
    let timeline = &html[html.find("<section id=\"timeline\">").expect("a timeline")..];
    let timeline = &timeline[..timeline.find("</section>").unwrap()];
    assert!(timeline.contains("<td>control = shut</td>"), "{timeline}");
    assert!(
        timeline.contains("<td>shut: flows nothing from here on</td>"),
        "{timeline}"
    );
    assert!(
        timeline.contains("<td>reopened: flows again</td>"),
        "{timeline}"
    );
    assert!(
        timeline.contains("<td>control = rate 150 stb/day</td>"),
        "{timeline}"
    );
    let at = |what: &str| timeline.find(what).unwrap();
    assert!(
        at(">30<") < at("control = shut") && at(">70<") < at("reopened"),
        "{timeline}"
    );
}

/// A steady run of a three-layer block between two boundaries that hold one
/// pressure at every face centre (not hydrostatic): liquid comes in at the
/// deep faces and leaves at the shallow ones of the same boundary, and a
/// shut well flows nothing, so every total is round-off.
#[test]
fn a_clean_steady_run_reports_round_off_and_no_caution() {
    let text = r#"case "Thornbury section" {
  title = "steady, face boundaries"
}
grid {
  cells = 6 x 1 x 3
  dx = 200 ft
  dy = 200 ft
  dz = 30 ft
  top = 4000 ft
}
rock {
  porosity = 0.2
  kx = 80 md
  kz = 8 md
}
fluid "brine" {
  viscosity = 0.7 cP
  fvf = 1.0 rb/stb
  density = 62.4 lb/ft^3
}
initial {
  pressure = 1800 psi at 4000 ft
}
boundary "west" {
  side = west
  pressure = 1800 psi
}
boundary "east" {
  side = east
  pressure = 1800 psi
}
well "TB-1" {
  role = producer
  location = (3, 1)
  radius = 0.3 ft
  control = shut
}
timeline {
  kind = steady
}
"#;
    let done = run_deck(text);
    let r = &done.results;
    let west = r.boundaries[0].rate[0];
    let east = r.boundaries[1].rate[0];
    // The circulation is real, the totals are not.
    assert!(west.abs() < 1e-12 && east.abs() < 1e-12, "{west} {east}");
    assert_eq!(r.wells[0].rate[0], 0.0);
    // Against half the gross of the totals (the scale before), this clean
    // run would report round-off over round-off, far above the caution.
    let net = (west + east).abs();
    let old = net / (0.5 * (west.abs() + east.abs()));
    assert!(net > 0.0 && old > 1e-4, "{old:e}");
    let e = r.balance_error[0];
    assert!(e <= 1e-10, "balance error {e:e}");
    assert!(
        !done.cautions.iter().any(|c| c.contains("balance")),
        "{:?}",
        done.cautions
    );
    let html = read(&done.out, "report.html");
    assert!(
        !html.contains("mass balance error reached"),
        "a balance caution in the report"
    );
}

/// The fictional Harrowgate block: four producers with the given controls
/// (and a BHP limit of 2000 psi), an injector, and an aquifer on the west
/// side that holds the pressure up, so the block comes to a steady state.
fn harrowgate(controls: &[String]) -> String {
    let mut wells = String::new();
    for (n, (i, j)) in [(8, 8), (33, 8), (8, 23), (33, 23)].into_iter().enumerate() {
        wells.push_str(&format!(
            "well \"HG-{}\" {{\n  role = producer\n  location = ({i}, {j})\n  radius = 0.3 ft\n  control = {}\n  bhp_limit = 2000 psi\n}}\n",
            n + 1,
            controls[n]
        ));
    }
    format!(
        r#"case "Harrowgate switching" {{
  title = "producers near their limits"
}}
grid {{
  cells = 40 x 30 x 2
  dx = 80 ft
  dy = 80 ft
  dz = 20 ft
  top = 6000 ft
}}
rock {{
  porosity = 0.18
  kx = 40 md
  kz = 4 md
  compressibility = 4e-6 1/psi
}}
fluid "brine" {{
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 63.0 lb/ft^3
}}
initial {{
  pressure = 3000 psi at 6000 ft
}}
boundary "aquifer" {{
  side = west
  pressure = 2600 psi at 6000 ft
}}
{wells}well "HG-I" {{
  role = injector
  location = (20, 15)
  radius = 0.3 ft
  control = rate 1200 stb/day
  bhp_limit = 3600 psi
}}
timeline {{
  end = 365 day
  first_step = 0.1 day
  max_step = 15 day
  report_every = 30 day
}}
"#
    )
}

fn run_with(text: &str, options: rill_sim::RunOptions) -> RunResults {
    let (dir, path, analysis) = deck(text);
    assert!(!analysis.has_errors(), "{:#?}", analysis.diagnostics);
    let out = dir.path().join("deck.out");
    let mut request = Request::new(&analysis, &path, &out);
    request.options = options;
    let outcome = run(&request, &mut NoObserver);
    outcome.result.unwrap_or_else(|e| panic!("{e}")).results
}

/// The bound this guards: every producer reaches its limit, yet the run
/// takes the steps its step-size rule asks for (36: from 0.1 day growing by
/// 1.5 to 15 day over 365 days, shortened for report times) and not one cut.
/// After two switches a well returns from its limit only past a 0.1 %
/// hysteresis band (`NewtonOptions::settle_after_switches`, `settle_margin`),
/// so a well flipping at the boundary settles instead of exhausting Newton.
#[test]
fn wells_near_their_limits_settle_without_cuts() {
    // First the producers on their limits: what the block delivers there
    // at the end of the year.
    let bhp = vec!["bhp 2000 psi".to_string(); 4];
    let first = run_with(&harrowgate(&bhp), rill_sim::RunOptions::default());
    // Then each asked for exactly that rate: they deplete onto the boundary
    // between target and limit and arrive there at the end.
    let rates: Vec<String> = first.wells[..4]
        .iter()
        .map(|w| format!("rate {:.12e} sm3/day", w.rate.last().unwrap() * 86400.0))
        .collect();
    let r = run_with(&harrowgate(&rates), rill_sim::RunOptions::default());
    for w in &r.wells[..4] {
        assert_eq!(w.mode[1], ControlMode::Rate, "{}: {:?}", w.name, w.mode);
        assert!(
            w.mode.contains(&ControlMode::Bhp),
            "{}: {:?}",
            w.name,
            w.mode
        );
        for (n, p) in w.bhp.iter().enumerate().skip(1) {
            assert!(*p >= 2000.0 * PSI * (1.0 - 1e-9), "{} at {n}: {p}", w.name);
        }
    }
    let s = &r.stats;
    assert!(s.steps <= 40, "{s:?}");
    assert_eq!(s.step_cuts, 0, "{s:?}");
    assert!(s.newton_iterations <= 4 * s.steps, "{s:?}");
}

/// Found by the random-deck property: a steady run judged the injector at
/// the initial pressure (3000 psi, above its 200 psi BHP, so it "would
/// produce"), shut it, and solved a system with nothing holding the
/// pressure level; the next round started from that far-off solution and
/// lost the balance to cancellation. A steady run judges controls only on
/// a solution, and linearises every round at the initial pressures.
#[test]
fn a_steady_run_judges_controls_on_its_solution_only() {
    let done = run_deck(ONE_CELL);
    let r = &done.results;
    let (q_prod, q_inj) = (r.wells[0].rate[0], r.wells[1].rate[0]);
    assert!(
        (q_prod - 871.25 * STB / DAY).abs() <= 1e-9 * q_prod,
        "{q_prod}"
    );
    assert!((q_prod + q_inj).abs() <= 1e-12 * q_prod, "{q_prod} {q_inj}");
    assert_eq!(r.wells[1].mode[0], ControlMode::Bhp);
    assert!(r.balance_error[0] <= 1e-12, "{:e}", r.balance_error[0]);
}

const ONE_CELL: &str = r#"case "Fenwick single cell" {
  title = "one cell"
}
grid {
  cells = 1 x 1 x 1
  dx = 150 ft
  dy = 150 ft
  dz = 25 ft
  top = 5000 ft
}
rock {
  porosity = 0.2
  kx = 448.8 md
  ky = 297.5 md
  kz = 0 md
  compressibility = 4e-6 1/psi
}
fluid "brine" {
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 63 lb/ft^3
}
initial {
  pressure = 3000 psi at 5000 ft
}
well "FW-0" {
  role = producer
  completions = [(1, 1, 1)]
  radius = 0.3 ft
  control = rate 871.25 stb/day
}
well "FW-1" {
  role = injector
  completions = [(1, 1, 1)]
  radius = 0.3 ft
  control = bhp 200 psi
}
timeline {
  kind = steady
}
"#;

/// Two boundaries at one pressure and a shut well: nothing flows, and the
/// round-off the solver leaves in the boundary rates is written as 0 in
/// `series.csv` and in the summary, while the results keep their numbers.
#[test]
fn round_off_flows_are_written_and_summarised_as_zero() {
    let text = r#"case "Fenwick saddle" {
  title = "steady, nothing flows"
}
grid {
  cells = 6 x 1 x 3
  dx = 200 ft
  dy = 200 ft
  dz = 30 ft
  top = 4000 ft
}
rock {
  porosity = 0.2
  kx = 80 md
  kz = 8 md
}
fluid "brine" {
  viscosity = 0.7 cP
  fvf = 1.0 rb/stb
  density = 62.4 lb/ft^3
}
initial {
  pressure = 1800 psi at 4000 ft
}
boundary "west" {
  side = west
  pressure = 1800 psi
}
boundary "east" {
  side = east
  pressure = 1800 psi
}
well "FS-1" {
  role = producer
  location = (3, 1)
  radius = 0.3 ft
  control = shut
}
timeline {
  kind = steady
}
"#;
    let (dir, path, analysis) = deck(text);
    assert!(!analysis.has_errors(), "{:#?}", analysis.diagnostics);
    let out = dir.path().join("deck.out");
    let done = run(&Request::new(&analysis, &path, &out), &mut NoObserver)
        .result
        .unwrap_or_else(|e| panic!("{e}"));
    let r = &done.results;
    assert!(r.flow_per_pascal > 0.0);
    let rates: Vec<f64> = r.boundaries.iter().map(|b| b.rate[0]).collect();
    assert!(rates.iter().all(|q| q.abs() < 1e-12), "{rates:?}");
    let csv = read(&out, "series.csv");
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    for name in ["west rate", "east rate", "FS-1 rate"] {
        let col = header.iter().position(|h| h.starts_with(name)).unwrap();
        assert_eq!(row[col], "0", "{name} in {csv}");
    }
    let json = read(&out, "series.json");
    assert!(json.contains("\"case\": \"Fenwick saddle\""), "{json}");
    let summary = done.summary.lines.join("\n");
    assert!(
        summary.contains("west rate 0 stb/day") && summary.contains("east rate 0 stb/day"),
        "{summary}"
    );
}
