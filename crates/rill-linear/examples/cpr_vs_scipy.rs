//! Writes a synthetic two-phase (oil-water) Jacobian as MatrixMarket and
//! times rill's CPR-GMRES on it; `scripts/bench/cpr_vs_scipy.py` runs this
//! and then scipy's GMRES on the same files, side by side.
//!
//! ```text
//! cargo run -p rill-linear --example cpr_vs_scipy -- [--dims 40 40 20] \
//!     [--sigma 2] [--seed 7] [--tol 1e-8] [--out DIR] [--repeat 3] \
//!     [--system DIR] [--pressure-cycles 2] [--sweeps 2] [--max-coarse 3000] \
//!     [--only-first] \
//!     [--pressure-study]
//! ```
//!
//! Writes `DIR/A.mtx` (the scalar expansion of the 2 x 2 block matrix,
//! unknowns `p, sw` of cell 0, then of cell 1, ...), `DIR/b.mtx` and
//! `DIR/accumulation.mtx` (a 2 x 2 block a cell, row-major), then
//! prints one JSON line per CPR variant (true-IMPES and quasi-IMPES weights;
//! block ILU(0) and block Jacobi second stages; the default pressure stage
//! and the earlier single V-cycle; best of `--repeat` runs, set-up
//! included, from x = 0). The system is the one of the tests
//! (`tests/support/two_phase.rs`), or with `--system DIR` the one a run
//! exported (`rill run --export-system DIR` on an oil-water deck writes its
//! first Newton system as `DIR/matrix.mtx` and `DIR/rhs.mtx`, two
//! unknowns a block row, and the accumulation blocks that true-IMPES
//! weights need as `DIR/accumulation.mtx`; without that file, only the
//! quasi-IMPES variants run).

#[path = "support/mtx.rs"]
mod mtx;
#[path = "../tests/support/two_phase.rs"]
mod two_phase;

use std::time::Instant;

use rill_linear::{
    write_matrix_market, write_vector_market, CoupledOptions, CoupledSolver, Cpr, CprOptions,
    CsrMatrix, Decoupling, LinearStats, SecondStage,
};

fn main() {
    if let Err(e) = run() {
        eprintln!("cpr_vs_scipy: {e}");
        std::process::exit(1);
    }
}

fn num<T: std::str::FromStr>(s: Option<&String>) -> Result<T, String> {
    let s = s.ok_or("an option needs a value")?;
    s.parse().map_err(|_| format!("bad number {s}"))
}

fn run() -> Result<(), String> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (mut dims, mut sigma, mut seed, mut tol) = ([40usize, 40, 20], 2.0f64, 7u64, 1e-8f64);
    let (mut out, mut repeat) = (String::from("target/cpr_vs_scipy"), 3usize);
    let mut system: Option<String> = None;
    let mut base = CprOptions::default();
    let mut only_first = false;
    let mut pressure_study = false;
    let mut i = 0;
    while i < args.len() {
        let v = |k: usize| args.get(i + k);
        match args[i].as_str() {
            "--dims" => {
                dims = [num(v(1))?, num(v(2))?, num(v(3))?];
                i += 3;
            }
            "--sigma" => (sigma, i) = (num(v(1))?, i + 1),
            "--seed" => (seed, i) = (num(v(1))?, i + 1),
            "--tol" => (tol, i) = (num(v(1))?, i + 1),
            "--repeat" => (repeat, i) = (num(v(1))?, i + 1),
            "--out" => (out, i) = (v(1).ok_or("--out needs a value")?.clone(), i + 1),
            "--only-first" => only_first = true,
            "--pressure-study" => pressure_study = true,
            "--pressure-cycles" => (base.pressure_cycles, i) = (num(v(1))?, i + 1),
            "--sweeps" => (base.amg.sweeps, i) = (num(v(1))?, i + 1),
            "--max-coarse" => (base.amg.max_coarse, i) = (num(v(1))?, i + 1),
            "--system" => {
                system = Some(v(1).ok_or("--system needs a value")?.clone());
                i += 1;
            }
            o => return Err(format!("unknown option {o}")),
        }
        i += 1;
    }
    if pressure_study {
        let dir = system.ok_or("--pressure-study needs --system DIR")?;
        return study_pressure(&dir, &base);
    }
    if let Some(dir) = system {
        return exported(&dir, tol, repeat, &base, only_first);
    }
    let t0 = Instant::now();
    let s = two_phase::two_phase_system(dims[0], dims[1], dims[2], sigma, seed);
    let generate_seconds = t0.elapsed().as_secs_f64();
    std::fs::create_dir_all(&out).map_err(|e| format!("{out}: {e}"))?;
    let create = |name: &str| {
        let path = format!("{out}/{name}");
        std::fs::File::create(&path).map_err(|e| format!("{path}: {e}"))
    };
    write_matrix_market(&s.a, create("A.mtx")?).map_err(|e| e.to_string())?;
    write_vector_market(&s.b, create("b.mtx")?).map_err(|e| e.to_string())?;
    write_vector_market(&s.accumulation, create("accumulation.mtx")?).map_err(|e| e.to_string())?;
    eprintln!(
        "{} x {} x {} cells, {} unknowns, {} stored values, contrast {:.1e}, generated in {generate_seconds:.2} s, written to {out}",
        dims[0], dims[1], dims[2], s.a.rows(), s.a.nnz(), s.contrast
    );
    let mut variants = variants(true, &base);
    variants.truncate(if only_first { 1 } else { variants.len() });
    time_variants(&s.a, Some(&s.accumulation), &s.b, tol, repeat, &variants);
    Ok(())
}

/// The CPR variants compared: the default (the engine's: true-IMPES
/// weights, block ILU(0), a pressure stage of two V-cycles with two sweeps
/// each), the earlier single V-cycle of one sweep, quasi-IMPES weights
/// and a block Jacobi second stage. Without accumulation blocks, only the
/// quasi-IMPES ones.
fn variants(true_impes: bool, base: &CprOptions) -> Vec<(String, CprOptions)> {
    let mut out = Vec::new();
    let decouplings = if true_impes {
        vec![Decoupling::TrueImpes, Decoupling::QuasiImpes]
    } else {
        vec![Decoupling::QuasiImpes]
    };
    for decoupling in decouplings {
        let with = |second_stage, cycles, sweeps| CprOptions {
            decoupling,
            second_stage,
            pressure_cycles: cycles,
            amg: rill_linear::AmgOptions {
                sweeps,
                ..base.amg.clone()
            },
            ..base.clone()
        };
        let d = format!("{decoupling:?}");
        out.push((
            d.clone(),
            with(
                SecondStage::BlockIlu0,
                base.pressure_cycles,
                base.amg.sweeps,
            ),
        ));
        out.push((
            format!("{d}, 1 V-cycle of 1 sweep"),
            with(SecondStage::BlockIlu0, 1, 1),
        ));
        out.push((
            d,
            with(
                SecondStage::BlockJacobi,
                base.pressure_cycles,
                base.amg.sweeps,
            ),
        ));
    }
    out
}

/// Times each variant from x = 0 (best of `repeat`, set-up included) and
/// prints one JSON line each; a variant that does not converge is a row
/// with `"converged": false`, not the end of the comparison.
fn time_variants(
    a: &CsrMatrix,
    accumulation: Option<&[f64]>,
    b: &[f64],
    tol: f64,
    repeat: usize,
    variants: &[(String, CprOptions)],
) {
    let bnorm = b.iter().map(|v| v * v).sum::<f64>().sqrt();
    for (label, cpr) in variants {
        let opts = CoupledOptions {
            rel_tol: tol,
            max_iter: 500,
            cpr: cpr.clone(),
            ..Default::default()
        };
        let mut best: Option<(f64, LinearStats, f64)> = None;
        let mut failed = None;
        for _ in 0..repeat.max(1) {
            let mut x = vec![0.0; a.rows()];
            let t = Instant::now();
            match CoupledSolver::new(opts.clone()).solve_with(a, accumulation, b, &mut x) {
                Ok(st) => {
                    let total = t.elapsed().as_secs_f64();
                    let check = a
                        .mul_vec(&x)
                        .iter()
                        .zip(b)
                        .map(|(p, q)| (q - p).powi(2))
                        .sum::<f64>()
                        .sqrt()
                        / bnorm;
                    if best.as_ref().is_none_or(|p| total < p.0) {
                        best = Some((total, st, check));
                    }
                }
                Err(e) => {
                    eprintln!("{label}: {e}");
                    failed = Some(t.elapsed().as_secs_f64());
                    break;
                }
            }
        }
        let stage = match cpr.second_stage {
            SecondStage::BlockIlu0 => "cpr-bilu0-gmres",
            SecondStage::BlockJacobi => "cpr-bjacobi-gmres",
        };
        match (best, failed) {
            (Some((total, st, check)), None) => println!(
                "{{\"solver\": \"rill\", \"variant\": \"{stage}-{label}\", \"n\": {}, \"nnz\": {}, \"threads\": {}, \
\"setup_seconds\": {:.4}, \"solve_seconds\": {:.4}, \"total_seconds\": {:.4}, \"iterations\": {}, \
\"rel_residual\": {:.3e}, \"rel_residual_check\": {:.3e}, \"levels\": {}}}",
                a.rows(),
                a.nnz(),
                rayon::current_num_threads(),
                st.setup_seconds,
                st.solve_seconds,
                total,
                st.iterations,
                st.rel_residual,
                check,
                st.levels
            ),
            (_, Some(secs)) => println!(
                "{{\"solver\": \"rill\", \"variant\": \"{stage}-{label}\", \"n\": {}, \"setup_seconds\": null, \
\"solve_seconds\": {secs:.4}, \"total_seconds\": {secs:.4}, \"iterations\": {}, \"converged\": false}}",
                a.rows(),
                opts.max_iter
            ),
            (None, None) => unreachable!("at least one run"),
        }
    }
}

/// Times the variants on a system a run exported (with its accumulation
/// blocks when the run wrote them: then the engine's true-IMPES weights).
fn exported(
    dir: &str,
    tol: f64,
    repeat: usize,
    base: &CprOptions,
    only_first: bool,
) -> Result<(), String> {
    let (a, b, accumulation) = read_exported(dir)?;
    eprintln!(
        "{dir}: {} unknowns, {} stored values, {}",
        a.rows(),
        a.nnz(),
        if accumulation.is_some() {
            "with its accumulation blocks"
        } else {
            "no accumulation blocks (quasi-IMPES only)"
        }
    );
    let mut variants = variants(accumulation.is_some(), base);
    variants.truncate(if only_first { 1 } else { variants.len() });
    time_variants(&a, accumulation.as_deref(), &b, tol, repeat, &variants);
    Ok(())
}

/// A system a run exported: the matrix as 2 x 2 blocks, the right-hand
/// side and, when the run wrote them, the accumulation blocks.
type Exported = (CsrMatrix, Vec<f64>, Option<Vec<f64>>);

/// Reads the system in `dir`.
fn read_exported(dir: &str) -> Result<Exported, String> {
    let scalar = mtx::read_matrix(&format!("{dir}/matrix.mtx"))?;
    let b = mtx::read_vector(&format!("{dir}/rhs.mtx"), scalar.n)?;
    let a = scalar
        .to_block(2)
        .map_err(|e| format!("{dir}/matrix.mtx: not two unknowns a block row: {e}"))?;
    let acc_path = format!("{dir}/accumulation.mtx");
    let accumulation = if std::path::Path::new(&acc_path).exists() {
        Some(mtx::read_vector(&acc_path, 2 * a.rows())?)
    } else {
        None
    };
    Ok((a, b, accumulation))
}

/// The pressure stage alone on an exported system: the residual of
/// stationary V-cycles (does the cycle converge as an iteration on the
/// pressure matrix?) and GMRES with one V-cycle as preconditioner.
fn study_pressure(dir: &str, base: &CprOptions) -> Result<(), String> {
    let (a, _, acc) = read_exported(dir)?;
    let decouplings = match acc {
        Some(_) => vec![Decoupling::TrueImpes, Decoupling::QuasiImpes],
        None => vec![Decoupling::QuasiImpes],
    };
    for decoupling in decouplings {
        let opts = CprOptions {
            decoupling,
            ..base.clone()
        };
        let cpr = Cpr::build(&a, acc.as_deref(), &opts).map_err(|e| e.to_string())?;
        let p = cpr.pressure_matrix();
        let h = cpr.hierarchy().expect("a pressure stage");
        let n = p.n;
        let b: Vec<f64> = (0..n)
            .map(|i| ((i * 7919) % 1000) as f64 / 500.0 - 1.0)
            .collect();
        let bn = rill_linear::norm2(&b);
        let (mut x, mut r, mut d) = (vec![0.0; n], b.clone(), vec![0.0; n]);
        let mut line = format!("{decoupling:?}: levels {} stationary V-cycles:", h.levels());
        for _ in 0..8 {
            h.vcycle(p, &r, &mut d);
            x.iter_mut().zip(&d).for_each(|(xi, di)| *xi += di);
            p.residual_into(&b, &x, &mut r);
            line += &format!(" {:.2e}", rill_linear::norm2(&r) / bn);
        }
        println!("{line}");
        let mut x = vec![0.0; n];
        let out = rill_linear::pgmres(p, &b, &mut x, &h.preconditioner(p), 40, 1e-6, 200);
        println!(
            "{decoupling:?}: GMRES + V-cycle to 1e-6: {} iterations ({:.2e})",
            out.iterations, out.rel_residual
        );
    }
    Ok(())
}
