//! Hand-written SVG: line charts with nice ticks and a legend, tensor-grid
//! heat maps and a colour bar.
//!
//! This small plotting code is ours on purpose: a plotting crate would pull
//! in font rendering and a raster backend, while the report only needs a few
//! hundred lines of text output that the browser renders with its own fonts.
//!
//! The colours (ramps of the maps, series colours) are in `colours.rs`.

use std::fmt::Write as _;

#[cfg(test)]
pub(crate) use crate::colours::ramp;
pub(crate) use crate::colours::Palette;
use crate::colours::{hex, series_style, NO_DATA};
use crate::text::{ellipsize, escape, group_thousands, trim_zeros};

// ---- ticks ------------------------------------------------------------------

/// A "nice" number near `x`: 1, 2, 2.5 or 5 times a power of ten
/// (rounded, or the next one up when `round` is false).
fn nice(x: f64, round: bool) -> f64 {
    let exp = x.log10().floor();
    let f = x / 10f64.powf(exp);
    let nf = if round {
        if f < 1.5 {
            1.0
        } else if f < 2.25 {
            2.0
        } else if f < 3.5 {
            2.5
        } else if f < 7.5 {
            5.0
        } else {
            10.0
        }
    } else if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 2.5 {
        2.5
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    nf * 10f64.powf(exp)
}

/// Axis ticks covering `[min, max]` with about `target` intervals.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Ticks {
    pub lo: f64,
    pub hi: f64,
    pub step: f64,
    pub values: Vec<f64>,
}

impl Ticks {
    pub fn new(min: f64, max: f64, target: usize) -> Ticks {
        let (mut min, mut max) = if min.is_finite() && max.is_finite() {
            (min, max)
        } else {
            (0.0, 1.0)
        };
        if max < min {
            std::mem::swap(&mut min, &mut max);
        }
        if max - min <= 1e-12 * max.abs().max(min.abs()).max(1e-300) {
            let pad = if min == 0.0 { 1.0 } else { 0.05 * min.abs() };
            min -= pad;
            max += pad;
        }
        let range = nice(max - min, false);
        let step = nice(range / target.max(1) as f64, true);
        let lo = (min / step).floor() * step;
        let hi = (max / step).ceil() * step;
        let count = ((hi - lo) / step).round() as usize;
        let values = (0..=count)
            .map(|n| {
                let v = lo + n as f64 * step;
                if v.abs() < step * 1e-9 {
                    0.0
                } else {
                    v
                }
            })
            .collect();
        Ticks {
            lo,
            hi,
            step,
            values,
        }
    }

    /// The label of a tick value, with as many decimals as the step needs.
    pub fn label(&self, v: f64) -> String {
        let big = self.hi.abs().max(self.lo.abs());
        if self.step < 1e-4 || big >= 1e9 {
            let s = format!("{v:.2e}");
            return match s.split_once('e') {
                Some((m, e)) if v != 0.0 => format!("{}e{}", trim_zeros(m), e),
                _ => "0".into(),
            };
        }
        let exp = self.step.log10().floor();
        // A step of 2.5 times a power of ten needs one more decimal than the power says.
        let extra = i32::from(((self.step / 10f64.powf(exp)) - 2.5).abs() < 1e-9);
        let decimals = (extra - exp as i32).max(0) as usize;
        let s = format!("{v:.decimals$}");
        let s = if s.starts_with('-') && s[1..].bytes().all(|b| b == b'0' || b == b'.') {
            s[1..].to_string()
        } else {
            s
        };
        group_thousands(&s)
    }
}

// ---- line charts ------------------------------------------------------------

pub(crate) struct Line<'a> {
    pub name: &'a str,
    pub ys: &'a [f64],
    /// Index into the series styles.
    pub style: usize,
    /// Drawn as steps: `ys[n]` held over `(xs[n-1], xs[n]]` (a rate over
    /// the time step that ends at the report time); else straight lines
    /// between the points.
    pub steps: bool,
}

/// Widens `[lo, hi]` about its middle to at least `span` (finite bounds only).
pub(crate) fn widen(lo: f64, hi: f64, span: f64) -> (f64, f64) {
    if lo.is_finite() && hi.is_finite() && span.is_finite() && hi - lo < span {
        let mid = 0.5 * (lo + hi);
        (mid - 0.5 * span, mid + 0.5 * span)
    } else {
        (lo, hi)
    }
}

pub(crate) struct LineChart<'a> {
    pub title: &'a str,
    pub x_label: &'a str,
    pub y_label: &'a str,
    pub xs: &'a [f64],
    pub lines: Vec<Line<'a>>,
    /// The smallest span of the y axis, in its units (pressure axes: so
    /// that round-off does not fill the plot like a trend).
    pub min_span: Option<f64>,
    /// An interval the y axis covers whatever the data (fractions: from 0,
    /// and a water cut up to 1).
    pub y_cover: Option<(f64, f64)>,
}

const CHART_W: f64 = 540.0;
const PLOT_H: f64 = 250.0;
const M_LEFT: f64 = 78.0;
const M_RIGHT: f64 = 18.0;
const M_TOP: f64 = 14.0;
const M_BOTTOM: f64 = 46.0;
const LEGEND_ROW: f64 = 20.0;

impl LineChart<'_> {
    /// The chart as one `<svg>` element.
    pub fn render(&self) -> String {
        let finite = |v: &&f64| v.is_finite();
        let xmin = self
            .xs
            .iter()
            .filter(finite)
            .cloned()
            .fold(f64::INFINITY, f64::min);
        let xmax = self
            .xs
            .iter()
            .filter(finite)
            .cloned()
            .fold(f64::NEG_INFINITY, f64::max);
        let ys = self.lines.iter().flat_map(|l| l.ys.iter()).filter(finite);
        let (ymin, ymax) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
        let (ymin, ymax) = match self.min_span {
            Some(span) => widen(ymin, ymax, span),
            None => (ymin, ymax),
        };
        let (ymin, ymax) = match self.y_cover {
            Some((lo, hi)) => (ymin.min(lo), ymax.max(hi)),
            None => (ymin, ymax),
        };
        let xt = Ticks::new(xmin, xmax, 6);
        let yt = Ticks::new(ymin, ymax, 5);
        // Time starts at the first report time, not at a rounded-down tick.
        let (x0, x1) = if xmin.is_finite() && xmax > xmin {
            (xmin, xmax)
        } else {
            (xt.lo, xt.hi)
        };

        let plot_w = CHART_W - M_LEFT - M_RIGHT;
        let legend = legend_layout(&self.lines, plot_w);
        let legend_h = legend.last().map_or(0.0, |item| item.row as f64 + 1.0) * LEGEND_ROW;
        let height = M_TOP + PLOT_H + M_BOTTOM + legend_h + 6.0;
        let sx = |x: f64| M_LEFT + (x - x0) / (x1 - x0) * plot_w;
        let sy = |y: f64| M_TOP + PLOT_H - (y - yt.lo) / (yt.hi - yt.lo) * PLOT_H;

        let mut s = String::new();
        let _ = write!(
            s,
            "<svg class=\"chart\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {CHART_W} {height}\" \
             width=\"{CHART_W}\" height=\"{height}\" role=\"img\" aria-label=\"{}\">\n<title>{}</title>\n",
            escape(self.title),
            escape(self.title)
        );
        // Grid and tick labels.
        s.push_str("<g class=\"grid\">\n");
        for &v in &yt.values {
            let y = sy(v);
            let _ =
                writeln!(
                s,
                "<line x1=\"{M_LEFT}\" x2=\"{:.1}\" y1=\"{y:.1}\" y2=\"{y:.1}\" stroke=\"{}\"/>\
                 <text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" class=\"tick\">{}</text>",
                M_LEFT + plot_w,
                if v == 0.0 && yt.lo < 0.0 { "#8d949c" } else { "#e6e8eb" },
                M_LEFT - 6.0,
                y + 3.5,
                escape(&yt.label(v))
            );
        }
        for &v in xt
            .values
            .iter()
            .filter(|&&v| v >= x0 - 1e-9 * xt.step && v <= x1 + 1e-9 * xt.step)
        {
            let x = sx(v);
            let _ = writeln!(
                s,
                "<line x1=\"{x:.1}\" x2=\"{x:.1}\" y1=\"{M_TOP}\" y2=\"{:.1}\" stroke=\"#eef0f2\"/>\
                 <text x=\"{x:.1}\" y=\"{:.1}\" text-anchor=\"middle\" class=\"tick\">{}</text>",
                M_TOP + PLOT_H,
                M_TOP + PLOT_H + 16.0,
                escape(&xt.label(v))
            );
        }
        s.push_str("</g>\n");
        let _ = writeln!(
            s,
            "<rect x=\"{M_LEFT}\" y=\"{M_TOP}\" width=\"{plot_w:.1}\" height=\"{PLOT_H}\" fill=\"none\" stroke=\"#9aa1a9\"/>"
        );
        // Axis labels.
        let _ = writeln!(
            s,
            "<text class=\"axis-label\" x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
            M_LEFT + plot_w / 2.0,
            M_TOP + PLOT_H + 36.0,
            escape(self.x_label)
        );
        let _ = writeln!(
            s,
            "<text class=\"axis-label\" transform=\"translate(16 {:.1}) rotate(-90)\" text-anchor=\"middle\">{}</text>",
            M_TOP + PLOT_H / 2.0,
            escape(self.y_label)
        );
        self.series(&mut s, sx, sy);
        // Legend.
        let top = M_TOP + PLOT_H + M_BOTTOM + 4.0;
        s.push_str("<g class=\"legend\">\n");
        for item in &legend {
            let (colour, dash) = series_style(self.lines[item.line].style);
            let y = top + item.row as f64 * LEGEND_ROW + 8.0;
            let x = M_LEFT + item.x;
            let dash_attr = if dash.is_empty() {
                String::new()
            } else {
                format!(" stroke-dasharray=\"{dash}\"")
            };
            let _ = writeln!(
                s,
                "<line x1=\"{x:.1}\" x2=\"{:.1}\" y1=\"{y:.1}\" y2=\"{y:.1}\" stroke=\"{colour}\" stroke-width=\"2.5\"{dash_attr}/>\
                 <text x=\"{:.1}\" y=\"{:.1}\" class=\"legend-text\">{}</text>",
                x + 22.0,
                x + 28.0,
                y + 4.0,
                escape(&item.label)
            );
        }
        s.push_str("</g>\n</svg>\n");
        s
    }

    /// Each line as a path (broken at non-finite points), with point
    /// markers when there are few report times; `sx`, `sy` map data to
    /// drawing coordinates.
    fn series(&self, s: &mut String, sx: impl Fn(f64) -> f64, sy: impl Fn(f64) -> f64) {
        let markers = self.xs.len() <= 40;
        for line in &self.lines {
            let (colour, dash) = series_style(line.style);
            let mut d = String::new();
            let mut pen_down = false;
            // The previous report time, for a step that starts there.
            let mut prev_x: Option<f64> = None;
            for (x, y) in self.xs.iter().zip(line.ys) {
                if x.is_finite() && y.is_finite() {
                    let (px, py) = (sx(*x), sy(*y));
                    match (line.steps, pen_down, prev_x) {
                        (true, true, _) => {
                            let _ = write!(d, "V{py:.1}H{px:.1}");
                        }
                        (true, false, Some(start)) => {
                            let _ = write!(d, "M{:.1} {py:.1}H{px:.1}", sx(start));
                        }
                        (false, true, _) => {
                            let _ = write!(d, "L{px:.1} {py:.1}");
                        }
                        _ => {
                            let _ = write!(d, "M{px:.1} {py:.1}");
                        }
                    }
                    pen_down = true;
                } else {
                    pen_down = false;
                }
                prev_x = x.is_finite().then_some(*x);
            }
            let dash_attr = if dash.is_empty() {
                String::new()
            } else {
                format!(" stroke-dasharray=\"{dash}\"")
            };
            let _ = writeln!(
                s,
                "<g class=\"series\"><title>{}</title><path d=\"{d}\" fill=\"none\" stroke=\"{colour}\" \
                 stroke-width=\"2\" stroke-linejoin=\"round\"{dash_attr}/>",
                escape(line.name)
            );
            if markers {
                for (x, y) in self.xs.iter().zip(line.ys) {
                    if x.is_finite() && y.is_finite() {
                        let _ = write!(
                            s,
                            "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"2.6\" fill=\"{colour}\"/>",
                            sx(*x),
                            sy(*y)
                        );
                    }
                }
                s.push('\n');
            }
            s.push_str("</g>\n");
        }
    }
}

struct LegendItem {
    line: usize,
    row: usize,
    x: f64,
    label: String,
}

/// Places legend entries in rows under the plot (text width estimated at
/// 0.6 em of 12 px per character; long names are shortened).
fn legend_layout(lines: &[Line], width: f64) -> Vec<LegendItem> {
    let mut items = Vec::new();
    let (mut row, mut x) = (0, 0.0);
    for (n, line) in lines.iter().enumerate() {
        let label = ellipsize(line.name, 32);
        let w = 28.0 + label.chars().count() as f64 * 7.0 + 18.0;
        if x > 0.0 && x + w > width {
            row += 1;
            x = 0.0;
        }
        items.push(LegendItem {
            line: n,
            row,
            x,
            label,
        });
        x += w;
    }
    items
}

// ---- heat maps --------------------------------------------------------------

/// Number of colour levels of the maps (cells of equal level merge into runs).
pub(crate) const LEVELS: usize = 128;

/// A map of a tensor-product grid: `x_edges` (ni + 1) west to east, `y_edges`
/// (nj + 1) south to north, `values` (ni * nj, i fastest; `None`: no data).
pub(crate) struct HeatMap<'a> {
    pub title: &'a str,
    pub x_edges: &'a [f64],
    pub y_edges: &'a [f64],
    pub values: &'a [Option<f64>],
    pub range: (f64, f64),
    pub length_unit: &'a str,
    /// Largest drawing size of the grid, px.
    pub max_px: f64,
    /// Marked points (well completions): x, y in the units of the edges, and a label.
    pub marks: &'a [(f64, f64, String)],
    /// The colour ramp.
    pub palette: Palette,
}

impl HeatMap<'_> {
    pub fn render(&self) -> String {
        let ni = self.x_edges.len() - 1;
        let nj = self.y_edges.len() - 1;
        let lx = self.x_edges[ni] - self.x_edges[0];
        let ly = self.y_edges[nj] - self.y_edges[0];
        let scale = self.max_px / lx.max(ly).max(f64::MIN_POSITIVE);
        // Very elongated grids are stretched to stay visible.
        let (w, h) = ((lx * scale).max(48.0), (ly * scale).max(48.0));
        let (ml, mt, mb, mr) = (58.0, 6.0, 34.0, 20.0);
        let (width, height) = (ml + w + mr, mt + h + mb);
        let px = |x: f64| ml + (x - self.x_edges[0]) / lx * w;
        let py = |y: f64| mt + h - (y - self.y_edges[0]) / ly * h;

        let paths = self.level_paths(px, py);
        let mut s = String::new();
        let _ = write!(
            s,
            "<svg class=\"map\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {} {}\" width=\"{}\" height=\"{}\" \
             role=\"img\" aria-label=\"{}\">\n<title>{}</title>\n<g shape-rendering=\"crispEdges\">\n",
            r1(width),
            r1(height),
            r1(width),
            r1(height),
            escape(self.title),
            escape(self.title)
        );
        for (lv, d) in paths.iter().enumerate() {
            if d.is_empty() {
                continue;
            }
            let fill = if lv == LEVELS {
                NO_DATA.to_string()
            } else {
                hex(self.palette.colour((lv as f64 + 0.5) / LEVELS as f64))
            };
            let _ = writeln!(s, "<path fill=\"{fill}\" d=\"{d}\"/>");
        }
        s.push_str("</g>\n");
        let _ = writeln!(
            s,
            "<rect x=\"{ml}\" y=\"{mt}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#6b7280\"/>",
            r1(w),
            r1(h)
        );
        for (x, y, label) in self.marks {
            let (cx, cy) = (px(*x), py(*y));
            // Labels sit right of the mark, or left of it near the east edge.
            let label = ellipsize(label, 16);
            let right = cx + 6.0 + label.chars().count() as f64 * 6.5 < ml + w;
            let (tx, anchor) = if right {
                (cx + 6.0, "start")
            } else {
                (cx - 6.0, "end")
            };
            let _ = writeln!(
                s,
                "<g class=\"mark\"><circle cx=\"{}\" cy=\"{}\" r=\"3.5\" fill=\"#fff\" stroke=\"#111827\" stroke-width=\"1.5\"/>\
                 <text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" class=\"mark-text\" stroke=\"#fff\" stroke-width=\"3\" \
                 paint-order=\"stroke\" stroke-linejoin=\"round\">{}</text></g>",
                r1(cx),
                r1(cy),
                r1(tx),
                r1(cy + 3.5),
                escape(&label)
            );
        }
        // Distance ticks from the west and south edges.
        for (axis, len, pixels) in [('x', lx, w), ('y', ly, h)] {
            let ticks = Ticks::new(0.0, len, if pixels > 160.0 { 4 } else { 2 });
            for &v in ticks.values.iter().filter(|&&v| v <= len * (1.0 + 1e-9)) {
                let label = escape(&ticks.label(v));
                if axis == 'x' {
                    let x = ml + v / len * w;
                    let _ = writeln!(
                        s,
                        "<line x1=\"{0}\" x2=\"{0}\" y1=\"{1}\" y2=\"{2}\" stroke=\"#6b7280\"/>\
                         <text x=\"{0}\" y=\"{3}\" text-anchor=\"middle\" class=\"tick\">{label}</text>",
                        r1(x),
                        r1(mt + h),
                        r1(mt + h + 4.0),
                        r1(mt + h + 15.0)
                    );
                } else {
                    let y = mt + h - v / len * h;
                    let _ = writeln!(
                        s,
                        "<line x1=\"{0}\" x2=\"{1}\" y1=\"{2}\" y2=\"{2}\" stroke=\"#6b7280\"/>\
                         <text x=\"{3}\" y=\"{4}\" text-anchor=\"end\" class=\"tick\">{label}</text>",
                        r1(ml - 4.0),
                        r1(ml),
                        r1(y),
                        r1(ml - 6.0),
                        r1(y + 3.5)
                    );
                }
            }
        }
        let _ = writeln!(
            s,
            "<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" class=\"tick\">x [{}] → east</text>",
            r1(ml + w / 2.0),
            r1(mt + h + 29.0),
            escape(self.length_unit)
        );
        let _ = writeln!(
            s,
            "<text class=\"tick\" transform=\"translate(10 {}) rotate(-90)\" text-anchor=\"middle\">y [{}] → north</text>",
            r1(mt + h / 2.0),
            escape(self.length_unit)
        );
        s.push_str("</svg>\n");
        s
    }

    /// One SVG path per colour level (the last, [`LEVELS`], for cells
    /// without data); runs of equal level in a row are merged into one
    /// rectangle. `px`, `py` map edge coordinates to drawing coordinates.
    fn level_paths(&self, px: impl Fn(f64) -> f64, py: impl Fn(f64) -> f64) -> Vec<String> {
        let ni = self.x_edges.len() - 1;
        let nj = self.y_edges.len() - 1;
        let (lo, hi) = self.range;
        let level = |v: f64| -> usize {
            let t = if hi > lo { (v - lo) / (hi - lo) } else { 0.5 };
            ((t * LEVELS as f64).floor().max(0.0) as usize).min(LEVELS - 1)
        };
        // One path per colour level; runs of equal level in a row are merged.
        let mut paths: Vec<String> = vec![String::new(); LEVELS + 1];
        for j in 0..nj {
            let (y0, y1) = (py(self.y_edges[j + 1]), py(self.y_edges[j]));
            let mut i = 0;
            while i < ni {
                let lv = self.values[i + ni * j].map_or(LEVELS, level);
                let start = i;
                while i + 1 < ni && self.values[i + 1 + ni * j].map_or(LEVELS, level) == lv {
                    i += 1;
                }
                let (x0, x1) = (px(self.x_edges[start]), px(self.x_edges[i + 1]));
                let d = &mut paths[lv];
                let (x0, x1) = (r1(x0), r1(x1));
                let _ = write!(d, "M{x0} {}H{x1}V{}H{x0}z", r1(y0), r1(y1));
                i += 1;
            }
        }
        paths
    }
}

/// A horizontal colour bar of `palette` for `range` with ticks, a label
/// and a swatch for cells without data.
pub(crate) fn colour_bar(range: (f64, f64), label: &str, palette: Palette) -> String {
    let (w, bar_w, bar_h, ml) = (620.0, 440.0, 16.0, 14.0);
    let (lo, hi) = range;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "<svg class=\"colour-bar\" xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {w} 58\" width=\"{w}\" height=\"58\" \
         role=\"img\" aria-label=\"{0}\">\n<title>{0}</title>\n<g shape-rendering=\"crispEdges\">",
        escape(label)
    );
    for lv in 0..LEVELS {
        let x0 = ml + bar_w * lv as f64 / LEVELS as f64;
        let x1 = ml + bar_w * (lv + 1) as f64 / LEVELS as f64;
        let _ = write!(
            s,
            "<rect x=\"{}\" y=\"6\" width=\"{}\" height=\"{bar_h}\" fill=\"{}\"/>",
            r2(x0),
            r2(x1 - x0 + 0.02),
            hex(palette.colour((lv as f64 + 0.5) / LEVELS as f64))
        );
    }
    let _ = writeln!(s, "</g>\n<rect x=\"{ml}\" y=\"6\" width=\"{bar_w}\" height=\"{bar_h}\" fill=\"none\" stroke=\"#6b7280\"/>");
    let ticks = Ticks::new(lo, hi, 5);
    for &v in ticks
        .values
        .iter()
        .filter(|&&v| v >= lo - 1e-9 * ticks.step && v <= hi + 1e-9 * ticks.step)
    {
        let x = if hi > lo {
            ml + (v - lo) / (hi - lo) * bar_w
        } else {
            ml + bar_w / 2.0
        };
        let _ = writeln!(
            s,
            "<line x1=\"{0}\" x2=\"{0}\" y1=\"{1}\" y2=\"{2}\" stroke=\"#374151\"/>\
             <text x=\"{0}\" y=\"{3}\" text-anchor=\"middle\" class=\"tick\">{4}</text>",
            r1(x),
            6.0 + bar_h,
            10.0 + bar_h,
            22.0 + bar_h + 2.0,
            escape(&ticks.label(v))
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"{}\" y=\"54\" text-anchor=\"middle\" class=\"axis-label\">{}</text>",
        ml + bar_w / 2.0,
        escape(label)
    );
    let sw = ml + bar_w + 28.0;
    let _ = writeln!(
        s,
        "<rect x=\"{sw}\" y=\"6\" width=\"{bar_h}\" height=\"{bar_h}\" fill=\"{NO_DATA}\" stroke=\"#6b7280\"/>\
         <text x=\"{}\" y=\"{}\" class=\"tick\">inactive</text>\n</svg>",
        sw + bar_h + 6.0,
        6.0 + bar_h - 4.0
    );
    s
}

/// A coordinate with at most one decimal (trailing zeros dropped).
fn r1(x: f64) -> String {
    trim_zeros(&format!("{x:.1}"))
}

fn r2(x: f64) -> String {
    trim_zeros(&format!("{x:.2}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_ticks_cover_the_range() {
        let t = Ticks::new(0.0, 365.0, 6);
        assert_eq!(t.step, 100.0);
        assert_eq!((t.lo, t.hi), (0.0, 400.0));
        let t = Ticks::new(1203.7, 3186.2, 5);
        assert_eq!(t.step, 500.0);
        assert_eq!((t.lo, t.hi), (1000.0, 3500.0));
        assert_eq!(t.label(1500.0), "1500");
        let t = Ticks::new(-812.0, 640.0, 5);
        assert!(t.values.contains(&0.0));
        let t = Ticks::new(0.0, 0.14, 6);
        assert_eq!(t.step, 0.025);
        assert_eq!(t.label(0.025), "0.025");
        let t = Ticks::new(0.0, 1000.0, 4);
        assert_eq!((t.step, t.label(750.0)), (250.0, "750".to_string()));
        let t = Ticks::new(0.0, 20.0, 6);
        assert_eq!((t.step, t.label(7.5)), (2.5, "7.5".to_string()));
        // A flat series still gets a range.
        let t = Ticks::new(3000.0, 3000.0, 5);
        assert!(t.lo < 3000.0 && t.hi > 3000.0);
    }
}
