//! Restarted right-preconditioned GMRES, checked against the direct solver.

use super::*;

/// Unsymmetric 2D convection-diffusion (upwind), an M-matrix.
fn convection_diffusion(m: usize, c: f64) -> CsrMatrix {
    let mut t = Vec::new();
    for i in 0..m {
        for j in 0..m {
            let k = i * m + j;
            t.push((k, k, 4.0 + c));
            if j > 0 {
                t.push((k, k - 1, -1.0 - c));
            }
            if j + 1 < m {
                t.push((k, k + 1, -1.0));
            }
            if i > 0 {
                t.push((k, k - m, -1.0));
            }
            if i + 1 < m {
                t.push((k, k + m, -1.0));
            }
        }
    }
    CsrMatrix::from_triplets(m * m, &t)
}

fn direct(a: &CsrMatrix, b: &[f64]) -> Vec<f64> {
    let mut x = vec![0.0; a.n];
    solve(a, b, &mut x, &opts(Method::Direct)).unwrap();
    x
}

fn rel_diff(x: &[f64], y: &[f64]) -> f64 {
    let d: f64 = x
        .iter()
        .zip(y)
        .map(|(p, q)| (p - q).powi(2))
        .sum::<f64>()
        .sqrt();
    d / norm2(y)
}

#[test]
fn gmres_matches_direct_on_unsymmetric_and_heterogeneous_systems() {
    let a = convection_diffusion(50, 0.8);
    let b = rhs(a.n, 11);
    let xd = direct(&a, &b);
    let s = solve_checked(&a, &b, Method::AmgGmres, 1e-10);
    assert_eq!(s.method, "amg-gmres");
    assert!(s.iterations < 30, "{s:?}");
    let s = solve_checked(&a, &b, Method::JacobiGmres, 1e-10);
    assert_eq!(s.method, "jacobi-gmres");
    let mut x = vec![0.0; a.n];
    solve(&a, &b, &mut x, &opts(Method::AmgGmres)).unwrap();
    // The condition number of this matrix is below 1e3 (diagonally
    // dominant, spectrum in (c, 8 + 2c)): residual 1e-10 means error < 1e-7.
    assert!(rel_diff(&x, &xd) <= 1e-7, "{}", rel_diff(&x, &xd));

    let a = heterogeneous_3d(12, 12, 6);
    let b = rhs(a.n, 12);
    let s = solve_checked(&a, &b, Method::AmgGmres, 1e-10);
    let cg = solve_checked(&a, &b, Method::AmgCg, 1e-10);
    // GMRES minimizes the residual over the same Krylov space as CG (which
    // minimizes the energy norm of the error): never many more iterations.
    assert!(s.iterations <= cg.iterations + 5, "{s:?} vs {cg:?}");
}

#[test]
fn restarts_continue_from_the_last_iterate() {
    let a = convection_diffusion(30, 2.0);
    let b = rhs(a.n, 13);
    let xd = direct(&a, &b);
    let inv_diag = inverse_diagonal(&a).unwrap();
    let m = Jacobi { inv_diag };
    let mut full = vec![0.0; a.n];
    let out_full = pgmres(&a, &b, &mut full, &m, 500, 1e-10, 1000);
    let mut short = vec![0.0; a.n];
    let out_short = pgmres(&a, &b, &mut short, &m, 8, 1e-10, 5000);
    assert!(out_full.converged && out_short.converged);
    // Several restarts happened, and restarting costs iterations.
    assert!(out_short.iterations > 3 * 8, "{out_short:?}");
    assert!(out_short.iterations >= out_full.iterations);
    for x in [&full, &short] {
        assert!(true_rel_residual(&a, &b, x) <= 1e-10);
        assert!(rel_diff(x, &xd) <= 1e-7);
    }
    // The iteration limit is a limit across restarts, reported as such.
    let mut x = vec![0.0; a.n];
    let out = pgmres(&a, &b, &mut x, &m, 8, 1e-10, 20);
    assert!(!out.converged && !out.breakdown);
    assert_eq!(out.iterations, 20);
    assert!((out.rel_residual - true_rel_residual(&a, &b, &x)).abs() <= 1e-12);
}

#[test]
fn zero_rhs_returns_zero_at_once_and_singular_breaks_down() {
    let a = convection_diffusion(10, 1.0);
    let mut x = vec![3.0; a.n];
    let out = pgmres(&a, &vec![0.0; a.n], &mut x, &Identity, 30, 1e-10, 100);
    assert!(out.converged);
    assert_eq!(out.iterations, 0);
    assert!(x.iter().all(|&v| v == 0.0));
    // An exact solution in the first Krylov vector: one iteration.
    let ones = vec![1.0; a.n];
    let id = CsrMatrix::identity(a.n);
    let mut x = vec![0.0; a.n];
    let out = pgmres(&id, &ones, &mut x, &Identity, 30, 1e-12, 100);
    assert!(out.converged && out.iterations == 1, "{out:?}");
    assert!(rel_diff(&x, &ones) <= 4.0 * f64::EPSILON, "{x:?}");
    // b outside the range of a singular matrix: no convergence, no panic.
    let s = CsrMatrix::from_triplets(2, &[(0, 0, 1.0), (1, 0, 1.0)]);
    let mut x = vec![0.0; 2];
    let out = pgmres(&s, &[1.0, -1.0], &mut x, &Identity, 30, 1e-10, 50);
    assert!(!out.converged, "{out:?}");
    assert!(out.rel_residual.is_finite());
}
