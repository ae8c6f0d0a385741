//! Directional completions: Peaceman's equivalent radius and well index for
//! an anisotropic, non-square block (Peaceman 1983, from memory), applied to
//! a wellbore along x or y by rotating the axes (common practice, no
//! published source): the permeabilities and cell sizes normal to the
//! wellbore take the places of kx, ky, dx, dy, and the cell length along it
//! that of dz. Fictional "Plover" blocks; lengths in ft, permeabilities in
//! md throughout (the index is then in md*ft).

use rill_model::derived::*;
use rill_model::*;
use std::path::Path;

const FT: f64 = 0.3048; // NIST SP 811
const MD: f64 = 9.869233e-16; // NIST SP 811

/// One block, 200 x 150 x 30 ft, kx = 300, ky = 120, kz = 15 md: every
/// permeability and size different.
fn block() -> (Grid, Rock) {
    let grid = Grid {
        nx: 1,
        ny: 1,
        nz: 1,
        dx: vec![200.0 * FT],
        dy: vec![150.0 * FT],
        dz: vec![30.0 * FT].into(),
        top: vec![6000.0 * FT],
    };
    let rock = Rock {
        porosity: vec![0.2].into(),
        kx: vec![300.0 * MD].into(),
        ky: vec![120.0 * MD].into(),
        kz: vec![15.0 * MD].into(),
        compressibility: 0.0,
        ref_pressure: 2e7,
    };
    (grid, rock)
}

fn index_along(grid: &Grid, rock: &Rock, d: Direction) -> WellIndex {
    let comp = Completion::new(grid, 0, 0, 0, d);
    well_index(grid, rock, &comp, 0.25 * FT, 1.0)
}

/// The hand formula of the module doc, in ft and md: normal permeabilities
/// `k1`, `k2`, cell sizes `d1`, `d2`, length along the wellbore `l`.
fn hand(k1: f64, k2: f64, d1: f64, d2: f64, l: f64) -> (f64, f64) {
    let r_eq = 0.28 * ((k2 / k1).sqrt() * d1 * d1 + (k1 / k2).sqrt() * d2 * d2).sqrt()
        / ((k2 / k1).powf(0.25) + (k1 / k2).powf(0.25));
    let wi = 2.0 * std::f64::consts::PI * (k1 * k2).sqrt() * l / ((r_eq / 0.25).ln() + 1.0);
    (r_eq, wi)
}

#[test]
fn anisotropic_block_along_x_matches_the_hand_calculation() {
    let (grid, rock) = block();
    let wi = index_along(&grid, &rock, Direction::X);
    // Along x: kh = sqrt(ky kz), r_eq from (ky, kz, dy, dz), length dx.
    let (r_eq, index) = hand(120.0, 15.0, 150.0, 30.0, 200.0);
    // Worked with a calculator: r_eq = 12.6042 ft, WI = 10835.58 md*ft.
    assert!((r_eq - 12.6042).abs() < 1e-4, "{r_eq}");
    assert!((index - 10835.58).abs() < 1e-2, "{index}");
    assert!((wi.r_eq / FT - r_eq).abs() < 1e-9 * r_eq);
    assert!((wi.geometric / (MD * FT) - index).abs() < 1e-9 * index);
}

#[test]
fn anisotropic_block_along_y_matches_the_hand_calculation() {
    let (grid, rock) = block();
    let wi = index_along(&grid, &rock, Direction::Y);
    // Along y: kh = sqrt(kx kz), r_eq from (kx, kz, dx, dz), length dy.
    let (r_eq, index) = hand(300.0, 15.0, 200.0, 30.0, 150.0);
    // Worked with a calculator: r_eq = 12.3230 ft, WI = 12908.63 md*ft.
    assert!((r_eq - 12.3230).abs() < 1e-4, "{r_eq}");
    assert!((index - 12908.63).abs() < 1e-2, "{index}");
    assert!((wi.r_eq / FT - r_eq).abs() < 1e-9 * r_eq);
    assert!((wi.geometric / (MD * FT) - index).abs() < 1e-9 * index);
}

#[test]
fn rotating_the_grid_so_the_wellbore_is_vertical_gives_the_same_index() {
    let (grid, rock) = block();
    // The same cell turned so that the old x axis is the new z: the new
    // (x, y, z) are the old (y, z, x), sizes and permeabilities alike.
    let rotate = |d: Direction| {
        let (g, r) = block();
        let (s, k) = ([g.dx[0], g.dy[0], g.dz[0]], [r.kx[0], r.ky[0], r.kz[0]]);
        let order = match d {
            Direction::X => [1, 2, 0],
            Direction::Y => [0, 2, 1],
            Direction::Z => [0, 1, 2],
        };
        let grid = Grid {
            dx: vec![s[order[0]]],
            dy: vec![s[order[1]]],
            dz: vec![s[order[2]]].into(),
            ..g
        };
        let rock = Rock {
            kx: vec![k[order[0]]].into(),
            ky: vec![k[order[1]]].into(),
            kz: vec![k[order[2]]].into(),
            ..r
        };
        (grid, rock)
    };
    for d in [Direction::X, Direction::Y] {
        let along = index_along(&grid, &rock, d);
        let (g, r) = rotate(d);
        let vertical = index_along(&g, &r, Direction::Z);
        assert!(
            (along.geometric - vertical.geometric).abs() <= 1e-12 * vertical.geometric,
            "{d:?}: {along:?} vs {vertical:?}"
        );
        assert!((along.r_eq - vertical.r_eq).abs() <= 1e-12 * vertical.r_eq);
    }
    // And the three directions of the anisotropic block differ.
    let z = index_along(&grid, &rock, Direction::Z).geometric;
    let x = index_along(&grid, &rock, Direction::X).geometric;
    assert!((x - z).abs() > 0.01 * z);
}

fn deck(well: &str) -> String {
    format!(
        r#"grid {{
  cells = 6 x 4 x 3
  dx = 200 ft
  dy = 150 ft
  dz = 30 ft
  top = 6000 ft
}}

rock {{
  porosity = 0.2
  kx = 300 md
  ky = 120 md
  kz = 15 md
}}

fluid {{
  viscosity = 0.7 cP
  fvf = 1.02 rb/stb
  density = 63 lb/ft^3
}}

initial {{
  pressure = 2700 psi at 6000 ft
}}

well "Plover-H1" {{
  role = producer
  radius = 0.25 ft
  control = rate 500 stb/day
  bhp_limit = 900 psi
{well}
}}

timeline {{
  end = 100 day
}}
"#
    )
}

fn analyze(text: &str) -> Analysis {
    analyze_text(Path::new("/w/plover.rill"), text, &MemorySource::new())
}

#[test]
fn a_range_in_a_cell_completes_the_cells_along_its_axis() {
    let a = analyze(&deck("  completions = [(2..5, 3, 2)]\n  skin = 1"));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let case = a.case.as_ref().unwrap();
    let w = &case.wells[0];
    let cells: Vec<_> = w
        .completions
        .iter()
        .map(|c| (c.i + 1, c.j + 1, c.k + 1, c.direction))
        .collect();
    assert_eq!(
        cells,
        (2..=5).map(|i| (i, 3, 2, Direction::X)).collect::<Vec<_>>()
    );
    assert!(!a.diagnostics.iter().any(|d| d.code == Code::WellCompletion));
    // The inspect report (and hover, built on it) shows the direction.
    let r = inspect::cell_report(case, 2, 2, 1).unwrap();
    assert_eq!(r.wells[0].direction, Direction::X);
    let (g, rock) = block();
    let one = index_along(&g, &rock, Direction::X).geometric;
    assert!((r.wells[0].well_index - one).abs() < 1e-9 * one);
}

#[test]
fn the_direction_key_sets_the_listed_cells() {
    let a = analyze(&deck(
        "  completions = [(4, 1, 3) (4, 2, 3) (4, 3, 3)]\n  direction = y",
    ));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let w = &a.case.as_ref().unwrap().wells[0];
    assert!(w.completions.iter().all(|c| c.direction == Direction::Y));
    assert!(!a.diagnostics.iter().any(|d| d.code == Code::WellCompletion));
}

#[test]
fn a_location_well_stays_vertical_and_refuses_a_direction() {
    let a = analyze(&deck("  location = (3, 3)\n  layers = 1..3"));
    assert!(!a.has_errors(), "{:?}", a.diagnostics);
    let w = &a.case.as_ref().unwrap().wells[0];
    assert!(w.completions.iter().all(|c| c.direction == Direction::Z));
    let a = analyze(&deck("  location = (3, 3)\n  direction = x"));
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == Code::DeckValue && d.message.contains("`direction`")),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn gaps_along_the_direction_are_a_warning() {
    let a = analyze(&deck("  completions = [(1..2, 3, 2) (4..5, 3, 2)]"));
    let d: Vec<_> = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::WellCompletion)
        .collect();
    assert_eq!(d.len(), 1, "{:?}", a.diagnostics);
    assert_eq!(d[0].severity, Severity::Warning);
    assert!(
        d[0].message.contains("(2, 3, 2) and (4, 3, 2)") && d[0].message.contains("along x"),
        "{}",
        d[0].message
    );
}

#[test]
fn a_deviated_well_listed_cell_by_cell_is_not_a_gap() {
    let a = analyze(&deck("  completions = [(1, 3, 1) (2, 3, 2)]"));
    assert!(
        !a.diagnostics.iter().any(|d| d.code == Code::WellCompletion),
        "{:?}",
        a.diagnostics
    );
}

#[test]
fn two_ranges_in_one_cell_are_refused() {
    let a = analyze(&deck("  completions = [(1..2, 2..3, 2)]"));
    assert!(
        a.diagnostics
            .iter()
            .any(|d| d.code == Code::DeckValue && d.message.contains("one of them a range")),
        "{:?}",
        a.diagnostics
    );
}
