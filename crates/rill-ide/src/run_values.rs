//! What the last run gave, beside the computed values in hover: a cell's
//! pressure and the flux through each of its faces, a well's rate, BHP and
//! cumulative, a boundary's or an aquifer's rate. The front end reads the
//! numbers from the run's result set and hands them over as [`RunValues`];
//! this module only formats them, in the deck's report units, marked with
//! the run's time.

use rill_model::{derived, Case, Side};
use rill_units::{display_unit, Kind};

use crate::present::show;

/// The state of the last run at its last report time, SI units, as the
/// result set holds it (`last_state.json` and `last_state.f64`). The front
/// end gives it only while it matches the deck (the case digest).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct RunValues {
    /// The last report time, s.
    pub time: f64,
    /// The grid the arrays follow (nx, ny, nz).
    pub grid: (usize, usize, usize),
    /// Cell pressure, Pa, per grid cell (NaN in inactive cells).
    pub pressure: Vec<f64>,
    /// Surface flux through the `+i`, `+j`, `+k` face of each cell, m^3/s,
    /// positive towards the larger index.
    pub flux: [Vec<f64>; 3],
    /// Cell water saturation (an oil-water run; NaN in inactive cells).
    pub water_saturation: Option<Vec<f64>>,
    /// Each well's last values.
    pub wells: Vec<RunWell>,
    /// Each boundary's last rate and cumulative.
    pub boundaries: Vec<RunFlow>,
    /// Each aquifer's last rate, cumulative and pressure.
    pub aquifers: Vec<RunFlow>,
}

/// A well's values at the last report time, SI.
#[derive(Debug, Clone, PartialEq)]
pub struct RunWell {
    /// Its name.
    pub name: String,
    /// Surface rate, m^3/s (positive produced, negative injected).
    pub rate: f64,
    /// Bottom-hole pressure at its datum, Pa.
    pub bhp: f64,
    /// Cumulative surface volume, m^3.
    pub cumulative: f64,
}

/// A boundary's or an aquifer's values at the last report time, SI.
#[derive(Debug, Clone, PartialEq)]
pub struct RunFlow {
    /// Its name.
    pub name: String,
    /// Surface rate out of the reservoir, m^3/s (negative: inflow).
    pub rate: f64,
    /// Cumulative surface volume out, m^3.
    pub cumulative: f64,
    /// An aquifer's pressure, Pa.
    pub pressure: Option<f64>,
}

impl RunValues {
    /// Whether the arrays fit `case`'s grid.
    fn fits(&self, case: &Case) -> bool {
        let g = &case.grid;
        let n = g.cell_count();
        self.grid == (g.nx, g.ny, g.nz)
            && self.pressure.len() == n
            && self.flux.iter().all(|f| f.len() == n)
            && self.water_saturation.as_ref().is_none_or(|s| s.len() == n)
    }

    /// The heading of every section: `last run, t = 730 day`.
    fn heading(&self, case: &Case) -> String {
        let sys = case.report.units;
        format!("**last run**, t = {}", show(self.time, Kind::Time, sys))
    }
}

/// The flux out of cell `c` through its face on `side`, m^3/s (negative:
/// in); `None` on the grid's edge.
fn flux_out(case: &Case, run: &RunValues, c: usize, side: Side) -> Option<f64> {
    let g = &case.grid;
    let n = derived::neighbor(g, c, side)?;
    Some(match side {
        Side::East => run.flux[0][c],
        Side::West => -run.flux[0][n],
        Side::North => run.flux[1][c],
        Side::South => -run.flux[1][n],
        Side::Bottom => run.flux[2][c],
        Side::Top => -run.flux[2][n],
    })
}

/// The cell section: its pressure and the flux through each interior face.
pub(crate) fn cell_section(case: &Case, run: &RunValues, c: usize) -> Option<String> {
    if !run.fits(case) {
        return None;
    }
    let sys = case.report.units;
    let p = run.pressure[c];
    let mut s = format!("\n{}: ", run.heading(case));
    if !p.is_finite() {
        s.push_str("inactive cell\n");
        return Some(s);
    }
    s.push_str(&format!("pressure {}", show(p, Kind::Pressure, sys)));
    if let Some(sw) = run.water_saturation.as_ref().map(|s| s[c]) {
        s.push_str(&saturation_words(case, c, sw));
    }
    s.push_str("\n\n");
    let q = display_unit(Kind::SurfaceRate, sys).name;
    s.push_str(&format!(
        "| face | flux [{q}] | direction |\n|---|---:|---|\n"
    ));
    for side in Side::ALL {
        let Some(out) = flux_out(case, run, c, side) else {
            continue;
        };
        let u = display_unit(Kind::SurfaceRate, sys);
        let direction = match out.partial_cmp(&0.0) {
            Some(std::cmp::Ordering::Greater) => "out of the cell",
            Some(std::cmp::Ordering::Less) => "into the cell",
            _ => "none",
        };
        s.push_str(&format!(
            "| {} | {} | {direction} |\n",
            side.name(),
            rill_units::format_number(out.abs() / u.factor)
        ));
    }
    Some(s)
}

/// `, water saturation 0.63 (krw 0.21, kro 0.04)`: an oil-water run's
/// saturation in cell `c` and the relative permeabilities it gives there.
fn saturation_words(case: &Case, c: usize, sw: f64) -> String {
    let mut s = format!(", water saturation {}", rill_units::format_number(sw));
    if let Some(ph) = rill_model::inspect::phases_at(case, c, sw) {
        s.push_str(&format!(
            " (krw {}, kro {})",
            rill_units::format_number(ph.krw),
            rill_units::format_number(ph.kro)
        ));
    }
    s
}

/// The well section: rate, BHP and cumulative.
pub(crate) fn well_section(case: &Case, run: &RunValues, name: &str) -> Option<String> {
    let w = run.wells.iter().find(|w| w.name == name)?;
    let sys = case.report.units;
    Some(format!(
        "\n\n{}: rate {}, BHP {}, cumulative {}",
        run.heading(case),
        show(w.rate, Kind::SurfaceRate, sys),
        show(w.bhp, Kind::Pressure, sys),
        show(w.cumulative, Kind::SurfaceVolume, sys)
    ))
}

/// The section of a boundary or an aquifer (`flows`): rate, cumulative and,
/// for an aquifer, its pressure.
pub(crate) fn flow_section(
    case: &Case,
    run: &RunValues,
    flows: &[RunFlow],
    name: &str,
) -> Option<String> {
    let f = flows.iter().find(|f| f.name == name)?;
    let sys = case.report.units;
    let mut s = format!(
        "\n\n{}: rate {} (negative: inflow), cumulative {}",
        run.heading(case),
        show(f.rate, Kind::SurfaceRate, sys),
        show(f.cumulative, Kind::SurfaceVolume, sys)
    );
    if let Some(p) = f.pressure {
        s.push_str(&format!(", pressure {}", show(p, Kind::Pressure, sys)));
    }
    Some(s)
}
