//! Solves a 1D Poisson system distributed over the MPI ranks and checks
//! the solution: `mpirun -n 3 target/debug/examples/petsc_poisson`.
//!
//! The matrix is the second-difference matrix `tridiag(-1, 2, -1)` with
//! rows in contiguous slabs, each rank adding only its own rows except one
//! value that rank 0 adds to the last rank's last row (the path the
//! simulator's well rows take). The right-hand side is `A x*` for a known
//! `x*`, so the solution is exact up to the solver's tolerance. Prints one
//! line and exits 1 if any rank's part is off.

#[cfg(feature = "petsc")]
fn main() {
    use rill_petsc::{Petsc, System};
    let n: usize = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(2000);
    let petsc = Petsc::init("").unwrap_or_else(|e| {
        eprintln!("{e}");
        std::process::exit(1)
    });
    let (rank, size) = (petsc.rank(), petsc.size());
    let first = rank * n / size;
    let last = (rank + 1) * n / size;
    let local = last - first;
    let x_true = |i: usize| (i as f64 * 0.01).sin() + 2.0;
    let d_nnz = vec![3; local];
    let o_nnz = vec![2; local];
    let mut sys = System::new(&petsc, local, n, &d_nnz, &o_nnz).expect("system");
    assert_eq!(sys.range(), first..last);
    sys.zero().expect("zero");
    for i in first..last {
        let mut cols = vec![i as i64];
        let mut vals = vec![2.0];
        let mut b = 2.0 * x_true(i);
        if i > 0 {
            cols.push(i as i64 - 1);
            vals.push(-1.0);
            b -= x_true(i - 1);
        }
        if i + 1 < n {
            cols.push(i as i64 + 1);
            vals.push(-1.0);
            b -= x_true(i + 1);
        }
        // The last row's diagonal: half from its owner, half from rank 0.
        if i == n - 1 {
            vals[0] = 1.0;
        }
        sys.add_row(i, &cols, &vals).expect("row");
        sys.add_rhs(i, b).expect("rhs");
    }
    if rank == 0 {
        sys.add_row(n - 1, &[(n - 1) as i64], &[1.0])
            .expect("remote row");
    }
    // Read back the owned slab and one row beyond it on each side.
    let reads: Vec<usize> = (first.saturating_sub(1)..(last + 1).min(n)).collect();
    sys.reads(&reads).expect("reads");
    let its = sys.solve(1e-12, 500).expect("solve").expect("converged");
    let mut x = vec![0.0; reads.len()];
    sys.solution(&mut x).expect("solution");
    let err = reads
        .iter()
        .zip(&x)
        .map(|(&i, v)| ((v - x_true(i)) / x_true(i)).abs())
        .fold(0.0, f64::max);
    let mut worst = [err];
    petsc.max(&mut worst).expect("max");
    let gathered = petsc
        .gather(&x[(first - reads[0])..(first - reads[0] + local)])
        .expect("gather");
    if rank == 0 {
        assert_eq!(gathered.len(), n);
        let gerr = gathered
            .iter()
            .enumerate()
            .map(|(i, v)| ((v - x_true(i)) / x_true(i)).abs())
            .fold(0.0, f64::max);
        println!(
            "petsc_poisson: {n} rows on {size} rank(s), {its} iterations, largest relative error {:.2e} (gathered {gerr:.2e})",
            worst[0]
        );
        if worst[0] > 1e-8 || gerr > 1e-8 {
            std::process::exit(1);
        }
    }
}

#[cfg(not(feature = "petsc"))]
fn main() {
    eprintln!("petsc_poisson: built without the `petsc` feature");
    std::process::exit(2);
}
