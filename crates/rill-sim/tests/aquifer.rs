//! Finite aquifers against closed forms: a closed tank drained at a
//! constant rate with an aquifer on one side is two coupled linear tanks
//! (reservoir capacity `C_r = PV c_t`, aquifer capacity `C_a = c_t W_i`,
//! linked by the productivity `J`), whose 2x2 linear system is solved here
//! by its eigen-decomposition; and the influx at late time follows the
//! cumulative form of Fetkovich (1971, from memory).

mod common;
use common::*;
use rill_model::*;
use rill_sim::{run, NoObserver, RunOptions, RunResults};

/// A 3 x 3 x 1 tank of very permeable rock (so its pressure is uniform to
/// a few hundredths of a psi), one producer in the middle at 20 stb/day,
/// and a finite aquifer on the south side. Small compressibilities keep
/// rill's exponential laws within 1e-3 of the linear tanks.
fn tank() -> Case {
    let mut c = block(
        vec![200.0 * FT; 3],
        vec![200.0 * FT; 3],
        vec![50.0 * FT],
        5000.0 * FT,
    );
    let n = c.grid.cell_count();
    c.rock.kx = vec![5000.0 * MD; n].into();
    c.rock.ky = vec![5000.0 * MD; n].into();
    c.rock.kz = vec![5000.0 * MD; n].into();
    c.rock.compressibility = 1e-6 / PSI;
    c.fluid.compressibility = 3e-6 / PSI;
    let w = well(
        &c,
        "P",
        Role::Producer,
        1,
        1,
        0,
        0,
        Control::Rate(20.0 * STB_DAY),
    );
    c.wells.push(w);
    c.aquifers.push(Aquifer {
        name: "south flank".into(),
        side: Side::South,
        select: Selection::default(),
        water_volume: 1.0e6 * BBL,
        compressibility: 4e-6 / PSI,
        productivity: 0.5 * BBL / DAY / PSI,
        origin: Origin::default(),
    });
    c.timeline.end = 40.0 * DAY;
    c.timeline.first_step = 0.01 * DAY;
    c.timeline.max_step = 0.05 * DAY;
    c.timeline.report_every = Some(1.0 * DAY);
    c
}

/// The two tanks' drops below the initial pressure, `u` (reservoir) and
/// `v` (aquifer), from `C_r u' = q - J (u - v)`, `C_a v' = J (u - v)`,
/// `u(0) = v(0) = 0`. The matrix `[[-J/C_r, J/C_r], [J/C_a, -J/C_a]]` has
/// the eigenvalue 0 with the mode `C_r u + C_a v` (the total withdrawal,
/// `q t`) and `-k = -J (1/C_r + 1/C_a)` with the mode `w = u - v`, which
/// obeys `w' = q/C_r - k w`: `w = q / (C_r k) (1 - e^{-k t})`.
fn tanks(q: f64, c_r: f64, c_a: f64, j: f64, t: f64) -> (f64, f64) {
    let k = j * (1.0 / c_r + 1.0 / c_a);
    let w = q / (c_r * k) * (1.0 - (-k * t).exp());
    let total = q * t;
    (
        (total + c_a * w) / (c_r + c_a),
        (total - c_r * w) / (c_r + c_a),
    )
}

struct Setup {
    case: Case,
    r: RunResults,
    p_i: f64,
    q: f64,
    c_r: f64,
    c_a: f64,
    j: f64,
}

fn run_tank() -> Setup {
    let case = tank();
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let pv: f64 = (0..case.grid.cell_count())
        .map(|c| derived::pore_volume(&case.grid, &case.rock, c))
        .sum();
    let aq = &case.aquifers[0];
    let faces = rill_model::aquifer::faces(&case, aq);
    let p_i = rill_model::aquifer::initial_pressure(&case, &faces).unwrap();
    Setup {
        // Reservoir volume: B = 1 at the initial pressure.
        q: 20.0 * STB_DAY * case.fluid.fvf,
        c_r: pv * (case.rock.compressibility + case.fluid.compressibility),
        c_a: aq.compressibility * aq.water_volume,
        j: aq.productivity,
        p_i,
        r,
        case,
    }
}

#[test]
fn a_tank_with_an_aquifer_follows_the_two_tank_solution() {
    let s = run_tank();
    let r = &s.r;
    assert_balanced(r);
    let a = &r.aquifers[0];
    assert_eq!(a.name, "south flank");
    assert_eq!(r.times.len(), 41);
    let drops: Vec<(f64, f64)> = r
        .times
        .iter()
        .map(|&t| tanks(s.q, s.c_r, s.c_a, s.j, t))
        .collect();
    let largest = drops.iter().map(|d| d.0).fold(0.0, f64::max);
    assert!(
        largest > 100.0 * PSI,
        "a drop worth comparing: {} psi",
        largest / PSI
    );
    for (n, &t) in r.times.iter().enumerate() {
        let (u, v) = drops[n];
        let u_sim = s.p_i - r.pressure_avg[n];
        let v_sim = s.p_i - a.pressure[n];
        assert!(
            (u_sim - u).abs() <= 0.01 * largest,
            "reservoir drop at {} day: {} psi, tanks {} psi",
            t / DAY,
            u_sim / PSI,
            u / PSI
        );
        assert!(
            (v_sim - v).abs() <= 0.01 * largest,
            "aquifer drop at {} day: {} psi, tanks {} psi",
            t / DAY,
            v_sim / PSI,
            v / PSI
        );
        // The influx is what the aquifer lost: W_e = C_a v (surface = reservoir at B = 1).
        if n > 0 {
            assert!(a.rate[n] < 0.0, "influx is negative (into the reservoir)");
            let w_e = -a.cumulative[n];
            assert!(
                (w_e - s.c_a * v).abs() <= 0.01 * s.c_a * drops.last().unwrap().1,
                "cumulative influx at {} day: {} rb, tanks {} rb",
                t / DAY,
                w_e / BBL,
                s.c_a * v / BBL
            );
        }
    }
    assert_eq!(a.rate[0], 0.0);
    assert_eq!(a.cumulative[0], 0.0);
    assert!((a.pressure[0] - s.p_i).abs() < 1e-6);
}

/// Fetkovich's finite aquifer: `q_e = J (p_a - p_r)` and
/// `p_a = p_ai (1 - W_e / W_ei)` with `W_ei = c_t W_i p_ai`. Once the
/// tank's transient has died away (t >> 1/k) both pressures fall at the
/// common rate `r = q / (C_r + C_a)`, so the aquifer gives `q_e = C_a r`
/// and lags the reservoir by `p_a - p_r = q_e / J`; the cumulative form
/// then reads `W_e = W_ei (p_ai - p_a) / p_ai = c_t W_i (p_ai - p_r - C_a r / J)`,
/// in terms of the reservoir pressure alone.
#[test]
fn late_influx_matches_the_fetkovich_cumulative_form() {
    let s = run_tank();
    let r = &s.r;
    let a = &s.r.aquifers[0];
    let k = s.j * (1.0 / s.c_r + 1.0 / s.c_a);
    let rate = s.q / (s.c_r + s.c_a);
    let mut checked = 0;
    for (n, &t) in r.times.iter().enumerate() {
        if k * t < 8.0 {
            continue;
        }
        let w_ei = s.c_a * s.p_i;
        let fetkovich = w_ei * (s.p_i - r.pressure_avg[n] - s.c_a * rate / s.j) / s.p_i;
        let w_e = -a.cumulative[n];
        assert!(
            (w_e / fetkovich - 1.0).abs() <= 0.01,
            "at {} day: W_e {} rb, Fetkovich {} rb",
            t / DAY,
            w_e / BBL,
            fetkovich / BBL
        );
        // And the influx rate is C_a r.
        assert!((-a.rate[n] / (s.c_a * rate) - 1.0).abs() <= 0.01);
        checked += 1;
    }
    assert!(checked >= 10, "late-time rows: {checked}");
    let _ = &s.case;
}

/// A steady run holds the aquifer: it supplies nothing (a finite aquifer
/// at steady state has equilibrated), so the state is the one without it,
/// and its series report no influx at its initial pressure.
#[test]
fn a_steady_run_holds_the_aquifer() {
    let mut with = tank();
    with.timeline.kind = RunKind::Steady;
    with.boundaries.push(boundary(
        "north",
        Side::North,
        3000.0 * PSI,
        Some(5000.0 * FT),
    ));
    let mut without = with.clone();
    without.aquifers.clear();
    let rw = run(&with, &RunOptions::default(), &mut NoObserver).unwrap();
    let ro = run(&without, &RunOptions::default(), &mut NoObserver).unwrap();
    let (pw, po) = (rw.pressure.last().unwrap(), ro.pressure.last().unwrap());
    for (a, b) in pw.iter().zip(po) {
        assert!((a / b - 1.0).abs() <= 1e-12, "{a} vs {b}");
    }
    let a = &rw.aquifers[0];
    assert_eq!(a.rate, vec![0.0]);
    assert_eq!(a.cumulative, vec![0.0]);
    let faces = rill_model::aquifer::faces(&with, &with.aquifers[0]);
    let p_ai = rill_model::aquifer::initial_pressure(&with, &faces).unwrap();
    assert_eq!(a.pressure, vec![p_ai]);
    // Without the boundary, the aquifer is no anchor: a rate well cannot run.
    with.boundaries.clear();
    let err = run(&with, &RunOptions::default(), &mut NoObserver).unwrap_err();
    assert!(err.to_string().contains("no boundary and no BHP"), "{err}");
}

/// An aquifer in a model at rest stays at rest: its pressure on the
/// hydrostat of the faces' mean depth, every face at equilibrium, also
/// across layers of a tilted side.
#[test]
fn an_aquifer_at_equilibrium_gives_nothing() {
    let mut c = block(
        vec![100.0 * FT; 3],
        vec![100.0 * FT; 2],
        vec![20.0 * FT, 40.0 * FT, 30.0 * FT],
        6000.0 * FT,
    );
    c.grid.top = vec![
        6000.0 * FT,
        6010.0 * FT,
        6030.0 * FT,
        6005.0 * FT,
        6020.0 * FT,
        6040.0 * FT,
    ];
    c.rock.compressibility = 4e-6 / PSI;
    c.aquifers.push(Aquifer {
        name: "west".into(),
        side: Side::West,
        select: Selection::default(),
        water_volume: 1.0e7 * BBL,
        compressibility: 5e-6 / PSI,
        productivity: 10.0 * BBL / DAY / PSI,
        origin: Origin::default(),
    });
    let r = run(&c, &RunOptions::default(), &mut NoObserver).unwrap();
    let a = &r.aquifers[0];
    // At rest means within what a relative round-off of 1e-9 in the
    // pressures drives through J (Newton's tolerance is the same 1e-9).
    let rest = c.aquifers[0].productivity * a.pressure[0] * 1e-9;
    for (n, q) in a.rate.iter().enumerate() {
        assert!(q.abs() <= rest, "rate {} stb/day at row {n}", q / STB_DAY);
        assert!((a.pressure[n] - a.pressure[0]).abs() <= 1e-6 * PSI);
    }
}
