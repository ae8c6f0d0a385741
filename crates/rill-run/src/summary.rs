//! The summary of a finished run, in the case's report units: how far it
//! got and at what cost, the final state of every well, boundary and
//! aquifer, the worst mass balance error, where the results are, the deck's
//! cautions and the standing caution. An oil-water run adds each
//! producer's water cut, phase rates and water breakthrough, and the
//! field's recovery and pore volumes injected. The command line prints it;
//! the server shows it as its message.

use std::path::Path;

use rill_model::{Case, Role, RunKind};
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
        // An oil-water run's well rates are the liquid, oil plus water.
        let liquid = if r.oil_water.is_some() { "liquid " } else { "" };
        for w in &r.wells {
            let mode = match w.mode.get(last) {
                Some(ControlMode::Bhp) => "on BHP",
                Some(ControlMode::Shut) => "shut",
                _ => "on rate",
            };
            lines.push(format!(
                "  {} {liquid}rate {}, BHP {}, cumulative {liquid}{} ({mode})",
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
        oil_water_lines(&mut lines, case, r, &show, &zero);
        let largest = |v: &[f64]| v.iter().copied().fold(0.0f64, f64::max);
        let worst = largest(&r.balance_error);
        match &r.oil_water {
            Some(ow) => lines.push(format!(
                "  largest mass balance error {worst:.2e} (oil {:.2e}, water {:.2e})",
                largest(&ow.balance_error_oil),
                largest(&ow.balance_error_water)
            )),
            None => lines.push(format!("  largest mass balance error {worst:.2e}")),
        }
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
        lines.push(format!("Caution: {}", rill_output::standing_caution(r)));
        Summary { lines }
    }

    /// The lines joined by newlines (no newline at the end).
    pub fn text(&self) -> String {
        self.lines.join("\n")
    }
}

/// An oil-water run's lines: each producer's water cut, phase rates and
/// water breakthrough, then the field's recovery and pore volumes
/// injected, at the last report time. Nothing for a single-phase run.
fn oil_water_lines(
    lines: &mut Vec<String>,
    case: &Case,
    r: &RunResults,
    show: &dyn Fn(f64, Kind) -> String,
    zero: &rill_output::ZeroScale,
) {
    let Some(ow) = &r.oil_water else {
        return;
    };
    let last = r.times.len().saturating_sub(1);
    let at = |v: &[f64]| v.get(last).copied().unwrap_or(0.0);
    for (w, phases) in r.wells.iter().zip(&ow.wells) {
        let injector = case
            .wells
            .iter()
            .any(|cw| cw.name == w.name && cw.role == Role::Injector);
        if injector {
            continue;
        }
        let breakthrough = match phases.breakthrough {
            Some(t) => format!("water breakthrough at {}", show(t, Kind::Time)),
            None => "no water breakthrough yet".into(),
        };
        lines.push(format!(
            "  {} water cut {} (oil {}, water {}), {breakthrough}",
            w.name,
            format_number(at(&phases.water_cut)),
            show(zero.rate(at(&phases.oil_rate)), Kind::SurfaceRate),
            show(zero.rate(at(&phases.water_rate)), Kind::SurfaceRate),
        ));
    }
    let produced: f64 = ow.wells.iter().map(|p| at(&p.cumulative_oil)).sum();
    lines.push(format!(
        "  recovery {} of the initial oil in place ({} produced), {} pore volumes injected",
        format_number(at(&ow.recovery)),
        show(zero.volume(produced), Kind::SurfaceVolume),
        format_number(at(&ow.pore_volumes_injected)),
    ));
}

fn plural<'a>(n: usize, one: &'a str, many: &'a str) -> &'a str {
    if n == 1 {
        one
    } else {
        many
    }
}
