//! `rill run`: check the deck, run the embedded simulator with a progress
//! bar on stderr, write the results atomically and print a summary with the
//! caution that results are engineering estimates.

use indicatif::{ProgressBar, ProgressStyle};
use rill_model::{Case, Severity};
use rill_sim::linear::CsrMatrix;
use rill_sim::{ControlMode, Observer, Progress, RunOptions};
use rill_units::{display_unit, format_number, Kind};
use rill_workspace::DiskSource;
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

pub struct Args {
    pub file: PathBuf,
    pub out: Option<PathBuf>,
    pub export_system: Option<PathBuf>,
    pub quiet: bool,
}

/// Progress bar, Ctrl-C, and the first system for `--export-system`.
struct CliObserver {
    bar: Option<ProgressBar>,
    started: Instant,
    cancel: Arc<AtomicBool>,
    export: Option<(PathBuf, PathBuf)>,
    export_result: Option<Result<Vec<PathBuf>, String>>,
    quiet: bool,
}

impl CliObserver {
    fn bar(&mut self, end: f64) -> Option<&ProgressBar> {
        // Only for runs longer than a moment, only on a terminal.
        if self.bar.is_none()
            && !self.quiet
            && std::io::stderr().is_terminal()
            && self.started.elapsed() > Duration::from_millis(300)
        {
            let bar = ProgressBar::new(1000);
            bar.set_style(
                ProgressStyle::with_template("{spinner} [{elapsed_precise}] {bar:30} {msg}")
                    .unwrap_or_else(|_| ProgressStyle::default_bar()),
            );
            bar.set_length((end / 86400.0 * 1000.0).max(1.0) as u64);
            self.bar = Some(bar);
        }
        self.bar.as_ref()
    }
}

impl Observer for CliObserver {
    fn progress(&mut self, p: &Progress) {
        if let Some(bar) = self.bar(p.end) {
            bar.set_position((p.time / 86400.0 * 1000.0) as u64);
            bar.set_message(format!(
                "t = {} day, step {} ({} day), {} Newton / {} linear iterations",
                format_number(p.time / 86400.0),
                p.step,
                format_number(p.step_size / 86400.0),
                p.newton_iterations,
                p.linear_iterations
            ));
        }
    }

    fn cancelled(&self) -> bool {
        self.cancel.load(Ordering::Relaxed)
    }

    fn first_system(&mut self, matrix: &CsrMatrix, rhs: &[f64]) {
        let Some((dir, deck)) = self.export.take() else {
            return;
        };
        let result = rill_output::write_system_with(
            &dir,
            &deck,
            |w| rill_sim::linear::write_matrix_market(matrix, w),
            |w| rill_sim::linear::write_vector_market(rhs, w),
        )
        .map_err(|e| e.to_string());
        self.export_result = Some(result);
    }
}

pub fn run(args: Args) -> u8 {
    let started = Instant::now();
    let source = DiskSource::unconfined();
    let analysis = match crate::check::load(&args.file, &source) {
        Ok(a) => a,
        Err(e) => {
            eprintln!("error: {e}");
            return 2;
        }
    };
    if !analysis.diagnostics.is_empty() {
        crate::check::render_text(&analysis);
    }
    let Some(case) = analysis.runnable_case() else {
        eprintln!("error: the deck has errors; nothing was run");
        return 1;
    };
    let cancel = Arc::new(AtomicBool::new(false));
    {
        let cancel = cancel.clone();
        // A second Ctrl-C while the run winds down ends the process the usual way.
        let _ = ctrlc::set_handler(move || {
            if cancel.swap(true, Ordering::Relaxed) {
                std::process::exit(130);
            }
        });
    }
    let mut observer = CliObserver {
        bar: None,
        started,
        cancel,
        export: args.export_system.clone().map(|d| (d, args.file.clone())),
        export_result: None,
        quiet: args.quiet,
    };
    let results = rill_sim::run(case, &RunOptions::default(), &mut observer);
    if let Some(bar) = observer.bar.take() {
        bar.finish_and_clear();
    }
    match observer.export_result.take() {
        Some(Ok(files)) => {
            for f in files {
                eprintln!("wrote {}", f.display());
            }
        }
        Some(Err(e)) => eprintln!("error: --export-system: {e}"),
        None if args.export_system.is_some() => {
            eprintln!("note: --export-system: the run solved no linear system")
        }
        None => {}
    }
    let results = match results {
        Ok(r) => r,
        Err(e) => {
            eprintln!("error: the run failed: {e}");
            eprintln!("note: earlier results, if any, are left as they were");
            return 1;
        }
    };
    let out_dir = args
        .out
        .clone()
        .unwrap_or_else(|| rill_output::default_out_dir(&args.file));
    let mut meta = rill_output::RunMeta::new(&args.file);
    meta.wall_seconds = Some(started.elapsed().as_secs_f64());
    meta.cautions = analysis
        .diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Warning && d.code.area() == "well")
        .map(|d| format!("{}: {}", d.code, d.message))
        .collect();
    let written = match rill_output::write_results(&out_dir, case, &results, &meta) {
        Ok(w) => w,
        Err(e) => {
            eprintln!("error: {e}");
            return 1;
        }
    };
    print_summary(
        case,
        &results,
        &written,
        started.elapsed().as_secs_f64(),
        &args.file,
    );
    0
}

fn print_summary(
    case: &Case,
    r: &rill_sim::RunResults,
    written: &rill_output::WrittenFiles,
    wall: f64,
    deck: &Path,
) {
    let sys = case.report.units;
    let show = |si: f64, kind: Kind| {
        let u = display_unit(kind, sys);
        format!("{} {}", format_number(si / u.factor), u.name)
    };
    let last = r.times.len().saturating_sub(1);
    let s = &r.stats;
    println!("rill run {}", deck.display());
    println!(
        "  reached {} in {} steps ({} cuts), {} Newton and {} linear iterations ({}), {:.2} s",
        show(r.times.get(last).copied().unwrap_or(0.0), Kind::Time),
        s.steps,
        s.step_cuts,
        s.newton_iterations,
        s.linear_iterations,
        s.linear_solver,
        wall
    );
    if let Some(p) = r.pressure_avg.get(last) {
        println!("  average pressure {}", show(*p, Kind::Pressure));
    }
    for w in &r.wells {
        let mode = match w.mode.get(last) {
            Some(ControlMode::Bhp) => "on BHP",
            _ => "on rate",
        };
        println!(
            "  well \"{}\": rate {}, BHP {}, cumulative {} ({mode})",
            w.name,
            show(w.rate.get(last).copied().unwrap_or(0.0), Kind::SurfaceRate),
            show(w.bhp.get(last).copied().unwrap_or(0.0), Kind::Pressure),
            show(
                w.cumulative.get(last).copied().unwrap_or(0.0),
                Kind::SurfaceVolume
            )
        );
    }
    for b in &r.boundaries {
        println!(
            "  boundary \"{}\": rate {} (negative: inflow)",
            b.name,
            show(b.rate.get(last).copied().unwrap_or(0.0), Kind::SurfaceRate)
        );
    }
    let worst = r.balance_error.iter().copied().fold(0.0f64, f64::max);
    println!("  largest mass balance error {worst:.2e}");
    println!(
        "  results in {} (report: {})",
        written.dir.display(),
        written.report_html.display()
    );
    for n in &written.notes {
        println!("  note: {n}");
    }
    println!();
    println!("Caution: {}", rill_output::CAUTION);
}
