//! The aquifers in the report: their rate and cumulative lines beside the
//! wells' and boundaries', a chart of their pressures, and a table of their
//! last values. Kept apart so that the report's layout stays readable.

use std::fmt::Write as _;

use super::Report;
use crate::series::{Measure, Owner};
use crate::svg::Line;
use crate::text::{escape, human};
use crate::units::{display_unit, Quantity};

/// The chart-drawing closure of `Report::charts`: title, y label, lines, caption.
pub(super) type Chart<'c> = dyn Fn(&mut String, &str, String, Vec<Line>, Option<f64>, String) + 'c;

impl Report<'_> {
    /// The aquifers' names with their kind, as the charts' legends show them.
    pub(super) fn aquifer_labels(&self) -> Vec<String> {
        self.results
            .aquifers
            .iter()
            .map(|a| format!("{} (aquifer)", a.name))
            .collect()
    }

    /// One line per aquifer of the series `measure`, styled from `first`
    /// on (after the wells and boundaries).
    pub(super) fn aquifer_lines<'l>(
        &'l self,
        labels: &'l [String],
        measure: Measure,
        first: usize,
    ) -> Vec<Line<'l>> {
        labels
            .iter()
            .enumerate()
            .filter_map(|(a, label)| {
                let c = self.table.find(Some(Owner::Aquifer(a)), measure)?;
                Some(Line {
                    name: label,
                    ys: &c.values,
                    style: first + a,
                    // A rate holds over the step that ends at its report time.
                    steps: measure == Measure::Rate,
                })
            })
            .collect()
    }

    /// The chart of the aquifers' pressures, when there are aquifers.
    pub(super) fn aquifer_chart(&self, s: &mut String, chart: &Chart, labels: &[String]) {
        if labels.is_empty() {
            return;
        }
        let p_unit = display_unit(Quantity::Pressure, self.case.report.units);
        chart(
            s,
            "Aquifer pressure",
            format!("Pressure [{}]", p_unit.name),
            self.aquifer_lines(labels, Measure::Pressure, 0),
            Some(crate::layers::min_pressure_span(&p_unit)),
            "Each aquifer's pressure at the mean depth of its faces; it falls by the influx over c_t W_i.".into(),
        );
    }

    /// The aquifers' last rate, cumulative and pressure, at `t_end`.
    pub(super) fn aquifer_table(&self, s: &mut String, t_end: f64) {
        let results = self.results;
        if results.aquifers.is_empty() {
            return;
        }
        let system = self.case.report.units;
        let unit = |q| display_unit(q, system);
        let _ = writeln!(
            s,
            "<h3 style=\"margin-top:14px\">Aquifers at {} {}</h3>\n<table>\n<tr><th>Aquifer</th><th>Side</th>\
             <th class=\"num\">Rate [{}]</th><th class=\"num\">Cumulative [{}]</th><th class=\"num\">Pressure [{}]</th></tr>",
            human(t_end),
            escape(&self.table.time().unit.name),
            escape(&unit(Quantity::SurfaceRate).name),
            escape(&unit(Quantity::SurfaceVolume).name),
            escape(&unit(Quantity::Pressure).name),
        );
        for (a, aq) in results.aquifers.iter().enumerate() {
            let side = self
                .case
                .aquifers
                .iter()
                .find(|ca| ca.name == aq.name)
                .map_or("–", |ca| ca.side.name());
            let last = |m| {
                self.table
                    .find(Some(Owner::Aquifer(a)), m)
                    .and_then(|c| c.values.last().copied())
                    .map_or("–".into(), human)
            };
            let _ = writeln!(
                s,
                "<tr><td>{}</td><td>{side}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                escape(&aq.name),
                last(Measure::Rate),
                last(Measure::Cumulative),
                last(Measure::Pressure),
            );
        }
        s.push_str("</table>\n");
    }
}
