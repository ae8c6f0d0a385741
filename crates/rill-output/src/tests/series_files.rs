//! `series.csv` and `series.json`.

use super::fixtures::*;
use crate::{write_results, RunMeta, CAUTION};
use rill_model::UnitSystem;

fn write(system: UnitSystem) -> (tempfile::TempDir, Vec<Vec<String>>, serde_json::Value) {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, system);
    let results = results(&case);
    let out = dir.path().join("lobe.out");
    let files = write_results(&out, &case, &results, &RunMeta::new(&deck)).unwrap();
    let csv = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    let json = serde_json::from_str(&std::fs::read_to_string(&files.series_json).unwrap()).unwrap();
    (dir, csv, json)
}

fn num(s: &str) -> f64 {
    s.parse().unwrap_or_else(|_| panic!("not a number: {s:?}"))
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
}

#[test]
fn csv_field_units_headers_and_values_nist_sp811() {
    let (_dir, rows, _) = write(UnitSystem::Field);
    assert_eq!(
        rows[0],
        [
            "time [day]",
            "pressure_avg [psi]",
            "P-1 bhp [psi]",
            "P-1 rate [stb/day]",
            "P-1 cumulative [stb]",
            "I-1 bhp [psi]",
            "I-1 rate [stb/day]",
            "I-1 cumulative [stb]",
            "east aquifer rate [stb/day]",
            "east aquifer cumulative [stb]",
            "balance_error [-]",
        ]
    );
    assert_eq!(rows.len(), 4, "header and one row per report time");
    // NIST SP 811: psi = 6894.757293168 Pa, stb = 0.158987294928 m^3, day = 86400 s.
    let last = &rows[3];
    assert!(close(num(&last[0]), 20.0));
    assert!(close(num(&last[1]), 2980.5));
    assert!(close(num(&last[2]), 2450.0));
    assert!(close(num(&last[3]), 600.0));
    assert!(close(num(&last[4]), 12000.0));
    assert!(close(num(&last[6]), -400.0), "injection is negative");
    assert!(close(num(&last[8]), -175.0), "inflow is negative");
    assert!(close(num(&last[9]), -3250.0), "inflow is negative");
    assert_eq!(num(&last[10]), 2.25e-9);
    assert_eq!(rows[1][0], "0");
}

#[test]
fn csv_metric_units_nist_sp811() {
    let (_dir, rows, _) = write(UnitSystem::Metric);
    assert_eq!(rows[0][0], "time [day]");
    assert_eq!(rows[0][1], "pressure_avg [bar]");
    assert_eq!(rows[0][3], "P-1 rate [sm3/day]");
    assert_eq!(rows[0][4], "P-1 cumulative [sm3]");
    assert_eq!(rows[0][8], "east aquifer rate [sm3/day]");
    // 2980.5 psi in bar, and 600 stb/day in sm3/day, from the NIST factors.
    assert!(close(num(&rows[3][1]), 2980.5 * 6894.757293168 / 1e5));
    assert!(close(num(&rows[3][3]), 600.0 * 0.158987294928));
    assert!(close(num(&rows[3][4]), 12000.0 * 0.158987294928));
}

#[test]
fn csv_si_units_nist_sp811() {
    let (_dir, rows, _) = write(UnitSystem::Si);
    assert_eq!(rows[0][0], "time [s]");
    assert_eq!(rows[0][1], "pressure_avg [Pa]");
    assert_eq!(rows[0][3], "P-1 rate [sm3/s]");
    assert_eq!(rows[0][4], "P-1 cumulative [sm3]");
    assert_eq!(num(&rows[3][0]), 20.0 * 86400.0);
    assert!(close(num(&rows[3][1]), 2980.5 * 6894.757293168));
    assert!(close(num(&rows[3][3]), 600.0 * 0.158987294928 / 86400.0));
}

#[test]
fn csv_numbers_round_trip_exactly() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Si);
    let mut results = results(&case);
    results.pressure_avg[1] = 1.0 / 3.0;
    results.balance_error[2] = 1.2345678901234567e-13;
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let rows = parse_csv(&std::fs::read_to_string(files.series_csv).unwrap());
    assert_eq!(num(&rows[2][1]), 1.0 / 3.0);
    assert_eq!(num(&rows[3][10]), 1.2345678901234567e-13);
}

#[test]
fn csv_quotes_names_that_need_it() {
    let (dir, deck) = deck_dir();
    let mut case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    rename_well(&mut case, &mut results, 0, "A,\"B\"");
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let text = std::fs::read_to_string(files.series_csv).unwrap();
    assert!(
        text.starts_with("time [day],pressure_avg [psi],\"A,\"\"B\"\" bhp [psi]\","),
        "{text}"
    );
    let rows = parse_csv(&text);
    assert_eq!(rows[0][2], "A,\"B\" bhp [psi]");
    assert!(rows.iter().all(|r| r.len() == 11));
}

#[test]
fn json_parses_back_with_series_units_solver_and_cautions() {
    let (_dir, _, json) = write(UnitSystem::Field);
    assert_eq!(json["format"], "rill-series");
    assert_eq!(json["units"], "field");
    assert_eq!(json["title"], "Test lobe");
    assert_eq!(json["case"], "Quarry north");
    assert_eq!(json["report_times"], 3);
    let series = json["series"].as_array().unwrap();
    assert_eq!(series.len(), 11);
    assert_eq!(series[0]["name"], "time");
    assert_eq!(series[0]["unit"], "day");
    let rate = series.iter().find(|s| s["name"] == "P-1 rate").unwrap();
    assert_eq!(rate["well"], "P-1");
    assert_eq!(rate["quantity"], "rate");
    assert_eq!(rate["unit"], "stb/day");
    assert!(close(rate["values"][2].as_f64().unwrap(), 600.0));
    let aquifer = series
        .iter()
        .find(|s| s["name"] == "east aquifer rate")
        .unwrap();
    assert_eq!(aquifer["boundary"], "east aquifer");
    for s in series {
        assert_eq!(s["values"].as_array().unwrap().len(), 3, "{}", s["name"]);
    }
    let solver = &json["solver"];
    assert_eq!(solver["steps"], 14);
    assert_eq!(solver["step_cuts"], 1);
    assert_eq!(solver["newton_iterations"], 31);
    assert_eq!(solver["linear_iterations"], 31);
    assert_eq!(solver["linear_solver"], "direct");
    assert_eq!(json["timings"]["solver_seconds"], 0.125);
    assert_eq!(json["wells"][1]["role"], "injector");
    assert_eq!(json["wells"][0]["control"][2], "rate");
    assert_eq!(json["boundaries"][0]["side"], "east");
    assert_eq!(json["cautions"][0], CAUTION);
}

#[test]
fn json_writes_non_finite_values_as_null_and_cautions_about_them() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    results.wells[0].bhp[1] = f64::NAN;
    results.wells[0].mode[2] = rill_sim::ControlMode::Bhp;
    let mut meta = RunMeta::new(&deck);
    meta.cautions
        .push("well.injection-pressure: I-1 may exceed fracture pressure".into());
    let files = write_results(&dir.path().join("o"), &case, &results, &meta).unwrap();
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(files.series_json).unwrap()).unwrap();
    let bhp = json["series"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["name"] == "P-1 bhp")
        .unwrap()
        .clone();
    assert!(bhp["values"][1].is_null());
    let cautions: Vec<&str> = json["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c.as_str().unwrap())
        .collect();
    assert_eq!(
        cautions[1],
        "well.injection-pressure: I-1 may exceed fracture pressure"
    );
    assert!(
        cautions
            .iter()
            .any(|c| c.contains("\"P-1\" could not hold its target rate")),
        "{cautions:?}"
    );
    assert!(
        cautions
            .iter()
            .any(|c| c.contains("not finite") && c.contains("P-1 bhp")),
        "{cautions:?}"
    );
    let csv = std::fs::read_to_string(files.series_csv).unwrap();
    assert_eq!(parse_csv(&csv)[2][2], "NaN");
}

#[test]
fn inconsistent_results_are_an_error_not_a_panic() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    results.wells[1].rate.pop();
    let err =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap_err();
    assert!(
        err.to_string()
            .contains("well \"I-1\" rate has 2 values for 3 report times"),
        "{err}"
    );
    let mut results = super::fixtures::results(&case);
    results.pressure[1].pop();
    let err =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap_err();
    assert!(
        err.to_string().contains("cell pressures at report time 1"),
        "{err}"
    );
    assert!(!dir.path().join("o").exists());
}

#[test]
fn a_steady_run_with_one_report_time_writes_a_full_set() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    for v in [
        &mut results.times,
        &mut results.pressure_avg,
        &mut results.balance_error,
    ] {
        v.drain(..2);
    }
    results.pressure.drain(..2);
    for w in &mut results.wells {
        for s in [&mut w.bhp, &mut w.rate, &mut w.cumulative] {
            s.drain(..2);
        }
        w.mode.clear(); // a simulator may leave the modes out
    }
    for b in &mut results.boundaries {
        b.rate.drain(..2);
        b.cumulative.drain(..2);
    }
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let rows = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    assert_eq!(rows.len(), 2);
    assert_eq!(files.maps.len(), 1);
    let html = std::fs::read_to_string(&files.report_html).unwrap();
    assert!(
        html.contains("<circle"),
        "a single point is drawn as a marker"
    );
}

#[test]
fn boundary_cumulatives_are_series_with_units() {
    let (_dir, rows, json) = write(UnitSystem::Metric);
    assert_eq!(rows[0][9], "east aquifer cumulative [sm3]");
    assert!(close(num(&rows[3][9]), -3250.0 * 0.158987294928));
    let series = json["series"].as_array().unwrap();
    let cum = series
        .iter()
        .find(|s| s["name"] == "east aquifer cumulative")
        .unwrap();
    assert_eq!(cum["boundary"], "east aquifer");
    assert_eq!(cum["quantity"], "cumulative");
    assert_eq!(cum["unit"], "sm3");
    assert!(close(
        cum["values"][1].as_f64().unwrap(),
        -1500.0 * 0.158987294928
    ));
}

#[test]
fn a_case_without_a_name_writes_null() {
    let (dir, deck) = deck_dir();
    let mut case = case(3, 2, 2, UnitSystem::Field);
    case.name = None;
    let results = results(&case);
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(files.series_json).unwrap()).unwrap();
    assert!(json["case"].is_null());
    assert_eq!(json["title"], "Test lobe");
}

/// Round-off in a rate or cumulative (a shut-in well's `-1.15697e-12`) is
/// written as 0, in the CSV, the JSON and the report, while the results
/// keep the simulator's numbers; the balance error is never snapped.
#[test]
fn round_off_rates_and_volumes_are_written_as_zero() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    // I-1 shut in: round-off against P-1's 600 stb/day.
    results.wells[1].rate = vec![0.0, -1.15697e-12 * STB / DAY, 2e-13 * STB / DAY];
    results.wells[1].cumulative = vec![0.0, -1e-11 * STB, -3e-12 * STB];
    results.balance_error[2] = 1e-15;
    let kept = results.clone();
    let files =
        write_results(&dir.path().join("o"), &case, &results, &RunMeta::new(&deck)).unwrap();
    assert_eq!(results.wells, kept.wells, "the results keep their numbers");
    let rows = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    assert_eq!(rows[0][6], "I-1 rate [stb/day]");
    for row in &rows[1..] {
        assert_eq!((row[6].as_str(), row[7].as_str()), ("0", "0"), "{row:?}");
    }
    assert_eq!(
        num(&rows[3][10]),
        1e-15,
        "the balance error keeps its value"
    );
    assert!(close(num(&rows[3][3]), 600.0), "real rates are kept");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&files.series_json).unwrap()).unwrap();
    let rate = json["series"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["name"] == "I-1 rate")
        .unwrap()
        .clone();
    for v in rate["values"].as_array().unwrap() {
        assert_eq!(v.as_f64(), Some(0.0));
        assert!(
            !v.to_string().contains('e') && !v.to_string().starts_with('-'),
            "{v}"
        );
    }
    let html = std::fs::read_to_string(&files.report_html).unwrap();
    assert!(
        !html.contains("e-12") && !html.contains("e-13"),
        "no round-off in the report"
    );
    // A value just above the threshold is a flow and is kept.
    let mut results = kept.clone();
    results.wells[1].rate[2] = -1e-6 * STB / DAY;
    let files =
        write_results(&dir.path().join("p"), &case, &results, &RunMeta::new(&deck)).unwrap();
    let rows = parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap());
    assert!(close(num(&rows[3][6]), -1e-6), "{}", rows[3][6]);
}

/// With nothing flowing anywhere, the scale is the flow the reservoir's
/// pressure could drive (`flow_per_pascal` times the average pressure);
/// without that either, there is no scale and the numbers stay.
#[test]
fn a_run_where_nothing_flows_snaps_against_the_flow_its_pressure_could_drive() {
    let (dir, deck) = deck_dir();
    let case = case(3, 2, 2, UnitSystem::Field);
    let mut results = results(&case);
    for w in &mut results.wells {
        w.rate = vec![0.0, 3e-12 * STB / DAY, 0.0];
        w.cumulative = vec![0.0; 3];
    }
    for b in &mut results.boundaries {
        b.rate = vec![0.0; 3];
        b.cumulative = vec![0.0; 3];
    }
    let written = |results: &rill_sim::RunResults, name: &str| {
        let files =
            write_results(&dir.path().join(name), &case, results, &RunMeta::new(&deck)).unwrap();
        parse_csv(&std::fs::read_to_string(&files.series_csv).unwrap())
    };
    let rows = written(&results, "unknown");
    assert!(close(num(&rows[2][3]), 3e-12), "{}", rows[2][3]);
    // 1e-8 m^3/s per Pa at about 3000 psi (2.07e7 Pa): a scale of 0.2 m^3/s,
    // against which 3e-12 stb/day (5.5e-18 m^3/s) is round-off.
    results.flow_per_pascal = 1e-8;
    let rows = written(&results, "known");
    assert_eq!(rows[2][3], "0");
    // A real trickle of 1 stb/day (1.8e-6 m^3/s, above 2e-10) stays.
    results.wells[0].rate[2] = 1.0 * STB / DAY;
    let rows = written(&results, "trickle");
    assert!(close(num(&rows[3][3]), 1.0), "{}", rows[3][3]);
}
