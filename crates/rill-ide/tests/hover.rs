//! Hover: cell reports with the numbers of `rill_model::inspect::cell_report`,
//! wells, quantities, units, keys, blocks, array files, diagnostics.

mod common;
use common::*;
use rill_model::inspect::cell_report;
use rill_model::MemorySource;
use rill_units::{display_unit, Kind, System};

/// Non-uniform widths, anisotropic permeability, a zero-permeability cell,
/// a boundary on the east side.
const ANISO: &str = r#"grid {
  cells = 3 x 2 x 2
  dx = [100 50 80] ft
  dy = [60 90] ft
  dz = [20 30] ft
  top = 6000 ft
}

rock {
  porosity = 0.25
  kx = cells [10 0 30 40 50 60 70 80 90 100 110 120] md
  ky = cells [15 25 35 45 55 65 75 85 95 105 115 125] md
  kz = layers [5 2] md
}

fluid {
  viscosity = 0.8 cP
  fvf = 1.02 rb/stb
  density = 62.4 lb/ft^3
}

initial {
  pressure = 3000 psi at 6000 ft
}

well "W-1" {
  role = producer
  completions = [(1, 2, 1) (1, 2, 2)]
  radius = 0.25 ft
  skin = 2
  control = rate 100 stb/day
}

boundary "edge" {
  side = east
  pressure = 2900 psi
}

timeline {
  end = 10 day
}
"#;

fn field(si: f64, kind: Kind) -> f64 {
    display_unit(kind, System::Field).from_si(si)
}

/// Checks every face row of a cell hover against `cell_report`.
fn assert_faces_match(markdown: &str, i: usize, j: usize, k: usize, case: &rill_model::Case) {
    let report = cell_report(case, i, j, k).expect("cell inside the grid");
    assert!(
        markdown.contains(&format!("**cell ({}, {}, {})**", i + 1, j + 1, k + 1)),
        "{markdown}"
    );
    for face in &report.faces {
        let row = markdown
            .lines()
            .find(|l| l.starts_with(&format!("| {} |", face.side.name())))
            .unwrap_or_else(|| panic!("no row for {}: {markdown}", face.side.name()));
        let cells = row_cells(row);
        assert_eq!(cells.len(), 5, "{row}");
        let neighbour = match face.neighbor {
            Some((a, b, c)) => format!("({a}, {b}, {c})"),
            None => match &face.boundary {
                Some(b) => format!("boundary \"{b}\""),
                None => "closed".into(),
            },
        };
        assert_eq!(cells[1], neighbour);
        let perm: f64 = cells[2].parse().unwrap();
        let t_field: f64 = cells[3].parse().unwrap();
        let t_si: f64 = cells[4].parse().unwrap();
        assert!(
            close6(perm, field(face.perm_face, Kind::Permeability)),
            "{row}"
        );
        assert!(
            close6(t_field, field(face.trans, Kind::Transmissibility)),
            "{row}"
        );
        assert!(close6(t_si, face.trans), "{row}");
    }
    let props = markdown
        .lines()
        .find(|l| l.starts_with("| kx, ky, kz |"))
        .expect("permeability row");
    let ks: Vec<f64> = row_cells(props)[1]
        .trim_end_matches(" md")
        .split(", ")
        .map(|v| v.parse().unwrap())
        .collect();
    assert!(
        close6(ks[0], field(report.kx, Kind::Permeability)) || report.kx == 0.0 && ks[0] == 0.0
    );
    assert!(close6(ks[1], field(report.ky, Kind::Permeability)));
    assert!(close6(ks[2], field(report.kz, Kind::Permeability)));
}

#[test]
fn hover_on_cells_item_shows_the_faces_of_cell_report_with_a_zero_neighbour() {
    let s = snap(ANISO);
    assert!(!s.analysis().has_errors(), "{:?}", s.diagnostics());
    let case = s.analysis().case.clone().unwrap();
    // Item 1 of kx: cell (1, 1, 1); its east neighbour has kx = 0.
    let h = s.hover(at(ANISO, "cells [10 0", 7)).expect("hover");
    assert!(h.markdown.contains("item 1 of 12"), "{}", h.markdown);
    assert_faces_match(&h.markdown, 0, 0, 0, &case);
    let east = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| east |"))
        .unwrap();
    // A zero-permeability neighbour gives a zero face value and no flow
    // (common practice, no published source).
    assert_eq!(row_cells(east)[2], "0");
    assert_eq!(row_cells(east)[3], "0");
    // Item 6 (`60`): cell (3, 2, 1), on the east boundary.
    let h = s.hover(at(ANISO, "60 70", 0)).expect("hover");
    assert_faces_match(&h.markdown, 2, 1, 0, &case);
    assert!(h.markdown.contains("boundary \"edge\""), "{}", h.markdown);
    // The same via the ky list and in the second layer.
    let h = s.hover(at(ANISO, "105 115", 0)).expect("hover");
    assert_faces_match(&h.markdown, 0, 1, 1, &case);
}

#[test]
fn hover_face_aziz_settari_1979_harmonic_and_ertekin_2001_transmissibility() {
    // Cell (1, 2, 1): kx 40 md, dx 100 ft; east neighbour (2, 2, 1): kx 50 md, dx 50 ft.
    // k_face = (dx_a + dx_b) / (dx_a / k_a + dx_b / k_b) (Aziz and Settari 1979, from memory).
    let s = snap(ANISO);
    let h = s.hover(at(ANISO, "40 50 60", 0)).expect("hover");
    let east = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| east |"))
        .unwrap();
    let cells = row_cells(east);
    let k_face = 150.0 / (100.0 / 40.0 + 50.0 / 50.0);
    assert!(close6(cells[2].parse().unwrap(), k_face), "{east}");
    // T = beta_c A k_face / (mu B (dx_a + dx_b) / 2), beta_c = 0.00112712 from the
    // NIST factors (Ertekin, Abou-Kassem and King 2001, from memory); A = 90 ft x 20 ft.
    let t = 0.00112712 * 90.0 * 20.0 * k_face / (0.8 * 1.02 * 75.0);
    let shown: f64 = cells[3].parse().unwrap();
    assert!((shown - t).abs() / t < 2e-5, "{shown} vs {t}");
}

#[test]
fn hover_on_a_cell_tuple_and_a_layer_value_and_a_patch() {
    let s = snap(ANISO);
    let case = s.analysis().case.clone().unwrap();
    let h = s.hover(at(ANISO, "(1, 2, 2)", 4)).expect("tuple hover");
    assert_faces_match(&h.markdown, 0, 1, 1, &case);
    // The well completed there is listed too.
    assert!(h.markdown.contains("well \"W-1\""), "{}", h.markdown);

    let b = snap(BASE);
    let bcase = b.analysis().case.clone().unwrap();
    let h = b.hover(at(BASE, "150 40", 4)).expect("layer hover");
    assert!(
        h.markdown
            .contains("layer 2; the cell at the middle column"),
        "{}",
        h.markdown
    );
    assert_faces_match(&h.markdown, 2, 1, 1, &bcase);
    let h = b.hover(at(BASE, "patch i", 1)).expect("patch hover");
    assert!(
        h.markdown.contains("box 2 x 3 x 1 = 6 cells"),
        "{}",
        h.markdown
    );
    assert_faces_match(&h.markdown, 1, 0, 1, &bcase);
    let h = b.hover(at(BASE, "2..3 k", 1)).expect("patch range hover");
    assert!(h.markdown.contains("first cell of the patch"));
    // A column `(2, 2)`: the top layer is shown.
    let h = b.hover(at(BASE, "(2, 2)", 1)).expect("column hover");
    assert!(
        h.markdown.contains("column (2, 2); the top layer is shown"),
        "{}",
        h.markdown
    );
}

#[test]
fn peaceman_1978_square_block_in_well_hover() {
    // Square isotropic block: r_eq = 0.198 dx (Peaceman 1978, from memory).
    let s = snap(BASE);
    let h = s
        .hover(at(BASE, "\"P-1\" {\n  role", 1))
        .expect("well hover");
    let row = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| (2, 2, 1) |"))
        .expect("completion row");
    let r_eq: f64 = row_cells(row)[1].parse().unwrap();
    assert!((r_eq - 0.198 * 100.0).abs() < 0.01, "{row}");
    // The well index and productivity are those of `derived` (as in `rill inspect`).
    let case = s.analysis().case.clone().unwrap();
    let w = &case.wells[0];
    let wi = rill_model::derived::well_index(
        &case.grid,
        &case.rock,
        &w.completions[0],
        w.radius,
        w.skin,
    );
    let shown_wi: f64 = row_cells(row)[2].parse().unwrap();
    assert!(
        close6(shown_wi, field(wi.geometric, Kind::WellIndex)),
        "{row}"
    );
    let pi: f64 = row_cells(row)[3].parse().unwrap();
    assert!(close6(
        pi,
        field(
            rill_model::derived::fluid_trans(&case, wi.geometric),
            Kind::Productivity
        )
    ));
    // Steady radial inflow constant: 2 pi beta_c = 0.00708 (Craft and Hawkins 1959, from memory):
    // productivity = 0.00708 k h / (mu B (ln(r_eq/r_w) + s)).
    let expected = 0.00708 * 150.0 * 20.0 / (0.8 * 1.02 * ((r_eq / 0.3_f64).ln() + 1.5));
    assert!(
        (pi - expected).abs() / expected < 2e-3,
        "{pi} vs {expected}"
    );
    // The same hover on the name in the event.
    let h2 = s
        .hover(at(BASE, "\"P-1\" { control", 1))
        .expect("event well hover");
    assert!(h2.markdown.contains(row), "{}", h2.markdown);
}

#[test]
fn hover_on_quantities_in_si_and_other_systems_nist_sp811() {
    let s = snap(BASE);
    // 150 md = 150 * 9.869233e-16 m^2 (NIST SP 811: darcy = 9.869233e-13 m^2).
    let h = s.hover(at(BASE, "3200 psi", 0)).expect("quantity hover");
    // psi = 6894.757 Pa (NIST SP 811): 3200 psi = 22063223 Pa = 220.632 bar.
    assert!(h.markdown.contains("2.20632e7 Pa"), "{}", h.markdown);
    assert!(h.markdown.contains("220.632 bar"), "{}", h.markdown);
    assert!(h.markdown.contains("3200 psi"));
    let h = s.hover(at(BASE, "0.3 ft", 0)).expect("radius hover");
    // ft = 0.3048 m exactly.
    assert!(h.markdown.contains("0.09144 m"), "{}", h.markdown);
    // The cursor right after the unit still hovers it.
    let h = s.hover(at(BASE, "1000 psi", 8)).expect("end of word");
    assert!(h.markdown.contains("psi"));
}

#[test]
fn hover_on_units_keys_blocks() {
    let s = snap(BASE);
    let h = s.hover(at(BASE, "4e-6 1/psi", 7)).expect("unit hover");
    assert!(h.markdown.contains("**psi**"), "{}", h.markdown);
    assert!(h.markdown.contains("6894.76"), "{}", h.markdown);
    assert!(h.markdown.contains("compressibility"), "{}", h.markdown);
    let h = s.hover(at(BASE, "rb/stb", 0)).expect("fvf unit");
    assert!(
        h.markdown.contains("formation volume factor"),
        "{}",
        h.markdown
    );
    let h = s.hover(at(BASE, "kx = layers", 0)).expect("key hover");
    assert!(h.markdown.contains("Permeability in x"), "{}", h.markdown);
    assert!(
        h.markdown.contains("accepted units: `md`, `darcy`"),
        "{}",
        h.markdown
    );
    let h = s.hover(at(BASE, "rock {", 1)).expect("block hover");
    assert!(h.markdown.contains("Rock properties"), "{}", h.markdown);
    let h = s.hover(at(BASE, "producer", 2)).expect("enum hover");
    assert!(h.markdown.contains("producer | injector"), "{}", h.markdown);
    let h = s.hover(at(BASE, "4 x 3 x 2", 0)).expect("size hover");
    assert!(h.markdown.contains("= 24 cells"), "{}", h.markdown);
}

#[test]
fn hover_on_an_array_file_shows_count_and_statistics() {
    let deck = BASE.replace("kx = layers [150 40] md", "kx = file \"kx.txt\" md");
    let values = "# kx\n100 200 300 400 100 200 300 400 100 200 300 400\n10 20 30 40 10 20 30 40 10 20 30 40\n";
    let src = MemorySource::new().with("kx.txt", values);
    let s = snap_with(&deck, &src);
    assert!(!s.analysis().has_errors(), "{:?}", s.diagnostics());
    let h = s.hover(at(&deck, "\"kx.txt\"", 2)).expect("file hover");
    assert!(h.markdown.contains("24 values"), "{}", h.markdown);
    let row = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| 10 |"))
        .expect("stats row");
    assert_eq!(row_cells(row), vec!["10", "137.5", "400"]);
    assert!(h.markdown.contains("the grid needs 24"));
}

#[test]
fn hover_appends_the_explanation_of_a_diagnostic() {
    let deck = BASE.replace("viscosity = 0.8 cP", "viscosity = 0.8 psi");
    let s = snap(&deck);
    let h = s.hover(at(&deck, "0.8 psi", 1)).expect("hover");
    assert!(h.markdown.contains("`unit.dimension`"), "{}", h.markdown);
}

#[test]
fn hover_in_metric_report_units() {
    let deck = BASE.replace("units = field", "units = metric");
    let s = snap(&deck);
    let case = s.analysis().case.clone().unwrap();
    let h = s.hover(at(&deck, "(2, 2)", 1)).expect("hover");
    assert!(h.markdown.contains("T [sm3/day/bar]"), "{}", h.markdown);
    let report = cell_report(&case, 1, 1, 0).unwrap();
    let east = h
        .markdown
        .lines()
        .find(|l| l.starts_with("| east |"))
        .unwrap();
    let t: f64 = row_cells(east)[3].parse().unwrap();
    let want = display_unit(Kind::Transmissibility, System::Metric).from_si(report.faces[1].trans);
    assert!(close6(t, want), "{east}");
}

#[test]
fn hover_on_well_layers_lists_the_completions() {
    let s = snap(BASE);
    let h = s.hover(at(BASE, "1..2", 0)).expect("layers hover");
    assert!(
        h.markdown.contains("| (2, 2, 1) |") && h.markdown.contains("| (2, 2, 2) |"),
        "{}",
        h.markdown
    );
}

#[test]
fn hover_on_a_boundary_sums_its_half_cells() {
    let s = snap(BASE);
    let h = s
        .hover(at(BASE, "\"east aquifer\"", 2))
        .expect("boundary hover");
    assert!(
        h.markdown
            .contains("east side, pressure 3150 psi at 5000 ft"),
        "{}",
        h.markdown
    );
    assert!(h.markdown.contains("6 faces"), "{}", h.markdown);
    // The same half-cells as the east faces that cell_report lists.
    let case = s.analysis().case.clone().unwrap();
    let mut total = 0.0;
    for k in 0..2 {
        for j in 0..3 {
            let r = cell_report(&case, 3, j, k).unwrap();
            total += r
                .faces
                .iter()
                .find(|f| f.side == rill_model::Side::East)
                .unwrap()
                .trans;
        }
    }
    let shown = format!(
        "{} stb/day/psi",
        rill_units::format_number(field(total, Kind::Transmissibility))
    );
    assert!(h.markdown.contains(&shown), "{shown} in {}", h.markdown);
}
