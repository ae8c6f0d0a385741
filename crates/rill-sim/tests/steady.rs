//! Steady-state checks against published closed-form results.

mod common;
use common::*;
use rill_model::derived;
use rill_model::*;
use rill_sim::{run, NoObserver, RunOptions};

fn steady(mut case: Case) -> Case {
    case.timeline.kind = RunKind::Steady;
    case.timeline.end = 0.0;
    case
}

/// Beds in series between two constant-pressure faces:
/// q = beta_c A dp / (mu B sum(L_i / k_i)), field units, beta_c = 0.001127
/// (Ahmed, Reservoir Engineering Handbook, 2010, ch. 4, series formula, from
/// memory; beta_c from Ertekin, Abou-Kassem and King 2001, from memory).
#[test]
fn series_beds_linear_flow_ahmed_2010() {
    let beds = [(300.0, 50.0, 10), (500.0, 200.0, 10), (200.0, 20.0, 5)]; // (L ft, k md, cells)
    let mut dx = Vec::new();
    let mut kx = Vec::new();
    for &(l, k, n) in &beds {
        for _ in 0..n {
            dx.push(l / n as f64 * FT);
            kx.push(k * MD);
        }
    }
    let (w, h) = (100.0, 20.0); // ft
    let mut case = steady(block(dx, vec![w * FT], vec![h * FT], 5000.0 * FT));
    case.rock.kx = kx.clone().into();
    case.rock.ky = kx.clone().into();
    case.rock.kz = kx.into();
    case.fluid.viscosity = 0.8 * CP;
    case.fluid.fvf = 1.02;
    case.boundaries = vec![
        boundary("inlet", Side::West, 3000.0 * PSI, None),
        boundary("outlet", Side::East, 2000.0 * PSI, None),
    ];
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let sum_l_over_k: f64 = beds.iter().map(|&(l, k, _)| l / k).sum();
    let q_expected = 0.001127 * (w * h) * 1000.0 / (0.8 * 1.02 * sum_l_over_k); // stb/day
    let q_in = -r.boundaries[0].rate[0] / STB_DAY;
    let q_out = r.boundaries[1].rate[0] / STB_DAY;
    assert!(
        (q_in / q_expected - 1.0).abs() < 1e-3,
        "inflow {q_in} stb/day, expected {q_expected}"
    );
    assert!(
        (q_out / q_in - 1.0).abs() < 1e-9,
        "outflow {q_out} vs inflow {q_in}"
    );
    assert_eq!(r.times, vec![0.0]);
    assert_balanced(&r);
}

/// Steady radial inflow to a well at the centre of a square with constant
/// pressure on all four sides: q = 0.00708 k h dp / (mu B (ln(re/rw) + s))
/// (Craft and Hawkins 1959; Ahmed 2010; from memory).
///
/// The drainage boundary is a square of side L, not a circle. The radius of
/// the circle that gives the same well pressure for a point sink in a
/// constant-pressure square is the square's conformal radius about its
/// centre, L * Gamma(1/4)^2 / (4 pi^(3/2)) = 0.59017 L (a property of the
/// conformal map of the square; from memory), used here. The equal-area
/// circle (0.5642 L) would raise the expected q by 0.5 %. The simulator
/// comes out about 1 % above the conformal-radius value (Peaceman's
/// r_o = 0.198 dx and the 20 ft cells), inside the 2 % of the check.
#[test]
fn radial_inflow_craft_hawkins_1959() {
    let n = 51;
    let dx = 20.0; // ft
    let h = 30.0;
    let mut case = steady(block(
        vec![dx * FT; n],
        vec![dx * FT; n],
        vec![h * FT],
        6000.0 * FT,
    ));
    case.rock.kz = case.rock.kx.clone();
    let c = n / 2;
    let mut w = well(
        &case,
        "P",
        Role::Producer,
        c,
        c,
        0,
        0,
        Control::Bhp(2000.0 * PSI),
    );
    w.skin = 2.0;
    case.wells = vec![w];
    case.boundaries = [Side::West, Side::East, Side::South, Side::North]
        .into_iter()
        .map(|s| boundary(s.name(), s, 3000.0 * PSI, None))
        .collect();
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let gamma_quarter: f64 = 3.625_609_908_221_908;
    let side = n as f64 * dx;
    let re = side * gamma_quarter.powi(2) / (4.0 * std::f64::consts::PI.powf(1.5));
    let q_expected = 0.00708 * 100.0 * h * 1000.0 / (1.0 * 1.0 * ((re / 0.3).ln() + 2.0));
    let q = r.wells[0].rate[0] / STB_DAY;
    eprintln!(
        "radial: rate {q:.4} stb/day, expected {q_expected:.4}; {:?}",
        r.stats
    );
    assert!(
        (q / q_expected - 1.0).abs() < 0.02,
        "rate {q} stb/day, expected {q_expected}"
    );
    let inflow: f64 = r.boundaries.iter().map(|b| -b.rate[0]).sum::<f64>() / STB_DAY;
    assert!(
        (inflow / q - 1.0).abs() < 1e-8,
        "boundary inflow {inflow} vs well rate {q}"
    );
    assert_eq!(r.wells[0].bhp[0], 2000.0 * PSI);
    assert_balanced(&r);
}

/// The matrix the simulator assembles carries, between every pair of active
/// neighbours, minus the transmissibility that `derived` reports (the number
/// `rill inspect` and hover show), times the fluid factor 1/(mu B) as
/// `derived::fluid_trans` applies it. Common practice, no published source.
#[test]
fn assembled_transmissibilities_are_the_derived_ones() {
    let mut case = steady(block(
        vec![10.0, 25.0, 15.0, 30.0],
        vec![12.0, 20.0, 8.0],
        vec![3.0, 6.0],
        1500.0,
    ));
    let g = case.grid.clone();
    let n = g.cell_count();
    for c in 0..n {
        let f = c as f64;
        case.rock.kx[c] = (50.0 + 30.0 * (f * 1.3).sin().abs()) * MD;
        case.rock.ky[c] = (20.0 + 10.0 * (f * 0.7).cos().abs()) * MD;
        case.rock.kz[c] = (1.0 + f) * MD;
        case.grid.dz[c] = 3.0 + 0.25 * f;
    }
    case.rock.porosity[5] = 0.0; // inactive
    case.rock.kz[14] = 0.0; // sealing in z
    case.grid.top = (0..g.nx * g.ny).map(|k| 1500.0 + k as f64 * 0.5).collect();
    case.fluid.fvf = 1.07;
    case.fluid.viscosity = 0.63 * CP;
    case.boundaries = vec![boundary("E", Side::East, 2e7, Some(1500.0))];
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        1,
        1,
        0,
        1,
        Control::Bhp(1.9e7),
    )];
    let mut rec = Recorder::default();
    run(&case, &RunOptions::default(), &mut rec).unwrap();
    let (a, _) = rec.system.expect("first system");
    let active: Vec<usize> = (0..n).filter(|&c| case.rock.is_active(c)).collect();
    assert_eq!(a.n, active.len() + 1);
    let idx = |c: usize| active.iter().position(|&x| x == c).unwrap();
    let mut faces = 0;
    for &c in &active {
        for side in Side::ALL {
            let Some(face) = derived::interior_face(&case.grid, &case.rock, c, side) else {
                continue;
            };
            let nb = face.neighbor.unwrap();
            if face.geometric_trans > 0.0 {
                faces += 1;
                let expected = -derived::fluid_trans(&case, face.geometric_trans);
                let got = a.get(idx(c), idx(nb));
                assert!(
                    (got - expected).abs() <= 4.0 * f64::EPSILON * expected.abs(),
                    "cell {c} side {side:?}: assembled {got:e}, derived {expected:e}"
                );
            } else if case.rock.is_active(nb) {
                assert_eq!(a.get(idx(c), idx(nb)), 0.0);
            }
        }
    }
    // Every stored cell-cell off-diagonal is one of those faces.
    let stored = (0..active.len())
        .map(|i| {
            a.row(i)
                .0
                .iter()
                .filter(|&&j| j != i && j < active.len())
                .count()
        })
        .sum::<usize>();
    assert_eq!(stored, faces);
    assert!(
        a.is_symmetric(0.0),
        "the steady pressure matrix is symmetric"
    );
}

/// A steady run with nothing that fixes the pressure level (rate control
/// only, closed outside) has no solution and says so.
#[test]
fn steady_without_pressure_support_is_a_setup_error() {
    let mut case = steady(block(
        vec![100.0 * FT; 4],
        vec![100.0 * FT; 4],
        vec![20.0 * FT],
        5000.0 * FT,
    ));
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        1,
        1,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    )];
    let err = run(&case, &RunOptions::default(), &mut NoObserver).unwrap_err();
    assert!(matches!(err, rill_sim::RunError::Setup(_)), "{err:?}");
    assert!(err.to_string().contains("\"P\""), "{err}");
}

/// A region cut off by inactive cells from every boundary and BHP well
/// keeps its initial pressure; the rest solves normally.
#[test]
fn steady_isolated_region_keeps_its_initial_pressure() {
    let mut case = steady(block(
        vec![100.0 * FT; 5],
        vec![100.0 * FT; 1],
        vec![20.0 * FT],
        5000.0 * FT,
    ));
    case.rock.porosity[2] = 0.0; // splits the row into two regions
    case.initial = Initial::Cells(vec![2500.0 * PSI; 5].into());
    case.boundaries = vec![boundary("W", Side::West, 3000.0 * PSI, None)];
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let p = &r.pressure[0];
    assert!((p[0] / PSI - 3000.0).abs() < 1e-6 && (p[1] / PSI - 3000.0).abs() < 1e-6);
    assert!(p[2].is_nan());
    assert_eq!((p[3], p[4]), (2500.0 * PSI, 2500.0 * PSI));
}
