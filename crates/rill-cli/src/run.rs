//! `rill run`: check the deck, run it through the shared pipeline
//! (`rill_run`) with a progress bar on stderr (plain progress lines when
//! stderr is not a terminal: a log file, CI), and print the pipeline's
//! summary with the caution that results are engineering estimates.

use indicatif::{ProgressBar, ProgressStyle};
use rill_run::{Failure, Request, SystemExport};
use rill_sim::{Observer, Progress};
use rill_units::format_number;
use rill_workspace::DiskSource;
use std::io::IsTerminal;
use std::path::PathBuf;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

pub struct Args {
    pub file: PathBuf,
    pub out: Option<PathBuf>,
    pub export_system: Option<PathBuf>,
    pub quiet: bool,
    pub engine: EngineChoice,
    pub petsc_options: Option<String>,
}

/// `--engine`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum EngineChoice {
    /// The embedded simulator.
    Embedded,
    /// PETSc over MPI.
    Petsc,
}

/// PETSc started for `--engine petsc` (nothing in a build without it).
#[cfg(feature = "petsc")]
type Started = Option<rill_run::PetscEngine>;
#[cfg(not(feature = "petsc"))]
type Started = Option<std::convert::Infallible>;

/// Starts the engine `--engine` asks for: `Err(exit code)` after a message.
fn start_engine(args: &Args) -> Result<Started, u8> {
    if args.engine == EngineChoice::Embedded {
        if args.petsc_options.is_some() {
            eprintln!("error: --petsc-options needs --engine petsc");
            return Err(2);
        }
        return Ok(None);
    }
    if args.export_system.is_some() {
        eprintln!("error: --export-system works with the embedded engine only (the distributed system lives on every rank)");
        return Err(2);
    }
    #[cfg(feature = "petsc")]
    {
        match rill_run::PetscEngine::start(args.petsc_options.as_deref().unwrap_or("")) {
            Ok(e) => Ok(Some(e)),
            Err(e) => {
                eprintln!("error: --engine petsc: {e}");
                Err(1)
            }
        }
    }
    #[cfg(not(feature = "petsc"))]
    {
        eprintln!(
            "error: this rill was built without the PETSc engine\n  \
             = help: build it with `cargo build --release -p rill-cli --features petsc` \
             (needs PETSc and MPI: on Debian or Ubuntu `apt-get install libpetsc-real-dev pkg-config`), \
             or leave out `--engine petsc` to run the embedded engine"
        );
        Err(2)
    }
}

/// Progress bar (or progress lines) and Ctrl-C.
struct CliObserver {
    bar: Option<ProgressBar>,
    started: Instant,
    cancel: Arc<AtomicBool>,
    quiet: bool,
    /// stderr is a terminal: a bar; otherwise a line now and then.
    terminal: bool,
    /// When the last progress line was printed (not a terminal).
    last_line: Option<Instant>,
    /// (first line after, interval between lines).
    line_timing: (Duration, Duration),
}

/// The first progress line comes after this long, then one per interval, so
/// a log shows that a long run is alive and how far it got without
/// flooding with a line per step. `RILL_PROGRESS_SECONDS` sets both (0: a
/// line after every step).
const FIRST_LINE_AFTER: Duration = Duration::from_secs(2);
const LINE_INTERVAL: Duration = Duration::from_secs(10);

/// (first line after, interval) from `RILL_PROGRESS_SECONDS` or the defaults.
fn line_timing() -> (Duration, Duration) {
    std::env::var("RILL_PROGRESS_SECONDS")
        .ok()
        .and_then(|v| v.trim().parse::<f64>().ok())
        .filter(|s| s.is_finite() && *s >= 0.0 && *s < 1e9)
        .map(|s| (Duration::from_secs_f64(s), Duration::from_secs_f64(s)))
        .unwrap_or((FIRST_LINE_AFTER, LINE_INTERVAL))
}

impl CliObserver {
    fn bar(&mut self, end: f64) -> Option<&ProgressBar> {
        // Only for runs longer than a moment, only on a terminal.
        if self.bar.is_none()
            && !self.quiet
            && self.terminal
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

    /// A plain progress line on stderr when it is due (not a terminal).
    fn line(&mut self, p: &Progress) {
        if self.quiet || self.terminal {
            return;
        }
        let due = match self.last_line {
            None => self.started.elapsed() >= self.line_timing.0,
            Some(at) => at.elapsed() >= self.line_timing.1,
        };
        if !due {
            return;
        }
        self.last_line = Some(Instant::now());
        eprintln!("{}", progress_line(p, self.started.elapsed()));
    }
}

/// `progress: t = 12.5 of 180 day (6.9%), step 1234 (0.01 day), 4 Newton /
/// 31 linear iterations, 10 s elapsed`.
fn progress_line(p: &Progress, elapsed: Duration) -> String {
    let percent = if p.end > 0.0 {
        format!(
            " ({}%)",
            format_number((p.time / p.end * 1000.0).round() / 10.0)
        )
    } else {
        String::new()
    };
    format!(
        "progress: t = {} of {} day{percent}, step {} ({} day), {} Newton / {} linear iterations, {} s elapsed",
        format_number(p.time / 86400.0),
        format_number(p.end / 86400.0),
        p.step,
        format_number(p.step_size / 86400.0),
        p.newton_iterations,
        p.linear_iterations,
        elapsed.as_secs()
    )
}

impl Observer for CliObserver {
    fn progress(&mut self, p: &Progress) {
        self.line(p);
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
}

pub fn run(args: Args) -> u8 {
    let started = Instant::now();
    let engine = match start_engine(&args) {
        Ok(e) => e,
        Err(code) => return code,
    };
    // Ranks other than 0 of a distributed run show nothing: rank 0 speaks
    // for the run (they all read and check the same deck).
    #[cfg(feature = "petsc")]
    let speaks = engine.as_ref().is_none_or(|e| e.rank() == 0);
    #[cfg(not(feature = "petsc"))]
    let speaks = engine.is_none();
    let source = DiskSource::unconfined();
    let analysis = match crate::check::load(&args.file, &source) {
        Ok(a) => a,
        Err(e) => {
            if speaks {
                eprintln!("error: {e}");
            }
            return 2;
        }
    };
    if !analysis.diagnostics.is_empty() && speaks {
        crate::check::render_text(&analysis);
    }
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
        quiet: args.quiet || !speaks,
        terminal: std::io::stderr().is_terminal(),
        last_line: None,
        line_timing: line_timing(),
    };
    let out_dir = args
        .out
        .clone()
        .unwrap_or_else(|| rill_output::default_out_dir(&args.file));
    let mut request = Request::new(&analysis, &args.file, &out_dir);
    request.export_system = args.export_system.clone();
    #[cfg(feature = "petsc")]
    if let Some(e) = &engine {
        request.engine = rill_run::Engine::Petsc(e);
    }
    let outcome = rill_run::run(&request, &mut observer);
    if let Some(bar) = observer.bar.take() {
        bar.finish_and_clear();
    }
    #[cfg(feature = "petsc")]
    if let Some(e) = &engine {
        // Collective: every rank takes part, rank 0 prints.
        let memory = e.peak_memory_per_rank();
        if !speaks {
            return match outcome.result {
                Err(Failure::Run(_)) => 1,
                _ => 0,
            };
        }
        if outcome.result.is_ok() {
            let per_rank: Vec<String> = memory
                .iter()
                .map(|b| format!("{} MB", format_number((b / 1e6).round())))
                .collect();
            eprintln!(
                "engine: PETSc on {} rank(s); peak memory per rank: {}",
                e.size(),
                per_rank.join(", ")
            );
        }
    }
    match outcome.export {
        SystemExport::Written(files) => {
            for f in files {
                eprintln!("wrote {}", f.display());
            }
        }
        SystemExport::Failed(e) => eprintln!("error: --export-system: {e}"),
        SystemExport::NoSystem => {
            eprintln!("note: --export-system: the run solved no linear system")
        }
        SystemExport::NotAsked => {}
    }
    match outcome.result {
        Ok(done) => {
            println!("{}", done.summary.text());
            0
        }
        Err(e @ Failure::Run(_)) => {
            eprintln!("error: {e}");
            eprintln!("note: earlier results, if any, are left as they were");
            1
        }
        Err(e) => {
            eprintln!("error: {e}");
            1
        }
    }
}
