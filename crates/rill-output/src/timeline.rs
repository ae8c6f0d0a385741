//! The report's timeline: what changed for each well and when, both the
//! events the deck gives (a new control, BHP limit or skin) and what the run
//! did on its own (a well shut because it would have flowed against its
//! role, and its reopening). Shut periods show in the series as zero rates;
//! this table says why the rates are zero.

use std::fmt::Write as _;

use rill_model::{Case, Control};
use rill_sim::{RunResults, WellAction};

use crate::text::{escape, human};
use crate::units::{display_unit, Quantity};

/// One row: when, which well, what happened, and who did it.
struct Row {
    time: f64,
    well: String,
    what: String,
    by_deck: bool,
    /// Why it happened.
    why: &'static str,
}

/// The deck's words for a control, in display units.
fn control_words(c: Control, case: &Case) -> String {
    let sys = case.report.units;
    match c {
        Control::Rate(q) | Control::OilRate(q) | Control::LiquidRate(q) | Control::WaterRate(q) => {
            let u = display_unit(Quantity::SurfaceRate, sys);
            format!("control = {} {} {}", c.word(), human(u.show(q)), u.name)
        }
        Control::Bhp(p) => {
            let u = display_unit(Quantity::Pressure, sys);
            format!("control = bhp {} {}", human(u.show(p)), u.name)
        }
        Control::Shut => "control = shut".to_string(),
    }
}

/// Every row, in time order (deck events before what the run did at the
/// same time).
fn rows(case: &Case, results: &RunResults) -> Vec<Row> {
    let sys = case.report.units;
    let pressure = display_unit(Quantity::Pressure, sys);
    let mut rows = Vec::new();
    for ev in &case.timeline.events {
        for ch in &ev.changes {
            let Some(well) = case.wells.get(ch.well) else {
                continue;
            };
            let mut what = Vec::new();
            if let Some(c) = ch.control {
                what.push(control_words(c, case));
            }
            if let Some(l) = ch.bhp_limit {
                what.push(format!(
                    "bhp_limit = {} {}",
                    human(pressure.show(l)),
                    pressure.name
                ));
            }
            if let Some(s) = ch.skin {
                what.push(format!("skin = {}", human(s)));
            }
            rows.push(Row {
                time: ev.time,
                well: well.name.clone(),
                what: what.join(", "),
                by_deck: true,
                why: "event in the deck",
            });
        }
    }
    let end = case.timeline.end.abs().max(1.0);
    for e in &results.events {
        // A shut or reopening at the time of a deck event that changes the
        // well's control follows that event; any other is the run's own.
        let by_event = case.timeline.events.iter().any(|ev| {
            (ev.time - e.time).abs() <= 1e-9 * end
                && ev.changes.iter().any(|ch| {
                    ch.control.is_some()
                        && case.wells.get(ch.well).is_some_and(|w| w.name == e.well)
                })
        });
        rows.push(Row {
            why: match (by_event, e.action) {
                (true, _) => "the deck event above",
                (false, WellAction::Shut) => "the run: at its BHP it would flow against its role",
                (false, WellAction::Reopened) => "the run: its BHP lets it flow its way again",
            },
            time: e.time,
            well: e.well.clone(),
            what: match e.action {
                WellAction::Shut => "shut: flows nothing from here on".to_string(),
                WellAction::Reopened => "reopened: flows again".to_string(),
            },
            by_deck: false,
        });
    }
    rows.sort_by(|a, b| a.time.total_cmp(&b.time).then(b.by_deck.cmp(&a.by_deck)));
    rows
}

/// The timeline section of the report, or nothing when no well changed.
pub(crate) fn section(case: &Case, results: &RunResults, s: &mut String) {
    let rows = rows(case, results);
    if rows.is_empty() {
        return;
    }
    let time = display_unit(Quantity::Time, case.report.units);
    s.push_str("<section id=\"timeline\">\n<h2>Timeline</h2>\n");
    s.push_str(
        "<p class=\"note\">Events of the deck and what the run did on its own. A shut well's rate is \
         zero in the series and plots for as long as it stays shut.</p>\n",
    );
    let _ = writeln!(
        s,
        "<table>\n<tr><th class=\"num\">time [{}]</th><th>well</th><th>change</th><th>why</th></tr>",
        escape(&time.name)
    );
    for r in &rows {
        let _ = writeln!(
            s,
            "<tr class=\"{}\"><td class=\"num\">{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            if r.by_deck { "deck-event" } else { "run-event" },
            human(time.show(r.time)),
            escape(&r.well),
            escape(&r.what),
            r.why
        );
    }
    s.push_str("</table>\n</section>\n");
}
