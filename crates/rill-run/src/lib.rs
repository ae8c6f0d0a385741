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
//! The report lists, after the standing caution
//! ([`rill_output::standing_caution`]), every
//! checker warning or note about what was simulated: the code families
//! `sanity` (values outside their usual range), `well` (well placement and
//! pressures) and `flow` (isolated cells, nothing driving flow), each as
//! `code: message`. Warnings about how the deck is written (`deck`,
//! `syntax`, `unit`, `grid`, `timeline`) do not change what was simulated
//! and stay in the editor and on the command line. See [`cautions`].

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

#[cfg(feature = "petsc")]
mod distributed;
mod summary;

#[cfg(feature = "petsc")]
pub use distributed::PetscEngine;

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
    /// `rhs.mtx` into this directory (embedded engine only).
    pub export_system: Option<PathBuf>,
    /// Which engine runs the case.
    pub engine: Engine<'a>,
}

/// Which engine runs a case.
#[derive(Clone, Copy)]
pub enum Engine<'a> {
    /// The embedded simulator, in this process.
    Embedded,
    /// This process as one rank of a run distributed over MPI with PETSc;
    /// rank 0 writes the result set and has the summary.
    #[cfg(feature = "petsc")]
    Petsc(&'a PetscEngine),
    #[doc(hidden)]
    #[cfg(not(feature = "petsc"))]
    _Lifetime(std::marker::PhantomData<&'a ()>),
}

impl fmt::Debug for Engine<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Engine::Embedded => write!(f, "Embedded"),
            #[cfg(feature = "petsc")]
            Engine::Petsc(e) => write!(f, "Petsc(rank {} of {})", e.rank(), e.size()),
            #[cfg(not(feature = "petsc"))]
            Engine::_Lifetime(_) => write!(f, "Embedded"),
        }
    }
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
            engine: Engine::Embedded,
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
    /// This process is a rank other than 0 of a distributed run: it took
    /// part, rank 0 wrote the result set and has the summary.
    NotRankZero,
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
            Failure::NotRankZero => write!(f, "rank 0 reports the run"),
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
    #[cfg(feature = "petsc")]
    if case.oil_water.is_some() && matches!(request.engine, Engine::Petsc(_)) {
        // Before the result folder is opened: nothing on disk changes.
        return Outcome {
            export: not_asked(),
            result: Err(Failure::Run(RunError::Setup(
                rill_sim::NO_DISTRIBUTED_OIL_WATER.into(),
            ))),
        };
    }
    #[cfg(feature = "petsc")]
    if let Engine::Petsc(engine) = request.engine {
        if engine.rank() != 0 {
            return run_secondary(case, request, engine, observer);
        }
    }
    // The same deck is recorded the same way whoever runs it.
    let deck = std::fs::canonicalize(request.deck).unwrap_or_else(|_| request.deck.to_path_buf());
    // Opened before the run: a refused result folder fails at once, and the
    // maps go to disk as each report time comes.
    let writer = ResultWriter::begin(request.out_dir, case, &deck);
    #[cfg(feature = "petsc")]
    if let Engine::Petsc(engine) = request.engine {
        // The other ranks wait for rank 0's word before they start.
        engine.all(writer.is_ok());
    }
    let writer = match writer {
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
    let results = match request.engine {
        #[cfg(feature = "petsc")]
        Engine::Petsc(engine) => {
            let par = engine.parallel();
            rill_sim::run_distributed(case, &request.options, &mut watch, &par)
        }
        _ => rill_sim::run(case, &request.options, &mut watch),
    };
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
    meta.last_state =
        rill_sim::last_face_fluxes(case, &results).map(|fluxes| rill_output::LastState {
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

/// A rank other than 0: runs its part after rank 0 has opened the result
/// set, shows nothing (only cancellation reaches the simulator) and writes
/// nothing.
#[cfg(feature = "petsc")]
fn run_secondary(
    case: &rill_model::Case,
    request: &Request,
    engine: &PetscEngine,
    observer: &mut dyn Observer,
) -> Outcome {
    struct Silent<'a>(&'a dyn Observer);
    impl Observer for Silent<'_> {
        fn cancelled(&self) -> bool {
            self.0.cancelled()
        }
    }
    let export = SystemExport::NotAsked;
    if !engine.all(true) {
        // Rank 0 could not open the result set; it says why.
        return Outcome {
            export,
            result: Err(Failure::NotRankZero),
        };
    }
    let par = engine.parallel();
    let result = rill_sim::run_distributed(case, &request.options, &mut Silent(observer), &par);
    Outcome {
        export,
        result: Err(match result {
            Ok(_) => Failure::NotRankZero,
            Err(e) => Failure::Run(e),
        }),
    }
}

/// Passes progress and cancellation through, writes each report time's map
/// (an oil-water run's with its water saturations, which follow the
/// pressures), exports the first system when asked, and keeps the timings. A map that
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

impl Watch<'_> {
    /// Writes the first system where `--export-system` asked, once.
    fn export_system(&mut self, matrix: &CsrMatrix, rhs: &[f64], accumulation: Option<&[f64]>) {
        if let Some((dir, deck)) = self.export.take() {
            let accumulation = accumulation.map(|acc| -> rill_output::SystemPart<'_> {
                Box::new(move |w| rill_sim::linear::write_vector_market(acc, w))
            });
            self.exported = match rill_output::write_system_with(
                dir,
                deck,
                |w| rill_sim::linear::write_matrix_market(matrix, w),
                |w| rill_sim::linear::write_vector_market(rhs, w),
                accumulation,
            ) {
                Ok(files) => SystemExport::Written(files),
                Err(e) => SystemExport::Failed(e.to_string()),
            };
        }
    }
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

    fn report_saturation(&mut self, time: f64, water_saturation: &[f64]) {
        if self.map_error.is_none() {
            if let Err(e) = self.maps.saturation(time, water_saturation) {
                self.map_error = Some(e);
            }
        }
        self.inner.report_saturation(time, water_saturation);
    }

    fn first_system(&mut self, matrix: &CsrMatrix, rhs: &[f64]) {
        self.export_system(matrix, rhs, None);
        self.inner.first_system(matrix, rhs);
    }

    fn first_coupled_system(&mut self, matrix: &CsrMatrix, rhs: &[f64], accumulation: &[f64]) {
        self.export_system(matrix, rhs, Some(accumulation));
        self.inner.first_coupled_system(matrix, rhs, accumulation);
    }

    fn timings(&mut self, t: &Timings) {
        self.timings = t.clone();
        self.inner.timings(t);
    }
}

#[cfg(test)]
mod tests;
