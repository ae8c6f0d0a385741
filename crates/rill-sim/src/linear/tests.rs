use super::*;

fn laplace_2d(m: usize) -> CsrMatrix {
    let n = m * m;
    let mut t = Vec::new();
    for i in 0..m {
        for j in 0..m {
            let k = i * m + j;
            t.push((k, k, 4.0));
            if i > 0 { t.push((k, k - m, -1.0)); }
            if i + 1 < m { t.push((k, k + m, -1.0)); }
            if j > 0 { t.push((k, k - 1, -1.0)); }
            if j + 1 < m { t.push((k, k + 1, -1.0)); }
        }
    }
    CsrMatrix::from_triplets(n, &t)
}

#[test]
fn smoke_direct_and_iterative() {
    let a = laplace_2d(20);
    let b = vec![1.0; a.n];
    for method in [Method::Direct, Method::AmgCg, Method::AmgBicgstab, Method::Auto] {
        let mut x = vec![0.0; a.n];
        let opts = SolverOptions { method, ..Default::default() };
        let s = solve(&a, &b, &mut x, &opts).unwrap();
        assert!(s.rel_residual <= 1e-10, "{method:?}: {s:?}");
    }
}
