//! Hover with the last run's values beside the computed ones: a cell's
//! pressure and face fluxes (with their direction), a well's rate, BHP and
//! cumulative, a boundary's rate, in the deck's report units and marked
//! with the run's time. Without run values, hover is as before.

mod common;
use common::*;
use rill_ide::{RunFlow, RunValues, RunWell};

const DAY: f64 = 86_400.0;
const PSI: f64 = 6_894.757_293_168_361;
const STB: f64 = 0.158_987_294_928;

fn deck() -> String {
    include_str!("../../../examples/teaching-block.rill").replace(
        "timeline {",
        "boundary \"rim\" {\n  side = west\n  pressure = 2500 psi at 5015 ft\n}\n\ntimeline {",
    )
}

/// Values as a run of the 11 x 11 x 1 block could leave them: every cell
/// at 2000 psi, 10 stb/day east through every east face, 4 stb/day south
/// (negative towards +j) through every north face.
fn run() -> RunValues {
    let n = 121;
    RunValues {
        time: 180.0 * DAY,
        grid: (11, 11, 1),
        pressure: vec![2000.0 * PSI; n],
        flux: [
            vec![10.0 * STB / DAY; n],
            vec![-4.0 * STB / DAY; n],
            vec![0.0; n],
        ],
        water_saturation: None,
        wells: vec![RunWell {
            name: "MB-1".into(),
            rate: 150.0 * STB / DAY,
            bhp: 1234.5 * PSI,
            cumulative: 27_000.0 * STB,
        }],
        boundaries: vec![RunFlow {
            name: "rim".into(),
            rate: -150.0 * STB / DAY,
            cumulative: -27_000.0 * STB,
            pressure: None,
        }],
        aquifers: Vec::new(),
    }
}

#[test]
fn a_well_shows_its_last_rate_bhp_and_cumulative() {
    let text = deck();
    let s = snap(&text);
    let off = at(&text, "well \"MB-1\"", 7);
    let with = s.hover_with_run(off, Some(&run())).unwrap().markdown;
    assert!(
        with.contains(
            "**last run**, t = 180 day: rate 150 stb/day, BHP 1234.5 psi, cumulative 27000 stb"
        ),
        "{with}"
    );
    // The well-index table is still there, and without a run nothing is added.
    let without = s.hover(off).unwrap().markdown;
    assert!(with.starts_with(&without), "{with}\n---\n{without}");
    assert!(!without.contains("last run"));
}

#[test]
fn a_cell_shows_its_pressure_and_each_face_flux_with_its_direction() {
    let text = deck();
    let s = snap(&text);
    let off = at(&text, "location = (6, 6)", 12);
    let md = s.hover_with_run(off, Some(&run())).unwrap().markdown;
    assert!(
        md.contains("**last run**, t = 180 day: pressure 2000 psi"),
        "{md}"
    );
    // East: 10 out; west: the west neighbour's east face, 10 in; north:
    // -4 towards +j is 4 into the cell; south: 4 out of it.
    assert!(md.contains("| east | 10 | out of the cell |"), "{md}");
    assert!(md.contains("| west | 10 | into the cell |"), "{md}");
    assert!(md.contains("| north | 4 | into the cell |"), "{md}");
    assert!(md.contains("| south | 4 | out of the cell |"), "{md}");
    // A single layer: no top or bottom neighbour, no row in the run's table.
    let section = &md[md.find("**last run**").unwrap()..];
    assert!(
        !section.contains("| top |") && !section.contains("| bottom |"),
        "{md}"
    );
}

#[test]
fn a_boundary_shows_its_last_rate_and_values_for_another_grid_are_ignored() {
    let text = deck();
    let s = snap(&text);
    let off = at(&text, "boundary \"rim\"", 2);
    let md = s.hover_with_run(off, Some(&run())).unwrap().markdown;
    assert!(
        md.contains("**last run**, t = 180 day: rate -150 stb/day (negative: inflow), cumulative -27000 stb"),
        "{md}"
    );
    // Arrays of another grid say nothing about this one's cells.
    let mut other = run();
    other.grid = (10, 11, 1);
    let off = at(&text, "location = (6, 6)", 12);
    let md = s.hover_with_run(off, Some(&other)).unwrap().markdown;
    assert!(!md.contains("last run"), "{md}");
}

/// The number after `key` in `md`, up to the next `,` or `)`.
fn number_after(md: &str, key: &str) -> f64 {
    let rest = &md[md
        .find(key)
        .unwrap_or_else(|| panic!("`{key}` not in {md}"))
        + key.len()..];
    let end = rest.find([',', ')']).unwrap();
    rest[..end].trim().parse().unwrap()
}

#[test]
fn a_cell_of_an_oil_water_run_shows_its_saturation_and_relative_permeabilities() {
    let text = include_str!("../../../examples/brackenlow-waterflood.rill");
    let s = snap(text);
    let n = 24 * 12 * 6;
    let values = RunValues {
        time: 365.0 * DAY,
        grid: (24, 12, 6),
        pressure: vec![3000.0 * PSI; n],
        flux: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
        water_saturation: Some(vec![0.5; n]),
        wells: Vec::new(),
        boundaries: Vec::new(),
        aquifers: Vec::new(),
    };
    let off = at(text, "location = (2, 2)", 12);
    let md = s.hover_with_run(off, Some(&values)).unwrap().markdown;
    assert!(
        md.contains("**last run**, t = 365 day: pressure 3000 psi, water saturation 0.5 (krw "),
        "{md}"
    );
    // The cell's curves are the deck's "fenwold sand" Corey curves (swc
    // 0.16, sor 0.24, krw_end 0.35, kro_end 0.9, nw 2.2, no 2.5): at sw 0.5
    // the normalised saturation is 0.34 / 0.6, so krw = 0.35 S^2.2 and
    // kro = 0.9 (1 - S)^2.5 (Corey's power-law form, as the reference
    // defines it).
    assert!(md.contains("| relperm | \"fenwold sand\" |"), "{md}");
    let sn: f64 = 0.34 / 0.6;
    let (krw, kro) = (0.35 * sn.powf(2.2), 0.9 * (1.0 - sn).powf(2.5));
    let section = &md[md.find("**last run**").unwrap()..];
    let (shown_krw, shown_kro) = (number_after(section, "krw "), number_after(section, "kro "));
    assert!(
        (shown_krw - krw).abs() <= 1e-5 * krw,
        "{shown_krw} vs {krw}"
    );
    assert!(
        (shown_kro - kro).abs() <= 1e-5 * kro,
        "{shown_kro} vs {kro}"
    );
    // A saturation array of another length says nothing about these cells.
    let mut short = values.clone();
    short.water_saturation = Some(vec![0.5; n - 1]);
    let md = s.hover_with_run(off, Some(&short)).unwrap().markdown;
    assert!(!md.contains("last run"), "{md}");
}
