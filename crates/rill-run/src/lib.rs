//! `rill-run` owns the one run pipeline that every front end uses: it takes
//! a checked deck (the [`Analysis`]: case and diagnostics), runs the embedded
//! simulator, decides the report's cautions, writes the result set
//! atomically through `rill-output`, optionally exports the first linear
//! system, and builds the summary text. `rill run` and the language server's
//! `rill.run` call [`run`] and only display progress and the [`Outcome`], so
//! the same deck gives the same result set and the same summary from both.
//!
//! It must never print, read or parse a deck, or hold terminal or protocol
//! code; the only files it writes are the result set and, when asked, the
//! exported system.
//!
//! # Cautions
//! The report lists, after the standing [`rill_output::CAUTION`], every
//! checker warning or note about what was simulated: the code families
//! `sanity` (values outside their usual range), `well` (well placement and
//! pressures) and `flow` (isolated cells, nothing driving flow), each as
//! `code: message`. Warnings about how the deck is written (`deck`,
//! `syntax`, `unit`, `grid`, `timeline`) do not change what was simulated
//! and stay in the editor and on the command line. See [`cautions`].

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

mod summary;

use std::fmt;
use std::path::{Path, PathBuf};

use rill_model::{Analysis, Diagnostic, Severity};
use rill_output::{OutputError, ResultWriter, RunMeta, WrittenFiles};
use rill_sim::linear::CsrMatrix;
use rill_sim::{KeepPressures, Observer, Progress, RunError, RunOptions, RunResults, Timings};

pub use summary::Summary;

/// What to run and where its results go.
#[derive(Debug, Clone)]
pub struct Request<'a> {
    /// The checked deck: its case and its diagnostics.
    pub analysis: &'a Analysis,
    /// The deck file the analysis read; recorded in the results, never written.
    pub deck: &'a Path,
    /// Where the result set goes (replaced as a whole; see `rill_output`).
    pub out_dir: &'a Path,
    /// Solver settings. The result set's maps are written as the run goes
    /// whatever `options.keep_pressures` says; it only decides what
    /// [`Finished::results`] keeps.
    pub options: RunOptions,
    /// Also write the first linear system as MatrixMarket `matrix.mtx` and
    /// `rhs.mtx` into this directory.
    pub export_system: Option<PathBuf>,
}

impl<'a> Request<'a> {
    /// A request with the default solver settings, the last report time's
    /// cell pressures kept (the maps of the others are on disk), and no
    /// system export.
    pub fn new(analysis: &'a Analysis, deck: &'a Path, out_dir: &'a Path) -> Request<'a> {
        Request {
            analysis,
            deck,
            out_dir,
            options: RunOptions {
                keep_pressures: KeepPressures::Last,
                ..RunOptions::default()
            },
            export_system: None,
        }
    }
}

/// What became of `--export-system`.
#[derive(Debug, Clone, PartialEq)]
pub enum SystemExport {
    /// No export was asked for.
    NotAsked,
    /// The files written.
    Written(Vec<PathBuf>),
    /// Writing failed; the message says why.
    Failed(String),
    /// Asked for, but the run solved no linear system before it ended.
    NoSystem,
}

/// A run that went through: results, files, cautions, summary.
#[derive(Debug, Clone)]
pub struct Finished {
    /// The series and cell pressures, in SI.
    pub results: RunResults,
    /// The result set as written.
    pub written: WrittenFiles,
    /// The deck's cautions as the report lists them (after the standing
    /// caution; see [`cautions`]).
    pub cautions: Vec<String>,
    /// Where the simulator's time went.
    pub timings: Timings,
    /// Wall time of the whole pipeline (run and writing), s.
    pub wall_seconds: f64,
    /// The summary both front ends show.
    pub summary: Summary,
}

/// Why a run produced no result set. Earlier results are left as they were.
#[derive(Debug)]
pub enum Failure {
    /// The deck has errors (or no case); nothing was run.
    NotRunnable {
        /// Number of error diagnostics.
        errors: usize,
    },
    /// The simulator stopped (cancelled, a step failed, or the case cannot run).
    Run(RunError),
    /// The result set could not be written.
    Output(OutputError),
}

impl Failure {
    /// The run was cancelled by the observer.
    pub fn is_cancelled(&self) -> bool {
        matches!(self, Failure::Run(RunError::Cancelled { .. }))
    }
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Failure::NotRunnable { .. } => write!(f, "the deck has errors; nothing was run"),
            Failure::Run(e) => write!(f, "the run failed: {e}"),
            Failure::Output(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for Failure {}

/// Everything a run gives back.
#[derive(Debug)]
pub struct Outcome {
    /// The system export, reported whether or not the run went through.
    pub export: SystemExport,
    /// The finished run, or why there is none.
    pub result: Result<Finished, Failure>,
}

/// The diagnostics worth a caution in the report, as `code: message`: the
/// warnings and notes of the families `sanity`, `well` and `flow` (about
/// what was simulated), in the order of the diagnostics.
pub fn cautions(diagnostics: &[Diagnostic]) -> Vec<String> {
    const FAMILIES: [&str; 3] = ["sanity", "well", "flow"];
    diagnostics
        .iter()
        .filter(|d| matches!(d.severity, Severity::Warning | Severity::Info))
        .filter(|d| FAMILIES.contains(&d.code.area()))
        .map(|d| format!("{}: {}", d.code, d.message))
        .collect()
}

/// Runs the deck of `request`, writes its result set and builds its summary.
/// `observer` sees progress and is asked about cancellation; it also gets the
/// first linear system and the timings, after the pipeline has used them.
pub fn run(request: &Request, observer: &mut dyn Observer) -> Outcome {
    let started = std::time::Instant::now();
    let not_asked = || match request.export_system {
        Some(_) => SystemExport::NoSystem,
        None => SystemExport::NotAsked,
    };
    let Some(case) = request.analysis.runnable_case() else {
        let errors = request
            .analysis
            .diagnostics
            .iter()
            .filter(|d| d.severity == Severity::Error)
            .count();
        return Outcome {
            export: not_asked(),
            result: Err(Failure::NotRunnable { errors }),
        };
    };
    // The same deck is recorded the same way whoever runs it.
    let deck = std::fs::canonicalize(request.deck).unwrap_or_else(|_| request.deck.to_path_buf());
    // Opened before the run: a refused result folder fails at once, and the
    // maps go to disk as each report time comes.
    let writer = match ResultWriter::begin(request.out_dir, case, &deck) {
        Ok(w) => w,
        Err(e) => {
            return Outcome {
                export: not_asked(),
                result: Err(Failure::Output(e)),
            }
        }
    };
    let mut watch = Watch {
        maps: writer,
        map_error: None,
        inner: observer,
        export: request
            .export_system
            .as_deref()
            .map(|dir| (dir, deck.as_path())),
        exported: not_asked(),
        timings: Timings::default(),
    };
    let results = rill_sim::run(case, &request.options, &mut watch);
    let (export, timings, writer) = (watch.exported, watch.timings, watch.maps);
    let results = match (results, watch.map_error) {
        (_, Some(e)) => {
            return Outcome {
                export,
                result: Err(Failure::Output(e)),
            }
        }
        (Ok(r), None) => r,
        (Err(e), None) => {
            return Outcome {
                export,
                result: Err(Failure::Run(e)),
            }
        }
    };
    let cautions = cautions(&request.analysis.diagnostics);
    let mut meta = RunMeta::new(&deck);
    meta.cautions = cautions.clone();
    meta.timings = Some(timings.clone());
    meta.wall_seconds = Some(started.elapsed().as_secs_f64());
    // The last report time's face fluxes, by the simulator's own formula,
    // and the digest that ties the set to this case.
    meta.last_state = results
        .pressure
        .last()
        .and_then(|p| rill_sim::face_fluxes(case, p))
        .map(|fluxes| rill_output::LastState {
            digest: rill_model::digest::case_digest(case),
            fluxes,
        });
    let written = match writer.finish(case, &results, &meta) {
        Ok(w) => w,
        Err(e) => {
            return Outcome {
                export,
                result: Err(Failure::Output(e)),
            }
        }
    };
    let wall_seconds = started.elapsed().as_secs_f64();
    let summary = Summary::new(case, &deck, &results, &written, &cautions, wall_seconds);
    Outcome {
        export,
        result: Ok(Finished {
            results,
            written,
            cautions,
            timings,
            wall_seconds,
            summary,
        }),
    }
}

/// Passes progress and cancellation through, writes each report time's map,
/// exports the first system when asked, and keeps the timings. A map that
/// cannot be written stops the run (as a cancellation) and is the failure.
struct Watch<'a> {
    inner: &'a mut dyn Observer,
    maps: ResultWriter,
    map_error: Option<OutputError>,
    /// (directory, deck) of the export still to do.
    export: Option<(&'a Path, &'a Path)>,
    exported: SystemExport,
    timings: Timings,
}

impl Observer for Watch<'_> {
    fn progress(&mut self, p: &Progress) {
        self.inner.progress(p);
    }

    fn cancelled(&self) -> bool {
        self.map_error.is_some() || self.inner.cancelled()
    }

    fn report_time(&mut self, time: f64, pressure: &[f64]) {
        if self.map_error.is_none() {
            if let Err(e) = self.maps.map(time, pressure) {
                self.map_error = Some(e);
            }
        }
        self.inner.report_time(time, pressure);
    }

    fn first_system(&mut self, matrix: &CsrMatrix, rhs: &[f64]) {
        if let Some((dir, deck)) = self.export.take() {
            self.exported = match rill_output::write_system_with(
                dir,
                deck,
                |w| rill_sim::linear::write_matrix_market(matrix, w),
                |w| rill_sim::linear::write_vector_market(rhs, w),
            ) {
                Ok(files) => SystemExport::Written(files),
                Err(e) => SystemExport::Failed(e.to_string()),
            };
        }
        self.inner.first_system(matrix, rhs);
    }

    fn timings(&mut self, t: &Timings) {
        self.timings = t.clone();
        self.inner.timings(t);
    }
}

#[cfg(test)]
mod tests;
