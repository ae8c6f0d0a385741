//! MatrixMarket reading for the benchmark examples (`solve_mtx`,
//! `cpr_vs_scipy`); the crate itself only writes MatrixMarket.
#![allow(dead_code)]

use std::io::Read;

use rill_linear::CsrMatrix;

pub fn num<T: std::str::FromStr>(s: &str) -> Result<T, String> {
    s.parse().map_err(|_| format!("bad number {s}"))
}

fn read_all(path: &str) -> Result<String, String> {
    let mut s = String::new();
    std::fs::File::open(path)
        .and_then(|mut f| f.read_to_string(&mut s))
        .map_err(|e| format!("{path}: {e}"))?;
    Ok(s)
}

/// Header line and the data lines after the comments.
fn split_header(text: &str) -> (String, impl Iterator<Item = &str>) {
    let mut lines = text.lines();
    let header = lines.next().unwrap_or("").to_ascii_lowercase();
    (
        header,
        lines.filter(|l| !l.starts_with('%') && !l.trim().is_empty()),
    )
}

pub fn read_matrix(path: &str) -> Result<CsrMatrix, String> {
    let text = read_all(path)?;
    let (header, mut lines) = split_header(&text);
    if !header.starts_with("%%matrixmarket matrix coordinate") || header.contains("complex") {
        return Err(format!(
            "{path}: expected a real coordinate MatrixMarket matrix, got {header:?}"
        ));
    }
    let symmetric = header.contains("symmetric");
    let size = lines.next().ok_or("missing size line")?;
    let dims: Vec<usize> = size.split_whitespace().map(num).collect::<Result<_, _>>()?;
    if dims.len() != 3 || dims[0] != dims[1] {
        return Err(format!(
            "{path}: expected a square matrix, size line {size:?}"
        ));
    }
    let (n, nnz) = (dims[0], dims[2]);
    let mut t = Vec::with_capacity(if symmetric { 2 * nnz } else { nnz });
    for line in lines {
        let mut f = line.split_ascii_whitespace();
        let i: usize = num(f.next().ok_or("short line")?)?;
        let j: usize = num(f.next().ok_or("short line")?)?;
        let v: f64 = num(f.next().ok_or("short line")?)?;
        if i == 0 || j == 0 || i > n || j > n {
            return Err(format!("{path}: index ({i}, {j}) out of range"));
        }
        t.push((i - 1, j - 1, v));
        if symmetric && i != j {
            t.push((j - 1, i - 1, v));
        }
    }
    Ok(CsrMatrix::from_triplets(n, &t))
}

pub fn read_vector(path: &str, n: usize) -> Result<Vec<f64>, String> {
    let text = read_all(path)?;
    let (header, mut lines) = split_header(&text);
    let size = lines.next().ok_or("missing size line")?;
    let mut v = vec![0.0; n];
    if header.contains("array") {
        let mut k = 0;
        for line in lines {
            for tok in line.split_ascii_whitespace() {
                if k >= n {
                    return Err(format!("{path}: more than {n} values"));
                }
                v[k] = num(tok)?;
                k += 1;
            }
        }
        if k != n {
            return Err(format!(
                "{path}: {k} values for n = {n} (size line {size:?})"
            ));
        }
    } else {
        for line in lines {
            let f: Vec<&str> = line.split_ascii_whitespace().collect();
            let i: usize = num(f[0])?;
            v[i - 1] = num(f[f.len() - 1])?;
        }
    }
    Ok(v)
}
