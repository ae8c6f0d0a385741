//! Aquifer series: their columns in `series.csv` and `series.json`, their
//! lines, chart and table in the report.

use super::fixtures::*;
use crate::{write_results, RunMeta};
use rill_model::{Aquifer, Origin, Selection, Side, UnitSystem};
use rill_sim::AquiferSeries;

const PSI: f64 = 6894.757293168;
const STB: f64 = 0.158987294928;
const DAY: f64 = 86400.0;

fn with_aquifer(system: UnitSystem) -> (tempfile::TempDir, crate::WrittenFiles) {
    let (dir, deck) = deck_dir();
    let mut case = case(3, 2, 2, system);
    case.aquifers.push(Aquifer {
        name: "south flank".into(),
        side: Side::South,
        select: Selection::default(),
        water_volume: 1e6 * STB,
        compressibility: 4e-6 / PSI,
        productivity: 0.5 * STB / DAY / PSI,
        origin: Origin::default(),
    });
    let mut results = results(&case);
    results.aquifers.push(AquiferSeries {
        name: "south flank".into(),
        rate: vec![0.0, -50.0 * STB / DAY, -80.0 * STB / DAY],
        cumulative: vec![0.0, -500.0 * STB, -1300.0 * STB],
        pressure: vec![3000.0 * PSI, 2990.0 * PSI, 2975.0 * PSI],
    });
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    (dir, files)
}

#[test]
fn csv_has_rate_cumulative_and_pressure_after_the_boundaries() {
    let (_dir, files) = with_aquifer(UnitSystem::Field);
    let rows = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    let h = &rows[0];
    let at = |name: &str| {
        h.iter()
            .position(|c| c == name)
            .unwrap_or_else(|| panic!("{name} in {h:?}"))
    };
    let rate = at("south flank rate [stb/day]");
    assert_eq!(at("south flank cumulative [stb]"), rate + 1);
    assert_eq!(at("south flank pressure [psi]"), rate + 2);
    assert!(at("east aquifer rate [stb/day]") < rate);
    assert_eq!(h.last().unwrap(), "balance_error [-]");
    // Row 0 is the header, then t = 0, 10 and 20 days.
    let value = |r: usize, c: usize| -> f64 { rows[r][c].parse().unwrap() };
    assert!((value(3, rate) + 80.0).abs() < 1e-6);
    assert!((value(3, rate + 1) + 1300.0).abs() < 1e-6);
    assert!((value(3, rate + 2) - 2975.0).abs() < 1e-6);
    // Metric: bar and sm3.
    let (_dir, files) = with_aquifer(UnitSystem::Metric);
    let text = std::fs::read_to_string(&files.series_csv).unwrap();
    assert!(text.contains("south flank pressure [bar]"), "{text}");
}

#[test]
fn json_names_the_aquifer_of_each_series() {
    let (_dir, files) = with_aquifer(UnitSystem::Field);
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&files.series_json).unwrap()).unwrap();
    let series = json["series"].as_array().unwrap();
    let p = series
        .iter()
        .find(|s| s["name"] == "south flank pressure")
        .unwrap();
    assert_eq!(p["aquifer"], "south flank");
    assert_eq!(p["quantity"], "pressure");
    assert_eq!(p["unit"], "psi");
    assert!(p.get("boundary").is_none());
    let c = series
        .iter()
        .find(|s| s["name"] == "south flank cumulative")
        .unwrap();
    assert_eq!(c["quantity"], "cumulative");
    assert_eq!(json["aquifers"][0]["name"], "south flank");
    assert_eq!(json["aquifers"][0]["side"], "south");
}

#[test]
fn report_plots_and_tabulates_the_aquifer() {
    let (_dir, files) = with_aquifer(UnitSystem::Field);
    let html = std::fs::read_to_string(&files.report_html).unwrap();
    assert!(html.contains("<h3>Aquifer pressure</h3>"), "chart");
    assert!(html.contains("south flank (aquifer)"), "legend");
    assert!(html.contains("Aquifers at 20 day"), "table");
    assert!(
        html.contains("<td>south flank</td><td>south</td>"),
        "table row"
    );
}
