//! An oil-water run's maps and report: `sw` and `so` in every VTK step,
//! the map streaming that waits for each report time's saturations, the
//! report's water cut and recovery charts, breakthrough table and water
//! saturation maps.

use super::fixtures::*;
use super::vtk_maps::{decode, f64s};
use crate::colours::{hex, Palette, NO_DATA};
use crate::svg::LEVELS;
use crate::text::escape;
use crate::{write_results, ResultWriter, RunMeta, CAUTION, CAUTION_OIL_WATER};
use rill_model::{MapSelection, UnitSystem};

/// The cell arrays of a step file, by name, as doubles (Float64 only).
fn cell_arrays(path: &std::path::Path) -> Vec<(String, Vec<f64>)> {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = roxmltree::Document::parse(&text).expect("valid XML");
    doc.descendants()
        .find(|n| n.has_tag_name("CellData"))
        .unwrap()
        .children()
        .filter(|n| n.has_tag_name("DataArray"))
        .map(|n| {
            let bytes = decode(n.text().unwrap());
            let values = if n.attribute("type") == Some("Float64") {
                f64s(&bytes)
            } else {
                Vec::new()
            };
            (n.attribute("Name").unwrap().to_string(), values)
        })
        .collect()
}

#[test]
fn every_step_has_sw_and_so_after_pressure() {
    let (dir, deck) = deck_dir();
    let (nx, ny, nz) = (4, 3, 2);
    let case = oil_water_case(nx, ny, nz, UnitSystem::Field);
    let results = oil_water_results(&case);
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    assert_eq!(files.maps.len(), 3);
    for (t, map) in files.maps.iter().enumerate() {
        let arrays = cell_arrays(map);
        let names: Vec<&str> = arrays.iter().map(|(n, _)| n.as_str()).collect();
        assert_eq!(&names[..4], ["pressure", "sw", "so", "active"], "{map:?}");
        let (sw, so) = (&arrays[1].1, &arrays[2].1);
        assert_eq!(sw.len(), nx * ny * nz);
        // VTK cell v: i fastest, then j, then k from the bottom layer up.
        for kv in 0..nz {
            for j in 0..ny {
                for i in 0..nx {
                    let v = i + nx * (j + ny * kv);
                    let c = case.grid.index(i, j, nz - 1 - kv);
                    let want = fixture_sw(&case, t, c);
                    if want.is_nan() {
                        assert!(sw[v].is_nan() && so[v].is_nan(), "inactive cell {c}");
                    } else {
                        assert_eq!(sw[v], want, "sw of cell {c} at {t}");
                        assert_eq!(so[v], 1.0 - want, "so of cell {c} at {t}");
                    }
                }
            }
        }
        assert_eq!(sw.iter().filter(|v| v.is_nan()).count(), 1);
    }
}

#[test]
fn maps_last_writes_the_last_saturations_and_single_phase_maps_have_none() {
    let (dir, deck) = deck_dir();
    let mut case = oil_water_case(3, 2, 2, UnitSystem::Metric);
    case.report.maps = MapSelection::Last;
    let results = oil_water_results(&case);
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    assert_eq!(files.maps.len(), 1);
    assert!(files.maps[0].ends_with("maps/step_0002.vtr"));
    let arrays = cell_arrays(&files.maps[0]);
    let sw = &arrays.iter().find(|(n, _)| n == "sw").unwrap().1;
    assert_eq!(sw[0], fixture_sw(&case, 2, case.grid.index(0, 0, 1)));

    let single = super::fixtures::case(3, 2, 2, UnitSystem::Metric);
    let files = write_results(
        &dir.path().join("p"),
        &single,
        &results_of(&single),
        &RunMeta::new(&deck),
    )
    .unwrap();
    let text = std::fs::read_to_string(&files.maps[0]).unwrap();
    assert!(!text.contains("Name=\"sw\"") && !text.contains("Name=\"so\""));
}

fn results_of(case: &rill_model::Case) -> rill_sim::RunResults {
    super::fixtures::results(case)
}

/// Out-of-order calls are errors, never a panic or a half-written set.
#[test]
fn the_streaming_writer_pairs_each_report_times_pressures_with_its_saturations() {
    let (dir, deck) = deck_dir();
    let case = oil_water_case(3, 2, 2, UnitSystem::Field);
    let results = oil_water_results(&case);
    let out = dir.path().join("o");
    let p = &results.pressure[0];
    let sw = &results.oil_water.as_ref().unwrap().saturation[0];
    let message = |e: crate::OutputError| e.to_string();

    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    w.map(0.0, p).unwrap();
    let e = message(w.map(DAY, p).unwrap_err());
    assert!(
        e.contains("saturations of report time 0 did not come"),
        "{e}"
    );

    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    let e = message(w.saturation(0.0, sw).unwrap_err());
    assert!(e.contains("without the cell pressures"), "{e}");

    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    w.map(0.0, p).unwrap();
    let e = message(w.saturation(DAY, sw).unwrap_err());
    assert!(e.contains("came for 86400 s, the pressures for 0 s"), "{e}");

    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    w.map(0.0, p).unwrap();
    let e = message(w.saturation(0.0, &sw[1..]).unwrap_err());
    assert!(e.contains("have 11 values for 12 cells"), "{e}");

    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    for (t, time) in results.times.iter().enumerate() {
        w.map(*time, &results.pressure[t]).unwrap();
        if t < 2 {
            w.saturation(*time, sw).unwrap();
        }
    }
    let e = message(w.finish(&case, &results, &RunMeta::new(&deck)).unwrap_err());
    assert!(e.contains("saturations of report time 2 never came"), "{e}");

    let single = super::fixtures::case(3, 2, 2, UnitSystem::Field);
    let mut w = ResultWriter::begin(&out, &single, &deck).unwrap();
    w.map(0.0, p).unwrap();
    let e = message(w.saturation(0.0, sw).unwrap_err());
    assert!(e.contains("single-phase"), "{e}");
    assert!(!out.exists(), "nothing was published");

    // In order, the set is written; the report has the saturation maps.
    let mut w = ResultWriter::begin(&out, &case, &deck).unwrap();
    let ow = results.oil_water.as_ref().unwrap();
    for (t, time) in results.times.iter().enumerate() {
        w.map(*time, &results.pressure[t]).unwrap();
        w.saturation(*time, &ow.saturation[t]).unwrap();
    }
    let files = w.finish(&case, &results, &RunMeta::new(&deck)).unwrap();
    assert_eq!(files.maps.len(), 3);
    let html = std::fs::read_to_string(files.report_html).unwrap();
    assert!(html.contains("<title>Layer 2 at 10 day</title>"));
}

fn report(case: &rill_model::Case, results: &rill_sim::RunResults) -> String {
    let (dir, deck) = deck_dir();
    let files = write_results(&dir.path().join("r"), case, results, &RunMeta::new(&deck)).unwrap();
    std::fs::read_to_string(files.report_html).unwrap()
}

/// The part of `html` from `start` to the end of its section.
fn section<'a>(html: &'a str, start: &str) -> &'a str {
    let at = html.find(start).unwrap_or_else(|| panic!("no {start:?}"));
    &html[at..at + html[at..].find("</section>").unwrap()]
}

/// The chart under the heading `<h3>title</h3>`, up to the end of its figure.
fn chart<'a>(html: &'a str, title: &str) -> &'a str {
    let start = format!("<h3>{title}</h3>\n<svg class=\"chart\"");
    let at = html
        .find(&start)
        .unwrap_or_else(|| panic!("no chart {title:?}"));
    &html[at..at + html[at..].find("</figure>").unwrap()]
}

#[test]
fn the_report_shows_water_cut_recovery_and_breakthrough() {
    let case = oil_water_case(4, 3, 2, UnitSystem::Field);
    let results = oil_water_results(&case);
    let html = report(&case, &results);
    for banned in ["<script", "src=", "href=\"http", "@import", "url("] {
        assert!(!html.contains(banned), "{banned}");
    }
    assert!(html.contains(&escape(CAUTION_OIL_WATER)));
    assert!(!html.contains(&escape(CAUTION)));
    // Four charts of every run and three of an oil-water run.
    assert_eq!(html.matches("<svg class=\"chart\"").count(), 7);
    let oil_water = section(&html, "<h2>Oil and water</h2>");
    let cut = chart(oil_water, "Water cut");
    for name in ["P-1", "P-2"] {
        assert!(
            cut.contains(&format!(
                "<g class=\"series\"><title>{name}</title><path d=\"M"
            )),
            "{name}"
        );
    }
    assert!(
        !cut.contains("<title>I-1</title>"),
        "injectors have no water cut"
    );
    assert!(cut.contains("Water cut [-]") && cut.contains("Time [day]"));
    let recovery = chart(oil_water, "Oil recovery");
    assert!(recovery.contains("<title>recovery</title><path d=\"M"));
    let pvi = chart(oil_water, "Oil recovery against pore volumes injected");
    assert!(pvi.contains("Pore volumes injected [-]") && pvi.contains("Recovery [-]"));
    assert!(pvi.contains("<title>recovery</title><path d=\"M"));
    // The x axis runs over the pore volumes injected, 0 to 0.04.
    assert!(pvi.contains(">0.04</text>"), "{pvi}");

    // The summary: the field's oil and water and each producer's breakthrough.
    let summary = section(&html, "<h2>Summary</h2>");
    assert!(
        summary.contains("<tr><td>Recovery</td><td>0.095 of the initial oil in place</td></tr>")
    );
    assert!(summary.contains(
        "<tr><td>Oil in place</td><td>90\u{202F}500 stb (initially 100\u{202F}000 stb)</td></tr>"
    ));
    assert!(summary.contains("<tr><td>Pore volumes injected</td><td>0.04</td></tr>"));
    assert!(
        summary.contains("<tr><td>Average water saturation</td><td>0.22 (initially 0.2)</td></tr>")
    );
    assert!(summary.contains("oil 2e-9, water 2.25e-9 (relative)"));
    assert!(summary.contains(
        "<tr><td>P-1</td><td class=\"num\">5</td><td class=\"num\">0.5</td><td class=\"num\">300</td>\
         <td class=\"num\">300</td><td class=\"num\">7500</td><td class=\"num\">4500</td></tr>"
    ));
    assert!(
        summary.contains("<tr><td>P-2</td><td class=\"num\">not yet</td><td class=\"num\">0</td>")
    );
    assert!(
        !summary.contains("<tr><td>I-1</td><td class=\"num\">"),
        "no injector row"
    );
    assert!(summary.contains("a well's rate and cumulative are its liquid, oil plus water"));
    assert!(html.contains("the water and oil saturations <code>sw</code> and <code>so</code>"));
}

#[test]
fn the_report_draws_water_saturation_per_layer_at_the_report_times_kept() {
    let case = oil_water_case(4, 3, 2, UnitSystem::Field);
    let results = oil_water_results(&case);
    let html = report(&case, &results);
    // Two pressure maps, and two layers at each of the three report times.
    assert_eq!(html.matches("<svg class=\"map\"").count(), 2 + 3 * 2);
    assert_eq!(html.matches("<svg class=\"colour-bar\"").count(), 2);
    let maps = section(&html, "<h2>Water saturation maps by layer</h2>");
    for t in ["0", "10", "20"] {
        assert!(maps.contains(&format!(">At {t} day</h3>")), "{t}");
        for k in 1..=2 {
            assert!(maps.contains(&format!("<title>Layer {k} at {t} day</title>")));
        }
    }
    // One scale over every map: 0.2 (first time, cell 0) to 0.472 (last
    // time, cell 22, the last active one).
    assert!(
        maps.contains("(min 0.2 and max 0.472 over the maps shown)"),
        "{maps}"
    );
    assert!(maps.contains("Water saturation [-]"));
    // The last time: cells 0 to 11 in the top layer, 12 to 22 below.
    assert!(maps.contains("<figcaption>sw 0.45 – 0.461</figcaption>"));
    assert!(maps.contains("<figcaption>sw 0.462 – 0.472</figcaption>"));
    // Both producers and the injector are marked in both layers, each time.
    assert_eq!(maps.matches("<g class=\"mark\">").count(), 3 * 2 * 3);
    // Coloured with rill umber-to-tide only.
    let allowed: Vec<String> = (0..LEVELS)
        .map(|lv| hex(Palette::UmberToTide.colour((lv as f64 + 0.5) / LEVELS as f64)))
        .chain([NO_DATA.to_string()])
        .collect();
    let fills: Vec<&str> = maps
        .split("<path fill=\"")
        .skip(1)
        .map(|p| &p[..7])
        .collect();
    assert!(fills.len() > 3, "{fills:?}");
    for fill in fills {
        assert!(allowed.iter().any(|a| a == fill), "{fill}");
    }
    // A single-phase report has none of it.
    let single = super::fixtures::case(4, 3, 2, UnitSystem::Field);
    let html = report(&single, &results_of(&single));
    for absent in [
        "Water saturation maps",
        "Oil and water",
        "Water breakthrough",
        "oil plus water",
    ] {
        assert!(!html.contains(absent), "{absent}");
    }
}

#[test]
fn a_run_without_injection_says_so_instead_of_a_curve_against_pore_volumes() {
    let case = oil_water_case(3, 2, 1, UnitSystem::Field);
    let mut results = oil_water_results(&case);
    results.oil_water.as_mut().unwrap().pore_volumes_injected = vec![0.0; 3];
    let html = report(&case, &results);
    assert!(html.contains(
        "<h3>Oil recovery against pore volumes injected</h3>\n<p class=\"empty\">No water was injected"
    ));
    assert_eq!(html.matches("<svg class=\"chart\"").count(), 6);
}

/// 60 x 220 x 85 = 1.12 million cells over 13 report times: the report
/// keeps four report times of saturation maps (the first, the last, two
/// between), each of at most 5000 blocks, and stays small.
#[test]
fn saturation_maps_of_a_large_grid_stay_small() {
    let (dir, deck) = deck_dir();
    let mut big = oil_water_case(60, 220, 85, UnitSystem::Field);
    big.report.maps = MapSelection::None;
    let cells = big.grid.cell_count();
    let mut results = oil_water_results(&case_small());
    let n = 13;
    let times: Vec<f64> = (0..n).map(|t| t as f64 * DAY).collect();
    let sw_at = |t: usize, c: usize| {
        let (i, j, _) = big.grid.ijk(c);
        (0.2 + 0.05 * t as f64 - 0.002 * ((i * i + j * j) as f64).sqrt()).clamp(0.2, 0.75)
    };
    let mut writer = ResultWriter::begin(&dir.path().join("big"), &big, &deck).unwrap();
    let pressure = vec![3000.0 * PSI; cells];
    let mut sw = vec![0.0; cells];
    for (t, &time) in times.iter().enumerate() {
        writer.map(time, &pressure).unwrap();
        for (c, s) in sw.iter_mut().enumerate() {
            *s = sw_at(t, c);
        }
        writer.saturation(time, &sw).unwrap();
    }
    stretch(&mut results, &times);
    results.pressure = vec![pressure];
    results.oil_water.as_mut().unwrap().saturation = vec![sw];
    let files = writer.finish(&big, &results, &RunMeta::new(&deck)).unwrap();
    let html = std::fs::read_to_string(files.report_html).unwrap();
    let maps = section(&html, "<h2>Water saturation maps by layer</h2>");
    assert!(
        maps.contains("at 0, 4, 8, 12 day: the first and the last of the run's 13 report times"),
        "{}",
        &maps[..600]
    );
    assert_eq!(maps.matches("<svg class=\"map\"").count(), 4 * 12);
    assert!(maps.contains("Showing 12 of 85 layers"));
    assert!(maps.contains("more than the 5000 drawn per map"));
    assert!(html.len() < 8_000_000, "report is {} bytes", html.len());
}

/// A 3 x 2 x 2 case, for series that do not depend on the grid.
fn case_small() -> rill_model::Case {
    oil_water_case(3, 2, 2, UnitSystem::Field)
}

/// Every series of `results` with one value per time in `times` (the
/// last value repeated).
fn stretch(results: &mut rill_sim::RunResults, times: &[f64]) {
    let n = times.len();
    let fit = |v: &mut Vec<f64>| {
        let last = v.last().copied().unwrap_or(0.0);
        v.resize(n, last);
    };
    results.times = times.to_vec();
    fit(&mut results.pressure_avg);
    fit(&mut results.balance_error);
    for w in &mut results.wells {
        for s in [&mut w.bhp, &mut w.rate, &mut w.cumulative] {
            fit(s);
        }
        w.mode.resize(n, rill_sim::ControlMode::Rate);
    }
    for b in &mut results.boundaries {
        fit(&mut b.rate);
        fit(&mut b.cumulative);
    }
    let ow = results.oil_water.as_mut().unwrap();
    for w in &mut ow.wells {
        for s in [
            &mut w.oil_rate,
            &mut w.water_rate,
            &mut w.water_cut,
            &mut w.cumulative_oil,
            &mut w.cumulative_water,
        ] {
            fit(s);
        }
    }
    for s in [
        &mut ow.oil_in_place,
        &mut ow.water_in_place,
        &mut ow.recovery,
        &mut ow.pore_volumes_injected,
        &mut ow.sw_avg,
        &mut ow.balance_error_oil,
        &mut ow.balance_error_water,
    ] {
        fit(s);
    }
}
