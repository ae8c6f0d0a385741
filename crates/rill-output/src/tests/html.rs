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
        cautions: &cautions,
        files: &[],
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
        cautions: &cautions,
        files: &[],
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
