//! Block (b x b) matrices: storage, products, conversions, MatrixMarket
//! output and solves, each checked against the scalar expansion.

use super::*;

/// A 2x2-block system shaped like an oil-water Jacobian on a line of
/// `cells` cells: each cell's block couples its two unknowns (all four
/// entries), each neighbour block couples both unknowns too, and the
/// blocks are unsymmetric.
fn two_unknowns_a_cell(cells: usize) -> Vec<(usize, usize, f64)> {
    let mut rng = Rng(0x0B10_C2C2);
    let mut t = Vec::new();
    for c in 0..cells {
        let (p, s) = (2 * c, 2 * c + 1);
        t.push((p, p, 6.0 + rng.next()));
        t.push((p, s, 0.5 + rng.next()));
        t.push((s, p, -0.3 * rng.next()));
        t.push((s, s, 5.0 + rng.next()));
        for nb in [c.wrapping_sub(1), c + 1] {
            if nb < cells {
                let (q, r) = (2 * nb, 2 * nb + 1);
                t.push((p, q, -1.0 - 0.5 * rng.next()));
                t.push((p, r, -0.2 * rng.next()));
                t.push((s, q, -0.1 * rng.next()));
                t.push((s, r, -1.0 - 0.5 * rng.next()));
            }
        }
    }
    t
}

#[test]
fn small_block_system_multiplies_converts_and_exports_as_its_scalar_expansion() {
    let t = two_unknowns_a_cell(4);
    let a = CsrMatrix::from_block_triplets(4, 2, &t);
    let s = CsrMatrix::from_triplets(8, &t);
    assert_eq!((a.n, a.ncols, a.block, a.rows(), a.cols()), (4, 4, 2, 8, 8));
    // Tridiagonal in blocks: 4 + 2 * 3 stored blocks of 4 values.
    assert_eq!(a.nnz_blocks(), 10);
    assert_eq!(a.nnz(), 40);
    assert_eq!(a.to_dense(), s.to_dense());
    for i in 0..8 {
        for j in 0..8 {
            assert_eq!(a.get(i, j), s.get(i, j), "({i}, {j})");
        }
    }
    // A x against the dense product of the scalar matrix.
    let x: Vec<f64> = (0..8).map(|i| (i as f64 * 0.7).cos()).collect();
    let want = dense_mul(&s.to_dense(), &x);
    let got = a.mul_vec(&x);
    for (g, w) in got.iter().zip(&want) {
        assert!(
            (g - w).abs() <= 1e-14 * w.abs().max(1.0),
            "{got:?} vs {want:?}"
        );
    }
    // y += A x and the residual.
    let mut y = vec![1.0; 8];
    a.mul_vec_add(&x, &mut y);
    let mut r = vec![0.0; 8];
    a.residual_into(&y, &x, &mut r);
    assert!(r.iter().all(|v| (v - 1.0).abs() <= 1e-14), "{r:?}");
    // Round trips and the transpose.
    assert_eq!(a.to_scalar().to_block(2).unwrap(), a);
    assert_eq!(a.to_scalar().to_dense(), s.to_dense());
    let at = a.transpose();
    assert_eq!(at.block, 2);
    for i in 0..8 {
        for j in 0..8 {
            assert_eq!(at.get(i, j), a.get(j, i));
        }
    }
    assert!(!a.is_symmetric(1e-12));
    let sym = CsrMatrix::from_block_triplets(
        2,
        2,
        &[
            (0, 0, 2.0),
            (0, 3, 1.0),
            (3, 0, 1.0),
            (1, 1, 3.0),
            (2, 2, 1.0),
            (3, 3, 1.0),
        ],
    );
    assert!(sym.is_symmetric(0.0));
    assert_eq!(sym.diagonal(), vec![2.0, 3.0, 1.0, 1.0]);
    // MatrixMarket: the scalar expansion, zeros of stored blocks included.
    let mut mm_block = Vec::new();
    write_matrix_market(&a, &mut mm_block).unwrap();
    let mut mm_scalar = Vec::new();
    write_matrix_market(&a.to_scalar(), &mut mm_scalar).unwrap();
    assert_eq!(
        String::from_utf8(mm_block).unwrap(),
        String::from_utf8(mm_scalar).unwrap()
    );
    // A non-finite value is reported at its scalar position.
    let mut bad = a.clone();
    let k = bad.row_ptr[2] + 1; // block row 2, its second stored block
    bad.values[k * 4 + 2] = f64::NAN; // row 1 of the block, column 0
    let (i, j) = bad.first_non_finite().unwrap();
    assert_eq!((i, j), (5, 2 * bad.col_idx[k]));
    assert!(bad.get(i, j).is_nan());
}

#[test]
fn block_matrix_solves_like_its_scalar_expansion() {
    let cells = 300;
    let t = two_unknowns_a_cell(cells);
    let a = CsrMatrix::from_block_triplets(cells, 2, &t);
    let xs: Vec<f64> = (0..2 * cells).map(|i| (i as f64 * 0.13).sin()).collect();
    let b = a.mul_vec(&xs);
    for method in [Method::Direct, Method::AmgGmres, Method::AmgBicgstab] {
        let mut x = vec![0.0; 2 * cells];
        let st = solve(&a, &b, &mut x, &opts(method)).unwrap_or_else(|e| panic!("{method:?}: {e}"));
        assert!(true_rel_residual(&a, &b, &x) <= 1e-10, "{method:?} {st:?}");
        // The matrix is diagonally dominant (condition number below 10):
        // a residual of 1e-10 bounds the relative error by 1e-9.
        let err = x
            .iter()
            .zip(&xs)
            .map(|(p, q)| (p - q).powi(2))
            .sum::<f64>()
            .sqrt()
            / norm2(&xs);
        assert!(err <= 1e-9, "{method:?}: error {err:e}");
    }
    // GMRES works on the block form directly (block products, no expansion).
    let mut x = vec![0.0; 2 * cells];
    let inv_diag = inverse_diagonal(&a.to_scalar()).unwrap();
    let out = pgmres(&a, &b, &mut x, &Jacobi { inv_diag }, 30, 1e-10, 200);
    assert!(out.converged, "{out:?}");
    assert!(true_rel_residual(&a, &b, &x) <= 1e-10);
}

#[test]
fn parallel_block_kernels_match_the_scalar_expansion() {
    // More block rows than one parallel chunk.
    let cells = 9000;
    let t = two_unknowns_a_cell(cells);
    let a = CsrMatrix::from_block_triplets(cells, 2, &t);
    let s = a.to_scalar();
    assert_eq!(
        s,
        CsrMatrix::from_triplets(2 * cells, &t)
            .to_block(2)
            .unwrap()
            .to_scalar()
    );
    let x: Vec<f64> = (0..2 * cells)
        .map(|i| ((i * 37) % 101) as f64 / 101.0 - 0.4)
        .collect();
    let (ya, ys) = (a.mul_vec(&x), s.mul_vec(&x));
    for i in 0..2 * cells {
        let (c, v) = s.row(i);
        let scale: f64 = c.iter().zip(v).map(|(&j, &w)| (w * x[j]).abs()).sum();
        assert!(
            (ya[i] - ys[i]).abs() <= 4.0 * f64::EPSILON * scale,
            "row {i}"
        );
    }
    assert!(a.is_symmetric(0.0) == s.is_symmetric(0.0));
    assert_eq!(a.transpose().to_scalar(), s.transpose());
}

#[test]
fn to_block_refuses_sizes_that_do_not_divide() {
    let a = poisson_2d(3); // 9 x 9
    assert!(a.to_block(2).is_err());
    assert!(a.to_block(0).is_err());
    let b = a.to_block(3).unwrap();
    assert!(b.to_block(3).is_err());
    assert_eq!(b.to_scalar().to_dense(), a.to_dense());
}

/// Blocks of `b` unknowns on a line of `cells` cells with a far neighbour
/// (seven cells on, as a layer above would be): every entry of each stored
/// block set, unsymmetric.
fn b_unknowns_a_cell(cells: usize, b: usize) -> Vec<(usize, usize, f64)> {
    let mut rng = Rng(0x0B10_C3C3 + b as u64);
    let mut t = Vec::new();
    for c in 0..cells {
        for nb in [c.wrapping_sub(7), c.wrapping_sub(1), c, c + 1, c + 7] {
            if nb >= cells {
                continue;
            }
            for r in 0..b {
                for s in 0..b {
                    let diag = if nb == c && r == s { 8.0 } else { 0.0 };
                    t.push((c * b + r, nb * b + s, diag + rng.next() - 0.5));
                }
            }
        }
    }
    t
}

/// The product, the product added and the residual of a block matrix
/// equal those of its scalar expansion for every block size: 2 and 3 take
/// the fixed-size kernel, 1 the scalar one and 4 the general loop. More
/// block rows than one parallel chunk, so the chunking is crossed too.
#[test]
fn block_products_and_residuals_match_the_scalar_expansion_for_every_block_size() {
    let cells = 5000;
    for b in 1..=4 {
        let t = b_unknowns_a_cell(cells, b);
        let a = CsrMatrix::from_block_triplets(cells, b, &t);
        let s = CsrMatrix::from_triplets(cells * b, &t);
        assert_eq!(a.to_scalar(), s.to_block(b).unwrap().to_scalar(), "b = {b}");
        let n = cells * b;
        let x: Vec<f64> = (0..n)
            .map(|i| ((i * 37) % 101) as f64 / 101.0 - 0.4)
            .collect();
        let rhs: Vec<f64> = (0..n).map(|i| ((i * 53) % 89) as f64 / 89.0).collect();
        let mut added = rhs.clone();
        a.mul_vec_add(&x, &mut added);
        let mut residual = vec![0.0; n];
        a.residual_into(&rhs, &x, &mut residual);
        let ys = s.mul_vec(&x);
        let ya = a.mul_vec(&x);
        for i in 0..n {
            let (c, v) = s.row(i);
            let scale: f64 = c
                .iter()
                .zip(v)
                .map(|(&j, &w)| (w * x[j]).abs())
                .sum::<f64>()
                + rhs[i].abs();
            let tol = 8.0 * f64::EPSILON * scale;
            assert!((ya[i] - ys[i]).abs() <= tol, "b = {b}, row {i}: A x");
            assert!(
                (added[i] - (rhs[i] + ys[i])).abs() <= tol,
                "b = {b}, row {i}: y + A x"
            );
            assert!(
                (residual[i] - (rhs[i] - ys[i])).abs() <= tol,
                "b = {b}, row {i}: b - A x"
            );
        }
    }
}
