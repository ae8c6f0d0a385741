//! CPR-GMRES on synthetic two-phase Jacobians (`support/two_phase.rs`):
//! convergence, agreement with the sparse direct solve, the variants, the
//! reuse between Newton iterations, and the errors.

mod support;

use rill_linear::{
    solve, solve_coupled, AmgRefresh, CoupledOptions, CoupledSolver, Cpr, CprOptions, CsrMatrix,
    Decoupling, LinearError, LinearStats, Method, Preconditioner, SecondStage, SolverOptions,
};
use support::two_phase::{two_phase_system, TwoPhaseSystem};

/// Every decoupling, in the order the measurements below quote them.
const DECOUPLINGS: [Decoupling; 3] = [
    Decoupling::QuasiImpes,
    Decoupling::TrueImpes,
    Decoupling::PressureRow,
];

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

fn true_rel_residual(a: &CsrMatrix, b: &[f64], x: &[f64]) -> f64 {
    let ax = a.mul_vec(x);
    let r: Vec<f64> = b.iter().zip(&ax).map(|(p, q)| p - q).collect();
    norm(&r) / norm(b)
}

fn opts(decoupling: Decoupling, second_stage: SecondStage, pressure_stage: bool) -> CoupledOptions {
    CoupledOptions {
        cpr: CprOptions {
            decoupling,
            second_stage,
            pressure_stage,
            ..Default::default()
        },
        ..Default::default()
    }
}

/// Solves with CPR-GMRES from x = 0, checks the reported residual against
/// a recomputed one, and returns the stats (or the error) and x.
fn run(s: &TwoPhaseSystem, o: &CoupledOptions) -> (Result<LinearStats, LinearError>, Vec<f64>) {
    let mut solver = CoupledSolver::new(o.clone());
    let mut x = vec![0.0; s.a.rows()];
    let out = solver.solve_with(&s.a, Some(&s.accumulation), &s.b, &mut x);
    if let Ok(st) = &out {
        let r = true_rel_residual(&s.a, &s.b, &x);
        assert!(r <= o.rel_tol, "{st:?}: true residual {r:e}");
        assert!((r - st.rel_residual).abs() <= 1e-2 * r, "{st:?} vs {r:e}");
    }
    (out, x)
}

fn iterations(out: &Result<LinearStats, LinearError>) -> usize {
    match out {
        Ok(s) => s.iterations,
        Err(LinearError::NotConverged { iterations, .. }) => *iterations,
        Err(e) => panic!("{e}"),
    }
}

fn direct(a: &CsrMatrix, b: &[f64]) -> Vec<f64> {
    let mut x = vec![0.0; a.rows()];
    let o = SolverOptions {
        method: Method::Direct,
        ..Default::default()
    };
    solve(a, b, &mut x, &o).expect("sparse LU");
    x
}

fn rel_diff(x: &[f64], y: &[f64]) -> f64 {
    let d: Vec<f64> = x.iter().zip(y).map(|(p, q)| p - q).collect();
    norm(&d) / norm(y)
}

/// All six variants (three decouplings, two second stages) converge on
/// strongly heterogeneous fields (ln k with sigma 2, contrast above 1e7)
/// from 2 x 10^4 to 6.4 x 10^4 unknowns, and the pressure stage is what
/// makes them converge: the second stage alone needs over five times the
/// iterations or does not converge within 200.
///
/// Measured (iterations to 1e-8; quasi-IMPES / true-IMPES / first row;
/// the default pressure stage of two V-cycles with two sweeps):
/// 100 x 100:      ILU(0) 18 / 15 / 23, Jacobi 87 / 77 / 129;
/// 30 x 30 x 12:   ILU(0) 16 / 11 / 25, Jacobi 56 / 43 / 87;
/// 40 x 40 x 20:   ILU(0) 28 / 14 / 28, Jacobi 98 / 62 / 117;
/// ILU(0) alone: 200 (not converged), 183, 200; Jacobi alone: 200 each.
/// The bounds below are the largest of these plus about a third.
#[test]
fn cpr_variants_converge_where_the_second_stage_alone_does_not() {
    for (nx, ny, nz) in [(100, 100, 1), (30, 30, 12), (40, 40, 20)] {
        let s = two_phase_system(nx, ny, nz, 2.0, 7);
        assert!(s.contrast > 1e7, "{}", s.contrast);
        let grid = format!("{nx}x{ny}x{nz} ({} unknowns)", s.a.rows());
        let mut cpr_ilu = 0;
        for d in DECOUPLINGS {
            for st in [SecondStage::BlockIlu0, SecondStage::BlockJacobi] {
                let (out, _) = run(&s, &opts(d, st, true));
                let stats = out.unwrap_or_else(|e| panic!("{grid} {d:?} {st:?}: {e}"));
                eprintln!("{grid} {d:?} {st:?}: {} iterations", stats.iterations);
                let bound = if st == SecondStage::BlockIlu0 {
                    45
                } else {
                    180
                };
                assert!(stats.iterations <= bound, "{grid} {d:?} {st:?}: {stats:?}");
                assert!(stats.levels >= 2, "{stats:?}");
                if d == Decoupling::QuasiImpes && st == SecondStage::BlockIlu0 {
                    cpr_ilu = stats.iterations;
                }
            }
        }
        for st in [SecondStage::BlockIlu0, SecondStage::BlockJacobi] {
            let (out, _) = run(&s, &opts(Decoupling::QuasiImpes, st, false));
            let it = iterations(&out);
            eprintln!("{grid} {st:?} alone: {it} iterations");
            assert!(
                it >= 5 * cpr_ilu,
                "{grid} {st:?} alone: {it} vs CPR {cpr_ilu}"
            );
        }
    }
}

/// CPR-GMRES and the sparse LU agree. At a relative residual of 1e-11 the
/// relative difference in x is bounded by cond(A) 1e-11; measured 1.9e-12
/// (2D, 30 iterations) and 3.0e-12 (3D, 21 iterations), asserted at 1e-10.
#[test]
fn cpr_solution_matches_the_sparse_direct_solve() {
    for (nx, ny, nz) in [(100, 100, 1), (30, 30, 12)] {
        let s = two_phase_system(nx, ny, nz, 2.0, 11);
        let xd = direct(&s.a, &s.b);
        let o = CoupledOptions {
            rel_tol: 1e-11,
            ..Default::default()
        };
        let mut x = vec![0.0; s.a.rows()];
        let stats = solve_coupled(&s.a, &s.b, &mut x, &o).expect("CPR-GMRES");
        assert_eq!(stats.method, "cpr-bilu0-gmres");
        assert!(true_rel_residual(&s.a, &s.b, &x) <= 1e-11);
        let d = rel_diff(&x, &xd);
        eprintln!(
            "{nx}x{ny}x{nz}: {} iterations, difference to LU {d:.2e}",
            stats.iterations
        );
        assert!(d <= 1e-10, "{nx}x{ny}x{nz}: {d:e}");
    }
}

/// The weights and the pressure matrix follow their definitions, checked
/// entry by entry against the matrix.
#[test]
fn weights_and_pressure_matrix_follow_their_definitions() {
    let s = two_phase_system(7, 5, 3, 2.0, 3);
    let a = &s.a;
    for d in DECOUPLINGS {
        let o = CprOptions {
            decoupling: d,
            ..Default::default()
        };
        let cpr = Cpr::build(a, Some(&s.accumulation), &o).expect("set-up");
        let w = cpr.weights();
        let ap = cpr.pressure_matrix();
        for i in 0..a.n {
            let wi = [w[2 * i], w[2 * i + 1]];
            assert_eq!(wi[0], 1.0, "{d:?} block {i}");
            let blk = match d {
                Decoupling::TrueImpes => s.accumulation[4 * i..4 * i + 4].to_vec(),
                _ => (0..4)
                    .map(|l| a.get(2 * i + l / 2, 2 * i + l % 2))
                    .collect(),
            };
            // w^T D e_1: the saturation column is eliminated.
            let eliminated = wi[0] * blk[1] + wi[1] * blk[3];
            match d {
                Decoupling::PressureRow => assert_eq!(wi[1], 0.0),
                _ => assert!(
                    eliminated.abs() <= 1e-14 * (blk[1].abs() + wi[1].abs() * blk[3].abs()),
                    "{d:?} block {i}: {eliminated:e}"
                ),
            }
            let (cols, vals) = ap.row(i);
            assert_eq!(cols, a.row(i).0);
            for (&j, &v) in cols.iter().zip(vals) {
                let expect = wi[0] * a.get(2 * i, 2 * j) + wi[1] * a.get(2 * i + 1, 2 * j);
                assert!(
                    (v - expect).abs() <= 1e-15 * expect.abs().max(1e-300),
                    "{d:?} ({i}, {j})"
                );
            }
        }
    }
}

/// An equation written the other way round (a well held to a rate: its
/// residual falls as the BHP rises) gives a pressure row with a negative
/// diagonal, on which the multigrid's smoothers diverge. Negating whole
/// block rows of A and b (the same solution) must leave the pressure
/// matrix with positive diagonals, turn those rows' weights, and cost
/// CPR no more than two iterations (measured: none, 15 / 12 / 28 with and
/// without the turned rows).
#[test]
fn a_pressure_row_with_a_negative_diagonal_is_turned() {
    let s = two_phase_system(30, 30, 6, 2.0, 5);
    let mut turned = s.clone();
    let flipped: Vec<usize> = (0..s.a.n).step_by(37).collect();
    for &i in &flipped {
        let (r0, r1) = (turned.a.row_ptr[i], turned.a.row_ptr[i + 1]);
        turned.a.values[4 * r0..4 * r1]
            .iter_mut()
            .for_each(|v| *v = -*v);
        turned.b[2 * i] = -turned.b[2 * i];
        turned.b[2 * i + 1] = -turned.b[2 * i + 1];
        turned.accumulation[4 * i..4 * i + 4]
            .iter_mut()
            .for_each(|v| *v = -*v);
    }
    for d in DECOUPLINGS {
        let o = opts(d, SecondStage::BlockIlu0, true);
        let plain = Cpr::build(&s.a, Some(&s.accumulation), &o.cpr).expect("set-up");
        let cpr = Cpr::build(&turned.a, Some(&turned.accumulation), &o.cpr).expect("set-up");
        let ap = cpr.pressure_matrix();
        for i in 0..ap.n {
            assert!(ap.get(i, i) > 0.0, "{d:?} row {i}: {}", ap.get(i, i));
        }
        for &i in &flipped {
            let (w, w0) = (cpr.weights(), plain.weights());
            assert_eq!(w[2 * i], -w0[2 * i], "{d:?} block {i}");
            assert_eq!(w[2 * i + 1], -w0[2 * i + 1], "{d:?} block {i}");
        }
        let (before, _) = run(&s, &o);
        let (after, x) = run(&turned, &o);
        let (k0, k1) = (iterations(&before), iterations(&after));
        eprintln!("{d:?}: {k0} iterations, {k1} with rows turned");
        after.unwrap_or_else(|e| panic!("{d:?}: {e}"));
        assert!(k1 <= k0 + 2, "{d:?}: {k0} -> {k1}");
        assert!(true_rel_residual(&s.a, &s.b, &x) <= 1e-7, "{d:?}");
    }
}

/// The default pressure stage (two V-cycles of two sweeps each) takes
/// fewer GMRES iterations than one V-cycle of one sweep (measured on
/// 40 x 40 x 20 with true-IMPES weights: 14 against 22).
#[test]
fn the_default_pressure_stage_beats_a_single_v_cycle() {
    let s = two_phase_system(40, 40, 20, 2.0, 7);
    let single = CoupledOptions {
        cpr: CprOptions {
            decoupling: Decoupling::TrueImpes,
            pressure_cycles: 1,
            amg: rill_linear::AmgOptions {
                sweeps: 1,
                ..Default::default()
            },
            ..Default::default()
        },
        ..Default::default()
    };
    let default = CoupledOptions {
        cpr: CprOptions {
            decoupling: Decoupling::TrueImpes,
            ..Default::default()
        },
        ..Default::default()
    };
    assert_eq!(
        (default.cpr.pressure_cycles, default.cpr.amg.sweeps),
        (2, 2)
    );
    let (one, _) = run(&s, &single);
    let (two, _) = run(&s, &default);
    let (k1, k2) = (iterations(&one), iterations(&two));
    eprintln!("one V-cycle of one sweep: {k1} iterations; default: {k2}");
    one.expect("single V-cycle");
    two.expect("default");
    assert!(k2 < k1, "{k1} vs {k2}");
}

/// Incompressible phases in a cell full of one of them give an
/// accumulation block with no pressure derivative, `[[0, a], [0, b]]`:
/// singular, yet its saturation column still fixes the true-IMPES weights
/// (`w = (1, -a / b)`), and CPR with them converges.
#[test]
fn true_impes_weights_hold_where_the_accumulation_has_no_pressure_column() {
    let mut s = two_phase_system(6, 4, 2, 1.5, 11);
    for blk in s.accumulation.chunks_mut(4).step_by(3) {
        blk[0] = 0.0;
        blk[2] = 0.0;
    }
    let o = CprOptions {
        decoupling: Decoupling::TrueImpes,
        ..Default::default()
    };
    let cpr = Cpr::build(&s.a, Some(&s.accumulation), &o).expect("set-up");
    let w = cpr.weights();
    for (i, blk) in s.accumulation.chunks(4).enumerate() {
        let expect = -blk[1] / blk[3];
        assert!(
            (w[2 * i + 1] - expect).abs() <= 1e-14 * expect.abs(),
            "block {i}: {} vs {expect}",
            w[2 * i + 1]
        );
    }
    let (out, _) = run(
        &s,
        &opts(Decoupling::TrueImpes, SecondStage::BlockIlu0, true),
    );
    out.expect("CPR converges");
}

/// A block tridiagonal matrix (a 1D grid) has no fill: block ILU(0) is its
/// exact LU, so GMRES with the second stage alone converges in one
/// iteration. Also for blocks of 3 and 4, with a random diagonally dominant
/// system; and CPR on these (and on a 2D pattern, with fill) agrees with
/// the direct solve.
#[test]
fn block_ilu0_is_exact_without_fill() {
    let s = two_phase_system(300, 1, 1, 2.0, 5);
    for pressure_stage in [false, true] {
        let o = CoupledOptions {
            rel_tol: 1e-12,
            ..opts(
                Decoupling::QuasiImpes,
                SecondStage::BlockIlu0,
                pressure_stage,
            )
        };
        let (out, x) = run(&s, &o);
        let st = out.expect("converges");
        if !pressure_stage {
            assert_eq!(st.iterations, 1, "{st:?}");
        }
        assert!(rel_diff(&x, &direct(&s.a, &s.b)) <= 1e-10);
    }
    // Blocks of 3 (the fixed-size kernels) and 4 (the general ones):
    // tridiagonal, then a 2D pattern (with fill) for CPR.
    let mut rng = support::two_phase::Rng(99);
    for (bs, n, width) in [
        (3, 400usize, 1usize),
        (3, 900, 30),
        (4, 400, 1),
        (4, 900, 30),
    ] {
        let mut t = Vec::new();
        for i in 0..n {
            for j in [
                i.wrapping_sub(width),
                i.wrapping_sub(1),
                i,
                i + 1,
                i + width,
            ] {
                if j >= n || (j != i && width == 1 && j.abs_diff(i) != 1) {
                    continue;
                }
                for r in 0..bs {
                    for c in 0..bs {
                        let v = if i == j && r == c {
                            20.0
                        } else {
                            rng.next() - 0.5
                        };
                        t.push((bs * i + r, bs * j + c, v));
                    }
                }
            }
        }
        let a = CsrMatrix::from_block_triplets(n, bs, &t);
        let b: Vec<f64> = (0..bs * n).map(|_| rng.next() - 0.5).collect();
        let xd = direct(&a, &b);
        for pressure_stage in [false, true] {
            let o = CoupledOptions {
                rel_tol: 1e-12,
                ..opts(
                    Decoupling::QuasiImpes,
                    SecondStage::BlockIlu0,
                    pressure_stage,
                )
            };
            let mut x = vec![0.0; bs * n];
            let st = solve_coupled(&a, &b, &mut x, &o).expect("converges");
            if width == 1 && !pressure_stage {
                assert_eq!(st.iterations, 1, "{st:?}");
            }
            assert!(rel_diff(&x, &xd) <= 1e-10, "{st:?}");
        }
    }
}

/// Between Newton iterations the multigrid is kept while the pattern
/// stays: a 5% larger accumulation (a shorter time step) reuses it and
/// converges within the cap, a different field with the same pattern goes
/// through the staged refresh and still converges to the direct solution.
#[test]
fn the_set_up_is_reused_while_the_pattern_stays() {
    let s = two_phase_system(30, 30, 6, 2.0, 21);
    let mut solver = CoupledSolver::new(CoupledOptions::default());
    let mut x = vec![0.0; s.a.rows()];
    let first = solver.solve(&s.a, &s.b, &mut x).expect("first");
    assert!(!first.reused_setup && first.setup_seconds > 0.0);
    // Newton-like change: accumulation blocks scaled by 1.05.
    let mut a2 = s.a.clone();
    for i in 0..a2.n {
        let (s0, e0) = (a2.row_ptr[i], a2.row_ptr[i + 1]);
        let k = s0
            + a2.col_idx[s0..e0]
                .binary_search(&i)
                .expect("diagonal block");
        for l in 0..4 {
            a2.values[4 * k + l] += 0.05 * s.accumulation[4 * i + l];
        }
    }
    let mut x = vec![0.0; s.a.rows()];
    let second = solver.solve(&a2, &s.b, &mut x).expect("second");
    eprintln!(
        "first {} it, second {} it",
        first.iterations, second.iterations
    );
    assert!(second.reused_setup, "{second:?}");
    let k0 = first.iterations;
    assert!(second.iterations <= (2 * k0).max(k0 + 4), "{second:?}");
    assert!(rel_diff(&x, &direct(&a2, &s.b)) <= 1e-6);
    // Another field, same pattern: converges whatever stage it needs.
    let other = two_phase_system(30, 30, 6, 2.0, 22);
    assert!(other.a.same_pattern(&s.a));
    let mut x = vec![0.0; s.a.rows()];
    let third = solver.solve(&other.a, &other.b, &mut x).expect("third");
    eprintln!("third {third:?}");
    assert!(true_rel_residual(&other.a, &other.b, &x) <= 1e-8);
    // A new pattern rebuilds.
    let small = two_phase_system(10, 10, 2, 2.0, 23);
    let mut x = vec![0.0; small.a.rows()];
    let fourth = solver.solve(&small.a, &small.b, &mut x).expect("fourth");
    assert!(!fourth.reused_setup);
}

/// An update refactors in the storage it holds: for new values of the same
/// pattern, `Cpr::update` with a rebuilt multigrid gives, bit for bit, the
/// operator `Cpr::build` gives on those values, for each decoupling and
/// second stage, and after a failed update the coupled solver builds anew
/// rather than use the half-updated set-up.
#[test]
fn an_update_in_place_equals_a_fresh_build() {
    let s = two_phase_system(12, 10, 4, 2.0, 31);
    let other = two_phase_system(12, 10, 4, 2.0, 32);
    assert!(other.a.same_pattern(&s.a));
    let r: Vec<f64> = (0..s.a.rows())
        .map(|i| ((i * 29) % 47) as f64 - 23.0)
        .collect();
    let stages = [SecondStage::BlockIlu0, SecondStage::BlockJacobi];
    for (decoupling, second_stage) in DECOUPLINGS.iter().flat_map(|&d| stages.map(|st| (d, st))) {
        let o = CprOptions {
            decoupling,
            second_stage,
            ..CprOptions::default()
        };
        let mut updated = Cpr::build(&s.a, Some(&s.accumulation), &o).expect("build");
        updated
            .update(&other.a, Some(&other.accumulation), AmgRefresh::Rebuild)
            .expect("update");
        let fresh = Cpr::build(&other.a, Some(&other.accumulation), &o).expect("build");
        let (mut zu, mut zf) = (vec![0.0; r.len()], vec![0.0; r.len()]);
        updated.preconditioner(&other.a).apply(&r, &mut zu);
        fresh.preconditioner(&other.a).apply(&r, &mut zf);
        assert_eq!(zu, zf, "{decoupling:?}, {second_stage:?}");
        assert_eq!(updated.pressure_matrix(), fresh.pressure_matrix());
        assert_eq!(updated.weights(), fresh.weights());
    }
    // A zero diagonal block in the new values: the update fails, and
    // the next solve of good values builds anew and converges.
    let mut solver = CoupledSolver::new(CoupledOptions::default());
    let mut x = vec![0.0; s.a.rows()];
    solver.solve(&s.a, &s.b, &mut x).expect("first");
    let mut bad = s.a.clone();
    let k = bad.row_ptr[5]
        + bad.col_idx[bad.row_ptr[5]..bad.row_ptr[6]]
            .binary_search(&5)
            .unwrap();
    bad.values[4 * k..4 * k + 4]
        .iter_mut()
        .for_each(|v| *v = 0.0);
    let mut x = vec![0.0; s.a.rows()];
    assert!(solver.solve(&bad, &s.b, &mut x).is_err());
    assert!(solver.cpr().is_none(), "the half-updated set-up is dropped");
    let mut x = vec![0.0; s.a.rows()];
    let again = solver.solve(&other.a, &other.b, &mut x).expect("again");
    assert!(!again.reused_setup);
    assert!(true_rel_residual(&other.a, &other.b, &x) <= 1e-8);
}

#[test]
fn bad_input_gives_errors_not_panics() {
    let s = two_phase_system(6, 6, 1, 1.0, 1);
    let n = s.a.rows();
    let mut x = vec![0.0; n];
    // True-IMPES without accumulation blocks, or with too few.
    let o = opts(Decoupling::TrueImpes, SecondStage::BlockIlu0, true);
    let e = solve_coupled(&s.a, &s.b, &mut x, &o).unwrap_err();
    assert!(matches!(e, LinearError::Dimension { .. }), "{e}");
    let e = CoupledSolver::new(o)
        .solve_with(&s.a, Some(&s.accumulation[..8]), &s.b, &mut x)
        .unwrap_err();
    assert!(matches!(e, LinearError::Dimension { .. }), "{e}");
    // Lengths, non-finite values.
    let o = CoupledOptions::default();
    let e = solve_coupled(&s.a, &s.b[..n - 1], &mut x, &o).unwrap_err();
    assert!(matches!(e, LinearError::Dimension { .. }), "{e}");
    let mut b = s.b.clone();
    b[3] = f64::NAN;
    let e = solve_coupled(&s.a, &b, &mut x, &o).unwrap_err();
    assert!(matches!(e, LinearError::NonFinite { .. }), "{e}");
    // A singular diagonal block (of the first row: ILU(0) pivots on it
    // unmodified), for both second stages.
    let mut a = s.a.clone();
    let k = a.col_idx[..a.row_ptr[1]].binary_search(&0).unwrap();
    a.values[4 * k..4 * k + 4].copy_from_slice(&[1.0, 2.0, 2.0, 4.0]);
    for st in [SecondStage::BlockIlu0, SecondStage::BlockJacobi] {
        let e =
            solve_coupled(&a, &s.b, &mut x, &opts(Decoupling::PressureRow, st, false)).unwrap_err();
        assert!(matches!(e, LinearError::Singular { .. }), "{st:?}: {e}");
    }
    // Zero right-hand side: x = 0 at once.
    let mut x = vec![1.0; n];
    let st = solve_coupled(&s.a, &vec![0.0; n], &mut x, &o).expect("zero rhs");
    assert_eq!(st.iterations, 0);
    assert!(x.iter().all(|&v| v == 0.0));
    // The iteration limit is reported as such.
    let o = CoupledOptions {
        max_iter: 2,
        rel_tol: 1e-14,
        ..Default::default()
    };
    let e = solve_coupled(&s.a, &s.b, &mut vec![0.0; n], &o).unwrap_err();
    assert!(
        matches!(
            e,
            LinearError::NotConverged {
                iterations: 2,
                breakdown: false,
                ..
            }
        ),
        "{e}"
    );
}
