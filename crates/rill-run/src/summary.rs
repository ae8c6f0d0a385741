//! The summary of a finished run, in the case's report units: how far it
//! got and at what cost, the final state of every well, boundary and
//! aquifer, the worst mass balance error, where the results are, the deck's
//! cautions and the standing caution. The command line prints it; the server shows it as
//! its message.

use std::path::Path;

use rill_model::{Case, RunKind};
use rill_output::WrittenFiles;
use rill_sim::{ControlMode, RunResults};
use rill_units::{display_unit, format_number, Kind};

/// The summary text, one entry per line.
#[derive(Debug, Clone, PartialEq)]
pub struct Summary {
    /// The headline (`Run of lobe.rill finished: ...`), then indented detail
    /// lines, then an empty line and the standing caution.
    pub lines: Vec<String>,
}

impl Summary {
    pub(crate) fn new(
        case: &Case,
        deck: &Path,
        r: &RunResults,
        written: &WrittenFiles,
        cautions: &[String],
        wall: f64,
    ) -> Summary {
        let sys = case.report.units;
        let show = |si: f64, kind: Kind| {
            let u = display_unit(kind, sys);
            format!("{} {}", format_number(si / u.factor), u.name)
        };
        let last = r.times.len().saturating_sub(1);
        // Rates and volumes as the result files write them (round-off as 0).
        let zero = rill_output::ZeroScale::new(r);
        let s = &r.stats;
        let name = deck.file_name().map_or_else(
            || deck.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        );
        let progress = if case.timeline.kind == RunKind::Steady {
            format!(
                "steady state solved in {} Newton {} ({} linear, {})",
                s.newton_iterations,
                plural(s.newton_iterations, "iteration", "iterations"),
                s.linear_iterations,
                s.linear_solver
            )
        } else {
            format!(
                "reached {} in {} {} ({} {}), {} Newton and {} linear iterations ({})",
                show(r.times.get(last).copied().unwrap_or(0.0), Kind::Time),
                s.steps,
                plural(s.steps, "step", "steps"),
                s.step_cuts,
                plural(s.step_cuts, "cut", "cuts"),
                s.newton_iterations,
                s.linear_iterations,
                s.linear_solver
            )
        };
        let mut lines = vec![format!("Run of {name} finished: {progress}, {wall:.2} s.")];
        if let Some(p) = r.pressure_avg.get(last) {
            lines.push(format!("  average pressure {}", show(*p, Kind::Pressure)));
        }
        for w in &r.wells {
            let mode = match w.mode.get(last) {
                Some(ControlMode::Bhp) => "on BHP",
                Some(ControlMode::Shut) => "shut",
                _ => "on rate",
            };
            lines.push(format!(
                "  {} rate {}, BHP {}, cumulative {} ({mode})",
                w.name,
                show(
                    zero.rate(w.rate.get(last).copied().unwrap_or(0.0)),
                    Kind::SurfaceRate
                ),
                show(w.bhp.get(last).copied().unwrap_or(0.0), Kind::Pressure),
                show(
                    zero.volume(w.cumulative.get(last).copied().unwrap_or(0.0)),
                    Kind::SurfaceVolume
                )
            ));
        }
        for b in &r.boundaries {
            lines.push(format!(
                "  {} rate {} (boundary; negative: inflow)",
                b.name,
                show(
                    zero.rate(b.rate.get(last).copied().unwrap_or(0.0)),
                    Kind::SurfaceRate
                )
            ));
        }
        for a in &r.aquifers {
            let at = |v: &[f64]| v.get(last).copied().unwrap_or(0.0);
            lines.push(format!(
                "  {} rate {}, cumulative {}, pressure {} (aquifer; negative: influx)",
                a.name,
                show(zero.rate(at(&a.rate)), Kind::SurfaceRate),
                show(zero.volume(at(&a.cumulative)), Kind::SurfaceVolume),
                show(at(&a.pressure), Kind::Pressure)
            ));
        }
        let worst = r.balance_error.iter().copied().fold(0.0f64, f64::max);
        lines.push(format!("  largest mass balance error {worst:.2e}"));
        lines.push(format!(
            "  results in {} (report: {})",
            written.dir.display(),
            written.report_html.display()
        ));
        for n in &written.notes {
            lines.push(format!("  note: {n}"));
        }
        for c in cautions {
            lines.push(format!("  caution: {c}"));
        }
        lines.push(String::new());
        lines.push(format!("Caution: {}", rill_output::CAUTION));
        Summary { lines }
    }

    /// The lines joined by newlines (no newline at the end).
    pub fn text(&self) -> String {
        self.lines.join("\n")
    }
}

fn plural<'a>(n: usize, one: &'a str, many: &'a str) -> &'a str {
    if n == 1 {
        one
    } else {
        many
    }
}
