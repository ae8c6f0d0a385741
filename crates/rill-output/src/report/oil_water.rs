//! An oil-water run in the report: the water cut of each producer and the
//! oil recovery against time, the recovery against the pore volumes
//! injected, and in the summary the field's oil and water with each
//! producer's water breakthrough. Nothing for a single-phase run. Every
//! number is read from the series table, so the page shows what
//! `series.csv` holds.

use std::fmt::Write as _;

use super::{sci, Report, MAX_WELL_LINES};
use crate::series::{Column, Measure, Owner};
use crate::svg::{Line, LineChart};
use crate::text::{escape, human};
use crate::units::{display_unit, Quantity};

/// The smallest top of a recovery axis: a recovery that has not started
/// is drawn on 0 to 0.01, not blown up from round-off.
const MIN_RECOVERY_AXIS: f64 = 0.01;

impl Report<'_> {
    /// The wells with a water cut column (the producers), at most
    /// [`MAX_WELL_LINES`] of them (those with the largest cumulative
    /// liquid), in well order; with the caption's note when capped.
    fn producers(&self) -> (Vec<usize>, String) {
        let results = self.results;
        let mut producers: Vec<usize> = (0..results.wells.len())
            .filter(|&w| {
                self.table
                    .find(Some(Owner::Well(w)), Measure::WaterCut)
                    .is_some()
            })
            .collect();
        let all = producers.len();
        if all <= MAX_WELL_LINES {
            return (producers, String::new());
        }
        let size = |w: usize| results.wells[w].cumulative.last().map_or(0.0, |v| v.abs());
        producers.sort_by(|&a, &b| size(b).total_cmp(&size(a)));
        producers.truncate(MAX_WELL_LINES);
        producers.sort_unstable();
        (
            producers,
            format!(
                " Showing the {MAX_WELL_LINES} of {all} producers with the largest cumulative liquid; all are in <code>series.csv</code>."
            ),
        )
    }

    fn field(&self, measure: Measure) -> Option<&Column> {
        self.table.find(None, measure)
    }

    /// Oil-water runs: the charts of water cut, recovery against time and
    /// recovery against pore volumes injected.
    pub(super) fn oil_water_charts(&self, s: &mut String) {
        if self.results.oil_water.is_none() {
            return;
        }
        let time = self.table.time();
        let x_label = format!("Time [{}]", time.unit.name);
        let (producers, cap_note) = self.producers();
        // A producer keeps the colour it has in the other charts.
        let (shown, _) = self.shown_wells();
        let style = |w: usize| shown.iter().position(|&s| s == w).unwrap_or(w);
        s.push_str("<section>\n<h2>Oil and water</h2>\n<div class=\"charts\">\n");

        let lines: Vec<Line> = producers
            .iter()
            .filter_map(|&w| {
                let c = self.table.find(Some(Owner::Well(w)), Measure::WaterCut)?;
                Some(Line {
                    name: &self.results.wells[w].name,
                    ys: &c.values,
                    style: style(w),
                    // Like a rate: the water cut of the step that ends there.
                    steps: true,
                })
            })
            .collect();
        figure(
            s,
            (!lines.is_empty()).then(|| LineChart {
                title: "Water cut",
                x_label: &x_label,
                y_label: "Water cut [-]",
                xs: &time.values,
                lines,
                min_span: None,
                y_cover: Some((0.0, 1.0)),
            }),
            "Water cut",
            "No producers in this case.",
            &format!(
                "Surface water over surface liquid of each producer, drawn as a step: the value at a report time \
                 held over the interval that ends there. Breakthrough times are in the summary.{cap_note}"
            ),
        );

        let recovery = self.field(Measure::Recovery);
        let recovery_line = || {
            recovery.map(|c| Line {
                name: "recovery",
                ys: &c.values,
                style: 0,
                steps: false,
            })
        };
        figure(
            s,
            recovery_line().map(|line| LineChart {
                title: "Oil recovery",
                x_label: &x_label,
                y_label: "Recovery [-]",
                xs: &time.values,
                lines: vec![line],
                min_span: None,
                y_cover: Some((0.0, MIN_RECOVERY_AXIS)),
            }),
            "Oil recovery",
            "No recovery series.",
            "Oil produced so far over the oil initially in place, both at surface conditions.",
        );

        let pvi = self.field(Measure::PoreVolumesInjected);
        let injected = pvi.is_some_and(|c| c.values.iter().any(|v| v.is_finite() && *v > 0.0));
        figure(
            s,
            pvi.filter(|_| injected)
                .zip(recovery_line())
                .map(|(pvi, line)| LineChart {
                    title: "Oil recovery against pore volumes injected",
                    x_label: "Pore volumes injected [-]",
                    y_label: "Recovery [-]",
                    xs: &pvi.values,
                    lines: vec![line],
                    min_span: None,
                    y_cover: Some((0.0, MIN_RECOVERY_AXIS)),
                }),
            "Oil recovery against pore volumes injected",
            "No water was injected, so there is no curve against pore volumes injected.",
            "Pore volumes injected: the water the wells injected so far, at reservoir conditions, over the \
             initial pore volume. Against it, floods of different sizes and rates can be compared.",
        );
        s.push_str("</div>\n</section>\n");
    }

    /// Oil-water runs, in the summary: the field's oil in place, recovery,
    /// pore volumes injected, average water saturation and phase balance
    /// errors, and each producer's breakthrough and last phase values.
    pub(super) fn oil_water_tables(&self, s: &mut String, t_end: f64) {
        if self.results.oil_water.is_none() {
            return;
        }
        let system = self.case.report.units;
        let time = self.table.time();
        let q_unit = display_unit(Quantity::SurfaceRate, system);
        let v_unit = display_unit(Quantity::SurfaceVolume, system);
        let first = |m| self.field(m).and_then(|c| c.values.first().copied());
        let last = |m| self.field(m).and_then(|c| c.values.last().copied());
        let show = |v: Option<f64>| v.map_or("–".into(), human);
        let worst = |m| {
            self.field(m).map_or("–".into(), |c| {
                sci(c
                    .values
                    .iter()
                    .filter(|v| v.is_finite())
                    .fold(0.0f64, |m, v| m.max(v.abs())))
            })
        };
        let _ = writeln!(
            s,
            "<h3 style=\"margin-top:14px\">Oil and water at {} {}</h3>\n<div class=\"kv\">\n<table>",
            human(t_end),
            escape(&time.unit.name)
        );
        let row = |s: &mut String, k: &str, v: String| {
            let _ = writeln!(s, "<tr><td>{k}</td><td>{v}</td></tr>");
        };
        let v_name = escape(&v_unit.name);
        row(
            s,
            "Oil in place",
            format!(
                "{} {v_name} (initially {} {v_name})",
                show(last(Measure::OilInPlace)),
                show(first(Measure::OilInPlace))
            ),
        );
        row(
            s,
            "Recovery",
            format!(
                "{} of the initial oil in place",
                show(last(Measure::Recovery))
            ),
        );
        row(
            s,
            "Pore volumes injected",
            show(last(Measure::PoreVolumesInjected)),
        );
        row(
            s,
            "Average water saturation",
            format!(
                "{} (initially {})",
                show(last(Measure::SwAvg)),
                show(first(Measure::SwAvg))
            ),
        );
        row(
            s,
            "Balance error, largest",
            format!(
                "oil {}, water {} (relative)",
                worst(Measure::BalanceErrorOil),
                worst(Measure::BalanceErrorWater)
            ),
        );
        s.push_str("</table>\n</div>\n");
        self.breakthrough_table(s, &q_unit.name, &v_unit.name);
    }

    /// Each producer's water breakthrough ("not yet" when none) and last
    /// water cut, phase rates and cumulatives.
    fn breakthrough_table(&self, s: &mut String, q_unit: &str, v_unit: &str) {
        let results = self.results;
        let Some(ow) = &results.oil_water else {
            return;
        };
        let time = self.table.time();
        let time_unit = display_unit(Quantity::Time, self.case.report.units);
        let producers: Vec<usize> = (0..results.wells.len())
            .filter(|&w| {
                self.table
                    .find(Some(Owner::Well(w)), Measure::WaterCut)
                    .is_some()
            })
            .collect();
        s.push_str("<h3 style=\"margin-top:14px\">Water breakthrough</h3>\n");
        if producers.is_empty() {
            s.push_str("<p class=\"empty\">No producers in this case.</p>\n");
            return;
        }
        let _ = writeln!(
            s,
            "<table>\n<tr><th>Producer</th><th class=\"num\">Breakthrough [{}]</th><th class=\"num\">Water cut [-]</th>\
             <th class=\"num\">Oil rate [{q}]</th><th class=\"num\">Water rate [{q}]</th>\
             <th class=\"num\">Cumulative oil [{v}]</th><th class=\"num\">Cumulative water [{v}]</th></tr>",
            escape(&time.unit.name),
            q = escape(q_unit),
            v = escape(v_unit),
        );
        for w in producers {
            let last = |m| {
                self.table
                    .find(Some(Owner::Well(w)), m)
                    .and_then(|c| c.values.last().copied())
                    .map_or("–".into(), human)
            };
            let breakthrough = ow
                .wells
                .get(w)
                .and_then(|p| p.breakthrough)
                .map_or("not yet".into(), |t| human(time_unit.show(t)));
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td class=\"num\">{breakthrough}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
                 <td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                escape(&results.wells[w].name),
                last(Measure::WaterCut),
                last(Measure::OilRate),
                last(Measure::WaterRate),
                last(Measure::CumulativeOil),
                last(Measure::CumulativeWater),
            );
        }
        s.push_str(
            "</table>\n<p class=\"note\">Breakthrough: when a producer's water cut first rose 0.01 above its water \
             cut over its first producing step, interpolated between the ends of the two steps around it.</p>\n",
        );
    }
}

/// One chart with its heading and caption, or the `empty` note in its
/// place.
fn figure(s: &mut String, chart: Option<LineChart>, title: &str, empty: &str, caption: &str) {
    let _ = writeln!(s, "<figure>\n<h3>{}</h3>", escape(title));
    match chart {
        Some(chart) => s.push_str(&chart.render()),
        None => {
            let _ = writeln!(s, "<p class=\"empty\">{}</p>", escape(empty));
        }
    }
    let _ = writeln!(s, "<figcaption>{caption}</figcaption>\n</figure>");
}
