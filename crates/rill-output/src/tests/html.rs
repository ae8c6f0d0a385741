//! `report.html`: self-contained, plots and maps present, user text escaped,
//! large grids kept small.

use super::fixtures::*;
use crate::report::{block_size, chosen_layers, Report, MAP_CELL_LIMIT, MAX_LAYER_MAPS};
use crate::series::SeriesTable;
use crate::{write_results, RunMeta, CAUTION};
use rill_model::UnitSystem;

fn report(case: &rill_model::Case, results: &rill_sim::RunResults, meta: &RunMeta) -> String {
    let dir = tempfile::tempdir().unwrap();
    let files = write_results(&dir.path().join("r.out"), case, results, meta).unwrap();
    std::fs::read_to_string(files.report_html).unwrap()
}

#[test]
fn report_has_plots_maps_summary_and_caution() {
    let (_dir, deck) = deck_dir();
    let case = case(4, 3, 3, UnitSystem::Field);
    let results = results(&case);
    let html = report(&case, &results, &RunMeta::new(&deck));
    assert!(html.starts_with("<!DOCTYPE html>"));
    // Self-contained: no scripts, no external resources.
    for banned in ["<script", "src=", "href=\"http", "@import", "url("] {
        assert!(!html.contains(banned), "{banned}");
    }
    assert!(html.contains(&crate::text::escape(CAUTION)));
    // Four charts and three layer maps, each an inline <svg>, plus the colour bar.
    assert_eq!(html.matches("<svg class=\"chart\"").count(), 4);
    assert_eq!(html.matches("<svg class=\"map\"").count(), 3);
    assert_eq!(html.matches("<svg class=\"colour-bar\"").count(), 1);
    for k in 1..=3 {
        assert!(html.contains(&format!("<title>Layer {k}</title>")));
    }
    // Both wells are completed in every layer: marked on each map.
    assert_eq!(html.matches("<g class=\"mark\">").count(), 6);
    // One path per series: rates (2 wells + 1 boundary), cumulatives (3), BHP (2), average pressure (1).
    assert_eq!(html.matches("<g class=\"series\">").count(), 9);
    for name in [
        "P-1",
        "I-1",
        "east aquifer (boundary)",
        "pore-volume weighted average",
    ] {
        assert!(
            html.contains(&format!(
                "<g class=\"series\"><title>{name}</title><path d=\"M"
            )),
            "{name}"
        );
    }
    assert!(
        html.contains("Rate [stb/day]")
            && html.contains("BHP [psi]")
            && html.contains("Time [day]")
    );
    assert!(html.contains("Pressure [psi]"));
    // Summary.
    assert!(html.contains("4 × 3 × 3 = 36 cells (35 active)"));
    let nums: Vec<&str> = html
        .match_indices("<td class=\"num\">")
        .map(|(at, _)| &html[at + 16..at + 16 + html[at + 16..].find('<').unwrap()])
        .collect();
    assert!(
        nums.contains(&"600") && nums.contains(&"12\u{202F}000") && nums.contains(&"-400"),
        "{nums:?}"
    );
    assert!(html.contains("<td>Linear solver</td><td>direct</td>"));
    assert!(html.contains("2.25e-9"), "balance error max");
}

#[test]
fn report_escapes_hostile_names_and_titles() {
    let (_dir, deck) = deck_dir();
    let mut case = case(3, 2, 1, UnitSystem::Metric);
    let mut results = results(&case);
    let hostile = "<script>&\"'";
    rename_well(&mut case, &mut results, 0, hostile);
    rename_well(&mut case, &mut results, 1, "🛢 Ölquelle <b>");
    case.title = Some("</title><img src=x onerror=alert(1)>".into());
    results.boundaries[0].name = "a&b".into();
    results.stats.linear_solver = "<i>amg</i>".into();
    let mut meta = RunMeta::new(deck.with_file_name("<deck>.rill"));
    meta.cautions.push("<caution & care>".into());
    let html = report(&case, &results, &meta);
    assert!(!html.contains("<script"));
    assert!(!html.contains("<img"));
    assert!(
        !html.contains("<b>")
            && !html.contains("<i>")
            && !html.contains("<deck>")
            && !html.contains("<caution")
    );
    assert!(html.contains("&lt;script&gt;&amp;&quot;&#39;"));
    assert!(html.contains("🛢 Ölquelle &lt;b&gt;"));
    assert!(html.contains("&lt;/title&gt;&lt;img src=x onerror=alert(1)&gt;"));
    assert!(html.contains("a&amp;b (boundary)"));
    assert!(html.contains("&lt;caution &amp; care&gt;"));
    // The page is still well-formed markup: the SVG parts parse as XML.
    for svg in html.split("<svg ").skip(1) {
        let end = svg.find("</svg>").unwrap();
        let xml = format!("<svg {}</svg>", &svg[..end]);
        roxmltree::Document::parse(&xml).unwrap_or_else(|e| panic!("{e}: {xml}"));
    }
}

#[test]
fn layer_choice_and_block_size() {
    assert_eq!(chosen_layers(5, 12), vec![0, 1, 2, 3, 4]);
    let l = chosen_layers(85, 12);
    assert_eq!(l.len(), 12);
    assert_eq!((l[0], l[11]), (0, 84));
    assert!(l.windows(2).all(|w| w[1] > w[0]));
    assert_eq!(block_size(60, 220, 20_000), 1);
    let b = block_size(400, 300, 20_000);
    assert!(400usize.div_ceil(b) * 300usize.div_ceil(b) <= 20_000);
    assert!(400usize.div_ceil(b - 1) * 300usize.div_ceil(b - 1) > 20_000);
}

/// 60 x 220 x 85 = 1.12 million cells: the page stays small (12 layer maps,
/// runs of equal colour merged) and says which layers it shows.
#[test]
fn report_of_a_large_grid_stays_small() {
    let big = case(60, 220, 85, UnitSystem::Field);
    let mut results = results(&big);
    // A smooth field: pressure falls off with distance from a corner.
    results.pressure = vec![(0..big.grid.cell_count())
        .map(|c| {
            let (i, j, k) = big.grid.ijk(c);
            (3000.0 - ((i * i + j * j) as f64).sqrt() - k as f64) * PSI
        })
        .collect()];
    for v in [
        &mut results.times,
        &mut results.pressure_avg,
        &mut results.balance_error,
    ] {
        v.truncate(1);
    }
    for w in &mut results.wells {
        for s in [&mut w.bhp, &mut w.rate, &mut w.cumulative] {
            s.truncate(1);
        }
        w.mode.truncate(1);
    }
    for b in &mut results.boundaries {
        b.rate.truncate(1);
        b.cumulative.truncate(1);
    }
    let table = SeriesTable::new(&results, big.report.units);
    let meta = RunMeta::new("/tmp/big.rill");
    let cautions = vec![CAUTION.to_string()];
    let page = Report {
        case: &big,
        results: &results,
        meta: &meta,
        table: &table,
        title: "big",
        case_name: None,
        cautions: &cautions,
        files: &[],
        saturation: &[],
    };
    let mut html = Vec::new();
    crate::report::write_report(&mut html, &page).unwrap();
    let html = String::from_utf8(html).unwrap();
    assert_eq!(html.matches("<svg class=\"map\"").count(), MAX_LAYER_MAPS);
    assert!(html.contains("Showing 12 of 85 layers, evenly spaced from top to bottom: 1, 9, 16,"));
    assert!(html.len() < 4_000_000, "report is {} bytes", html.len());

    // A layer wider than the limit is block-averaged.
    let wide = case(400, 300, 1, UnitSystem::Field);
    let mut results = super::fixtures::results(&wide);
    results.pressure.truncate(1);
    let b = block_size(400, 300, MAP_CELL_LIMIT);
    let meta = RunMeta::new("/tmp/wide.rill");
    let table = SeriesTable::new(&results, wide.report.units);
    let page = Report {
        case: &wide,
        results: &results,
        meta: &meta,
        table: &table,
        title: "wide",
        case_name: None,
        cautions: &cautions,
        files: &[],
        saturation: &[],
    };
    let mut html = Vec::new();
    crate::report::write_report(&mut html, &page).unwrap();
    let html = String::from_utf8(html).unwrap();
    assert!(
        html.contains(&format!("blocks of {b} × {b} columns")),
        "block note"
    );
    assert!(html.len() < 2_000_000, "report is {} bytes", html.len());
}

#[test]
fn the_case_name_heads_the_page_with_the_title_under_it() {
    let (_dir, deck) = deck_dir();
    let case = case(3, 2, 1, UnitSystem::Field);
    let results = results(&case);
    let html = report(&case, &results, &RunMeta::new(&deck));
    assert!(html.contains("<title>Quarry north: Test lobe — rill report</title>"));
    assert!(html.contains("<h1>Quarry north</h1>\n<div class=\"title\">Test lobe</div>"));
    assert!(html.contains("<tr><td>Case</td><td>Quarry north</td></tr>"));
    // Without a name, the title heads the page as before.
    let mut unnamed = case.clone();
    unnamed.name = None;
    let html = report(&unnamed, &results, &RunMeta::new(&deck));
    assert!(html.contains("<title>Test lobe — rill report</title>"));
    assert!(html.contains("<h1>Test lobe</h1>\n<div class=\"sub\">"));
}

/// The `d` of the path of series `name` in the chart titled `chart`.
fn path_of<'a>(html: &'a str, chart: &str, name: &str) -> &'a str {
    let at = html.find(&format!("<h3>{chart}</h3>")).unwrap();
    let svg = &html[at..at + html[at..].find("</svg>").unwrap()];
    let start = svg
        .find(&format!("<title>{name}</title><path d=\""))
        .unwrap_or_else(|| panic!("no {name} in {chart}"));
    let d = &svg[start + name.len() + 25..];
    &d[..d.find('"').unwrap()]
}

/// The values of the y-axis tick labels of the chart titled `chart`.
fn y_ticks(html: &str, chart: &str) -> Vec<f64> {
    let at = html.find(&format!("<h3>{chart}</h3>")).unwrap();
    let svg = &html[at..at + html[at..].find("</svg>").unwrap()];
    svg.split("text-anchor=\"end\" class=\"tick\">")
        .skip(1)
        .map(|t| {
            let label: String = t[..t.find('<').unwrap()]
                .chars()
                .filter(|c| *c != '\u{202F}')
                .collect();
            label.parse().unwrap()
        })
        .collect()
}

/// Rates are steps (the value at a report time held back to the one
/// before): the path moves only vertically and horizontally, and a rate
/// that starts at once jumps at the first report time instead of ramping.
/// Cumulatives and pressures stay lines.
#[test]
fn rates_are_drawn_as_steps_and_the_rest_as_lines() {
    let (_dir, deck) = deck_dir();
    let case = case(3, 2, 1, UnitSystem::Field);
    let results = results(&case);
    let html = report(&case, &results, &RunMeta::new(&deck));
    for name in ["P-1", "I-1", "east aquifer (boundary)"] {
        let d = path_of(&html, "Surface rates", name);
        assert!(!d.contains('L'), "{name}: {d}");
        // M x0 y(0), then V y(600) at x0, H to x1, V, H to x2.
        let parts: Vec<&str> = d.split(['V', 'H']).collect();
        assert_eq!(parts.len(), 5, "{name}: {d}");
        assert!(
            d.matches('V').count() == 2 && d.matches('H').count() == 2,
            "{d}"
        );
        let x0: f64 = parts[0][1..].split(' ').next().unwrap().parse().unwrap();
        let (x1, x2): (f64, f64) = (parts[2].parse().unwrap(), parts[4].parse().unwrap());
        assert!(x0 < x1 && x1 < x2, "{d}");
    }
    // P-1 holds 600 stb/day over both intervals: one level after the jump.
    let d = path_of(&html, "Surface rates", "P-1");
    let parts: Vec<&str> = d.split(['V', 'H']).collect();
    assert_eq!(parts[1], parts[3], "{d}");
    for (chart, name) in [
        ("Cumulative volumes", "P-1"),
        ("Bottom-hole pressure", "P-1"),
        ("Average reservoir pressure", "pore-volume weighted average"),
    ] {
        let d = path_of(&html, chart, name);
        assert_eq!(d.matches('L').count(), 2, "{chart}: {d}");
        assert!(!d.contains('V') && !d.contains('H'), "{chart}: {d}");
    }
}

/// Pressures that differ by round-off get an axis of at least 50 kPa
/// (about 7.3 psi), not one that blows the round-off up to full height;
/// the same for the BHP axis and the maps' colour scale.
#[test]
fn pressure_axes_have_a_minimum_span() {
    let (_dir, deck) = deck_dir();
    let case = case(3, 2, 1, UnitSystem::Field);
    let mut results = results(&case);
    let p = 3000.0 * PSI;
    results.pressure_avg = vec![p, p * (1.0 + 1e-13), p * (1.0 - 1e-13)];
    for w in &mut results.wells {
        w.bhp = vec![p, p * (1.0 + 2e-14), p];
    }
    for map in &mut results.pressure {
        for (c, v) in map.iter_mut().enumerate() {
            if v.is_finite() {
                *v = p * (1.0 + 1e-14 * c as f64);
            }
        }
    }
    let html = report(&case, &results, &RunMeta::new(&deck));
    let span = 50e3 / PSI;
    for chart in ["Average reservoir pressure", "Bottom-hole pressure"] {
        let ticks = y_ticks(&html, chart);
        let (lo, hi) = (ticks[0], *ticks.last().unwrap());
        assert!(hi - lo >= span, "{chart}: {ticks:?}");
        assert!(
            lo <= 3000.0 - span / 2.0 && hi >= 3000.0 + span / 2.0,
            "{chart}: {ticks:?}"
        );
        assert!(hi - lo <= 4.0 * span, "{chart}: a sensible axis, {ticks:?}");
    }
    // The colour scale's note gives its min and max.
    assert!(
        html.contains("(min 2996.4 and max 3003.6 psi over the layers shown)"),
        "{}",
        &html[html.find("on one colour scale").unwrap()..][..120]
    );
    // A real change larger than the minimum keeps its own range.
    let html = report(
        &case,
        &super::fixtures::results(&case),
        &RunMeta::new(&deck),
    );
    let ticks = y_ticks(&html, "Average reservoir pressure");
    assert_eq!(
        (ticks[0], *ticks.last().unwrap()),
        (2980.0, 3000.0),
        "{ticks:?}"
    );
}
