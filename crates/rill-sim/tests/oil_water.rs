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
    eprintln!("{:?}", r.stats);
    let _ = (DAY, PSI);
}
