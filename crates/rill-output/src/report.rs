//! `report.html`: one self-contained page (inline CSS and SVG, no scripts,
//! no external resources) with the caution, a summary, the timeline of
//! well events (`timeline.rs`), plots of rates,
//! cumulatives, BHP and average pressure, and pressure maps per layer.
//!
//! Size limits for large grids: at most [`MAX_LAYER_MAPS`] layer maps, chosen
//! evenly from top to bottom (the page says which); a layer with more than
//! [`MAP_CELL_LIMIT`] columns is drawn as area-weighted block averages of
//! `b x b` columns so that each map has at most [`MAP_CELL_LIMIT`] blocks.
//! The VTK maps keep every cell. The layer choice, block averages and
//! colour scale are in `layers.rs`.

use std::fmt::Write as _;
use std::io::{self, Write};

use rill_model::{Case, Control, Role};
use rill_sim::{ControlMode, RunResults};

use crate::json::mode_name;
use crate::layers::min_pressure_span;
#[cfg(test)]
pub(crate) use crate::layers::{block_size, chosen_layers};
use crate::series::{Measure, Owner, SeriesTable};
use crate::svg::{Line, LineChart};
use crate::text::{escape, human};
use crate::units::{display_unit, system_name, Quantity};
use crate::RunMeta;

mod aquifers;
mod maps;
mod oil_water;

/// Most layer maps shown.
pub(crate) const MAX_LAYER_MAPS: usize = 12;
/// Most cells (or blocks) drawn per layer map.
pub(crate) const MAP_CELL_LIMIT: usize = 20_000;
/// Most wells drawn in one chart (the largest by final cumulative volume).
pub(crate) const MAX_WELL_LINES: usize = 12;

/// The caution shown at the top of every report and first in `series.json`.
pub const CAUTION: &str =
    "Results are engineering estimates from a simplified model: one slightly \
compressible liquid on a rectilinear grid, with the properties given in the deck. They support, \
and do not replace, professional judgement. Injection limits, fracture pressure and any well work \
must follow local regulations and be decided by licensed engineers.";

/// [`CAUTION`] for an oil-water run, whose model is another.
pub const CAUTION_OIL_WATER: &str =
    "Results are engineering estimates from a simplified model: oil and water \
as two immiscible, slightly compressible liquids on a rectilinear grid, with the properties and \
saturation functions given in the deck. They support, and do not replace, professional judgement. \
Injection limits, fracture pressure and any well work must follow local regulations and be decided \
by licensed engineers.";

/// The caution that heads the report and `series.json` of `results`:
/// [`CAUTION_OIL_WATER`] for an oil-water run, else [`CAUTION`].
pub fn standing_caution(results: &RunResults) -> &'static str {
    if results.oil_water.is_some() {
        CAUTION_OIL_WATER
    } else {
        CAUTION
    }
}

pub(crate) struct Report<'a> {
    pub case: &'a Case,
    pub results: &'a RunResults,
    pub meta: &'a RunMeta,
    pub table: &'a SeriesTable,
    pub title: &'a str,
    /// The case's name (`case "..."`), when the deck gives one.
    pub case_name: Option<&'a str>,
    /// Every caution, [`CAUTION`] first.
    pub cautions: &'a [String],
    /// Relative paths of the other files in the result set.
    pub files: &'a [String],
    /// An oil-water run's water saturations at the report times the
    /// writer kept for the report (none for a single-phase run).
    pub saturation: &'a [crate::oil_water::Snapshot],
}

pub(crate) fn write_report(w: &mut dyn Write, r: &Report) -> io::Result<()> {
    let page = r.page();
    w.write_all(page.as_bytes())
}

const STYLE: &str = r#"
:root { --ink: #1f2933; --muted: #5b6770; --rule: #d9dde1; --band: #24364b; --accent: #b86e00; }
* { box-sizing: border-box; }
body { margin: 0; font: 14px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, "Noto Sans", "DejaVu Sans", sans-serif; color: var(--ink); background: #f6f7f8; }
header { background: var(--band); color: #fff; padding: 22px 32px 18px; }
header h1 { margin: 0 0 4px; font-size: 24px; font-weight: 600; letter-spacing: .01em; overflow-wrap: anywhere; }
header .title { color: #e4e9ee; font-size: 15px; margin: 0 0 4px; overflow-wrap: anywhere; }
header .sub { color: #c9d3dd; font-size: 13px; overflow-wrap: anywhere; }
main { max-width: 1160px; margin: 0 auto; padding: 18px 24px 40px; }
section { background: #fff; border: 1px solid var(--rule); border-radius: 6px; padding: 16px 20px 18px; margin: 16px 0; }
h2 { font-size: 17px; margin: 0 0 10px; font-weight: 600; }
h3 { font-size: 14px; margin: 0 0 6px; font-weight: 600; }
.caution { border: 1px solid #e3b35c; border-left: 6px solid var(--accent); background: #fff6e6; border-radius: 6px; padding: 12px 16px; margin: 18px 0 6px; }
.caution strong { color: #7a4700; font-size: 15px; display: block; margin-bottom: 2px; }
.caution ul { margin: 8px 0 0; padding-left: 20px; }
table { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
th, td { text-align: left; padding: 5px 10px 5px 0; border-bottom: 1px solid #edf0f2; vertical-align: top; }
th { font-weight: 600; color: var(--muted); font-size: 12px; text-transform: none; }
td.num, th.num { text-align: right; padding-right: 14px; white-space: nowrap; }
.kv { display: grid; grid-template-columns: repeat(auto-fit, minmax(320px, 1fr)); gap: 4px 32px; }
.kv table td:first-child { color: var(--muted); width: 36%; }
.charts { display: grid; grid-template-columns: repeat(auto-fit, minmax(480px, 1fr)); gap: 14px 28px; }
figure { margin: 0; }
figcaption { font-size: 12px; color: var(--muted); margin-top: 2px; }
svg { max-width: 100%; height: auto; font-family: inherit; }
svg .tick { font-size: 11px; fill: #4b5563; }
svg .axis-label { font-size: 12px; fill: #1f2933; }
svg .legend-text { font-size: 12px; fill: #1f2933; }
svg .mark-text { font-size: 11px; font-weight: 600; fill: #111827; }
.maps { display: flex; flex-wrap: wrap; gap: 14px 22px; align-items: flex-start; }
.maps figure { flex: 0 0 auto; }
.note { color: var(--muted); font-size: 12.5px; }
.empty { color: var(--muted); font-style: italic; }
footer { color: var(--muted); font-size: 12px; text-align: center; padding: 8px 0 24px; }
code { font-family: ui-monospace, "SFMono-Regular", Menlo, Consolas, "DejaVu Sans Mono", monospace; font-size: 12.5px; }
@media print { body { background: #fff; } section { border: none; padding: 0; } header { background: #fff; color: var(--ink); } header .sub { color: var(--muted); } }
"#;

impl Report<'_> {
    /// The page's heading (the case's name, else the title) and the title
    /// under it when it says something else.
    fn heading(&self) -> (&str, Option<&str>) {
        match self.case_name {
            Some(name) if name != self.title => (name, Some(self.title)),
            Some(name) => (name, None),
            None => (self.title, None),
        }
    }

    fn page(&self) -> String {
        let mut s = String::with_capacity(1 << 16);
        let system = self.case.report.units;
        let (heading, subtitle) = self.heading();
        let full = match subtitle {
            Some(t) => format!("{heading}: {t}"),
            None => heading.to_string(),
        };
        let _ = write!(
            s,
            "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
             <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
             <meta name=\"generator\" content=\"rill {}\">\n<title>{} — rill report</title>\n<style>{STYLE}</style>\n</head>\n<body>\n",
            escape(&self.meta.rill_version),
            escape(&full)
        );
        let _ = write!(
            s,
            "<header>\n<h1>{}</h1>\n{}<div class=\"sub\">Deck <code>{}</code> · units: {} · rill {}{}</div>\n</header>\n<main>\n",
            escape(heading),
            subtitle
                .map(|t| format!("<div class=\"title\">{}</div>\n", escape(t)))
                .unwrap_or_default(),
            escape(&self.meta.deck.display().to_string()),
            system_name(system),
            escape(&self.meta.rill_version),
            self.meta.started.as_deref().map(|t| format!(" · run {}", escape(t))).unwrap_or_default()
        );
        self.caution(&mut s);
        self.summary(&mut s);
        crate::timeline::section(self.case, self.results, &mut s);
        self.charts(&mut s);
        self.oil_water_charts(&mut s);
        self.maps(&mut s);
        self.saturation_maps(&mut s);
        self.notes(&mut s);
        let _ = write!(
            s,
            "</main>\n<footer>Written by rill {} · a self-contained page: no scripts, no external resources.</footer>\n</body>\n</html>\n",
            escape(&self.meta.rill_version)
        );
        s
    }

    fn caution(&self, s: &mut String) {
        s.push_str("<div class=\"caution\" role=\"note\">\n<strong>⚠ Caution</strong>\n");
        let _ = writeln!(s, "<div>{}</div>", escape(&self.cautions[0]));
        if self.cautions.len() > 1 {
            s.push_str("<ul>\n");
            for c in &self.cautions[1..] {
                let _ = writeln!(s, "<li>{}</li>", escape(c));
            }
            s.push_str("</ul>\n");
        }
        s.push_str("</div>\n");
    }

    fn summary(&self, s: &mut String) {
        let case = self.case;
        let grid = &case.grid;
        let results = self.results;
        let system = case.report.units;
        let time = self.table.time();
        let n = self.table.rows();
        let active = (0..grid.cell_count())
            .filter(|&c| case.rock.is_active(c))
            .count();
        let balance_max = results
            .balance_error
            .iter()
            .filter(|v| v.is_finite())
            .fold(0.0f64, |m, v| m.max(v.abs()));
        let stats = &results.stats;
        let t_end = time.values.last().copied().unwrap_or(0.0);

        s.push_str("<section>\n<h2>Summary</h2>\n<div class=\"kv\">\n<table>\n");
        let row = |s: &mut String, k: &str, v: String| {
            let _ = writeln!(s, "<tr><td>{k}</td><td>{v}</td></tr>");
        };
        let (heading, subtitle) = self.heading();
        row(s, "Case", escape(heading));
        if let Some(t) = subtitle {
            row(s, "Title", escape(t));
        }
        row(
            s,
            "Deck",
            format!(
                "<code>{}</code>",
                escape(&self.meta.deck.display().to_string())
            ),
        );
        row(
            s,
            "Grid",
            format!(
                "{} × {} × {} = {} cells ({} active)",
                grid.nx,
                grid.ny,
                grid.nz,
                human(grid.cell_count() as f64),
                human(active as f64)
            ),
        );
        row(s, "Report units", system_name(system).to_string());
        row(
            s,
            "Report times",
            format!(
                "{n}, from {} to {} {}",
                human(time.values[0]),
                human(t_end),
                escape(&time.unit.name)
            ),
        );
        row(
            s,
            "Balance error, largest",
            format!("{} (relative)", sci(balance_max)),
        );
        s.push_str("</table>\n<table>\n");
        let row = |s: &mut String, k: &str, v: String| {
            let _ = writeln!(s, "<tr><td>{k}</td><td>{v}</td></tr>");
        };
        row(
            s,
            "Time steps",
            format!("{} ({} cut)", stats.steps, stats.step_cuts),
        );
        let per_step = if stats.steps > 0 {
            format!(
                " ({:.1} per step)",
                stats.newton_iterations as f64 / stats.steps as f64
            )
        } else {
            String::new()
        };
        row(
            s,
            "Newton iterations",
            format!("{}{per_step}", stats.newton_iterations),
        );
        row(s, "Linear iterations", stats.linear_iterations.to_string());
        row(s, "Linear solver", escape(&stats.linear_solver));
        row(
            s,
            "Solver wall time",
            format!("{} s", human(stats.wall_seconds)),
        );
        if let Some(wall) = self.meta.wall_seconds {
            row(s, "Run wall time", format!("{} s", human(wall)));
        }
        s.push_str("</table>\n</div>\n");

        self.end_tables(s, t_end);
        self.oil_water_tables(s, t_end);
        s.push_str(
            "<p class=\"note\">Rates and cumulatives are at surface conditions; positive for production \
             (out of the reservoir), negative for injection or inflow.",
        );
        if results.oil_water.is_some() {
            s.push_str(
                " In this oil-water run a well's rate and cumulative are its liquid, oil plus water.",
            );
        }
        s.push_str("</p>\n</section>\n");
    }

    /// The wells' and boundaries' last rates, pressures and cumulatives, at
    /// `t_end` (the last report time, in report units).
    fn end_tables(&self, s: &mut String, t_end: f64) {
        let case = self.case;
        let results = self.results;
        let system = case.report.units;
        let time = self.table.time();
        let p_unit = display_unit(Quantity::Pressure, system);
        let q_unit = display_unit(Quantity::SurfaceRate, system);
        let v_unit = display_unit(Quantity::SurfaceVolume, system);
        if results.wells.is_empty() {
            s.push_str("<p class=\"empty\">No wells in this case.</p>\n");
        } else {
            let _ = writeln!(
                s,
                "<h3 style=\"margin-top:14px\">Wells at {} {}</h3>\n<table>\n<tr><th>Well</th><th>Role</th><th>Control</th>\
                 <th class=\"num\">Rate [{}]</th><th class=\"num\">BHP [{}]</th><th class=\"num\">Cumulative [{}]</th></tr>",
                human(t_end),
                escape(&time.unit.name),
                escape(&q_unit.name),
                escape(&p_unit.name),
                escape(&v_unit.name)
            );
            for (w, well) in results.wells.iter().enumerate() {
                let last = |m| {
                    self.table
                        .find(Some(Owner::Well(w)), m)
                        .and_then(|c| c.values.last().copied())
                };
                let role = case
                    .wells
                    .iter()
                    .find(|cw| cw.name == well.name)
                    .map_or("–", |cw| match cw.role {
                        Role::Producer => "producer",
                        Role::Injector => "injector",
                    });
                let _ = writeln!(
                    s,
                    "<tr><td>{}</td><td>{role}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                    escape(&well.name),
                    well.mode.last().map_or("–", |m| mode_name(*m)),
                    last(Measure::Rate).map_or("–".into(), human),
                    last(Measure::Bhp).map_or("–".into(), human),
                    last(Measure::Cumulative).map_or("–".into(), human),
                );
            }
            s.push_str("</table>\n");
        }
        if !results.boundaries.is_empty() {
            let _ = writeln!(
                s,
                "<h3 style=\"margin-top:14px\">Boundaries at {} {}</h3>\n<table>\n<tr><th>Boundary</th><th>Side</th>\
                 <th class=\"num\">Rate [{}]</th><th class=\"num\">Cumulative [{}]</th></tr>",
                human(t_end),
                escape(&time.unit.name),
                escape(&q_unit.name),
                escape(&v_unit.name)
            );
            for (n, b) in results.boundaries.iter().enumerate() {
                let last = |m| {
                    self.table
                        .find(Some(Owner::Boundary(n)), m)
                        .and_then(|c| c.values.last().copied())
                };
                let side = case
                    .boundaries
                    .iter()
                    .find(|cb| cb.name == b.name)
                    .map_or("–", |cb| cb.side.name());
                let _ = writeln!(
                    s,
                    "<tr><td>{}</td><td>{side}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>",
                    escape(&b.name),
                    last(Measure::Rate).map_or("–".into(), human),
                    last(Measure::Cumulative).map_or("–".into(), human),
                );
            }
            s.push_str("</table>\n");
        }
        self.aquifer_table(s, t_end);
    }

    /// The wells drawn in the charts: all, or the largest by final
    /// |cumulative| (in well order); with the caption's note when capped.
    fn shown_wells(&self) -> (Vec<usize>, String) {
        let results = self.results;
        let mut shown: Vec<usize> = (0..results.wells.len()).collect();
        let capped = shown.len() > MAX_WELL_LINES;
        if capped {
            let size = |w: usize| results.wells[w].cumulative.last().map_or(0.0, |v| v.abs());
            shown.sort_by(|&a, &b| size(b).total_cmp(&size(a)));
            shown.truncate(MAX_WELL_LINES);
            shown.sort_unstable();
        }
        let cap_note = if capped {
            format!(
                " Showing the {MAX_WELL_LINES} of {} wells with the largest cumulative volume; all are in <code>series.csv</code>.",
                results.wells.len()
            )
        } else {
            String::new()
        };
        (shown, cap_note)
    }

    // The four charts are set up side by side so that their series, axes
    // and captions read together; split, each part would need them all.
    #[allow(clippy::too_many_lines)]
    fn charts(&self, s: &mut String) {
        let results = self.results;
        let system = self.case.report.units;
        let time = self.table.time();
        let x_label = format!("Time [{}]", time.unit.name);
        let q_unit = display_unit(Quantity::SurfaceRate, system);
        let v_unit = display_unit(Quantity::SurfaceVolume, system);
        let p_unit = display_unit(Quantity::Pressure, system);

        let (shown, cap_note) = self.shown_wells();
        let boundary_labels: Vec<String> = results
            .boundaries
            .iter()
            .map(|b| format!("{} (boundary)", b.name))
            .collect();
        let nw = shown.len();

        let well_lines = |m: Measure| -> Vec<Line> {
            shown
                .iter()
                .enumerate()
                .filter_map(|(n, &w)| {
                    self.table.find(Some(Owner::Well(w)), m).map(|c| Line {
                        name: &results.wells[w].name,
                        ys: &c.values,
                        style: n,
                        steps: m == Measure::Rate,
                    })
                })
                .collect()
        };
        let mut rate_lines = well_lines(Measure::Rate);
        for (b, label) in boundary_labels.iter().enumerate() {
            if let Some(c) = self.table.find(Some(Owner::Boundary(b)), Measure::Rate) {
                rate_lines.push(Line {
                    name: label,
                    ys: &c.values,
                    style: nw + b,
                    steps: true,
                });
            }
        }
        let mut cum_lines = well_lines(Measure::Cumulative);
        for (b, label) in boundary_labels.iter().enumerate() {
            if let Some(c) = self
                .table
                .find(Some(Owner::Boundary(b)), Measure::Cumulative)
            {
                cum_lines.push(Line {
                    name: label,
                    ys: &c.values,
                    style: nw + b,
                    steps: false,
                });
            }
        }
        let aq_labels = self.aquifer_labels();
        let nb = boundary_labels.len();
        rate_lines.extend(self.aquifer_lines(&aq_labels, Measure::Rate, nw + nb));
        cum_lines.extend(self.aquifer_lines(&aq_labels, Measure::Cumulative, nw + nb));
        let bhp_lines = well_lines(Measure::Bhp);
        let avg = self
            .table
            .find(None, Measure::PressureAvg)
            .expect("always present");

        s.push_str("<section>\n<h2>Time series</h2>\n<div class=\"charts\">\n");
        let p_span = min_pressure_span(&p_unit);
        let chart = |s: &mut String,
                     title: &str,
                     y_label: String,
                     lines: Vec<Line>,
                     min_span: Option<f64>,
                     caption: String| {
            s.push_str("<figure>\n<h3>");
            s.push_str(&escape(title));
            s.push_str("</h3>\n");
            if lines.is_empty() {
                s.push_str("<p class=\"empty\">Nothing to plot: no wells or boundaries.</p>\n");
            } else {
                let chart = LineChart {
                    title,
                    x_label: &x_label,
                    y_label: &y_label,
                    xs: &time.values,
                    lines,
                    min_span,
                    y_cover: None,
                };
                s.push_str(&chart.render());
            }
            let _ = writeln!(s, "<figcaption>{caption}</figcaption>\n</figure>");
        };
        let liquid = if results.oil_water.is_some() {
            " Wells: liquid, oil plus water."
        } else {
            ""
        };
        chart(
            s,
            "Surface rates",
            format!("Rate [{}]", q_unit.name),
            rate_lines,
            None,
            format!("Positive: production; negative: injection or inflow. Boundaries dashed after the wells. \
                     Each rate is drawn as a step: the value at a report time held over the interval that ends there.{liquid}{cap_note}"),
        );
        chart(
            s,
            "Cumulative volumes",
            format!("Cumulative [{}]", v_unit.name),
            cum_lines,
            None,
            format!("At surface conditions.{liquid}{cap_note}"),
        );
        chart(
            s,
            "Bottom-hole pressure",
            format!("BHP [{}]", p_unit.name),
            bhp_lines,
            Some(p_span),
            format!("At each well's datum.{cap_note}"),
        );
        chart(
            s,
            "Average reservoir pressure",
            format!("Pressure [{}]", p_unit.name),
            vec![Line {
                name: "pore-volume weighted average",
                ys: &avg.values,
                style: 0,
                steps: false,
            }],
            Some(p_span),
            String::new(),
        );
        self.aquifer_chart(s, &chart, &aq_labels);
        s.push_str("</div>\n</section>\n");
    }

    fn notes(&self, s: &mut String) {
        s.push_str("<section>\n<h2>About these results</h2>\n<ul class=\"note\">\n");
        let _ = writeln!(
            s,
            "<li>Series at every report time with full precision: <code>series.csv</code> and <code>series.json</code> \
             (units: {}).</li>",
            system_name(self.case.report.units)
        );
        if self.files.iter().any(|f| f.ends_with(".pvd")) {
            let steps = self
                .files
                .iter()
                .filter(|f| f.ends_with(".vtr") || f.ends_with(".vts"))
                .count();
            let _ = writeln!(
                s,
                "<li>3-D maps for ParaView: <code>maps/rill.pvd</code> ({steps} report times). z is elevation (−depth); \
                 a grid whose layers dip is written with its corner points (each at the mean depth of the columns \
                 around it), and the cell array <code>depth</code> holds the depth of each cell centre.{}</li>",
                if self.results.oil_water.is_some() {
                    " Beside the (oil) <code>pressure</code>, each holds the water and oil saturations \
                     <code>sw</code> and <code>so</code>."
                } else {
                    ""
                }
            );
        }
        s.push_str(
            "<li>Plots and maps are drawn by rill's own small SVG code; the maps are seen from above with \
             x to the east (i) and y to the north (j). White dots mark well completions in the layer.</li>\n</ul>\n</section>\n",
        );
    }
}

/// Scientific notation for small diagnostics like the balance error.
fn sci(x: f64) -> String {
    if x == 0.0 {
        "0".into()
    } else {
        let s = format!("{x:.2e}");
        crate::text::trim_zeros(s.split('e').next().unwrap_or(""))
            + "e"
            + s.split('e').nth(1).unwrap_or("0")
    }
}

/// Cautions that the results themselves call for, after [`CAUTION`] and the
/// caller's own: a rate-controlled well that ran on its BHP limit, a large
/// balance error, values that are not finite.
pub(crate) fn derived_cautions(
    case: &Case,
    results: &RunResults,
    table: &SeriesTable,
) -> Vec<String> {
    let mut out = Vec::new();
    let time = table.time();
    for well in &results.wells {
        let Some((w, cw)) = case
            .wells
            .iter()
            .enumerate()
            .find(|(_, cw)| cw.name == well.name)
        else {
            continue;
        };
        let bhp_ever_asked = matches!(cw.control, Control::Bhp(_))
            || case
                .timeline
                .events
                .iter()
                .flat_map(|e| &e.changes)
                .any(|c| c.well == w && matches!(c.control, Some(Control::Bhp(_))));
        if bhp_ever_asked {
            continue;
        }
        let on_bhp: Vec<usize> = (0..well.mode.len())
            .filter(|&n| well.mode[n] == ControlMode::Bhp)
            .collect();
        if let Some(&first) = on_bhp.first() {
            out.push(format!(
                "Well \"{}\" could not hold its target rate and ran on its BHP limit at {} of {} report times, from {} {}.",
                well.name,
                on_bhp.len(),
                well.mode.len(),
                human(time.values.get(first).copied().unwrap_or(f64::NAN)),
                time.unit.name
            ));
        }
    }
    let worst = results
        .balance_error
        .iter()
        .filter(|v| v.is_finite())
        .fold(0.0f64, |m, v| m.max(v.abs()));
    if worst > BALANCE_CAUTION {
        out.push(format!(
            "The relative mass balance error reached {} (above {}): treat the results with care.",
            sci(worst),
            sci(BALANCE_CAUTION)
        ));
    }
    let bad: Vec<&str> = table
        .columns
        .iter()
        .filter(|c| c.values.iter().any(|v| !v.is_finite()))
        .map(|c| c.name.as_str())
        .collect();
    if !bad.is_empty() {
        out.push(format!(
            "Some values are not finite (written as NaN or null) in: {}.",
            bad.join(", ")
        ));
    }
    out
}

/// Relative balance error above which the report warns.
pub(crate) const BALANCE_CAUTION: f64 = 1e-4;
