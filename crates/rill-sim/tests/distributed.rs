//! The distributed engine (`run_distributed`) against the serial one, with
//! the processes played by threads: each thread holds one slab of the cells
//! and runs the same code a PETSc rank runs; the reductions and the global
//! linear solve go through a shared, deterministic stand-in for MPI (sums in
//! rank order; the global system gathered from the parts and solved by
//! rill's own direct solver). The parts must give the serial run's results
//! (to the rounding of the different summation order), on 2 and 3 parts:
//! this checks the slab split, the ghosts, the shares of the well and
//! aquifer rows and every global decision, without MPI.

mod common;

use std::sync::{Arc, Barrier, Mutex};

use common::*;
use rill_model::*;
use rill_sim::linear::{self, CsrMatrix};
use rill_sim::{
    run, run_distributed, NoObserver, Parallel, PartSolve, PartSystem, RunOptions, RunResults,
};

/// What the threads exchange.
struct Shared {
    barrier: Barrier,
    slots: Mutex<Vec<Vec<f64>>>,
    /// Each part's (matrix triplets, right-hand side entries, global indices read back).
    parts: Mutex<Vec<Part>>,
    solution: Mutex<Vec<f64>>,
}

#[derive(Default, Clone)]
struct Part {
    triplets: Vec<(usize, usize, f64)>,
    rhs: Vec<(usize, f64)>,
    n_global: usize,
}

struct Threads {
    rank: usize,
    size: usize,
    shared: Arc<Shared>,
}

impl Threads {
    /// Every part's `values`, in rank order.
    fn exchange(&self, values: &[f64]) -> Vec<Vec<f64>> {
        self.shared.slots.lock().unwrap()[self.rank] = values.to_vec();
        self.shared.barrier.wait();
        let all = self.shared.slots.lock().unwrap().clone();
        self.shared.barrier.wait();
        all
    }
}

impl Parallel for Threads {
    fn rank(&self) -> usize {
        self.rank
    }
    fn size(&self) -> usize {
        self.size
    }
    fn sum(&self, values: &mut [f64]) {
        let all = self.exchange(values);
        for (k, v) in values.iter_mut().enumerate() {
            *v = all.iter().map(|p| p[k]).sum();
        }
    }
    fn max(&self, values: &mut [f64]) {
        let all = self.exchange(values);
        for (k, v) in values.iter_mut().enumerate() {
            *v = all.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max);
        }
    }
    fn gather(&self, values: &[f64]) -> Vec<f64> {
        let all = self.exchange(values);
        if self.rank == 0 {
            all.concat()
        } else {
            Vec::new()
        }
    }
    fn solve(&self, s: &PartSystem, solution: &mut [f64]) -> Result<PartSolve, String> {
        // The rows this part contributes, in global numbering: its owned
        // cell rows, its shares of the well and aquifer rows; their
        // right-hand sides once (rank 0).
        let a = s.matrix;
        let mut part = Part {
            n_global: s.n_global(),
            ..Part::default()
        };
        for i in (s.owned.clone()).chain(s.n_cells..a.n) {
            for k in a.row_ptr[i]..a.row_ptr[i + 1] {
                part.triplets
                    .push((s.global(i), s.global(a.col_idx[k]), a.values[k]));
            }
            if i < s.n_cells || self.rank == 0 {
                part.rhs.push((s.global(i), s.rhs[i]));
            }
        }
        self.shared.parts.lock().unwrap()[self.rank] = part;
        self.shared.barrier.wait();
        if self.rank == 0 {
            let parts = self.shared.parts.lock().unwrap();
            let n = parts[0].n_global;
            let triplets: Vec<_> = parts.iter().flat_map(|p| p.triplets.clone()).collect();
            let mut b = vec![0.0; n];
            for (i, v) in parts.iter().flat_map(|p| p.rhs.clone()) {
                b[i] += v;
            }
            let m = CsrMatrix::from_triplets(n, &triplets);
            let mut x = vec![0.0; n];
            let opts = linear::SolverOptions {
                rel_tol: s.rel_tol,
                ..Default::default()
            };
            let result = linear::solve(&m, &b, &mut x, &opts);
            assert!(result.is_ok(), "global solve: {result:?}");
            *self.shared.solution.lock().unwrap() = x;
        }
        self.shared.barrier.wait();
        {
            let x = self.shared.solution.lock().unwrap();
            for (i, v) in solution.iter_mut().enumerate() {
                *v = x[s.global(i)];
            }
        }
        self.shared.barrier.wait();
        Ok(PartSolve {
            iterations: 1,
            method: "threads",
            setup_seconds: 0.0,
            solve_seconds: 0.0,
        })
    }
}

/// Runs `case` on `size` threads; rank 0's results.
fn run_parts(case: &Case, size: usize) -> RunResults {
    let shared = Arc::new(Shared {
        barrier: Barrier::new(size),
        slots: Mutex::new(vec![Vec::new(); size]),
        parts: Mutex::new(vec![Part::default(); size]),
        solution: Mutex::new(Vec::new()),
    });
    let opts = RunOptions::default();
    let results: Vec<RunResults> = std::thread::scope(|scope| {
        let handles: Vec<_> = (0..size)
            .map(|rank| {
                let par = Threads {
                    rank,
                    size,
                    shared: shared.clone(),
                };
                let opts = &opts;
                scope.spawn(move || {
                    run_distributed(case, opts, &mut NoObserver, &par).expect("distributed run")
                })
            })
            .collect();
        handles.into_iter().map(|h| h.join().unwrap()).collect()
    });
    results.into_iter().next().unwrap()
}

/// A layered, heterogeneous, anisotropic block on a dipping top with
/// gravity: a producer through every layer on a rate it cannot hold (it
/// switches to its BHP limit), an injector on BHP in two layers, a
/// constant-pressure west side, a finite aquifer on part of the east side,
/// a partly sealing fault, and a skin change by an event.
fn mixed_case() -> Case {
    let mut c = block(
        vec![150.0 * FT; 7],
        vec![120.0 * FT; 5],
        vec![20.0 * FT, 30.0 * FT, 25.0 * FT, 15.0 * FT],
        7000.0 * FT,
    );
    let n = c.grid.cell_count();
    c.grid.top = (0..c.grid.nx * c.grid.ny)
        .map(|col| (7000.0 + 4.0 * (col % 7) as f64 + 2.5 * (col / 7) as f64) * FT)
        .collect();
    let kx: Vec<f64> = (0..n)
        .map(|k| (20.0 + 180.0 * (0.5 + 0.5 * ((k as f64) * 0.7).sin())) * MD)
        .collect();
    c.rock.ky = kx.iter().map(|k| 0.6 * k).collect::<Vec<_>>().into();
    c.rock.kz = kx.iter().map(|k| 0.1 * k).collect::<Vec<_>>().into();
    c.rock.kx = kx.into();
    c.rock.compressibility = 4e-6 / PSI;
    let mut producer = well(
        &c,
        "P-1",
        Role::Producer,
        5,
        2,
        0,
        3,
        Control::Rate(4000.0 * STB_DAY),
    );
    producer.bhp_limit = Some(2200.0 * PSI);
    let injector = well(
        &c,
        "I-1",
        Role::Injector,
        1,
        1,
        2,
        3,
        Control::Bhp(3600.0 * PSI),
    );
    c.wells = vec![producer, injector];
    c.boundaries = vec![boundary(
        "west",
        Side::West,
        3050.0 * PSI,
        Some(7000.0 * FT),
    )];
    c.aquifers = vec![Aquifer {
        name: "east".into(),
        side: Side::East,
        select: Selection {
            k: Some((2, 3)),
            ..Selection::default()
        },
        water_volume: 5e7,
        compressibility: 7e-6 / PSI,
        productivity: 20.0 * BBL / DAY / PSI,
        origin: Origin::default(),
    }];
    c.faults = vec![Fault {
        name: "F".into(),
        side: Side::East,
        select: Selection {
            i: Some((3, 3)),
            ..Selection::default()
        },
        multiplier: 0.05,
        origin: Origin::default(),
    }];
    c.timeline.end = 60.0 * DAY;
    c.timeline.report_every = Some(10.0 * DAY);
    c.timeline.events = vec![Event {
        time: 20.0 * DAY,
        changes: vec![WellChange {
            well: 0,
            control: None,
            bhp_limit: None,
            skin: Some(3.0),
        }],
        origin: Origin::default(),
    }];
    c
}

/// `a` and `b` agree to `tol` relative (of the series' largest magnitude).
fn assert_series(name: &str, a: &[f64], b: &[f64], tol: f64) {
    assert_eq!(a.len(), b.len(), "{name}: lengths");
    let scale = a
        .iter()
        .chain(b)
        .fold(0.0f64, |m, v| m.max(v.abs()))
        .max(1e-300);
    for (k, (x, y)) in a.iter().zip(b).enumerate() {
        assert!(
            (x - y).abs() <= tol * scale,
            "{name}[{k}]: serial {x}, parts {y} (scale {scale})"
        );
    }
}

fn assert_same(serial: &RunResults, parts: &RunResults) {
    let tol = 1e-9;
    assert_series("times", &serial.times, &parts.times, 1e-12);
    assert_series(
        "pressure_avg",
        &serial.pressure_avg,
        &parts.pressure_avg,
        tol,
    );
    for (s, p) in serial.wells.iter().zip(&parts.wells) {
        assert_series(&format!("{} rate", s.name), &s.rate, &p.rate, tol);
        assert_series(&format!("{} bhp", s.name), &s.bhp, &p.bhp, tol);
        assert_series(
            &format!("{} cumulative", s.name),
            &s.cumulative,
            &p.cumulative,
            tol,
        );
        assert_eq!(s.mode, p.mode, "{} modes", s.name);
    }
    for (s, p) in serial.boundaries.iter().zip(&parts.boundaries) {
        assert_series(&format!("{} rate", s.name), &s.rate, &p.rate, tol);
    }
    for (s, p) in serial.aquifers.iter().zip(&parts.aquifers) {
        assert_series(&format!("{} rate", s.name), &s.rate, &p.rate, tol);
        assert_series(
            &format!("{} pressure", s.name),
            &s.pressure,
            &p.pressure,
            tol,
        );
    }
    assert_eq!(serial.events, parts.events, "well events");
    assert_eq!(serial.pressure.len(), parts.pressure.len());
    for (k, (a, b)) in serial.pressure.iter().zip(&parts.pressure).enumerate() {
        let a: Vec<f64> = a.iter().copied().filter(|v| v.is_finite()).collect();
        let b: Vec<f64> = b.iter().copied().filter(|v| v.is_finite()).collect();
        assert_series(&format!("map {k}"), &a, &b, tol);
    }
}

#[test]
fn two_and_three_parts_give_the_serial_transient_run() {
    let case = mixed_case();
    let serial = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    // The case does what it is meant to: the producer reaches its limit.
    assert!(
        serial.events.is_empty() && serial.wells[0].mode.contains(&rill_sim::ControlMode::Bhp),
        "the producer switches to its BHP limit"
    );
    assert_balanced(&serial);
    for size in [2, 3] {
        let parts = run_parts(&case, size);
        assert_same(&serial, &parts);
        assert_balanced(&parts);
    }
}

#[test]
fn two_parts_give_the_serial_steady_run() {
    let mut case = mixed_case();
    case.timeline.kind = RunKind::Steady;
    case.timeline.events.clear();
    let serial = run(&case, &RunOptions::default(), &mut NoObserver).unwrap();
    for size in [2, 3] {
        assert_same(&serial, &run_parts(&case, size));
    }
}
