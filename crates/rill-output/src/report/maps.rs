//! The report's maps by layer: the cell pressures at the last report time,
//! and in an oil-water run the water saturations at the report times the
//! writer kept (`oil_water.rs` says which). Both are drawn in one frame:
//! the same block edges, the same well marks, the same notes on the
//! layers and blocks shown.

use std::fmt::Write as _;

use super::{Report, MAP_CELL_LIMIT, MAX_LAYER_MAPS};
use crate::layers::{
    block_size, chosen_layers, colour_range, layer_maps, min_pressure_span, value_range,
};
use crate::oil_water::saturation_cell_limit;
use crate::svg::{colour_bar, HeatMap, Palette};
use crate::text::{escape, human};
use crate::units::{display_unit, Quantity, Unit};

/// The smallest span of the saturation colour scale: a spread of water
/// saturation below 0.05 is within what relative permeability curves are
/// measured to, and drawn across the whole ramp it would look like a front.
const MIN_SATURATION_SPAN: f64 = 0.05;

/// Where the maps of one block size are drawn: block edges in the display
/// length unit.
struct Frame {
    length: Unit,
    block: usize,
    x_edges: Vec<f64>,
    y_edges: Vec<f64>,
}

impl Report<'_> {
    /// The frame of maps averaged over blocks of `block` x `block` columns.
    fn frame(&self, block: usize) -> Frame {
        let grid = &self.case.grid;
        let length = display_unit(Quantity::Length, self.case.report.units);
        let edges = |widths: &[f64], b: usize| -> Vec<f64> {
            let mut out = vec![0.0];
            let mut acc = 0.0;
            for (n, w) in widths.iter().enumerate() {
                acc += w / length.factor;
                if (n + 1) % b == 0 || n + 1 == widths.len() {
                    out.push(acc);
                }
            }
            out
        };
        Frame {
            x_edges: edges(&grid.dx, block),
            y_edges: edges(&grid.dy, block),
            length,
            block,
        }
    }

    /// The well completions in layer `k`, at their cell centres.
    fn marks_in(&self, k: usize, length: &Unit) -> Vec<(f64, f64, String)> {
        let grid = &self.case.grid;
        let centre = |widths: &[f64], n: usize| {
            (widths[..n].iter().sum::<f64>() + 0.5 * widths[n]) / length.factor
        };
        let mut marks = Vec::new();
        for well in &self.case.wells {
            for c in well
                .completions
                .iter()
                .filter(|c| c.k == k && c.i < grid.nx && c.j < grid.ny)
            {
                marks.push((
                    centre(&grid.dx, c.i),
                    centre(&grid.dy, c.j),
                    well.name.clone(),
                ));
            }
        }
        marks
    }

    /// The notes on the layers shown (when not all) and on block averages
    /// (when the blocks are larger than a column, `limit` blocks per map).
    fn frame_notes(&self, s: &mut String, layers: &[usize], frame: &Frame, limit: usize) {
        let grid = &self.case.grid;
        let (nx, ny, nz) = (grid.nx, grid.ny, grid.nz);
        if layers.len() < nz {
            let list: Vec<String> = layers.iter().map(|k| (k + 1).to_string()).collect();
            let _ = writeln!(
                s,
                "<p class=\"note\">Showing {} of {nz} layers, evenly spaced from top to bottom: {}. \
                 Every layer is in the VTK maps (<code>maps/rill.pvd</code>).</p>",
                layers.len(),
                list.join(", ")
            );
        }
        let block = frame.block;
        if block > 1 {
            let (bx, by) = (nx.div_ceil(block), ny.div_ceil(block));
            let _ = writeln!(
                s,
                "<p class=\"note\">Each layer has {} columns, more than the {} drawn per map: the maps show \
                 area-weighted averages over blocks of {block} × {block} columns ({bx} × {by} blocks). \
                 The VTK maps keep every cell.</p>",
                human((nx * ny) as f64),
                human(limit as f64)
            );
        }
    }

    pub(super) fn maps(&self, s: &mut String) {
        let case = self.case;
        let grid = &case.grid;
        let results = self.results;
        let system = case.report.units;
        let p_unit = display_unit(Quantity::Pressure, system);
        let time = self.table.time();
        s.push_str("<section>\n<h2>Pressure maps by layer</h2>\n");
        let Some(pressure) = results.pressure.last() else {
            s.push_str("<p class=\"empty\">The run stored no cell pressures, so there are no maps.</p>\n</section>\n");
            return;
        };
        let t_end = time.values.last().copied().unwrap_or(0.0);
        let layers = chosen_layers(grid.nz, MAX_LAYER_MAPS);
        let frame = self.frame(block_size(grid.nx, grid.ny, MAP_CELL_LIMIT));
        let length = &frame.length;

        let maps = layer_maps(case, pressure, &layers, frame.block, &p_unit, length);
        let range = colour_range(&maps, min_pressure_span(&p_unit));

        let _ = writeln!(
            s,
            "<p class=\"note\">Cell pressure at {} {} (the last report time), one map per layer seen from above, \
             on one colour scale (min {} and max {} {} over the layers shown). Colour ramp: rill slate-to-amber.</p>",
            human(t_end),
            escape(&time.unit.name),
            human(range.0),
            human(range.1),
            escape(&p_unit.name)
        );
        self.frame_notes(s, &layers, &frame, MAP_CELL_LIMIT);
        s.push_str(&colour_bar(
            range,
            &format!("Pressure [{}]", p_unit.name),
            Palette::SlateToAmber,
        ));
        s.push_str("<div class=\"maps\">\n");
        let max_px = if layers.len() == 1 { 640.0 } else { 430.0 };
        for (k, values, mean_depth) in &maps {
            let title = format!("Layer {}", k + 1);
            let marks = self.marks_in(*k, length);
            let map = HeatMap {
                title: &title,
                x_edges: &frame.x_edges,
                y_edges: &frame.y_edges,
                values,
                range,
                length_unit: &length.name,
                max_px,
                marks: &marks,
                palette: Palette::SlateToAmber,
            };
            let span = match span_of(values) {
                Some((lo, hi)) => format!("{} – {} {}", human(lo), human(hi), escape(&p_unit.name)),
                None => "no active cells".to_string(),
            };
            let _ = writeln!(
                s,
                "<figure>\n<h3>{}</h3>\n{}<figcaption>centre depth ≈ {} {} (mean) · {span}</figcaption>\n</figure>",
                escape(&title),
                map.render(),
                human(*mean_depth),
                escape(&length.name)
            );
        }
        s.push_str("</div>\n</section>\n");
    }

    /// Oil-water runs: the water saturation per layer at each report time
    /// the writer kept, on one colour scale, a row of layers per time.
    pub(super) fn saturation_maps(&self, s: &mut String) {
        if self.results.oil_water.is_none() {
            return;
        }
        let grid = &self.case.grid;
        let time = self.table.time();
        let time_unit = display_unit(Quantity::Time, self.case.report.units);
        s.push_str("<section>\n<h2>Water saturation maps by layer</h2>\n");
        let Some(first) = self.saturation.first() else {
            s.push_str(
                "<p class=\"empty\">The run stored no water saturations, so there are no saturation maps.</p>\n</section>\n",
            );
            return;
        };
        let layers: Vec<usize> = first.layers.iter().map(|(k, _)| *k).collect();
        let frame = self.frame(block_size(grid.nx, grid.ny, saturation_cell_limit()));
        let length = &frame.length;
        let range = value_range(
            self.saturation
                .iter()
                .flat_map(|snap| snap.layers.iter().flat_map(|(_, v)| v.iter().flatten())),
            MIN_SATURATION_SPAN,
        );
        let times: Vec<String> = self
            .saturation
            .iter()
            .map(|snap| human(time_unit.show(snap.time)))
            .collect();
        let _ = writeln!(
            s,
            "<p class=\"note\">Water saturation (the fraction of the pore space filled with water, the rest \
             being oil) at {} {}: the first and the last of the run's {} report times and up to two spread \
             evenly between. One map per layer seen from above, on one colour scale (min {} and max {} over \
             the maps shown). Colour ramp: rill umber-to-tide, dark where oil remains and pale where water \
             has swept.</p>",
            times.join(", "),
            escape(&time.unit.name),
            self.table.rows(),
            human(range.0),
            human(range.1),
        );
        self.frame_notes(s, &layers, &frame, saturation_cell_limit());
        s.push_str(&colour_bar(
            range,
            "Water saturation [-]",
            Palette::UmberToTide,
        ));
        // Three maps to a row on a wide page: a row per report time reads
        // as one picture of the flood.
        let max_px = if layers.len() == 1 { 400.0 } else { 250.0 };
        for (snap, shown) in self.saturation.iter().zip(&times) {
            let _ = writeln!(
                s,
                "<h3 style=\"margin-top:18px\">At {shown} {}</h3>\n<div class=\"maps\">",
                escape(&time.unit.name)
            );
            for (k, values) in &snap.layers {
                let title = format!("Layer {} at {shown} {}", k + 1, time.unit.name);
                let marks = self.marks_in(*k, length);
                let map = HeatMap {
                    title: &title,
                    x_edges: &frame.x_edges,
                    y_edges: &frame.y_edges,
                    values,
                    range,
                    length_unit: &length.name,
                    max_px,
                    marks: &marks,
                    palette: Palette::UmberToTide,
                };
                let span = match span_of(values) {
                    Some((lo, hi)) => format!("sw {} – {}", human(lo), human(hi)),
                    None => "no active cells".to_string(),
                };
                let _ = writeln!(
                    s,
                    "<figure>\n<h3>Layer {}</h3>\n{}<figcaption>{span}</figcaption>\n</figure>",
                    k + 1,
                    map.render(),
                );
            }
            s.push_str("</div>\n");
        }
        s.push_str("</section>\n");
    }
}

/// The lowest and highest value drawn, `None` when nothing is.
fn span_of(values: &[Option<f64>]) -> Option<(f64, f64)> {
    let (lo, hi) = values
        .iter()
        .flatten()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    lo.is_finite().then_some((lo, hi))
}
