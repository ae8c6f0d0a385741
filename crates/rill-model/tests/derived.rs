//! Face values and well indices against hand calculations from published
//! formulas (see `shared/references.md`): harmonic face permeability and
//! transmissibility (Aziz and Settari 1979; Ertekin, Abou-Kassem and King
//! 2001; both from memory), Peaceman's equivalent radius (Peaceman 1978 and
//! 1983, from memory).

use proptest::prelude::*;
use rill_model::derived::*;
use rill_model::*;

const FT: f64 = 0.3048; // NIST SP 811
const MD: f64 = 9.869233e-16; // NIST SP 811 (darcy 9.869233e-13 m^2)
const CP: f64 = 1e-3; // NIST SP 811
const PSI: f64 = 6894.757293168; // NIST SP 811
const BBL: f64 = 0.158987294928; // NIST SP 811
const DAY: f64 = 86400.0;

/// A 3 x 2 x 2 grid with different widths per column, row and layer and
/// anisotropic permeability; cell (3, 1, 1) (0-based (2, 0, 0)) has zero kx.
fn case() -> Case {
    let (nx, ny, nz) = (3, 2, 2);
    let n = nx * ny * nz;
    let grid = Grid {
        nx,
        ny,
        nz,
        dx: vec![100.0 * FT, 50.0 * FT, 80.0 * FT],
        dy: vec![60.0 * FT, 120.0 * FT],
        dz: (0..n)
            .map(|c| if c < nx * ny { 20.0 * FT } else { 10.0 * FT })
            .collect(),
        top: vec![5000.0 * FT; nx * ny],
    };
    let kx = vec![
        10.0, 250.0, 0.0, 40.0, 80.0, 120.0, 5.0, 15.0, 25.0, 35.0, 45.0, 55.0,
    ];
    let ky: Vec<f64> = kx.iter().map(|k| 0.5 * k + 1.0).collect();
    let kz: Vec<f64> = kx.iter().map(|k| 0.1 * k).collect();
    let rock = Rock {
        porosity: vec![0.2; n].into(),
        kx: kx.iter().map(|k| k * MD).collect(),
        ky: ky.iter().map(|k| k * MD).collect(),
        kz: kz.iter().map(|k| k * MD).collect(),
        compressibility: 0.0,
        ref_pressure: 3000.0 * PSI,
    };
    Case {
        title: None,
        name: None,
        grid,
        rock,
        fluid: Fluid {
            name: None,
            viscosity: 0.8 * CP,
            fvf: 1.02,
            compressibility: 0.0,
            density: 1000.0,
            ref_pressure: 3000.0 * PSI,
        },
        oil_water: None,
        initial: Initial::Datum {
            pressure: 3000.0 * PSI,
            depth: 5000.0 * FT,
        },
        wells: vec![],
        boundaries: vec![],
        faults: Vec::new(),
        aquifers: Vec::new(),
        timeline: Timeline {
            kind: RunKind::Steady,
            end: 0.0,
            first_step: 1.0,
            max_step: 1.0,
            min_step: rill_model::Timeline::DEFAULT_MIN_STEP,
            max_steps: rill_model::Timeline::DEFAULT_MAX_STEPS,
            growth: 1.5,
            report_every: None,
            report_at: Vec::new(),
            events: vec![],
        },
        report: ReportSettings::default(),
    }
}

/// Field-unit transmissibility by hand: beta_c A k_face / (mu B L), beta_c = 0.00112712
/// (from the NIST factors; Ertekin et al. 2001 give 0.001127, from memory).
fn hand_trans_field(area_ft2: f64, k_face_md: f64, dist_ft: f64, mu_cp: f64, b: f64) -> f64 {
    let beta_c = MD * FT * FT / (CP * FT) * PSI * DAY / BBL; // = 0.00112712...
    beta_c * area_ft2 * k_face_md / (mu_cp * b * dist_ft)
}

#[test]
fn darcy_constant_from_nist_factors_matches_ertekin_2001() {
    // Ertekin, Abou-Kassem and King 2001 (from memory): 0.001127.
    let beta_c = MD * FT * FT / (CP * FT) * PSI * DAY / BBL;
    assert!((beta_c - 0.00112712).abs() < 5e-9, "{beta_c}");
}

#[test]
fn east_face_between_unequal_columns_matches_the_aziz_settari_harmonic_formula() {
    let c = case();
    // Cells (1,1,1) and (2,1,1): kx 10 and 250 md, widths 100 and 50 ft.
    let face = interior_face(&c.grid, &c.rock, 0, Side::East).unwrap();
    let k_hand = (100.0 + 50.0) / (100.0 / 10.0 + 50.0 / 250.0); // md
    assert!((face.perm / MD - k_hand).abs() < 1e-9 * k_hand);
    let t_hand = hand_trans_field(60.0 * 20.0, k_hand, (100.0 + 50.0) / 2.0, 0.8, 1.02);
    let t = fluid_trans(&c, face.geometric_trans) * PSI * DAY / BBL;
    assert!((t - t_hand).abs() < 1e-9 * t_hand, "{t} vs {t_hand}");
}

#[test]
fn north_face_uses_ky_and_row_widths() {
    let c = case();
    // Cells (2,1,1) and (2,2,1): ky = 0.5 kx + 1 = 126 and 41 md, rows 60 and 120 ft, dx 50 ft.
    let face = interior_face(&c.grid, &c.rock, 1, Side::North).unwrap();
    let k_hand = (60.0 + 120.0) / (60.0 / 126.0 + 120.0 / 41.0);
    assert!((face.perm / MD - k_hand).abs() < 1e-9 * k_hand);
    let t_hand = hand_trans_field(50.0 * 20.0, k_hand, 90.0, 0.8, 1.02);
    let t = fluid_trans(&c, face.geometric_trans) * PSI * DAY / BBL;
    assert!((t - t_hand).abs() < 1e-9 * t_hand);
}

#[test]
fn bottom_face_between_layers_of_different_thickness() {
    let c = case();
    // Cells (1,2,1) and (1,2,2): kz 4 and 3.5 md, dz 20 and 10 ft, area 100 x 120 ft.
    let top = c.grid.index(0, 1, 0);
    let face = interior_face(&c.grid, &c.rock, top, Side::Bottom).unwrap();
    let k_hand = (20.0 + 10.0) / (20.0 / 4.0 + 10.0 / 3.5);
    assert!((face.perm / MD - k_hand).abs() < 1e-9 * k_hand);
    let t_hand = hand_trans_field(100.0 * 120.0, k_hand, 15.0, 0.8, 1.02);
    let t = fluid_trans(&c, face.geometric_trans) * PSI * DAY / BBL;
    assert!((t - t_hand).abs() < 1e-9 * t_hand);
}

#[test]
fn zero_permeability_neighbour_gives_no_flow_common_practice() {
    // Common practice, no published source: 10 md beside 0 md gives 0 md at the face.
    assert_eq!(harmonic_face_perm(10.0, 1.0, 0.0, 1.0), 0.0);
    let c = case();
    let face = interior_face(&c.grid, &c.rock, 1, Side::East).unwrap(); // 250 md beside 0 md
    assert_eq!(face.perm, 0.0);
    assert_eq!(face.geometric_trans, 0.0);
    assert!(connections(&c.grid, &c.rock)
        .iter()
        .all(|k| !(k.a == 1 && k.b == 2)));
}

#[test]
fn connections_carry_the_same_numbers_as_the_faces() {
    let c = case();
    for conn in connections(&c.grid, &c.rock) {
        let side = Side::ALL
            .into_iter()
            .find(|s| neighbor(&c.grid, conn.a, *s) == Some(conn.b))
            .unwrap();
        let face = interior_face(&c.grid, &c.rock, conn.a, side).unwrap();
        assert_eq!(face.geometric_trans, conn.geometric_trans);
        // And from the other side, the same value.
        let back = interior_face(&c.grid, &c.rock, conn.b, opposite(side)).unwrap();
        assert!(
            (back.geometric_trans - conn.geometric_trans).abs() <= 1e-15 * conn.geometric_trans
        );
    }
}

#[test]
fn boundary_half_cell_transmissibility() {
    let c = case();
    // West face of cell (1,1,1): k A / (dx/2) with kx 10 md, A = 60 x 20 ft, dx/2 = 50 ft.
    let f = boundary_face(&c.grid, &c.rock, 0, Side::West);
    let t_hand = hand_trans_field(60.0 * 20.0, 10.0, 50.0, 0.8, 1.02);
    let t = fluid_trans(&c, f.geometric_trans) * PSI * DAY / BBL;
    assert!((t - t_hand).abs() < 1e-9 * t_hand);
}

#[test]
fn pore_volume_and_depths() {
    let c = case();
    let last = c.grid.cell_count() - 1;
    assert!(
        (pore_volume(&c.grid, &c.rock, last) - 0.2 * 80.0 * 120.0 * 10.0 * FT.powi(3)).abs() < 1e-9
    );
    assert!((cell_center_depth(&c.grid, last) - (5000.0 + 20.0 + 5.0) * FT).abs() < 1e-9);
    assert_eq!(
        cell_center_depths(&c.grid)[last],
        cell_center_depth(&c.grid, last)
    );
}

#[test]
fn peaceman_1978_square_isotropic_block_is_0_198_dx() {
    // Peaceman 1978 (from memory): r_o = 0.198 dx for a square block, isotropic.
    let dx = 100.0;
    let r = peaceman_radius(dx, dx, 50.0 * MD, 50.0 * MD);
    assert!((r / dx - 0.198).abs() < 0.001, "{}", r / dx);
}

#[test]
fn peaceman_1983_anisotropic_formula() {
    // Peaceman 1983 (from memory): r_o = 0.28 sqrt(sqrt(ky/kx) dx^2 + sqrt(kx/ky) dy^2)
    //   / ((ky/kx)^(1/4) + (kx/ky)^(1/4)); hand value for dx = 80, dy = 30, kx = 200, ky = 20.
    let (dx, dy, kx, ky) = (80.0f64, 30.0f64, 200.0f64, 20.0f64);
    let hand = 0.28 * ((0.1f64).sqrt() * 6400.0 + (10.0f64).sqrt() * 900.0).sqrt()
        / (0.1f64.powf(0.25) + 10.0f64.powf(0.25));
    let r = peaceman_radius(dx, dy, kx * MD, ky * MD);
    assert!((r - hand).abs() < 1e-12 * hand);
    assert!((hand - 8.3481).abs() < 1e-3, "{hand}"); // worked by hand with a calculator
}

#[test]
fn well_index_field_units() {
    // WI = 2 pi beta_c sqrt(kx ky) dz / (ln(r_o / r_w) + s); 0.00708 = 2 pi beta_c
    // (Craft and Hawkins 1959, from memory).
    let c = case();
    let comp = Completion {
        i: 0,
        j: 1,
        k: 0,
        cell: c.grid.index(0, 1, 0),
        direction: Direction::Z,
    };
    let wi = well_index(&c.grid, &c.rock, &comp, 0.3 * FT, 2.0);
    let (kx, ky) = (40.0, 21.0);
    let r_o = peaceman_radius(100.0, 120.0, kx, ky);
    let hand_md_ft =
        2.0 * std::f64::consts::PI * (kx * ky).sqrt() * 20.0 / ((r_o / 0.3).ln() + 2.0);
    assert!((wi.geometric / (MD * FT) - hand_md_ft).abs() < 1e-9 * hand_md_ft);
    assert!((wi.r_eq / FT - r_o).abs() < 1e-9 * r_o);
    let beta_c = MD * FT * FT / (CP * FT) * PSI * DAY / BBL;
    assert!((2.0 * std::f64::consts::PI * beta_c - 0.00708).abs() < 2e-6);
}

#[test]
fn hydrostatic_gradient_of_fresh_water_is_0_433_psi_per_ft() {
    // Common practice, no published source: 62.4 lb/ft^3 gives 0.433 psi/ft.
    let mut c = case();
    c.fluid.density = 62.4 * 0.45359237 / FT.powi(3);
    let p = hydrostatic_pressure(&c.fluid, 3000.0 * PSI, 5000.0 * FT, 5100.0 * FT);
    assert!(((p / PSI - 3000.0) / 100.0 - 0.433).abs() < 0.0005);
    // With compressibility the gradient grows with depth but stays close.
    c.fluid.compressibility = 3e-6 / PSI;
    let q = hydrostatic_pressure(&c.fluid, 3000.0 * PSI, 5000.0 * FT, 5100.0 * FT);
    assert!(q > p && (q - p) / PSI < 0.01);
}

proptest! {
    /// The harmonic mean never exceeds the arithmetic mean (a mathematical fact).
    #[test]
    fn harmonic_never_exceeds_arithmetic(ka in 0.0f64..1e4, kb in 0.0f64..1e4, la in 0.01f64..1e3, lb in 0.01f64..1e3) {
        let h = harmonic_face_perm(ka, la, kb, lb);
        let arithmetic = (ka * la + kb * lb) / (la + lb);
        prop_assert!(h <= arithmetic * (1.0 + 1e-12) + 1e-300);
        prop_assert!(h >= 0.0);
        prop_assert!(h <= ka.max(kb) * (1.0 + 1e-12));
    }
}

#[test]
fn cells_with_flow_agrees_with_the_faces_of_each_cell() {
    let mut c = case();
    c.rock.porosity[5] = 0.0; // an inactive cell cuts its faces too
    let flows = cells_with_flow(&c.grid, &c.rock);
    for (cell, flows_here) in flows.iter().enumerate() {
        let by_faces = Side::ALL.into_iter().any(|s| {
            interior_face(&c.grid, &c.rock, cell, s).is_some_and(|f| f.geometric_trans > 0.0)
        });
        assert_eq!(*flows_here, by_faces, "cell {cell}");
    }
    assert!(!flows[5]);
}

/// A grid of random size and spacing whose permeabilities and porosities
/// are zero in places, to compare the per-axis flow passes with the faces.
fn patchy_case(dims: (usize, usize, usize), values: &[(f64, f64, f64, f64, f64)]) -> Case {
    let (nx, ny, nz) = dims;
    let n = nx * ny * nz;
    let mut c = case();
    let at = |i: usize| values[i % values.len()];
    c.grid = Grid {
        nx,
        ny,
        nz,
        dx: (0..nx).map(|i| (10.0 + 40.0 * at(i).4) * FT).collect(),
        dy: (0..ny).map(|j| (10.0 + 40.0 * at(j + 7).4) * FT).collect(),
        dz: (0..n).map(|c| (1.0 + 20.0 * at(c + 3).4) * FT).collect(),
        top: vec![5000.0 * FT; nx * ny],
    };
    // A quarter of each value is zero: sealed faces and inactive cells.
    let zeroed = |v: f64| if v < 0.25 { 0.0 } else { v };
    c.rock.porosity = (0..n).map(|c| zeroed(at(c).0) * 0.3).collect();
    c.rock.kx = (0..n).map(|c| zeroed(at(c).1) * 100.0 * MD).collect();
    c.rock.ky = (0..n).map(|c| zeroed(at(c).2) * 100.0 * MD).collect();
    c.rock.kz = (0..n).map(|c| zeroed(at(c).3) * 10.0 * MD).collect();
    c
}

proptest! {
    /// Each per-axis pass says of every cell's plus face what the face
    /// itself says, and a cell flows across an axis when one of its two
    /// faces there does.
    #[test]
    fn flow_passes_agree_with_every_face(
        dims in (1usize..6, 1usize..6, 1usize..6),
        values in proptest::collection::vec((0.0f64..1.0, 0.0f64..1.0, 0.0f64..1.0, 0.0f64..1.0, 0.0f64..1.0), 1..40),
    ) {
        let c = patchy_case(dims, &values);
        let n = c.grid.cell_count();
        let flows = cells_with_flow(&c.grid, &c.rock);
        for axis in [Axis::X, Axis::Y, Axis::Z] {
            let plus = plus_faces_with_flow(&c.grid, &c.rock, axis);
            let [minus_side, plus_side] = axis.sides();
            for cell in 0..n {
                let face_flows = |side| {
                    interior_face(&c.grid, &c.rock, cell, side).is_some_and(|f| f.geometric_trans > 0.0)
                };
                prop_assert_eq!(plus[cell], face_flows(plus_side), "plus face of cell {} across {:?}", cell, axis);
                prop_assert_eq!(
                    flows_across(&c.grid, &plus, axis, cell),
                    face_flows(minus_side) || face_flows(plus_side),
                    "cell {} across {:?}", cell, axis
                );
            }
        }
        for (cell, flows_here) in flows.iter().enumerate() {
            let by_faces = Side::ALL.into_iter().any(|s| {
                interior_face(&c.grid, &c.rock, cell, s).is_some_and(|f| f.geometric_trans > 0.0)
            });
            prop_assert_eq!(*flows_here, by_faces, "cell {}", cell);
        }
    }
}
