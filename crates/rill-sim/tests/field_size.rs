//! A field-size steady solve: 1.12 million cells, five wells. The target is
//! well under 10 s on 2 cores in a release build; run with
//! `cargo test --release -p rill-sim --test field_size -- --ignored --nocapture`.
//! The fast version below runs the same construction on a small grid.

mod common;
use common::*;
use rill_model::*;
use rill_sim::{run, ControlMode, RunOptions};

fn field_case(nx: usize, ny: usize, nz: usize) -> Case {
    let mut case = block(
        vec![50.0 * FT; nx],
        vec![50.0 * FT; ny],
        vec![10.0 * FT; nz],
        7000.0 * FT,
    );
    let g = case.grid.clone();
    for c in 0..g.cell_count() {
        let (i, j, k) = g.ijk(c);
        // A deterministic layered, patchy field from 5 md to about 500 md.
        let s = ((i as f64 * 0.13).sin() + (j as f64 * 0.07).cos() + (k as f64 * 0.9).sin()) / 3.0;
        let kx = 50.0 * (10f64).powf(s) * MD;
        case.rock.kx[c] = kx;
        case.rock.ky[c] = kx;
        case.rock.kz[c] = 0.1 * kx;
        case.rock.porosity[c] = 0.18 + 0.04 * s;
    }
    case.timeline.kind = RunKind::Steady;
    case.timeline.end = 0.0;
    case.boundaries = vec![
        boundary("west aquifer", Side::West, 3200.0 * PSI, Some(7000.0 * FT)),
        boundary("east aquifer", Side::East, 3100.0 * PSI, Some(7000.0 * FT)),
    ];
    let at = |f: f64, n: usize| ((f * n as f64) as usize).min(n - 1);
    let mut wells = vec![
        well(
            &case,
            "P1",
            Role::Producer,
            at(0.3, nx),
            at(0.3, ny),
            0,
            nz - 1,
            Control::Bhp(2000.0 * PSI),
        ),
        well(
            &case,
            "P2",
            Role::Producer,
            at(0.7, nx),
            at(0.3, ny),
            0,
            nz / 2,
            Control::Bhp(2200.0 * PSI),
        ),
        well(
            &case,
            "P3",
            Role::Producer,
            at(0.5, nx),
            at(0.7, ny),
            nz / 2,
            nz - 1,
            Control::Rate(2000.0 * STB_DAY),
        ),
        well(
            &case,
            "I1",
            Role::Injector,
            at(0.5, nx),
            at(0.5, ny),
            0,
            nz - 1,
            Control::Rate(1500.0 * STB_DAY),
        ),
        well(
            &case,
            "P4",
            Role::Producer,
            at(0.2, nx),
            at(0.8, ny),
            0,
            nz - 1,
            Control::Rate(1e6 * STB_DAY),
        ),
    ];
    wells[4].bhp_limit = Some(1500.0 * PSI);
    case.wells = wells;
    case
}

fn check(case: &Case) -> rill_sim::RunResults {
    let r = run(case, &RunOptions::default(), &mut NoObserverTimed).unwrap();
    eprintln!("{} cells: {:?}", case.grid.cell_count(), r.stats);
    let w = &r.wells;
    assert_eq!(w[0].bhp[0], 2000.0 * PSI);
    assert!(w[0].rate[0] > 0.0 && w[1].rate[0] > 0.0);
    assert!(
        (w[2].rate[0] / (2000.0 * STB_DAY) - 1.0).abs() < 1e-6,
        "P3 rate {}",
        w[2].rate[0] / STB_DAY
    );
    assert!(
        (w[3].rate[0] / (-1500.0 * STB_DAY) - 1.0).abs() < 1e-6,
        "I1 rate {}",
        w[3].rate[0] / STB_DAY
    );
    // P4 asks for far more than the aquifers give: it sits on its limit.
    assert_eq!(w[4].mode[0], ControlMode::Bhp);
    assert_eq!(w[4].bhp[0], 1500.0 * PSI);
    assert!(
        r.balance_error[0] < 1e-6,
        "steady balance {}",
        r.balance_error[0]
    );
    r
}

struct NoObserverTimed;
impl rill_sim::Observer for NoObserverTimed {
    fn timings(&mut self, t: &rill_sim::Timings) {
        eprintln!("{t:?}");
    }
}

#[test]
fn five_wells_steady_small() {
    check(&field_case(40, 30, 5));
}

#[test]
#[ignore = "1.12 million cells: about a minute in a debug build; run in release (see the module doc)"]
fn five_wells_steady_1_12_million_cells() {
    let case = field_case(280, 200, 20);
    assert_eq!(case.grid.cell_count(), 1_120_000);
    let t = std::time::Instant::now();
    let r = check(&case);
    eprintln!(
        "total {:.2} s (run {:.2} s)",
        t.elapsed().as_secs_f64(),
        r.stats.wall_seconds
    );
}

fn transient(mut case: Case) -> Case {
    case.timeline.kind = RunKind::Transient;
    case.timeline.end = 30.0 * DAY;
    case.timeline.first_step = 1.0 * DAY;
    case.timeline.growth = 2.0;
    case.timeline.max_step = 10.0 * DAY;
    case.timeline.report_every = Some(10.0 * DAY);
    case.rock.compressibility = 4e-6 / PSI;
    case
}

#[test]
fn five_wells_transient_small() {
    let case = transient(field_case(30, 20, 4));
    let r = run(&case, &RunOptions::default(), &mut NoObserverTimed).unwrap();
    eprintln!("{:?}", r.stats);
    assert_balanced(&r);
    assert_eq!(r.times.len(), 4);
}

#[test]
#[ignore = "160 000 cells transient: run in release (see the module doc)"]
fn five_wells_transient_160k_cells() {
    let case = transient(field_case(100, 80, 20));
    let r = run(&case, &RunOptions::default(), &mut NoObserverTimed).unwrap();
    eprintln!("{:?}", r.stats);
    assert_balanced(&r);
}
