//! Transient checks against published results, and the behaviour of the
//! run driver (controls, events, report times, cancellation).

mod common;
use common::*;
use rill_model::*;
use rill_sim::{run, ControlMode, NoObserver, RunError, RunOptions};

/// Exponential integral E1(x), x > 0: power series below 1, continued
/// fraction (modified Lentz) above.
fn e1(x: f64) -> f64 {
    assert!(x > 0.0);
    if x <= 1.0 {
        let euler = 0.577_215_664_901_532_9;
        let mut sum = 0.0;
        let mut term = 1.0;
        for k in 1..100 {
            term *= -x / k as f64;
            let add = -term / k as f64;
            sum += add;
            if add.abs() < 1e-17 * sum.abs() {
                break;
            }
        }
        -euler - x.ln() + sum
    } else {
        // E1(x) = e^-x / (x + 1/(1 + 1/(x + 2/(1 + 2/(x + ...))))), as
        // e^-x * 1/(x + 1 - 1^2/(x + 3 - 2^2/(x + 5 - ...))).
        let tiny = 1e-300;
        let mut b = x + 1.0;
        let mut c = 1.0 / tiny;
        let mut d = 1.0 / b;
        let mut h = d;
        for i in 1..200 {
            let a = -((i * i) as f64);
            b += 2.0;
            d = 1.0 / (a * d + b);
            c = b + a / c;
            let del = c * d;
            h *= del;
            if (del - 1.0).abs() < 1e-16 {
                break;
            }
        }
        h * (-x).exp()
    }
}

/// Abramowitz and Stegun, Handbook of Mathematical Functions, 1964, table 5.1.
#[test]
fn e1_matches_abramowitz_stegun_table_5_1() {
    for (x, v) in [
        (0.01, 4.0379296),
        (0.1, 1.8229240),
        (1.0, 0.21938393),
        (2.0, 0.04890051),
    ] {
        assert!(
            (e1(x) - v).abs() <= 1e-7 * v.max(1.0),
            "E1({x}) = {} vs {v}",
            e1(x)
        );
    }
    // Both branches agree where they meet.
    assert!((e1(1.0 - 1e-12) - e1(1.0 + 1e-12)).abs() < 1e-10);
}

/// Constant-rate drawdown of an infinite-acting layer, against the line
/// source: p_wf = p_i + 70.6 q B mu / (k h) Ei(-948 phi mu c_t r_w^2 / (k t))
/// minus 141.2 q B mu s / (k h), field units, t in hours, and the semilog slope
/// 162.6 q B mu / (k h) (Earlougher, SPE Monograph 5, 1977; Lee, Well
/// Testing, 1982; from memory). The well-block pressure is converted to the
/// BHP by Peaceman's well index, which is what the simulator reports.
#[test]
fn line_source_drawdown_earlougher_1977() {
    // Uniform 20 ft core of 9 cells around the well, then widths growing by
    // 1.25 out to about 6000 ft: the boundary is not felt by 50 hours
    // (radius of investigation about 1600 ft).
    let core = 9;
    let ring = geometric(25.0, 1.25, 19);
    let mut widths: Vec<f64> = ring.iter().rev().copied().collect();
    widths.extend(std::iter::repeat_n(20.0, core));
    widths.extend(ring.iter().copied());
    let widths: Vec<f64> = widths.into_iter().map(|w| w * FT).collect();
    let (k, h, phi, mu, ct, q, rw, s) = (100.0, 30.0, 0.2, 1.0, 1e-5, 300.0, 0.3, 1.0);
    let p_i = 5000.0;
    let mut case = block(widths.clone(), widths.clone(), vec![h * FT], 8000.0 * FT);
    case.rock.compressibility = 0.5 * ct / PSI;
    case.fluid.compressibility = 0.5 * ct / PSI;
    case.rock.ref_pressure = p_i * PSI;
    case.fluid.ref_pressure = p_i * PSI;
    case.initial = Initial::Datum {
        pressure: p_i * PSI,
        depth: 8000.0 * FT + 0.5 * h * FT,
    };
    let c = widths.len() / 2;
    let mut w = well(
        &case,
        "P",
        Role::Producer,
        c,
        c,
        0,
        0,
        Control::Rate(q * STB_DAY),
    );
    w.radius = rw * FT;
    w.skin = s;
    case.wells = vec![w];
    let hours = [5.0, 10.0, 20.0, 50.0];
    case.timeline.end = 50.0 * HOUR;
    case.timeline.first_step = 1e-3 * HOUR;
    case.timeline.growth = 1.1;
    case.timeline.max_step = 50.0 * HOUR;
    case.timeline.report_every = None;
    case.timeline.events = hours[..3]
        .iter()
        .map(|&t| Event {
            time: t * HOUR,
            changes: vec![],
            origin: Origin::default(),
        })
        .collect();
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let coef = 70.6 * q * 1.0 * mu / (k * h);
    let mut p_at = Vec::new();
    for &t in &hours {
        let n = r
            .times
            .iter()
            .position(|&x| x == t * HOUR)
            .expect("report at the event time");
        let x = 948.0 * phi * mu * ct * rw * rw / (k * t);
        let expected = p_i - coef * e1(x) - 141.2 * q * mu / (k * h) * s;
        let bhp = r.wells[0].bhp[n] / PSI;
        let (dd, dd_expected) = (p_i - bhp, p_i - expected);
        assert!(
            (dd / dd_expected - 1.0).abs() < 0.01,
            "t = {t} h: drawdown {dd:.3} psi, line source {dd_expected:.3} psi"
        );
        eprintln!("t = {t} h: drawdown {dd:.4} psi, line source {dd_expected:.4} psi");
        p_at.push(bhp);
    }
    let slope = (p_at[1] - p_at[3]) / (50.0f64 / 10.0).log10();
    let slope_expected = 162.6 * q * mu / (k * h);
    eprintln!(
        "semilog slope {slope:.4} psi/cycle, expected {slope_expected:.4}; {:?}",
        r.stats
    );
    assert!(
        (slope / slope_expected - 1.0).abs() < 0.02,
        "semilog slope {slope} psi/cycle vs {slope_expected}"
    );
    assert_balanced(&r);
}

/// A closed block at constant rate: the average pressure falls as
/// q B t / (c_t V_p), and the cumulative is the rate times the time
/// (Ahmed 2010, pseudo-steady state material balance; from memory).
#[test]
fn closed_block_depletion_ahmed_2010() {
    let mut case = block(
        vec![100.0 * FT; 10],
        vec![100.0 * FT; 10],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.rock.compressibility = 4e-6 / PSI;
    case.fluid.compressibility = 3e-6 / PSI;
    let q = 20.0;
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        4,
        5,
        0,
        0,
        Control::Rate(q * STB_DAY),
    )];
    case.timeline.end = 100.0 * DAY;
    case.timeline.report_every = Some(20.0 * DAY);
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let vp_bbl = 1000.0 * 1000.0 * 20.0 * 0.2 * FT.powi(3) / BBL;
    let ct = 7e-6;
    assert_eq!(r.times.len(), 6);
    for n in 1..r.times.len() {
        let t_day = r.times[n] / DAY;
        let drop = (r.pressure_avg[0] - r.pressure_avg[n]) / PSI;
        let expected = q * 1.0 * t_day / (ct * vp_bbl);
        eprintln!("t = {t_day} day: drop {drop:.4} psi, expected {expected:.4}");
        assert!(
            (drop / expected - 1.0).abs() < 0.01,
            "t = {t_day} day: drop {drop} psi vs {expected}"
        );
        let cum = r.wells[0].cumulative[n] / STB;
        assert!(
            (cum / (q * t_day) - 1.0).abs() < 1e-8,
            "cumulative {cum} stb at {t_day} day"
        );
        assert_eq!(r.wells[0].mode[n], ControlMode::Rate);
    }
    assert_balanced(&r);
}

fn layered_column_case() -> Case {
    let mut case = block(
        vec![200.0 * FT; 4],
        vec![150.0 * FT; 3],
        vec![10.0, 20.0, 5.0, 15.0, 30.0],
        0.0,
    );
    for v in case.grid.dz.iter_mut() {
        *v *= FT;
    }
    let g = case.grid.clone();
    // Tilted, uneven tops: lateral neighbours sit at different depths.
    case.grid.top = (0..g.nx * g.ny)
        .map(|c| (5000.0 + 3.0 * (c % g.nx) as f64 + 7.0 * (c / g.nx) as f64) * FT)
        .collect();
    let kl = [150.0, 40.0, 300.0, 90.0, 10.0];
    for c in 0..g.cell_count() {
        let (_, _, k) = g.ijk(c);
        case.rock.kx[c] = kl[k] * MD;
        case.rock.ky[c] = kl[k] * MD;
        case.rock.kz[c] = 0.1 * kl[k] * MD;
        case.rock.porosity[c] = 0.15 + 0.02 * k as f64;
    }
    case.rock.compressibility = 5e-6 / PSI;
    case.initial = Initial::Datum {
        pressure: 3000.0 * PSI,
        depth: 5000.0 * FT,
    };
    case.timeline.end = 100.0 * DAY;
    case.timeline.max_step = 10.0 * DAY;
    case.timeline.report_every = Some(25.0 * DAY);
    case
}

/// A layered block at hydrostatic equilibrium with no wells stays at rest
/// (common practice, no published source): average pressure drift below
/// 1e-3 psi over 100 days, and no cell moves by more than that either.
#[test]
fn hydrostatic_equilibrium_stays_at_rest() {
    let case = layered_column_case();
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let last = r.times.len() - 1;
    assert_eq!(r.times[last], 100.0 * DAY);
    assert!(((r.pressure_avg[last] - r.pressure_avg[0]) / PSI).abs() < 1e-3);
    let moved = r.pressure[0]
        .iter()
        .zip(&r.pressure[last])
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    eprintln!(
        "largest cell change {:e} psi, balance {:?}, {:?}",
        moved / PSI,
        r.balance_error,
        r.stats
    );
    assert!(moved / PSI < 1e-3, "a cell moved by {} psi", moved / PSI);
    // The initial state is hydrostatic: about 0.433 psi/ft for 62.4 lb/ft^3
    // (rule of thumb, common practice, no published source).
    let g = &case.grid;
    let (top, bottom) = (g.index(0, 0, 0), g.index(0, 0, g.nz - 1));
    let dz: f64 =
        (0..g.nz).map(|k| g.dz[g.index(0, 0, k)]).sum::<f64>() - 0.5 * (g.dz[top] + g.dz[bottom]);
    let grad = (r.pressure[0][bottom] - r.pressure[0][top]) / PSI / (dz / FT);
    assert!((grad - 0.433).abs() < 0.002, "gradient {grad} psi/ft");
    assert_balanced(&r);
    // Even when Newton is made to iterate (a tolerance below rounding), nothing moves.
    let mut strict = RunOptions::default();
    strict.newton.mass_tolerance = 1e-16;
    strict.newton.max_iterations = 3;
    strict.max_step_cuts = 0;
    match run(&case, &strict, &mut NoObserver) {
        Ok(r2) => {
            let moved = r2.pressure[0]
                .iter()
                .zip(r2.pressure.last().unwrap())
                .map(|(a, b)| (a - b).abs())
                .fold(0.0, f64::max);
            assert!(moved / PSI < 1e-6, "a cell moved by {} psi", moved / PSI);
        }
        Err(rill_sim::RunError::StepFailed { reason, .. }) => {
            // Rounding keeps the residual above 1e-16; the pressure changes must still be nil.
            assert!(reason.contains("Newton did not converge"), "{reason}");
            let dp: f64 = reason
                .split("last pressure change ")
                .nth(1)
                .unwrap()
                .split(' ')
                .next()
                .unwrap()
                .parse()
                .unwrap();
            assert!(dp / PSI < 1e-6, "{reason}");
        }
        Err(e) => panic!("{e}"),
    }
}

/// Constant-pressure boundaries whose datum pressure lies on the initial
/// hydrostat, on a side face and on the bottom face, and a BHP well held at
/// its shut-in pressure, leave the equilibrium undisturbed: no flow anywhere
/// (common practice, no published source).
#[test]
fn equilibrium_with_hydrostatic_boundaries_and_shut_in_well_stays_at_rest() {
    let mut case = layered_column_case();
    case.boundaries = vec![
        boundary("west", Side::West, 3000.0 * PSI, Some(5000.0 * FT)),
        boundary("bottom", Side::Bottom, 3000.0 * PSI, Some(5000.0 * FT)),
    ];
    // Datum of the well: its shallowest completion centre, on the initial hydrostat.
    let mut probe = case.clone();
    probe.wells = vec![well(
        &case,
        "W",
        Role::Producer,
        2,
        1,
        1,
        3,
        Control::Rate(0.0),
    )];
    let r0 = run(&probe, &RunOptions::default(), &mut NoObserver).unwrap();
    let shut_in = r0.wells[0].bhp[0];
    case.wells = vec![well(
        &case,
        "W",
        Role::Producer,
        2,
        1,
        1,
        3,
        Control::Bhp(shut_in),
    )];
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let last = r.times.len() - 1;
    let moved = r.pressure[0]
        .iter()
        .zip(&r.pressure[last])
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(moved / PSI < 1e-3, "a cell moved by {} psi", moved / PSI);
    for b in &r.boundaries {
        assert!(
            b.rate[last].abs() / STB_DAY < 1e-6,
            "{}: {} stb/day",
            b.name,
            b.rate[last] / STB_DAY
        );
    }
    assert!(
        r.wells[0].rate[last].abs() / STB_DAY < 1e-6,
        "well: {} stb/day",
        r.wells[0].rate[last] / STB_DAY
    );
    assert_balanced(&r);
}

/// A uniform start is not in equilibrium: the fluid settles and pressure
/// increases downward in every column afterwards, towards the hydrostatic
/// gradient (common practice, no published source).
#[test]
fn uniform_start_develops_a_downward_gradient() {
    let mut case = layered_column_case();
    let n = case.grid.cell_count();
    case.initial = Initial::Cells(vec![3000.0 * PSI; n].into());
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let g = &case.grid;
    let last = r.pressure.len() - 1;
    for j in 0..g.ny {
        for i in 0..g.nx {
            for k in 1..g.nz {
                let (a, b) = (g.index(i, j, k - 1), g.index(i, j, k));
                let dp = r.pressure[last][b] - r.pressure[last][a];
                let dz = 0.5 * (g.dz[a] + g.dz[b]);
                let grad = dp / PSI / (dz / FT);
                assert!(
                    dp > 0.0,
                    "column ({i}, {j}) layer {k}: pressure does not increase downward"
                );
                assert!(
                    (grad - 0.433).abs() < 0.01,
                    "column ({i}, {j}) layer {k}: gradient {grad} psi/ft"
                );
            }
        }
    }
    assert_balanced(&r);
}

/// Rate control switches to the BHP limit when the block depletes, and back
/// to rate control when an event lowers the limit so that it no longer binds
/// (common practice, no published source).
#[test]
fn rate_control_switches_to_bhp_limit_and_back() {
    let mut case = block(
        vec![100.0 * FT; 10],
        vec![100.0 * FT; 10],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.rock.compressibility = 4e-6 / PSI;
    case.fluid.compressibility = 3e-6 / PSI;
    let mut w = well(
        &case,
        "P",
        Role::Producer,
        4,
        5,
        0,
        0,
        Control::Rate(200.0 * STB_DAY),
    );
    w.bhp_limit = Some(2500.0 * PSI);
    case.wells = vec![w];
    case.timeline.end = 24.0 * DAY;
    case.timeline.max_step = 1.0 * DAY;
    case.timeline.report_every = Some(2.0 * DAY);
    case.timeline.events = vec![Event {
        time: 17.0 * DAY,
        changes: vec![WellChange {
            well: 0,
            control: None,
            bhp_limit: Some(1500.0 * PSI),
            skin: None,
        }],
        origin: Origin::default(),
    }];
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let s = &r.wells[0];
    let mut saw_bhp = false;
    for n in 1..r.times.len() {
        let t = r.times[n] / DAY;
        match s.mode[n] {
            ControlMode::Rate => {
                assert!(
                    (s.rate[n] / (200.0 * STB_DAY) - 1.0).abs() < 1e-8,
                    "t = {t}: rate {}",
                    s.rate[n] / STB_DAY
                );
                if t < 17.0 {
                    assert!(
                        s.bhp[n] > 2500.0 * PSI,
                        "t = {t}: on rate control below the limit"
                    );
                } else {
                    assert!(s.bhp[n] > 1500.0 * PSI);
                }
            }
            ControlMode::Bhp => {
                assert!(
                    t < 17.0 + 1e-9,
                    "t = {t}: still on the old limit after the event"
                );
                saw_bhp = true;
                assert_eq!(s.bhp[n], 2500.0 * PSI);
                assert!(s.rate[n] < 200.0 * STB_DAY);
            }
            ControlMode::Shut => panic!("t = {t}: a producer above its limit is never shut"),
        }
    }
    assert!(saw_bhp, "the well never reached its limit");
    assert_eq!(s.mode[1], ControlMode::Rate);
    assert_eq!(*s.mode.last().unwrap(), ControlMode::Rate);
    assert!(
        *s.bhp.last().unwrap() < 2500.0 * PSI,
        "after the event the BHP goes below the old limit"
    );
    assert_balanced(&r);
}

/// Events change controls at their exact times, report times are hit
/// exactly, and cumulatives integrate the piecewise-constant rate (common
/// practice, no published source).
#[test]
fn events_and_report_times_are_exact() {
    let mut case = block(
        vec![100.0 * FT; 6],
        vec![100.0 * FT; 6],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.rock.compressibility = 4e-6 / PSI;
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        2,
        3,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    )];
    case.timeline.end = 12.0 * DAY;
    case.timeline.first_step = 0.3 * DAY;
    case.timeline.report_every = Some(2.0 * DAY);
    case.timeline.events = vec![
        Event {
            time: 7.3 * DAY,
            changes: vec![WellChange {
                well: 0,
                control: Some(Control::Rate(50.0 * STB_DAY)),
                bhp_limit: None,
                skin: None,
            }],
            origin: Origin::default(),
        },
        Event {
            time: 9.1 * DAY,
            changes: vec![WellChange {
                well: 0,
                // Below the depleted block (about 2540 psi by then), so
                // that the producer produces rather than being shut.
                control: Some(Control::Bhp(1800.0 * PSI)),
                bhp_limit: None,
                skin: None,
            }],
            origin: Origin::default(),
        },
    ];
    let mut rec = Recorder::default();
    let r = run(&case, &RunOptions::default(), &mut rec).unwrap();
    let every = 2.0 * DAY;
    let expected = [
        0.0,
        every,
        2.0 * every,
        3.0 * every,
        7.3 * DAY,
        4.0 * every,
        9.1 * DAY,
        5.0 * every,
        12.0 * DAY,
    ];
    assert_eq!(r.times, expected);
    let s = &r.wells[0];
    let at = |t: f64| r.times.iter().position(|&x| x == t).unwrap();
    assert!((s.cumulative[at(7.3 * DAY)] / STB / 730.0 - 1.0).abs() < 1e-9);
    assert!((s.cumulative[at(8.0 * DAY)] / STB / (730.0 + 0.7 * 50.0) - 1.0).abs() < 1e-9);
    assert!((s.rate[at(7.3 * DAY)] / STB_DAY - 100.0).abs() < 1e-6);
    assert!((s.rate[at(9.1 * DAY)] / STB_DAY - 50.0).abs() < 1e-6);
    for n in at(10.0 * DAY)..r.times.len() {
        assert_eq!(s.mode[n], ControlMode::Bhp);
        assert_eq!(s.bhp[n], 1800.0 * PSI);
    }
    // Progress never overshoots a report time and ends at the end.
    let mut last = 0.0;
    for p in &rec.steps {
        assert!(p.time > last && p.time <= 12.0 * DAY);
        last = p.time;
    }
    assert_eq!(last, 12.0 * DAY);
    assert_eq!(rec.steps.len(), r.stats.steps);
    assert_balanced(&r);
}

#[test]
fn cancelled_run_returns_the_cancel_error() {
    let mut case = block(
        vec![100.0 * FT; 5],
        vec![100.0 * FT; 5],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        2,
        2,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    )];
    let mut rec = Recorder {
        cancel_after: Some(3),
        ..Default::default()
    };
    let err = run(&case, &RunOptions::default(), &mut rec).unwrap_err();
    assert!(matches!(err, RunError::Cancelled { .. }), "{err:?}");
    assert!(err.to_string().contains("cancelled"));
    assert_eq!(rec.steps.len(), 3);
}

/// A step that cannot converge is cut, and the run gives up with an error
/// that names the step and the time.
#[test]
fn failed_step_names_step_and_time() {
    let mut case = block(
        vec![100.0 * FT; 5],
        vec![100.0 * FT; 5],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.wells = vec![well(
        &case,
        "P",
        Role::Producer,
        2,
        2,
        0,
        0,
        Control::Rate(100.0 * STB_DAY),
    )];
    let mut opts = RunOptions::default();
    opts.newton.max_iterations = 1;
    opts.max_step_cuts = 2;
    let err = run(&case, &opts, &mut NoObserver).unwrap_err();
    let RunError::StepFailed {
        step, time, cuts, ..
    } = &err
    else {
        panic!("{err:?}")
    };
    assert_eq!((*step, *time, *cuts), (1, 0.0, 2));
    let msg = err.to_string();
    assert!(msg.starts_with("step 1 failed at t = 0 day"), "{msg}");
    assert!(msg.contains("Newton did not converge"), "{msg}");
}

/// An injector on rate control into a closed block switches to its upper
/// BHP limit as the block fills (common practice, no published source).
#[test]
fn injector_switches_to_its_upper_bhp_limit() {
    let mut case = block(
        vec![100.0 * FT; 8],
        vec![100.0 * FT; 8],
        vec![20.0 * FT],
        7000.0 * FT,
    );
    case.rock.compressibility = 4e-6 / PSI;
    let mut w = well(
        &case,
        "I",
        Role::Injector,
        3,
        4,
        0,
        0,
        Control::Rate(300.0 * STB_DAY),
    );
    w.bhp_limit = Some(3600.0 * PSI);
    case.wells = vec![w];
    case.timeline.end = 40.0 * DAY;
    case.timeline.max_step = 1.0 * DAY;
    case.timeline.report_every = Some(4.0 * DAY);
    let r = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    let s = &r.wells[0];
    assert_eq!(s.mode[1], ControlMode::Rate);
    assert!(
        (s.rate[1] / (-300.0 * STB_DAY) - 1.0).abs() < 1e-8,
        "injection is a negative rate"
    );
    assert!(s.cumulative[1] < 0.0);
    let last = r.times.len() - 1;
    assert_eq!(s.mode[last], ControlMode::Bhp);
    assert_eq!(s.bhp[last], 3600.0 * PSI);
    assert!(s.rate[last] < 0.0 && s.rate[last] > -300.0 * STB_DAY);
    assert!(r.pressure_avg[last] > r.pressure_avg[0]);
    assert_balanced(&r);
}
