//! `series.csv` and `series.json` of an oil-water run: the phase and field
//! columns with their units, values converted by the NIST SP 811 factors,
//! signs, and the breakthrough times in `series.json`.

use super::fixtures::*;
use crate::{write_results, RunMeta, CAUTION_OIL_WATER};
use rill_model::UnitSystem;

struct Written {
    _dir: tempfile::TempDir,
    rows: Vec<Vec<String>>,
    json: serde_json::Value,
}

impl Written {
    /// The value of column `header` at report time `t`.
    fn at(&self, header: &str, t: usize) -> f64 {
        let n = self.rows[0]
            .iter()
            .position(|h| h == header)
            .unwrap_or_else(|| panic!("no column {header:?} in {:?}", self.rows[0]));
        let text = &self.rows[t + 1][n];
        text.parse()
            .unwrap_or_else(|_| panic!("not a number: {text:?}"))
    }

    fn series(&self, name: &str) -> &serde_json::Value {
        self.json["series"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["name"] == name)
            .unwrap_or_else(|| panic!("no series {name:?}"))
    }
}

fn write(system: UnitSystem) -> Written {
    let (dir, deck) = deck_dir();
    let case = oil_water_case(3, 2, 2, system);
    let results = oil_water_results(&case);
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let rows = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    let json = serde_json::from_str(&std::fs::read_to_string(&files.series_json).unwrap()).unwrap();
    Written {
        _dir: dir,
        rows,
        json,
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
}

#[test]
fn csv_headers_name_every_phase_and_field_column_with_its_unit() {
    let w = write(UnitSystem::Field);
    assert_eq!(
        w.rows[0],
        [
            "time [day]",
            "pressure_avg [psi]",
            "P-1 bhp [psi]",
            "P-1 rate [stb/day]",
            "P-1 cumulative [stb]",
            "P-1 oil_rate [stb/day]",
            "P-1 water_rate [stb/day]",
            "P-1 water_cut [-]",
            "P-1 cumulative_oil [stb]",
            "P-1 cumulative_water [stb]",
            "I-1 bhp [psi]",
            "I-1 rate [stb/day]",
            "I-1 cumulative [stb]",
            "I-1 water_rate [stb/day]",
            "I-1 cumulative_water [stb]",
            "P-2 bhp [psi]",
            "P-2 rate [stb/day]",
            "P-2 cumulative [stb]",
            "P-2 oil_rate [stb/day]",
            "P-2 water_rate [stb/day]",
            "P-2 water_cut [-]",
            "P-2 cumulative_oil [stb]",
            "P-2 cumulative_water [stb]",
            "east aquifer rate [stb/day]",
            "east aquifer cumulative [stb]",
            "oil_in_place [stb]",
            "recovery [-]",
            "sw_avg [-]",
            "pore_volumes_injected [-]",
            "balance_error [-]",
            "balance_error_oil [-]",
            "balance_error_water [-]",
        ]
    );
    assert!(w.rows.iter().all(|r| r.len() == w.rows[0].len()));
    assert_eq!(w.rows.len(), 4, "header and one row per report time");
}

#[test]
fn csv_field_values_and_signs_nist_sp811() {
    let w = write(UnitSystem::Field);
    // The liquid stays in `rate`; the phases add up to it.
    assert!(close(w.at("P-1 rate [stb/day]", 2), 600.0));
    assert!(close(w.at("P-1 oil_rate [stb/day]", 2), 300.0));
    assert!(close(w.at("P-1 water_rate [stb/day]", 2), 300.0));
    assert_eq!(w.at("P-1 water_cut [-]", 1), 0.25);
    assert!(close(w.at("P-1 cumulative_oil [stb]", 2), 7500.0));
    assert!(close(w.at("P-1 cumulative_water [stb]", 2), 4500.0));
    // Injection is negative, as in the single-phase `rate` columns.
    assert!(close(w.at("I-1 water_rate [stb/day]", 2), -400.0));
    assert!(close(w.at("I-1 cumulative_water [stb]", 2), -8000.0));
    assert_eq!(w.at("P-2 water_cut [-]", 2), 0.0);
    assert!(close(w.at("oil_in_place [stb]", 0), 100_000.0));
    assert!(close(w.at("oil_in_place [stb]", 2), 90_500.0));
    assert_eq!(w.at("recovery [-]", 2), 0.095);
    assert_eq!(w.at("sw_avg [-]", 1), 0.21);
    assert_eq!(w.at("pore_volumes_injected [-]", 2), 0.04);
    assert_eq!(w.at("balance_error [-]", 2), 2.25e-9);
    assert_eq!(w.at("balance_error_oil [-]", 2), 2e-9);
    assert_eq!(w.at("balance_error_water [-]", 2), 2.25e-9);
}

/// NIST SP 811: 1 stb (oil barrel) = 0.158987294928 m^3, so 1 stb/day =
/// 0.158987294928 / 86400 sm3/s.
#[test]
fn csv_si_and_metric_units_nist_sp811() {
    let w = write(UnitSystem::Si);
    assert!(close(
        w.at("P-1 oil_rate [sm3/s]", 2),
        300.0 * 0.158987294928 / 86400.0
    ));
    assert!(close(
        w.at("I-1 water_rate [sm3/s]", 1),
        -400.0 * 0.158987294928 / 86400.0
    ));
    assert!(close(
        w.at("P-1 cumulative_water [sm3]", 2),
        4500.0 * 0.158987294928
    ));
    assert!(close(
        w.at("oil_in_place [sm3]", 2),
        90_500.0 * 0.158987294928
    ));
    assert_eq!(w.at("time [s]", 2), 20.0 * 86400.0);
    // Fractions are the same in every system.
    assert_eq!(w.at("P-1 water_cut [-]", 2), 0.5);
    assert_eq!(w.at("recovery [-]", 2), 0.095);

    let w = write(UnitSystem::Metric);
    assert!(close(
        w.at("P-1 water_rate [sm3/day]", 1),
        150.0 * 0.158987294928
    ));
    assert!(close(
        w.at("P-2 cumulative_oil [sm3]", 2),
        2000.0 * 0.158987294928
    ));
}

#[test]
fn json_has_the_phase_series_the_producers_breakthrough_and_the_oil_water_caution() {
    let w = write(UnitSystem::Field);
    assert_eq!(w.json["phases"], "oil-water");
    assert_eq!(w.json["cautions"][0], CAUTION_OIL_WATER);
    let cut = w.series("P-1 water_cut");
    assert_eq!(cut["quantity"], "water_cut");
    assert_eq!(cut["well"], "P-1");
    assert_eq!(cut["unit"], "-");
    assert_eq!(cut["values"][2], 0.5);
    let water = w.series("I-1 water_rate");
    assert_eq!(water["quantity"], "water_rate");
    assert_eq!(water["unit"], "stb/day");
    assert!(close(water["values"][1].as_f64().unwrap(), -400.0));
    let recovery = w.series("recovery");
    assert_eq!(recovery["quantity"], "recovery");
    assert!(recovery.get("well").is_none());
    assert!(close(
        w.series("oil_in_place")["values"][1].as_f64().unwrap(),
        94_500.0
    ));
    assert_eq!(w.series("pore_volumes_injected")["unit"], "-");
    let series = w.json["series"].as_array().unwrap();
    assert_eq!(series.len(), 32);
    for s in series {
        assert_eq!(s["values"].as_array().unwrap().len(), 3, "{}", s["name"]);
    }
    // Breakthrough in days; null while none; injectors have none.
    let wells = w.json["wells"].as_array().unwrap();
    assert_eq!(wells[0]["breakthrough"], 5.0);
    assert!(wells[1].get("breakthrough").is_none(), "{}", wells[1]);
    assert!(wells[2]["breakthrough"].is_null());
    assert!(wells[2].get("breakthrough").is_some());
}

#[test]
fn a_single_phase_run_writes_no_oil_water_keys() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let files = write_results(
        &dir.path().join("o"),
        &case,
        &results(&case),
        &RunMeta::new(&deck),
    )
    .unwrap();
    let text = std::fs::read_to_string(files.series_json).unwrap();
    for key in ["\"phases\"", "\"breakthrough\"", "water_cut", "recovery"] {
        assert!(!text.contains(key), "{key}");
    }
}

/// Phase rates that are round-off against the run's flow are written as
/// 0, like the liquid rates; fractions keep their values.
#[test]
fn round_off_phase_rates_are_written_as_zero() {
    let (dir, deck) = deck_dir();
    let case = oil_water_case(3, 2, 2, UnitSystem::Field);
    let mut results = oil_water_results(&case);
    let ow = results.oil_water.as_mut().unwrap();
    ow.wells[2].water_rate = vec![0.0, 3e-13 * STB / DAY, -2e-13 * STB / DAY];
    ow.wells[2].cumulative_water = vec![0.0, 1e-12 * STB, 4e-12 * STB];
    ow.recovery[1] = 1e-15;
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let rows = parse_csv(&std::fs::read_to_string(files.series_csv).unwrap());
    let col = |h: &str| rows[0].iter().position(|c| c == h).unwrap();
    for row in &rows[1..] {
        assert_eq!(row[col("P-2 water_rate [stb/day]")], "0", "{row:?}");
        assert_eq!(row[col("P-2 cumulative_water [stb]")], "0", "{row:?}");
    }
    assert_eq!(rows[2][col("recovery [-]")], "1e-15");
}

#[test]
fn inconsistent_oil_water_results_are_an_error_and_write_nothing() {
    let (dir, deck) = deck_dir();
    let case = oil_water_case(3, 2, 2, UnitSystem::Field);
    let out = dir.path().join("o");
    let fails = |results: &rill_sim::RunResults, case: &rill_model::Case, needle: &str| {
        let err = write_results(&out, case, results, &RunMeta::new(&deck)).unwrap_err();
        assert!(err.to_string().contains(needle), "{err}");
        assert!(!out.exists());
    };
    let mut r = oil_water_results(&case);
    r.oil_water.as_mut().unwrap().wells[0].water_cut.pop();
    fails(
        &r,
        &case,
        "well \"P-1\" water_cut has 2 values for 3 report times",
    );
    let mut r = oil_water_results(&case);
    r.oil_water.as_mut().unwrap().recovery.push(0.2);
    fails(&r, &case, "recovery has 4 values for 3 report times");
    let mut r = oil_water_results(&case);
    r.oil_water.as_mut().unwrap().wells.pop();
    fails(&r, &case, "phase series for 2 of 3 wells");
    let mut r = oil_water_results(&case);
    r.oil_water.as_mut().unwrap().saturation[1].pop();
    fails(
        &r,
        &case,
        "water saturations at report time 1 have 11 values for 12 cells",
    );
    let mut r = oil_water_results(&case);
    r.oil_water.as_mut().unwrap().saturation.truncate(1);
    fails(
        &r,
        &case,
        "water saturations are stored for 1 report times and cell pressures for 3",
    );
    let mut r = oil_water_results(&case);
    r.oil_water = None;
    fails(
        &r,
        &case,
        "the case is oil-water but the results hold no oil-water series",
    );
    let mut single = case.clone();
    single.oil_water = None;
    fails(
        &oil_water_results(&case),
        &single,
        "the results hold oil-water series but the case is single-phase",
    );
}
