//! `series.json`: the series of `series.csv` with their units, plus the
//! solver statistics, the unit system, the title and the cautions.
//!
//! ```json
//! {
//!   "format": "rill-series", "format_version": 1, "rill_version": "0.1.0",
//!   "case": "Larkspur east lobe", "title": "...", "deck": "lobe.rill", "units": "field", "report_times": 13,
//!   "series": [
//!     {"name": "time", "quantity": "time", "unit": "day", "values": [0, 30, ...]},
//!     {"name": "LE-1 rate", "quantity": "rate", "well": "LE-1", "unit": "stb/day", "values": [...]},
//!     {"name": "east aquifer rate", "quantity": "rate", "boundary": "east aquifer", ...},
//!     {"name": "east aquifer cumulative", "quantity": "cumulative", "boundary": "east aquifer", ...},
//!     {"name": "south flank pressure", "quantity": "pressure", "aquifer": "south flank", ...},
//!     ...
//!   ],
//!   "wells": [{"name": "LE-1", "role": "producer", "control": ["rate", "bhp", ...]}],
//!   "boundaries": [{"name": "east aquifer", "side": "east"}],
//!   "aquifers": [{"name": "south flank", "side": "south"}],
//!   "solver": {"steps": 40, "step_cuts": 1, "newton_iterations": 95, "linear_iterations": 95,
//!              "linear_solver": "direct"},
//!   "cautions": ["Results are engineering estimates ...", ...],
//!   "timings": {"solver_seconds": 0.8, "run_seconds": 1.1, "setup_seconds": 0.01, ...,
//!               "started": "..."}
//! }
//! ```
//! An oil-water run adds `"phases": "oil-water"` after `units`, the phase
//! and field series of `series.csv` (quantities `oil_rate`, `water_rate`,
//! `water_cut`, `cumulative_oil`, `cumulative_water`, `oil_in_place`,
//! `recovery`, `sw_avg`, `pore_volumes_injected`, `balance_error_oil`,
//! `balance_error_water`), and to each producer in `wells` its
//! `breakthrough`: the time of water breakthrough, `null` while none.
//! Values that are not finite are `null`. Everything that differs between
//! two runs of the same deck (wall times, the start time) is in `timings`,
//! last, so that comparing two result sets only has to drop that one key.

use std::io::{self, Write};

use rill_model::{Case, Role};
use rill_sim::{ControlMode, RunResults, WellAction};
use serde::Serialize;

use crate::series::{Owner, SeriesTable};
use crate::units::{display_unit, system_name, Quantity};
use crate::RunMeta;

#[derive(Serialize)]
struct Doc<'a> {
    format: &'static str,
    format_version: u32,
    rill_version: &'a str,
    /// The case's name (`case "..."`), `null` when the deck gives none.
    case: Option<&'a str>,
    title: &'a str,
    deck: String,
    units: &'static str,
    /// `"oil-water"` for an oil-water run; absent for a single-phase one,
    /// so older readers see no change.
    #[serde(skip_serializing_if = "Option::is_none")]
    phases: Option<&'static str>,
    report_times: usize,
    series: Vec<Series<'a>>,
    wells: Vec<Well<'a>>,
    boundaries: Vec<Boundary<'a>>,
    /// Only when the case has aquifers, so older readers see no change.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    aquifers: Vec<Boundary<'a>>,
    solver: Solver<'a>,
    cautions: &'a [String],
    /// Wells the run shut (they would have flowed against their role) or
    /// reopened, in time order.
    events: Vec<EventDoc<'a>>,
    timings: TimingsDoc<'a>,
}

#[derive(Serialize)]
struct EventDoc<'a> {
    /// Start of the step from which it holds, in the time unit of the series.
    time: f64,
    well: &'a str,
    /// `shut` or `reopened`.
    action: &'static str,
}

#[derive(Serialize)]
struct Series<'a> {
    name: &'a str,
    quantity: &'static str,
    #[serde(skip_serializing_if = "Option::is_none")]
    well: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    boundary: Option<&'a str>,
    #[serde(skip_serializing_if = "Option::is_none")]
    aquifer: Option<&'a str>,
    unit: &'a str,
    values: &'a [f64],
}

#[derive(Serialize)]
struct Well<'a> {
    name: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    role: Option<&'static str>,
    /// Control mode over the step that ended at each report time.
    control: Vec<&'static str>,
    /// Oil-water runs, producers only: the time of water breakthrough in
    /// the time unit of the series, `null` when the water has not broken
    /// through.
    #[serde(skip_serializing_if = "Option::is_none")]
    breakthrough: Option<Option<f64>>,
}

#[derive(Serialize)]
struct Boundary<'a> {
    name: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    side: Option<&'static str>,
}

#[derive(Serialize)]
struct Solver<'a> {
    steps: usize,
    step_cuts: usize,
    newton_iterations: usize,
    linear_iterations: usize,
    linear_solver: &'a str,
}

/// Wall times, s, and the start time: what changes from run to run.
#[derive(Serialize)]
struct TimingsDoc<'a> {
    /// The simulator's own wall time.
    solver_seconds: f64,
    /// The whole run as the caller measured it.
    #[serde(skip_serializing_if = "Option::is_none")]
    run_seconds: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    setup_seconds: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    assembly_seconds: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    linear_setup_seconds: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    linear_solve_seconds: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    started: Option<&'a str>,
}

pub(crate) fn write_json(
    w: &mut dyn Write,
    case: &Case,
    results: &RunResults,
    meta: &RunMeta,
    table: &SeriesTable,
    title: &str,
    cautions: &[String],
) -> io::Result<()> {
    let series = table
        .columns
        .iter()
        .map(|c| Series {
            name: &c.name,
            quantity: c.measure.key(),
            well: match c.owner {
                Some(Owner::Well(w)) => Some(results.wells[w].name.as_str()),
                _ => None,
            },
            boundary: match c.owner {
                Some(Owner::Boundary(b)) => Some(results.boundaries[b].name.as_str()),
                _ => None,
            },
            aquifer: match c.owner {
                Some(Owner::Aquifer(a)) => Some(results.aquifers[a].name.as_str()),
                _ => None,
            },
            unit: &c.unit.name,
            values: &c.values,
        })
        .collect();
    let time_unit = display_unit(Quantity::Time, case.report.units);
    let wells = results
        .wells
        .iter()
        .enumerate()
        .map(|(n, w)| {
            let role = case
                .wells
                .iter()
                .find(|cw| cw.name == w.name)
                .map(|cw| cw.role);
            let phases = results.oil_water.as_ref().and_then(|ow| ow.wells.get(n));
            Well {
                name: &w.name,
                role: role.map(|r| match r {
                    Role::Producer => "producer",
                    Role::Injector => "injector",
                }),
                control: w.mode.iter().map(|m| mode_name(*m)).collect(),
                breakthrough: phases
                    .filter(|_| role != Some(Role::Injector))
                    .map(|p| p.breakthrough.map(|t| time_unit.show(t))),
            }
        })
        .collect();
    let boundaries = results
        .boundaries
        .iter()
        .map(|b| Boundary {
            name: &b.name,
            side: case
                .boundaries
                .iter()
                .find(|cb| cb.name == b.name)
                .map(|cb| cb.side.name()),
        })
        .collect();
    let aquifers = results
        .aquifers
        .iter()
        .map(|a| Boundary {
            name: &a.name,
            side: case
                .aquifers
                .iter()
                .find(|ca| ca.name == a.name)
                .map(|ca| ca.side.name()),
        })
        .collect();
    let stats = &results.stats;
    let doc = Doc {
        format: "rill-series",
        format_version: 1,
        rill_version: &meta.rill_version,
        case: crate::case_name(case),
        title,
        deck: meta.deck.display().to_string(),
        units: system_name(case.report.units),
        phases: results.oil_water.as_ref().map(|_| "oil-water"),
        report_times: table.rows(),
        series,
        wells,
        boundaries,
        aquifers,
        solver: Solver {
            steps: stats.steps,
            step_cuts: stats.step_cuts,
            newton_iterations: stats.newton_iterations,
            linear_iterations: stats.linear_iterations,
            linear_solver: &stats.linear_solver,
        },
        cautions,
        events: results
            .events
            .iter()
            .map(|e| EventDoc {
                time: time_unit.show(e.time),
                well: &e.well,
                action: match e.action {
                    WellAction::Shut => "shut",
                    WellAction::Reopened => "reopened",
                },
            })
            .collect(),
        timings: TimingsDoc {
            solver_seconds: stats.wall_seconds,
            run_seconds: meta.wall_seconds,
            setup_seconds: meta.timings.as_ref().map(|t| t.setup),
            assembly_seconds: meta.timings.as_ref().map(|t| t.assembly),
            linear_setup_seconds: meta.timings.as_ref().map(|t| t.linear_setup),
            linear_solve_seconds: meta.timings.as_ref().map(|t| t.linear_solve),
            started: meta.started.as_deref(),
        },
    };
    serde_json::to_writer_pretty(&mut *w, &doc).map_err(io::Error::other)?;
    w.write_all(b"\n")
}

pub(crate) fn mode_name(mode: ControlMode) -> &'static str {
    match mode {
        ControlMode::Rate => "rate",
        ControlMode::Bhp => "bhp",
        ControlMode::Shut => "shut",
    }
}
