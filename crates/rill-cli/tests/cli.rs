//! The `rill` binary end to end: exit codes, the JSON shapes of the
//! specification, `fmt` never changing meaning, and `run` on the examples
//! writing a report that a headless browser renders with its plots.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

fn rill() -> Command {
    Command::new(env!("CARGO_BIN_EXE_rill"))
}

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn example(name: &str) -> PathBuf {
    root().join("examples").join(name)
}

/// `example` with `from` replaced by `to`, written as `name` in a fresh
/// directory (kept alive by the returned guard).
fn edited_example(
    example_name: &str,
    from: &str,
    to: &str,
    name: &str,
) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join(name);
    let text = std::fs::read_to_string(example(example_name)).unwrap();
    assert!(text.contains(from), "`{from}` not in {example_name}");
    std::fs::write(&deck, text.replace(from, to)).unwrap();
    (dir, deck)
}

/// `rill inspect DECK --cell CELL EXTRA...`, which must succeed: its stdout.
fn inspect(deck: &Path, cell: &str, extra: &[&str]) -> String {
    let o = rill()
        .arg("inspect")
        .arg(deck)
        .args(["--cell", cell])
        .args(extra)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{o:?}");
    String::from_utf8(o.stdout).unwrap()
}

/// The JSON of `rill inspect`.
fn inspect_json(deck: &Path, cell: &str) -> Value {
    serde_json::from_str(&inspect(deck, cell, &["--format", "json"])).unwrap()
}

/// The face on `side` in the JSON of `rill inspect`.
fn face(json: &Value, side: &str) -> Value {
    json["faces"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["side"] == side)
        .unwrap()
        .clone()
}

/// The text row of the face on `side` in `rill inspect`'s table.
fn face_row<'t>(text: &'t str, side: &str) -> &'t str {
    text.lines()
        .find(|l| l.trim_start().starts_with(side))
        .unwrap_or_else(|| panic!("no {side} row in {text}"))
}

#[test]
fn check_exit_codes_follow_the_spec() {
    let clean = rill()
        .arg("check")
        .arg(example("larkspur-east.rill"))
        .output()
        .unwrap();
    assert_eq!(
        clean.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&clean.stderr)
    );
    let broken = rill()
        .arg("check")
        .arg(root().join("tests/fixtures/unit.dimension/broken.rill"))
        .output()
        .unwrap();
    assert_eq!(broken.status.code(), Some(1));
    let warn = rill()
        .arg("check")
        .arg(root().join("tests/fixtures/sanity.fvf/broken.rill"))
        .output()
        .unwrap();
    assert_eq!(warn.status.code(), Some(0), "warnings only exit 0");
    let missing = rill()
        .arg("check")
        .arg("no/such/deck.rill")
        .output()
        .unwrap();
    assert_eq!(missing.status.code(), Some(2));
    let usage = rill()
        .arg("check")
        .arg("--format")
        .arg("yaml")
        .arg("x.rill")
        .output()
        .unwrap();
    assert_eq!(usage.status.code(), Some(2));
}

#[test]
fn check_json_has_the_fields_of_the_spec() {
    let out = rill()
        .args(["check", "--format", "json"])
        .arg(root().join("tests/fixtures/unit.volume-kind/broken.rill"))
        .output()
        .unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let d = &v["diagnostics"][0];
    for key in [
        "code",
        "severity",
        "message",
        "file",
        "line",
        "column",
        "end_line",
        "end_column",
        "fixes",
    ] {
        assert!(d.get(key).is_some(), "missing {key} in {d}");
    }
    assert_eq!(d["code"], "unit.volume-kind");
    assert_eq!(d["severity"], "error");
    assert_eq!(
        (d["line"].as_u64(), d["column"].as_u64()),
        (Some(33), Some(22))
    );
    // The fix converts the reservoir rate with the fixture's fvf (1.02 rb/stb):
    // 200 bbl/day / 1.02 = 196.078 stb/day, replacing number and unit.
    let edit = &d["fixes"][0]["edits"][0];
    assert_eq!(edit["replacement"], "196.078 stb/day");
    assert_eq!(
        (edit["column"].as_u64(), edit["end_column"].as_u64()),
        (Some(18), Some(29))
    );
}

#[test]
fn columns_count_unicode_scalar_values() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("deck.rill");
    let text = std::fs::read_to_string(root().join("tests/fixtures/unit.unknown/broken.rill"))
        .unwrap()
        .replace("fluid {", "fluid \"Ω water 😀\" {");
    std::fs::write(&deck, text).unwrap();
    let out = rill()
        .args(["check", "--format", "json"])
        .arg(&deck)
        .output()
        .unwrap();
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    let d = v["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["code"] == "unit.unknown")
        .unwrap()
        .clone();
    // `  viscosity = 0.8 cp`: the unit starts at column 19 whatever the line above holds.
    assert_eq!(d["column"], 19);
}

#[test]
fn inspect_json_matches_the_spec_and_hand_values() {
    let out = rill()
        .args(["inspect", "--format", "json", "--cell", "15,10,2"])
        .arg(example("larkspur-east.rill"))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    for key in [
        "i",
        "j",
        "k",
        "active",
        "depth_ft",
        "porosity",
        "kx_md",
        "ky_md",
        "kz_md",
        "pore_volume_rb",
    ] {
        assert!(v["cell"].get(key).is_some(), "cell lacks {key}");
    }
    let faces = v["faces"].as_array().unwrap();
    assert_eq!(faces.len(), 6);
    let west = faces.iter().find(|f| f["side"] == "west").unwrap();
    // 40 md both sides, 50 ft columns, 60 ft x 15 ft face, 0.8 cP, 1.02 rb/stb:
    // T = 0.00112712 * 900 * 40 / (0.8 * 1.02 * 50) (Ertekin et al. 2001, beta_c from memory).
    let hand = 0.00112712 * 900.0 * 40.0 / (0.8 * 1.02 * 50.0);
    let t = west["trans_stb_day_psi"].as_f64().unwrap();
    assert!((t - hand).abs() < 1e-5 * hand, "{t} vs {hand}");
    // The shale streak: kz = 0 md in this cell seals top and bottom.
    assert_eq!(
        faces.iter().find(|f| f["side"] == "top").unwrap()["trans_si"],
        0.0
    );
    let w = &v["wells"][0];
    for key in [
        "name",
        "r_eq_ft",
        "well_index_md_ft",
        "productivity_stb_day_psi",
    ] {
        assert!(w.get(key).is_some(), "well lacks {key}");
    }
    let bad = rill()
        .args(["inspect", "--cell", "99,1,1"])
        .arg(example("larkspur-east.rill"))
        .output()
        .unwrap();
    assert_eq!(bad.status.code(), Some(2));
}

#[test]
fn fmt_check_and_write() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("messy.rill");
    std::fs::write(&deck, "grid   {\n cells=2x2x1 # size\n}\n").unwrap();
    let check = rill().args(["fmt", "--check"]).arg(&deck).output().unwrap();
    assert_eq!(check.status.code(), Some(1));
    assert_eq!(
        std::fs::read_to_string(&deck).unwrap(),
        "grid   {\n cells=2x2x1 # size\n}\n",
        "--check never writes"
    );
    let write = rill().arg("fmt").arg(&deck).output().unwrap();
    assert_eq!(write.status.code(), Some(0));
    let again = rill().args(["fmt", "--check"]).arg(&deck).output().unwrap();
    assert_eq!(again.status.code(), Some(0));
    assert!(std::fs::read_to_string(&deck).unwrap().contains("# size"));
}

#[test]
fn explain_knows_every_code() {
    for code in rill_model::Code::ALL {
        let out = rill().args(["explain", code.as_str()]).output().unwrap();
        assert_eq!(out.status.code(), Some(0), "{code}");
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(
            text.contains("Wrong:") && text.contains("Right:") && text.contains("Fix:"),
            "{code}"
        );
    }
    assert_eq!(
        rill()
            .args(["explain", "unit.dimensoin"])
            .output()
            .unwrap()
            .status
            .code(),
        Some(2)
    );
}

fn run_into(deck: &Path, out: &Path) -> std::process::Output {
    rill()
        .arg("run")
        .arg(deck)
        .arg("--out")
        .arg(out)
        .arg("--quiet")
        .output()
        .unwrap()
}

#[test]
fn run_writes_series_maps_and_report_for_every_example() {
    let dir = tempfile::tempdir().unwrap();
    for deck in [
        example("teaching-block.rill"),
        example("larkspur-east.rill"),
        example("tamsin-ridge/tamsin-ridge.rill"),
        example("wrenfold-flank.rill"),
    ] {
        let out = dir
            .path()
            .join(deck.file_stem().unwrap())
            .with_extension("out");
        let o = run_into(&deck, &out);
        assert_eq!(
            o.status.code(),
            Some(0),
            "{}: {}",
            deck.display(),
            String::from_utf8_lossy(&o.stderr)
        );
        let stdout = String::from_utf8_lossy(&o.stdout);
        assert!(
            stdout.contains("engineering estimates"),
            "the caution is printed"
        );
        let csv = std::fs::read_to_string(out.join("series.csv")).unwrap();
        let header = csv.lines().next().unwrap();
        assert!(header.starts_with("time ["), "{header}");
        assert!(
            header.contains("pressure_avg [") && header.contains("balance_error [-]"),
            "{header}"
        );
        assert!(out.join("series.json").is_file() && out.join("report.html").is_file());
        assert!(out.join("maps").join("rill.pvd").is_file());
        // Balance errors at or below 1e-8 relative in normal runs.
        let json: Value =
            serde_json::from_str(&std::fs::read_to_string(out.join("series.json")).unwrap())
                .unwrap();
        let balance = json["series"]
            .as_array()
            .unwrap()
            .iter()
            .find(|s| s["name"] == "balance_error")
            .expect("a balance_error series");
        let values = balance["values"].as_array().unwrap();
        assert_eq!(Some(values.len() as u64), json["report_times"].as_u64());
        for v in values {
            let e = v.as_f64().unwrap_or(0.0);
            assert!(e <= 1e-8, "{}: balance error {e}", deck.display());
        }
    }
}

#[test]
fn a_failed_run_leaves_earlier_results_intact_and_never_touches_the_deck() {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("block.rill");
    let original = std::fs::read_to_string(example("teaching-block.rill")).unwrap();
    std::fs::write(&deck, &original).unwrap();
    let out = dir.path().join("block.out");
    assert_eq!(run_into(&deck, &out).status.code(), Some(0));
    let before = std::fs::read_to_string(out.join("series.csv")).unwrap();
    // Break the deck: the run refuses, and the earlier results stay as they were.
    std::fs::write(&deck, original.replace("kx = 50 md", "kx = 50 psi")).unwrap();
    assert_eq!(run_into(&deck, &out).status.code(), Some(1));
    assert_eq!(
        std::fs::read_to_string(out.join("series.csv")).unwrap(),
        before
    );
    // The deck's own directory is refused as an output directory.
    std::fs::write(&deck, &original).unwrap();
    assert_eq!(run_into(&deck, dir.path()).status.code(), Some(1));
    assert_eq!(std::fs::read_to_string(&deck).unwrap(), original);
}

#[test]
fn export_system_writes_matrix_market_files() {
    let dir = tempfile::tempdir().unwrap();
    let sys = dir.path().join("system");
    let o = rill()
        .arg("run")
        .arg(example("teaching-block.rill"))
        .arg("--out")
        .arg(dir.path().join("r.out"))
        .arg("--export-system")
        .arg(&sys)
        .arg("--quiet")
        .output()
        .unwrap();
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let m = std::fs::read_to_string(sys.join("matrix.mtx")).unwrap();
    assert!(m.starts_with("%%MatrixMarket matrix coordinate real general"));
    let b = std::fs::read_to_string(sys.join("rhs.mtx")).unwrap();
    assert!(b.starts_with("%%MatrixMarket matrix array real general"));
    // 121 cells and one well unknown.
    assert!(
        b.lines().nth(1).unwrap().starts_with("122 1"),
        "{}",
        b.lines().nth(1).unwrap()
    );
}

/// The report of the largest example opens in headless Chromium and shows
/// its plots: the rendered DOM holds the SVG charts and layer maps, and the
/// screenshot is a real page. Skipped (with a message) without Chromium.
#[test]
fn report_of_the_largest_example_renders_in_headless_chromium() {
    let Some(browser) = ["chromium", "chromium-browser"]
        .iter()
        .find_map(|b| which(b))
    else {
        eprintln!("SKIPPED: chromium is not installed (apt-get install -y chromium)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("larkspur.out");
    assert_eq!(
        run_into(&example("larkspur-east.rill"), &out).status.code(),
        Some(0)
    );
    let url = format!("file://{}", out.join("report.html").display());
    let common = [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
    ];
    let profile = format!("--user-data-dir={}", dir.path().join("profile").display());
    let dom = Command::new(&browser)
        .args(common)
        .arg(&profile)
        .arg("--dump-dom")
        .arg(&url)
        .output()
        .unwrap();
    let dom = String::from_utf8_lossy(&dom.stdout);
    let svgs = dom.matches("<svg").count();
    assert!(
        svgs >= 4,
        "expected the rate, BHP, pressure charts and layer maps, found {svgs} <svg>"
    );
    assert!(dom.contains("LE-1") && dom.contains("engineering estimates"));
    let shot = dir.path().join("report.png");
    let s = Command::new(&browser)
        .args(common)
        .arg(&profile)
        .arg(format!("--screenshot={}", shot.display()))
        .arg("--window-size=1200,2400")
        .arg(&url)
        .output()
        .unwrap();
    assert!(s.status.success());
    let size = std::fs::metadata(&shot).unwrap().len();
    assert!(size > 50_000, "screenshot of {size} bytes looks blank");
}

fn which(name: &str) -> Option<PathBuf> {
    std::env::var_os("PATH")?
        .to_str()?
        .split(':')
        .map(|d| Path::new(d).join(name))
        .find(|p| p.is_file())
}

#[test]
fn inspect_text_follows_the_report_units_and_the_units_option() {
    let (_dir, deck) = edited_example(
        "teaching-block.rill",
        "units = field",
        "units = metric",
        "metric.rill",
    );
    let inspect = |extra: &[&str]| inspect(&deck, "6,6,1", extra);
    // 100 ft cells are 30.48 m; the deck's report units are metric.
    let metric = inspect(&[]);
    assert!(metric.contains("30.48 x 30.48 x 9.144 m"), "{metric}");
    assert!(metric.contains("T [sm3/day/bar]"), "{metric}");
    let field = inspect(&["--units", "field"]);
    assert!(field.contains("100 x 100 x 30 ft"), "{field}");
    assert!(field.contains("T [stb/day/psi]"), "{field}");
    let si = inspect(&["--units", "si"]);
    assert!(si.contains("30.48 x 30.48 x 9.144 m"), "{si}");
}

#[test]
fn inspect_shows_a_faults_multiplier_and_the_value_before_it() {
    let (_dir, deck) = edited_example(
        "teaching-block.rill",
        "timeline {",
        "fault \"Seam\" {\n  side = east\n  i = 6\n  multiplier = 0.25\n}\n\ntimeline {",
        "faulted.rill",
    );
    let json = inspect_json(&deck, "6,6,1");
    let (east, west) = (face(&json, "east"), face(&json, "west"));
    assert_eq!(east["multiplier"], 0.25);
    assert_eq!(west["multiplier"], 1.0);
    // Uniform cells: the faulted face is a quarter of its unfaulted twin.
    let t = |f: &Value, key: &str| f[key].as_f64().unwrap();
    assert_eq!(t(&east, "trans_unmodified_si"), t(&west, "trans_si"));
    assert!(
        (t(&east, "trans_si") - 0.25 * t(&west, "trans_si")).abs() <= 1e-12 * t(&west, "trans_si")
    );
    // The text names the multiplier and the value before it on the east row only.
    let text = inspect(&deck, "6,6,1", &[]);
    let before = rill_units::format_number(t(&east, "trans_unmodified_stb_day_psi"));
    assert!(
        face_row(&text, "east").contains(&format!("fault multiplier 0.25, {before} before")),
        "{text}"
    );
    assert!(!face_row(&text, "west").contains("fault"), "{text}");
}

#[test]
fn inspect_names_the_aquifer_on_the_faces_it_holds() {
    let (_dir, deck) = edited_example(
        "teaching-block.rill",
        "timeline {",
        "aquifer \"Sill\" {\n  side = south\n  i = 6\n  water_volume = 1e8 rb\n  \
         compressibility = 6e-6 1/psi\n  productivity = 5 rb/day/psi\n}\n\ntimeline {",
        "flank.rill",
    );
    let held = face(&inspect_json(&deck, "6,1,1"), "south");
    assert_eq!(held["aquifer"], "Sill");
    assert_eq!(held["boundary"], Value::Null);
    assert_eq!(held["neighbor"], Value::Null);
    // The influx follows the aquifer's productivity, not a face transmissibility.
    assert_eq!(held["trans_si"], 0.0);
    assert_eq!(
        face(&inspect_json(&deck, "7,1,1"), "south")["aquifer"],
        Value::Null
    );
    let text = inspect(&deck, "6,1,1", &[]);
    assert!(
        face_row(&text, "south").contains("aquifer \"Sill\""),
        "{text}"
    );
}

#[test]
fn the_faulted_flank_example_reports_its_build_up_times_and_one_map() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("wrenfold.out");
    let o = run_into(&example("wrenfold-flank.rill"), &out);
    assert_eq!(o.status.code(), Some(0), "{o:?}");
    let csv = std::fs::read_to_string(out.join("series.csv")).unwrap();
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    for column in [
        "deep flank rate [stb/day]",
        "deep flank cumulative [stb]",
        "deep flank pressure [psi]",
    ] {
        assert!(header.contains(&column), "{header:?}");
    }
    // `report_at` times are report times exactly, merged with every 60 days.
    let times: Vec<&str> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').next().unwrap())
        .collect();
    for t in [
        "480", "500", "500.04", "500.1", "500.25", "500.5", "501", "502", "505", "510", "520",
        "540",
    ] {
        assert!(times.contains(&t), "{t} not in {times:?}");
    }
    // `maps = last`: one map, named by its report time's number.
    let maps: Vec<String> = std::fs::read_dir(out.join("maps"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n != "rill.pvd")
        .collect();
    assert_eq!(maps, vec![format!("step_{:04}.vts", times.len() - 1)]);
}

#[test]
fn inspect_shows_a_scaling_patch_on_each_layer_of_a_layered_kx() {
    let (_dir, deck) = edited_example(
        "larkspur-east.rill",
        "  patch i = 10..22 k = 2 {",
        "  patch i = 3 {\n    kx = 0.01 * kx\n  }\n  patch i = 10..22 k = 2 {",
        "scaled.rill",
    );
    let text = std::fs::read_to_string(&deck).unwrap();
    assert!(text.contains("kx = layers [150 40 300 90] md"));
    let kx_md = |cell: &str| inspect_json(&deck, cell)["cell"]["kx_md"].as_f64().unwrap();
    for (k, layer) in [(1, 150.0), (2, 40.0), (3, 300.0), (4, 90.0)] {
        let scaled = kx_md(&format!("3,7,{k}"));
        assert!(
            (scaled - 0.01 * layer).abs() <= 1e-12 * layer,
            "k={k}: {scaled}"
        );
        let beside = kx_md(&format!("4,7,{k}"));
        assert!((beside - layer).abs() <= 1e-12 * layer, "k={k}: {beside}");
    }
}
