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
  control = water_rate 200 stb/day
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

/// The analytic solution of the Buckley-Leverett problem of `c` (Buckley
/// and Leverett, 1942; Welge, 1952): pore volumes injected at breakthrough,
/// the front saturation, and the recovery at `pvi` pore volumes injected
/// after breakthrough.
struct Analytic {
    curves: rill_model::Curves,
    mu_w: f64,
    mu_o: f64,
    welge: rill_model::derived::relperm::Welge,
}

impl Analytic {
    fn of(c: &Case) -> Analytic {
        let ow = c.oil_water.as_ref().unwrap();
        let curves = ow.relperms[0].curves.clone();
        let (mu_w, mu_o) = (ow.water.viscosity, c.fluid.viscosity);
        let welge = curves.welge(mu_w, mu_o).unwrap();
        Analytic {
            curves,
            mu_w,
            mu_o,
            welge,
        }
    }

    /// The front's distance from the inlet over the length, before
    /// breakthrough: the shock moves at `f_w'(S_wf)` pore volumes per pore
    /// volume injected.
    fn front(&self, pvi: f64) -> f64 {
        pvi / self.welge.breakthrough_pore_volumes
    }

    /// Recovery of the oil in place at `pvi` after breakthrough (Welge):
    /// the outlet saturation `S2` with `1 / f_w'(S2) = pvi`, the average
    /// `S2 + (1 - f_w(S2)) pvi`, over `1 - swc`.
    fn recovery(&self, pvi: f64) -> f64 {
        let slope = |s: f64| self.curves.fractional_flow_slope(s, self.mu_w, self.mu_o);
        let (mut lo, mut hi) = (self.welge.front_saturation, self.curves.sw_max());
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            // 1 / f' grows with S behind the front.
            if 1.0 / slope(mid) < pvi {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let s2 = 0.5 * (lo + hi);
        let f2 = self.curves.fractional_flow(s2, self.mu_w, self.mu_o);
        let avg = s2 + (1.0 - f2) * pvi;
        let swc = self.curves.swc();
        (avg - swc) / (1.0 - swc)
    }

    /// The saturation halfway up the shock, which a smeared front carries
    /// at the shock's speed.
    fn mid_shock(&self) -> f64 {
        0.5 * (self.welge.front_saturation + self.curves.swc())
    }
}

/// Linear interpolation of `y` at `x = at` in increasing `x`.
fn at(x: &[f64], y: &[f64], v: f64) -> f64 {
    let k = x.partition_point(|&a| a < v).clamp(1, x.len() - 1);
    y[k - 1] + (y[k] - y[k - 1]) * (v - x[k - 1]) / (x[k] - x[k - 1])
}

/// The numerical Buckley-Leverett run on `n` cells: the pore volumes
/// injected when the outlet cell's saturation crosses the middle of the
/// shock, the front positions at the given pore volumes injected, the
/// recoveries at others, and the largest balance error.
struct Numerical {
    breakthrough_pvi: f64,
    fronts: Vec<f64>,
    recoveries: Vec<f64>,
    balance: f64,
}

fn buckley_leverett(n: usize, front_at: &[f64], recovery_at: &[f64]) -> (Analytic, Numerical) {
    // 200 stb/day fills the 35,620 bbl of pores in 178 days; the step
    // moves the front about one cell.
    let dt = 125.0 / n as f64;
    let c = case(&buckley_leverett_deck(n, 360.0, dt));
    let a = Analytic::of(&c);
    let r = run_case(&c);
    let ow = r.oil_water.as_ref().unwrap();
    let pvi = &ow.pore_volumes_injected;
    let mid = a.mid_shock();
    // The outlet saturation against pore volumes injected.
    let outlet: Vec<f64> = ow.saturation.iter().map(|s| s[n - 1]).collect();
    let k = outlet
        .iter()
        .position(|&s| s >= mid)
        .expect("water broke through");
    let breakthrough_pvi =
        pvi[k - 1] + (pvi[k] - pvi[k - 1]) * (mid - outlet[k - 1]) / (outlet[k] - outlet[k - 1]);
    let fronts = front_at
        .iter()
        .map(|&v| {
            // The report nearest to `v` pore volumes, and its front where
            // the profile crosses the middle of the shock, between centres.
            let k = pvi.partition_point(|&p| p < v);
            let s = &ow.saturation[k];
            let i = s.iter().position(|&x| x < mid).unwrap();
            let xc = |i: usize| (i as f64 + 0.5) / n as f64;
            let x = xc(i - 1) + (xc(i) - xc(i - 1)) * (s[i - 1] - mid) / (s[i - 1] - s[i]);
            // Corrected to `v` exactly at the front's analytic speed.
            x + (v - pvi[k]) / a.welge.breakthrough_pore_volumes
        })
        .collect();
    let recoveries = recovery_at
        .iter()
        .map(|&v| at(pvi, &ow.recovery, v))
        .collect();
    let balance = ow
        .balance_error_oil
        .iter()
        .chain(&ow.balance_error_water)
        .copied()
        .fold(0.0, f64::max);
    (
        a,
        Numerical {
            breakthrough_pvi,
            fronts,
            recoveries,
            balance,
        },
    )
}

/// Buckley and Leverett (1942), with Welge's (1952) tangent: breakthrough
/// within 3% on 1,000 cells, the front within 2% at two times before it,
/// recovery within 2% after it, both balances closed every step.
#[test]
fn buckley_leverett_on_a_thousand_cells() {
    let (a, num) = buckley_leverett(1000, &[0.15, 0.3], &[0.8, 1.2, 1.8]);
    let bt = a.welge.breakthrough_pore_volumes;
    let err = (num.breakthrough_pvi - bt).abs() / bt;
    eprintln!(
        "breakthrough {} PV (analytic {bt}); fronts {:?}; recoveries {:?}",
        num.breakthrough_pvi, num.fronts, num.recoveries
    );
    assert!(
        err <= 0.03,
        "breakthrough at {} PV, analytic {bt} PV",
        num.breakthrough_pvi
    );
    for (&v, &x) in [0.15, 0.3].iter().zip(&num.fronts) {
        let exact = a.front(v);
        assert!(
            (x - exact).abs() <= 0.02 * exact,
            "front at {x} of the length after {v} PV, analytic {exact}"
        );
    }
    for (&v, &rec) in [0.8, 1.2, 1.8].iter().zip(&num.recoveries) {
        let exact = a.recovery(v);
        assert!(
            (rec - exact).abs() <= 0.02 * exact,
            "recovery {rec} after {v} PV, analytic {exact}"
        );
    }
    assert!(num.balance <= 1e-8, "balance error {:e}", num.balance);
}

/// The breakthrough error falls as the grid is refined (100, 300, 1,000
/// cells at the same front movement per step).
#[test]
fn buckley_leverett_error_falls_with_refinement() {
    let errors: Vec<f64> = [100, 300, 1000]
        .iter()
        .map(|&n| {
            let (a, num) = buckley_leverett(n, &[], &[]);
            let bt = a.welge.breakthrough_pore_volumes;
            (num.breakthrough_pvi - bt).abs() / bt
        })
        .collect();
    eprintln!("breakthrough errors on 100, 300, 1000 cells: {errors:?}");
    assert!(
        errors[0] > errors[1] && errors[1] > errors[2],
        "breakthrough errors on 100, 300, 1000 cells: {errors:?}"
    );
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
}

/// The oil, water and curves of the tests below, with `pc_entry` in psi.
fn liquids(pc_entry: f64) -> String {
    format!(
        r#"
oil {{
  viscosity = 2 cP
  fvf = 1.1 rb/stb
  compressibility = 1e-5 1/psi
  density = 50 lb/ft^3
}}
water {{
  viscosity = 0.5 cP
  fvf = 1 rb/stb
  compressibility = 3e-6 1/psi
  density = 62 lb/ft^3
}}
relperm "sand" {{
  model = corey
  swc = 0.2
  sor = 0.2
  krw_end = 0.35
  kro_end = 0.85
  nw = 2
  no = 2
  pc_entry = {pc_entry} psi
}}
"#
    )
}

/// The grid, rock and liquids of the tests below; `extra` adds blocks.
fn layered(cells: &str, extra: &str) -> String {
    format!(
        r#"
grid {{
  cells = {cells}
  dx = 200 ft
  dy = 150 ft
  dz = layers [8 12 10 6 14 9] ft
  top = 6000 ft
}}
rock {{
  porosity = layers [0.22 0.18 0.25 0.15 0.2 0.24]
  kx = layers [150 40 300 20 120 90] md
  ky = kx
  kz = 0.2 * kx
  compressibility = 4e-6 1/psi
  relperm = "sand"
  patch k = 4 {{
    relperm = "shale streak"
  }}
}}
oil {{
  viscosity = 1.5 cP
  fvf = 1.2 rb/stb
  compressibility = 1e-5 1/psi
  density = 48 lb/ft^3
}}
water {{
  viscosity = 0.4 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 64 lb/ft^3
}}
relperm "sand" {{
  model = corey
  swc = 0.15
  sor = 0.25
  krw_end = 0.4
  kro_end = 0.9
  nw = 2.5
  no = 2
  pc_entry = 6 psi
}}
relperm "shale streak" {{
  model = table
  sw  = [0.3 0.4 0.5 0.6 0.7]
  krw = [0 0.03 0.09 0.18 0.28]
  kro = [0.75 0.38 0.14 0.03 0]
  pc  = [9 4.5 2.2 0.9 0] psi
}}
{extra}
"#
    )
}

/// Capillary-gravity equilibrium (each phase hydrostatic in its own
/// density, the saturation from inverting pc at each cell centre) is a
/// rest state of the discrete equations: no wells, a year, saturations
/// move by less than 1e-6 and pressures by less than 1e-3 psi (the
/// issue's acceptance bound; common practice, no published source).
#[test]
fn a_deck_in_capillary_gravity_equilibrium_stays_at_rest() {
    let c = case(&layered(
        "4 x 3 x 6",
        r#"
initial {
  pressure = 2800 psi at 6000 ft
  water_contact = 6040 ft
}
timeline {
  end = 1 yr
  report_every = 90 day
}
"#,
    ));
    let r = run_case(&c);
    let s0 = &r.oil_water.as_ref().unwrap().saturation[0];
    // The contact cuts the grid: oil above, a transition, water below.
    let (lo, hi) = s0
        .iter()
        .fold((1.0f64, 0.0f64), |(a, b), &s| (a.min(s), b.max(s)));
    assert!(lo < 0.5 && hi == 1.0, "saturations from {lo} to {hi}");
    assert_at_rest(&r);
}

/// Saturations move by less than 1e-6 and pressures by less than 1e-3
/// psi from the first report time to every later one.
fn assert_at_rest(r: &RunResults) {
    let ow = r.oil_water.as_ref().unwrap();
    let (s0, p0) = (&ow.saturation[0], &r.pressure[0]);
    for (s, p) in ow.saturation.iter().zip(&r.pressure) {
        for c in 0..s.len() {
            assert!(
                (s[c] - s0[c]).abs() < 1e-6,
                "cell {c}: sw {} -> {}",
                s0[c],
                s[c]
            );
            assert!(
                (p[c] - p0[c]).abs() < 1e-3 * PSI,
                "cell {c}: p {} -> {}",
                p0[c],
                p[c]
            );
        }
    }
}

/// The same rest with a boundary on the east side held at the initial
/// datum: its hydrostat is the initial state's, the oil's above the
/// contact and the water's below it, so nothing flows through it.
#[test]
fn a_boundary_at_the_initial_datum_keeps_the_equilibrium_at_rest() {
    let c = case(&layered(
        "4 x 3 x 6",
        r#"
initial {
  pressure = 2800 psi at 6000 ft
  water_contact = 6040 ft
}
boundary "east edge" {
  side = east
  pressure = 2800 psi at 6000 ft
}
timeline {
  end = 1 yr
  report_every = 90 day
}
"#,
    ));
    let r = run_case(&c);
    assert_at_rest(&r);
}

/// Water above oil in a closed column falls below it, and neither phase
/// is created or lost (surface volumes in place constant to 1e-9).
#[test]
fn gravity_segregation_in_a_closed_column() {
    let c = case(&layered(
        "1 x 1 x 6",
        r#"
initial {
  pressure = 2800 psi at 6000 ft
  water_saturation = layers [0.75 0.75 0.75 0.2 0.3 0.3]
}
timeline {
  end = 20 yr
  report_every = 1 yr
}
"#,
    ));
    let r = run_case(&c);
    let ow = r.oil_water.as_ref().unwrap();
    let last = r.times.len() - 1;
    let s = &ow.saturation[last];
    let top: f64 = s[..3].iter().sum::<f64>() / 3.0;
    let bottom: f64 = s[3..].iter().sum::<f64>() / 3.0;
    assert!(bottom > top + 0.2, "sw at the end: {s:?}");
    for series in [&ow.oil_in_place, &ow.water_in_place] {
        let v0 = series[0];
        for v in series {
            assert!((v - v0).abs() <= 1e-9 * v0, "in place {v0} -> {v}");
        }
    }
}

/// A homogeneous quarter five-spot, injector and producer in opposite
/// corners, is its own mirror image about the diagonal: the saturation
/// and pressure maps are symmetric, to the Newton tolerance.
#[test]
fn a_quarter_five_spot_is_symmetric_about_its_diagonal() {
    let n = 11;
    let liquids = liquids(0.0);
    let text = format!(
        r#"
grid {{
  cells = {n} x {n} x 1
  dx = 50 ft
  dy = 50 ft
  dz = 20 ft
  top = 7000 ft
}}
rock {{
  porosity = 0.2
  kx = 200 md
  ky = kx
  kz = kx
  compressibility = 3e-6 1/psi
}}
{liquids}
initial {{
  pressure = 3000 psi at 7010 ft
  water_saturation = 0.2
}}
well "INJ" {{
  role = injector
  location = (1, 1)
  radius = 0.3 ft
  control = water_rate 300 stb/day
  bhp_limit = 6000 psi
}}
well "PROD" {{
  role = producer
  location = ({n}, {n})
  radius = 0.3 ft
  control = liquid_rate 300 stb/day
  bhp_limit = 500 psi
}}
timeline {{
  end = 600 day
  report_every = 100 day
}}
"#
    );
    let r = run_case(&case(&text));
    let ow = r.oil_water.as_ref().unwrap();
    let last = r.times.len() - 1;
    let (s, p) = (&ow.saturation[last], &r.pressure[last]);
    assert!(ow.wells[1].water_cut[last] > 0.05, "no breakthrough yet");
    for j in 0..n {
        for i in 0..n {
            let (a, b) = (i + n * j, j + n * i);
            assert!(
                (s[a] - s[b]).abs() < 1e-7,
                "sw ({i},{j}) {} vs {}",
                s[a],
                s[b]
            );
            assert!(
                (p[a] - p[b]).abs() < 1e-7 * p[a],
                "p ({i},{j}) {} vs {}",
                p[a],
                p[b]
            );
        }
    }
}

/// A deck full of water (the oil immobile at sw = 1, krw_end = 1) runs as
/// the single-phase deck with the water as its one liquid, to 1e-6
/// relative in every rate, BHP and cell pressure.
#[test]
fn a_deck_full_of_water_runs_as_the_single_phase_deck() {
    let common = r#"
grid {
  cells = 6 x 5 x 3
  dx = 100 ft
  dy = 120 ft
  dz = layers [10 15 12] ft
  top = 4000 ft
}
rock {
  porosity = layers [0.2 0.25 0.18]
  kx = layers [100 250 60] md
  ky = kx
  kz = 0.1 * kx
  compressibility = 4e-6 1/psi
}
initial {
  pressure = 2000 psi at 4000 ft
}
boundary "east" {
  side = east
  pressure = 2000 psi at 4000 ft
}
well "I" {
  role = injector
  location = (1, 1)
  radius = 0.3 ft
  CONTROL_I
  bhp_limit = 4000 psi
}
well "P" {
  role = producer
  location = (5, 4)
  layers = 2..3
  radius = 0.3 ft
  control = bhp 1500 psi
}
timeline {
  end = 60 day
  first_step = 5 day
  max_step = 5 day
  growth = 1
  report_every = 10 day
}
"#;
    let water = r#"
  viscosity = 0.6 cP
  fvf = 1.02 rb/stb
  compressibility = 3e-6 1/psi
  density = 63 lb/ft^3
"#;
    let single = format!(
        "{}\nfluid {{{water}}}\n",
        common.replace("CONTROL_I", "control = rate 300 stb/day")
    );
    // The oil shares the water's hydrostat, so both initial states agree.
    let two = format!(
        "{}\nwater {{{water}}}\noil {{\n  viscosity = 2 cP\n  fvf = 1.2 rb/stb\n  compressibility = 3e-6 1/psi\n  density = 63 lb/ft^3\n}}\nrelperm \"all\" {{\n  model = corey\n  swc = 0.2\n  sor = 0.2\n  krw_end = 1\n  kro_end = 0.8\n  nw = 2\n  no = 2\n}}\n",
        common
            .replace("CONTROL_I", "control = water_rate 300 stb/day")
            .replace("  pressure = 2000 psi at 4000 ft\n}\nboundary", "  pressure = 2000 psi at 4000 ft\n  water_saturation = 1\n}\nboundary")
    );
    let (a, b) = (run_case(&case(&single)), run_case(&case(&two)));
    assert_eq!(a.times, b.times);
    let close = |x: f64, y: f64, what: &str| {
        assert!(
            (x - y).abs() <= 1e-6 * x.abs().max(y.abs()).max(1e-30),
            "{what}: single phase {x}, oil-water {y}"
        );
    };
    for (wa, wb) in a.wells.iter().zip(&b.wells) {
        for k in 1..a.times.len() {
            close(
                wa.rate[k],
                wb.rate[k],
                &format!("{} rate at report {k}", wa.name),
            );
            close(
                wa.bhp[k],
                wb.bhp[k],
                &format!("{} BHP at report {k}", wa.name),
            );
        }
    }
    for k in 1..a.times.len() {
        close(
            a.boundaries[0].rate[k],
            b.boundaries[0].rate[k],
            "boundary rate",
        );
        for (c, (x, y)) in a.pressure[k].iter().zip(&b.pressure[k]).enumerate() {
            close(*x, *y, &format!("cell {c} pressure at report {k}"));
        }
    }
    let ow = b.oil_water.as_ref().unwrap();
    assert!(ow.oil_in_place.iter().all(|&v| v == 0.0));
}

mod reflections {
    use super::*;
    use proptest::prelude::*;

    /// Which way a deck is mirrored: in x (i to nx - 1 - i), in y, or both.
    #[derive(Clone, Copy)]
    struct Flip {
        x: bool,
        y: bool,
    }

    impl Flip {
        fn cell(self, nx: usize, ny: usize, (i, j): (usize, usize)) -> (usize, usize) {
            (
                if self.x { nx - 1 - i } else { i },
                if self.y { ny - 1 - j } else { j },
            )
        }
    }

    /// A random heterogeneous deck, mirrored as `flip` says.
    fn deck(nx: usize, ny: usize, perm: &[f64], wells: [(usize, usize); 2], flip: Flip) -> String {
        // The mirrored deck's cell (i, j) holds the original's mirror image.
        let cells = |v: &[f64]| {
            let mut out = Vec::with_capacity(v.len());
            for j in 0..ny {
                for i in 0..nx {
                    let (i, j) = flip.cell(nx, ny, (i, j));
                    out.push(format!("{}", v[i + nx * j]));
                }
            }
            out.join(" ")
        };
        let liquids = liquids(3.0);
        let at = |c: (usize, usize)| {
            let (i, j) = flip.cell(nx, ny, c);
            format!("({}, {})", i + 1, j + 1)
        };
        format!(
            r#"
grid {{
  cells = {nx} x {ny} x 1
  dx = 80 ft
  dy = 60 ft
  dz = 15 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = cells [{k}] md
  ky = kx
  kz = kx
  compressibility = 4e-6 1/psi
}}
{liquids}
initial {{
  pressure = 2500 psi at 5000 ft
  water_saturation = 0.2
}}
well "INJ" {{
  role = injector
  location = {wi}
  radius = 0.3 ft
  control = water_rate 100 stb/day
  bhp_limit = 5000 psi
}}
well "PROD" {{
  role = producer
  location = {wp}
  radius = 0.3 ft
  control = bhp 2000 psi
}}
timeline {{
  end = 200 day
  report_every = 50 day
}}
"#,
            k = cells(perm),
            wi = at(wells[0]),
            wp = at(wells[1]),
        )
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(8))]
        /// Mirroring a heterogeneous deck in x, in y or in both mirrors its
        /// results: the same well rates and the mirrored saturation map, to
        /// 1e-6.
        #[test]
        fn mirroring_a_deck_mirrors_its_results(
            nx in 3usize..7,
            ny in 2usize..5,
            seed in proptest::collection::vec(1.0f64..500.0, 36),
            wi in (0usize..7, 0usize..5),
            wp in (0usize..7, 0usize..5),
        ) {
            let wi = (wi.0 % nx, wi.1 % ny);
            let wp = (wp.0 % nx, wp.1 % ny);
            prop_assume!(wi != wp);
            let perm = &seed[..nx * ny];
            let as_is = Flip { x: false, y: false };
            let ra = run_case(&case(&deck(nx, ny, perm, [wi, wp], as_is)));
            let oa = ra.oil_water.unwrap();
            for flip in [Flip { x: true, y: false }, Flip { x: false, y: true }, Flip { x: true, y: true }] {
                let rb = run_case(&case(&deck(nx, ny, perm, [wi, wp], flip)));
                let ob = rb.oil_water.unwrap();
                for (wa, wb) in oa.wells.iter().zip(&ob.wells) {
                    // Each phase rate to 1e-6 of the well's liquid rate: a
                    // phase rate near zero (water before breakthrough,
                    // 1e-7 stb/day) carries the round-off of the whole
                    // flow, not of itself.
                    for t in 0..wa.oil_rate.len() {
                        let liquid = (wa.oil_rate[t].abs() + wa.water_rate[t].abs())
                            .max(wb.oil_rate[t].abs() + wb.water_rate[t].abs())
                            .max(1e-12);
                        for (x, y) in [(wa.oil_rate[t], wb.oil_rate[t]), (wa.water_rate[t], wb.water_rate[t])] {
                            prop_assert!((x - y).abs() <= 1e-6 * liquid, "{x} vs {y} of {liquid}");
                        }
                    }
                }
                let last = oa.saturation.len() - 1;
                let (sa, sb) = (&oa.saturation[last], &ob.saturation[last]);
                for j in 0..ny {
                    for i in 0..nx {
                        let (fi, fj) = flip.cell(nx, ny, (i, j));
                        let (x, y) = (sa[i + nx * j], sb[fi + nx * fj]);
                        prop_assert!((x - y).abs() <= 1e-6, "sw ({i},{j}): {x} vs {y}");
                    }
                }
            }
        }
    }
}

/// The waterflood example runs, closes both balances every step and shows
/// the injected water breaking through at its producer, shut by nothing.
#[test]
fn the_waterflood_example_breaks_through() {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples/brackenlow-waterflood.rill");
    let text = std::fs::read_to_string(&path).unwrap();
    let r = run_case(&case(&text));
    let ow = r.oil_water.as_ref().unwrap();
    let producer = r.wells.iter().position(|w| w.name == "BW-1").unwrap();
    let bt = ow.wells[producer]
        .breakthrough
        .expect("water breaks through");
    // Dry oil at first: the water that arrives is the injected water.
    assert!(bt > 100.0 * DAY, "breakthrough at {} day", bt / DAY);
    let last = r.times.len() - 1;
    assert!(ow.wells[producer].water_cut[last] > 0.3);
    assert!(ow.recovery[last] > 0.05 && ow.recovery[last] < 0.6);
    for (o, w) in ow.balance_error_oil.iter().zip(&ow.balance_error_water) {
        assert!(*o <= 1e-8 && *w <= 1e-8, "{o:e} {w:e}");
    }
}

/// A row of oil at connate water between a water-bearing side and a
/// producer; `support` is the boundary or aquifer block on the west side.
fn supported_row(support: &str, producer_extra: &str) -> String {
    let liquids = liquids(0.0);
    format!(
        r#"
grid {{
  cells = 30 x 1 x 1
  dx = 50 ft
  dy = 100 ft
  dz = 20 ft
  top = 5000 ft
}}
rock {{
  porosity = 0.2
  kx = 300 md
  ky = kx
  kz = kx
  compressibility = 4e-6 1/psi
}}
{liquids}
initial {{
  pressure = 3000 psi at 5010 ft
  water_saturation = 0.2
}}
{support}
well "P" {{
  role = producer
  location = (30, 1)
  radius = 0.3 ft
  control = bhp 2000 psi
{producer_extra}
}}
timeline {{
  end = 3 yr
  report_every = 30 day
}}
"#
    )
}

/// The far side of a constant-pressure boundary with no contact is water:
/// what flows in is water, what the producer makes turns to water, and both
/// balances (boundary flow included) close every step.
#[test]
fn a_constant_pressure_boundary_supplies_water() {
    let r = run_case(&case(&supported_row(
        "boundary \"west\" {\n  side = west\n  pressure = 3000 psi at 5010 ft\n}",
        "",
    )));
    let ow = r.oil_water.as_ref().unwrap();
    let last = r.times.len() - 1;
    // Inflow (negative) through the west side, and water reaching the producer.
    assert!(r.boundaries[0].cumulative[last] < 0.0);
    assert!(
        ow.wells[0].water_cut[last] > 0.5,
        "{:?}",
        ow.wells[0].water_cut
    );
    assert!(ow.wells[0].breakthrough.is_some());
    // The oil left in place plus the oil produced is the initial oil: the
    // boundary brought none.
    let oil = ow.oil_in_place[last] + ow.wells[0].cumulative_oil[last];
    assert!(
        (oil - ow.oil_in_place[0]).abs() <= 1e-8 * ow.oil_in_place[0],
        "{oil} vs {}",
        ow.oil_in_place[0]
    );
    for (o, w) in ow.balance_error_oil.iter().zip(&ow.balance_error_water) {
        assert!(*o <= 1e-8 && *w <= 1e-8, "{o:e} {w:e}");
    }
}

/// A finite aquifer on the west side supports the producer with water.
#[test]
fn an_aquifer_supplies_water() {
    let r = run_case(&case(&supported_row(
        "aquifer \"west leg\" {\n  side = west\n  water_volume = 2e7 rb\n  compressibility = 7e-6 1/psi\n  productivity = 40 rb/day/psi\n}",
        "",
    )));
    let ow = r.oil_water.as_ref().unwrap();
    let last = r.times.len() - 1;
    assert!(r.aquifers[0].cumulative[last] < 0.0, "an influx");
    assert!(
        ow.wells[0].water_cut[last] > 0.3,
        "{:?}",
        ow.wells[0].water_cut
    );
    // The aquifer's pressure fell with what it gave.
    assert!(r.aquifers[0].pressure[last] < r.aquifers[0].pressure[0]);
    for (o, w) in ow.balance_error_oil.iter().zip(&ow.balance_error_water) {
        assert!(*o <= 1e-8 && *w <= 1e-8, "{o:e} {w:e}");
    }
}

/// A producer whose water cut passes its `max_water_cut` is shut for the
/// rest of the run, and the results say when.
#[test]
fn a_producer_past_its_water_cut_is_shut() {
    let r = run_case(&case(&supported_row(
        "boundary \"west\" {\n  side = west\n  pressure = 3000 psi at 5010 ft\n}",
        "  max_water_cut = 0.3",
    )));
    let ow = r.oil_water.as_ref().unwrap();
    let shut = r
        .events
        .iter()
        .find(|e| e.well == "P" && e.action == rill_sim::WellAction::Shut)
        .expect("the well is shut");
    // Shut at the end of the first step that passed the cut: no report
    // before it shows more, and water was rising toward it.
    let k = r.times.iter().position(|&t| t > shut.time).unwrap();
    let before: Vec<f64> = (0..k)
        .filter(|&j| r.times[j] < shut.time)
        .map(|j| ow.wells[0].water_cut[j])
        .collect();
    assert!(before.iter().all(|&c| c <= 0.3), "{before:?}");
    assert!(before.iter().any(|&c| c > 0.01), "{before:?}");
    for j in k..r.times.len() {
        assert_eq!(ow.wells[0].oil_rate[j], 0.0);
        assert_eq!(r.wells[0].mode[j], rill_sim::ControlMode::Shut);
    }
}

/// The face fluxes a result set records for an oil-water run are oil plus
/// water by the assembly's formula: in the nearly incompressible
/// Buckley-Leverett row (both formation volume factors 1) every face
/// carries the injection rate.
#[test]
fn recorded_face_fluxes_carry_the_injected_liquid() {
    let c = case(&buckley_leverett_deck(40, 100.0, 5.0));
    let r = run_case(&c);
    let f = rill_sim::last_face_fluxes(&c, &r).expect("fluxes");
    let q = 200.0 * 0.158987294928 / DAY;
    for (i, v) in f.x[..39].iter().enumerate() {
        assert!((v - q).abs() <= 1e-4 * q, "face {i}: {v} vs {q}");
    }
    assert_eq!(f.x[39], 0.0);
}
