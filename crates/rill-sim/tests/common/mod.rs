//! Builds `Case` values directly for the acceptance tests, and the field
//! unit factors they need (NIST SP 811, 2008, appendix B).
#![allow(dead_code)]

use rill_model::*;
use rill_sim::{Observer, Progress};

pub const FT: f64 = 0.3048;
pub const PSI: f64 = 6894.757293168;
pub const MD: f64 = 9.869233e-16;
pub const CP: f64 = 1e-3;
pub const HOUR: f64 = 3600.0;
pub const DAY: f64 = 86400.0;
/// Barrel and stock-tank barrel, m^3.
pub const BBL: f64 = 0.158987294928;
pub const STB: f64 = BBL;
pub const STB_DAY: f64 = STB / DAY;
pub const LB_FT3: f64 = 0.45359237 / (FT * FT * FT);

/// A box of `nx * ny * nz` cells, uniform rock and a water-like fluid, at
/// hydrostatic equilibrium from `p_datum` at the top, no wells, no
/// boundaries, a transient timeline of `end` with no report interval.
pub fn block(dx: Vec<f64>, dy: Vec<f64>, dz_layers: Vec<f64>, top: f64) -> Case {
    let (nx, ny, nz) = (dx.len(), dy.len(), dz_layers.len());
    let n = nx * ny * nz;
    let mut dz = Vec::with_capacity(n);
    for &h in &dz_layers {
        dz.extend(std::iter::repeat_n(h, nx * ny));
    }
    Case {
        title: None,
        name: None,
        grid: Grid {
            nx,
            ny,
            nz,
            dx,
            dy,
            dz: dz.into(),
            top: vec![top; nx * ny],
        },
        rock: Rock {
            porosity: vec![0.2; n].into(),
            kx: vec![100.0 * MD; n].into(),
            ky: vec![100.0 * MD; n].into(),
            kz: vec![10.0 * MD; n].into(),
            compressibility: 0.0,
            ref_pressure: 3000.0 * PSI,
        },
        fluid: Fluid {
            name: None,
            viscosity: 1.0 * CP,
            fvf: 1.0,
            compressibility: 3e-6 / PSI,
            density: 62.4 * LB_FT3,
            ref_pressure: 3000.0 * PSI,
        },
        oil_water: None,
        initial: Initial::Datum {
            pressure: 3000.0 * PSI,
            depth: top,
        },
        wells: Vec::new(),
        boundaries: Vec::new(),
        faults: Vec::new(),
        aquifers: Vec::new(),
        timeline: Timeline {
            kind: RunKind::Transient,
            end: 10.0 * DAY,
            first_step: 0.01 * DAY,
            max_step: 5.0 * DAY,
            min_step: rill_model::Timeline::DEFAULT_MIN_STEP,
            max_steps: rill_model::Timeline::DEFAULT_MAX_STEPS,
            growth: 1.5,
            report_every: None,
            report_at: Vec::new(),
            events: Vec::new(),
        },
        report: ReportSettings::default(),
    }
}

/// Geometric widths: `n` cells starting at `first`, each `ratio` times the last.
pub fn geometric(first: f64, ratio: f64, n: usize) -> Vec<f64> {
    (0..n).map(|k| first * ratio.powi(k as i32)).collect()
}

/// A vertical well in column `(i, j)` (0-based) through layers `k0..=k1`.
#[allow(clippy::too_many_arguments)] // a test builder: every argument is a well property
pub fn well(
    case: &Case,
    name: &str,
    role: Role,
    i: usize,
    j: usize,
    k0: usize,
    k1: usize,
    control: Control,
) -> Well {
    Well {
        name: name.into(),
        role,
        completions: (k0..=k1)
            .map(|k| Completion {
                i,
                j,
                k,
                cell: case.grid.index(i, j, k),
                direction: Direction::Z,
            })
            .collect(),
        radius: 0.3 * FT,
        skin: 0.0,
        control,
        bhp_limit: None,
        max_water_cut: None,
        origin: Origin::default(),
    }
}

pub fn boundary(name: &str, side: Side, pressure: f64, datum: Option<f64>) -> Boundary {
    Boundary {
        name: name.into(),
        side,
        pressure,
        datum,
        select: Selection::default(),
        origin: Origin::default(),
    }
}

/// Records progress, counts calls, cancels after `cancel_after` steps.
#[derive(Default)]
pub struct Recorder {
    pub steps: Vec<Progress>,
    pub cancel_after: Option<usize>,
    pub system: Option<(rill_sim::linear::CsrMatrix, Vec<f64>)>,
}

impl Observer for Recorder {
    fn progress(&mut self, p: &Progress) {
        self.steps.push(p.clone());
    }
    fn cancelled(&self) -> bool {
        self.cancel_after.is_some_and(|n| self.steps.len() >= n)
    }
    fn first_system(&mut self, matrix: &rill_sim::linear::CsrMatrix, rhs: &[f64]) {
        self.system = Some((matrix.clone(), rhs.to_vec()));
    }
}

/// Every balance error of a run is at or below 1e-8.
pub fn assert_balanced(r: &rill_sim::RunResults) {
    for (t, e) in r.times.iter().zip(&r.balance_error) {
        assert!(*e <= 1e-8, "balance error {e:e} at t = {} day", t / DAY);
    }
}
