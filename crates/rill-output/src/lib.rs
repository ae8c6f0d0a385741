//! `rill-output` owns the files a run writes: `series.csv`, `series.json`,
//! VTK maps with a `.pvd` collection, SVG plots and the self-contained
//! `report.html`, all written atomically into the output directory.
//!
//! It must never compute physics: it formats what `rill-sim` produced
//! ([`RunResults`], in SI) and what the checked [`Case`] says (grid, rock,
//! wells, report unit system), converting SI to the report system's display
//! units and nothing more.
//!
//! # API
//! - [`write_results`]`(out_dir, case, results, meta)` writes a result set
//!   and returns the [`WrittenFiles`]. [`default_out_dir`] gives
//!   `<deck stem>.out/` beside the deck.
//! - [`ResultWriter`] writes the same set while the run goes: `begin`
//!   before it, `map` at each report time, `finish` at the end, so a run's
//!   memory does not grow with its report times.
//! - [`write_system`] / [`write_system_with`] write `matrix.mtx` and
//!   `rhs.mtx` (and for oil-water runs `accumulation.mtx`) for
//!   `rill run --export-system DIR` (the MatrixMarket text itself comes
//!   from `rill-sim`).
//! - [`ZeroScale`] says which rates and cumulatives are written as 0
//!   (round-off against the run's scale; the results keep their numbers).
//! - [`RunMeta`] carries what the report shows beyond the results: deck path,
//!   title, rill version, wall time, start time, cautions from the checker.
//!
//! # The result set
//! ```text
//! <out_dir>/
//!   .rill-results        marker: this directory is rill's and is replaced as a whole
//!   series.csv           one row per report time, headers with units
//!   series.json          the same series with units, solver statistics, cautions
//!   last_state.json      the last report time in SI: case digest, wells, boundaries
//!   last_state.f64       its cell pressures, face fluxes and water saturations (see `last_state`)
//!   maps/step_0000.vtr   VTK XML RectilinearGrid per report time (.vts: StructuredGrid)
//!   maps/rill.pvd        the collection, timesteps in report time units
//!   report.html          self-contained page: caution, summary, plots, layer maps
//! ```
//! `series.csv` headers follow the spec: `time [day]`, `pressure_avg [psi]`,
//! `<WELL> bhp [psi]`, `<WELL> rate [stb/day]`, `<WELL> cumulative [stb]`,
//! `<BOUNDARY> rate [stb/day]`, `balance_error [-]` (metric: `bar`,
//! `sm3/day`, `sm3`; si: `s`, `Pa`, `sm3/s`, `sm3`); names are CSV-quoted
//! when they need it; numbers are the shortest text that reads back to the
//! same double. Rates are positive for production, negative for injection
//! or inflow. `series.json` holds the same columns (`name`, `quantity`,
//! `unit`, `values`, and `well` or `boundary`), non-finite values as `null`,
//! plus `units`, `title`, `wells` (role, control mode per report time),
//! `solver` (steps, step cuts, Newton and linear iterations, linear solver),
//! `cautions` ([`CAUTION`] first) and, last, `timings` (wall times and the
//! start time: the only part that differs between two runs of one deck).
//!
//! An oil-water run (`RunResults::oil_water`, for a case with
//! `Case::oil_water`) keeps those columns, its well rates and cumulatives
//! being the liquid, and adds after each producer's cumulative `<WELL>
//! oil_rate`, `water_rate`, `water_cut [-]`, `cumulative_oil`,
//! `cumulative_water`, after each injector's `<WELL> water_rate` and
//! `cumulative_water` (negative, as injection is), before `balance_error`
//! `oil_in_place [stb]`, `recovery [-]`, `sw_avg [-]` and
//! `pore_volumes_injected [-]`, and after it `balance_error_oil [-]` and
//! `balance_error_water [-]` (`series.rs`). `series.json` adds `"phases":
//! "oil-water"` and each producer's `breakthrough`; [`CAUTION_OIL_WATER`]
//! replaces [`CAUTION`] ([`standing_caution`]).
//!
//! # The maps
//! `maps/step_NNNN.vtr` are VTK XML RectilinearGrids (zlib-compressed inline
//! base64 arrays): x east, y north, z elevation (−depth) in report length
//! units, with VTK's `k` counting from the bottom layer up. Where the
//! columns' layer interfaces differ (a dipping per-column `top`, per-cell
//! `dz`) they are StructuredGrids, `maps/step_NNNN.vts`, with every corner
//! point at the mean depth of the columns around it (see `vtk.rs`); the
//! `.pvd` names whichever was written. The cell array `depth` holds the
//! cell-centre depth the simulator uses.
//! Cell data: `pressure` (report units, NaN in inactive cells), in an
//! oil-water run `sw` and `so` (fractions, NaN in inactive cells), `active`,
//! `porosity`, `kx`, `ky`, `kz`, `depth`, `layer`; the units are named in
//! field data (`pressure_unit`, `permeability_unit`, `length_unit`,
//! `time_unit`) beside `TimeValue`.
//!
//! # The report
//! One self-contained page (inline CSS and SVG, no scripts, no external
//! resources) with the caution at the top, a summary, plots of rates,
//! cumulatives, BHP and average pressure, and pressure maps per layer at the
//! last report time, coloured with our own ramp *rill slate-to-amber* and
//! marked with the well completions. Large grids stay small: at most 12
//! layer maps (evenly chosen, listed on the page), and a layer of more than
//! 20 000 columns is drawn as area-weighted block averages. An oil-water
//! run's page adds the water cut and recovery charts, the breakthrough
//! table and water saturation maps per layer at up to four report times
//! (ramp *rill umber-to-tide*; which times and how small: `oil_water.rs`).
//! The plotting code is ours (`svg` module): a plotting crate would pull
//! in font rendering and a raster backend for what is a few hundred lines
//! of SVG text. Every user string (names, titles, paths) is escaped.
//!
//! # Atomicity and refusals
//! Everything is built in a hidden staging directory beside `out_dir` (same
//! filesystem), synced, then swapped in: the previous set is renamed aside,
//! the new one renamed in, the old one removed. A failed write leaves the
//! previous set intact, and a reader never sees a half-written set. Files
//! from an earlier run never survive into a later one.
//!
//! [`write_results`] refuses (with [`OutputError::Refused`]) an `out_dir`
//! that is the deck file, the deck's own directory or any directory that
//! contains the deck, a symbolic link, an existing file, or an existing
//! non-empty directory that is not a rill result set (no `.rill-results`
//! marker): replacing it would delete files rill did not write.
//!
//! # Units
//! Every value is converted from SI by `rill_units::display_unit` for the
//! case's report system (`report { units = field | metric | si }`).

#![warn(missing_docs)]
#![warn(clippy::too_many_lines)]

mod atomic;
mod colours;
mod csv;
mod json;
mod last_state;
mod layers;
mod oil_water;
mod report;
mod series;
mod svg;
mod text;
mod timeline;
mod units;
mod validate;
mod vtk;

use std::fmt;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use rill_model::{Case, MapSelection};
use rill_sim::RunResults;

pub use last_state::{
    LastState, ARRAYS as LAST_STATE_ARRAYS, OIL_WATER_ARRAYS as LAST_STATE_OIL_WATER_ARRAYS,
};
pub use report::{standing_caution, CAUTION, CAUTION_OIL_WATER};
pub use series::ZeroScale;

/// What the report and `series.json` show beyond the case and the results.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct RunMeta {
    /// The deck file that was run. Never written; `out_dir` may not be it or its directory.
    pub deck: PathBuf,
    /// Title shown in the report; `None`: the case title, else the deck's file name.
    pub title: Option<String>,
    /// The rill version; defaults to this crate's version (the workspace version).
    pub rill_version: String,
    /// Wall time of the whole run, s (the solver's own time is in the results).
    pub wall_seconds: Option<f64>,
    /// Where the simulator's time went, when the caller kept it.
    pub timings: Option<rill_sim::Timings>,
    /// When the run started, as the caller wants it shown (e.g. RFC 3339).
    pub started: Option<String>,
    /// Cautions from the checker or the caller (e.g. `well.injection-pressure`
    /// warnings), shown after the standard [`CAUTION`].
    pub cautions: Vec<String>,
    /// The state at the last report time: with it (and the last cell
    /// pressures in the results) the set holds `last_state.json` and
    /// `last_state.f64`.
    pub last_state: Option<LastState>,
}

impl RunMeta {
    /// The meta of a run of `deck`: this rill version, nothing else set.
    pub fn new(deck: impl Into<PathBuf>) -> RunMeta {
        RunMeta {
            deck: deck.into(),
            title: None,
            rill_version: env!("CARGO_PKG_VERSION").to_string(),
            wall_seconds: None,
            timings: None,
            started: None,
            cautions: Vec::new(),
            last_state: None,
        }
    }
}

/// The files of a result set, at their final paths.
#[derive(Debug, Clone, PartialEq)]
pub struct WrittenFiles {
    /// The result set's directory (resolved).
    pub dir: PathBuf,
    /// `series.csv`.
    pub series_csv: PathBuf,
    /// `series.json`.
    pub series_json: PathBuf,
    /// `report.html`.
    pub report_html: PathBuf,
    /// `maps/rill.pvd`; `None` when the results hold no cell pressures.
    pub pvd: Option<PathBuf>,
    /// `maps/step_NNNN.vtr` (`.vts` for a grid that is not rectilinear),
    /// one per report time written.
    pub maps: Vec<PathBuf>,
    /// Every file written (the above and the `.rill-results` marker), in order.
    pub files: Vec<PathBuf>,
    /// Things worth telling that did not fail the write (e.g. a previous
    /// result set that could not be removed).
    pub notes: Vec<String>,
}

/// Why nothing (or not everything) was written; a failed write leaves the
/// previous result set as it was.
#[derive(Debug)]
pub enum OutputError {
    /// Reading or writing `path` failed.
    Io {
        /// The file or directory.
        path: PathBuf,
        /// The system's error.
        source: io::Error,
    },
    /// The target may not be written; `reason` says why.
    Refused {
        /// The refused target.
        path: PathBuf,
        /// Why, and what to do instead.
        reason: String,
    },
    /// The results do not fit the case (series lengths, cell counts).
    Inconsistent(String),
}

impl fmt::Display for OutputError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            OutputError::Io { path, source } => write!(f, "{}: {source}", path.display()),
            OutputError::Refused { path, reason } => {
                write!(
                    f,
                    "refusing to write results to {}: {reason}",
                    path.display()
                )
            }
            OutputError::Inconsistent(what) => write!(f, "results do not fit the case: {what}"),
        }
    }
}

impl std::error::Error for OutputError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            OutputError::Io { source, .. } => Some(source),
            _ => None,
        }
    }
}

/// The default output directory: `<deck stem>.out/` beside the deck
/// (`lobe.rill` -> `lobe.out/`).
pub fn default_out_dir(deck: &Path) -> PathBuf {
    let stem = deck
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "rill".into());
    deck.with_file_name(format!("{stem}.out"))
}

/// Writes the result set of a run into `out_dir`, atomically (see the crate
/// doc). The previous contents of `out_dir`, if it is a rill result set, are
/// replaced as a whole. `results.pressure` holds one array per report time
/// (a map each) or none; a run that streams its maps uses [`ResultWriter`].
pub fn write_results(
    out_dir: &Path,
    case: &Case,
    results: &RunResults,
    meta: &RunMeta,
) -> Result<WrittenFiles, OutputError> {
    // The count of pressure arrays is checked here, the series and arrays
    // (again) in `finish`.
    if !results.pressure.is_empty() && results.pressure.len() != results.times.len() {
        return Err(OutputError::Inconsistent(format!(
            "cell pressures are stored for {} of {} report times",
            results.pressure.len(),
            results.times.len()
        )));
    }
    // Before the staging folder is opened: a mismatch writes nothing.
    validate::results(case, results)?;
    let saturation = results.oil_water.as_ref().map(|ow| &ow.saturation);
    let mut writer = ResultWriter::begin(out_dir, case, &meta.deck)?;
    for (n, (&time, pressure)) in results.times.iter().zip(&results.pressure).enumerate() {
        writer.map(time, pressure)?;
        if let Some(saturation) = saturation {
            writer.saturation(time, &saturation[n])?;
        }
    }
    writer.finish(case, results, meta)
}

/// A result set written while the run goes: each report time's map goes to
/// the staging folder when it comes ([`ResultWriter::map`]), so memory does
/// not grow with the number of report times; [`ResultWriter::finish`] then
/// writes the series, the collection and the report and swaps the set in.
/// Dropped unfinished (a failed or cancelled run), it removes its staging
/// folder and leaves the previous set as it was.
///
/// For an oil-water case every report time's cell pressures
/// ([`ResultWriter::map`]) are followed by its water saturations
/// ([`ResultWriter::saturation`]), and the map is written then, with both.
pub struct ResultWriter {
    target: PathBuf,
    staging: atomic::Staging,
    maps: vtk::MapWriter,
    /// (time in report units, file name) of each map written.
    steps: Vec<(f64, String)>,
    time_unit: units::Unit,
    cells: usize,
    /// `report { maps = ... }`: `map` writes only with `All`; `finish`
    /// writes the last report time's map with `Last`.
    selection: MapSelection,
    /// Report times seen by `map`.
    seen: usize,
    /// An oil-water case's state between a report time's pressures and
    /// its saturations; `None` for a single-phase case.
    two_phase: Option<TwoPhase>,
}

/// What a [`ResultWriter`] of an oil-water case holds between calls.
struct TwoPhase {
    /// The report time (number, s) whose saturations are due next.
    due: Option<(usize, f64)>,
    /// Its cell pressures, Pa, when its map is to be written.
    pressure: Vec<f64>,
    /// The saturations the report draws.
    keeper: oil_water::Keeper,
}

impl ResultWriter {
    /// Checks `out_dir` (the refusals of the crate doc) and opens the
    /// staging folder beside it, before the run starts: a refused target
    /// fails at once, not after hours of simulation.
    pub fn begin(out_dir: &Path, case: &Case, deck: &Path) -> Result<ResultWriter, OutputError> {
        let target = check_target(out_dir, deck)?;
        let staging = atomic::Staging::new(&target)?;
        Ok(ResultWriter {
            target,
            staging,
            maps: vtk::MapWriter::new(case),
            steps: Vec::new(),
            time_unit: units::display_unit(units::Quantity::Time, case.report.units),
            cells: case.grid.cell_count(),
            selection: case.report.maps,
            seen: 0,
            two_phase: case.oil_water.as_ref().map(|_| TwoPhase {
                due: None,
                pressure: Vec::new(),
                keeper: oil_water::Keeper::new(case),
            }),
        })
    }

    /// Writes the map of the report time `time` (s): `pressure` in Pa, one
    /// value per grid cell (NaN in inactive cells). With `maps = last` or
    /// `none` it writes nothing (`finish` writes the last one). For an
    /// oil-water case the map waits for [`ResultWriter::saturation`].
    pub fn map(&mut self, time: f64, pressure: &[f64]) -> Result<(), OutputError> {
        if pressure.len() != self.cells {
            return Err(OutputError::Inconsistent(format!(
                "cell pressures at report time {} have {} values for {} cells",
                self.seen,
                pressure.len(),
                self.cells
            )));
        }
        let index = self.seen;
        self.seen += 1;
        if let Some(two) = &mut self.two_phase {
            if let Some((due, _)) = two.due {
                return Err(OutputError::Inconsistent(format!(
                    "the water saturations of report time {due} did not come before the next report time"
                )));
            }
            two.due = Some((index, time));
            if self.selection == MapSelection::All {
                two.pressure.clear();
                two.pressure.extend_from_slice(pressure);
            }
            return Ok(());
        }
        if self.selection != MapSelection::All {
            return Ok(());
        }
        self.write_map(index, time, pressure, None)
    }

    /// An oil-water case's water saturations at the report time `time`
    /// (s) whose pressures [`ResultWriter::map`] has just had: one value per
    /// grid cell (NaN in inactive cells). Writes that report time's map
    /// (with `maps = all`) and keeps what the report draws.
    pub fn saturation(&mut self, time: f64, water_saturation: &[f64]) -> Result<(), OutputError> {
        let Some(two) = &mut self.two_phase else {
            return Err(OutputError::Inconsistent(
                "water saturations came for a single-phase case".into(),
            ));
        };
        let Some((index, due_time)) = two.due else {
            return Err(OutputError::Inconsistent(format!(
                "water saturations came without the cell pressures of their report time (after {} report times)",
                self.seen
            )));
        };
        if due_time.to_bits() != time.to_bits() {
            return Err(OutputError::Inconsistent(format!(
                "the water saturations of report time {index} came for {time} s, the pressures for {due_time} s"
            )));
        }
        if water_saturation.len() != self.cells {
            return Err(OutputError::Inconsistent(format!(
                "water saturations at report time {index} have {} values for {} cells",
                water_saturation.len(),
                self.cells
            )));
        }
        two.due = None;
        two.keeper.offer(index, time, water_saturation);
        if self.selection != MapSelection::All {
            return Ok(());
        }
        // Taken out for the write (which borrows the writer) and put back,
        // so the buffer is reused at the next report time.
        let pressure = std::mem::take(&mut two.pressure);
        let written = self.write_map(index, time, &pressure, Some(water_saturation));
        if let Some(two) = &mut self.two_phase {
            two.pressure = pressure;
        }
        written
    }

    /// Writes the map of report time number `index` (0-based), which names
    /// the file: with `maps = last` the one file still says which report
    /// time it holds.
    fn write_map(
        &mut self,
        index: usize,
        time: f64,
        pressure: &[f64],
        water_saturation: Option<&[f64]>,
    ) -> Result<(), OutputError> {
        if self.steps.is_empty() {
            self.staging.subdir("maps")?;
        }
        let name = format!("step_{index:04}.{}", self.maps.extension());
        let shown = self.time_unit.show(time);
        let maps = &self.maps;
        self.staging.file(&format!("maps/{name}"), |w| {
            maps.write_step(w, pressure, water_saturation, shown)
        })?;
        self.steps.push((shown, name));
        Ok(())
    }

    /// Writes the series, the map collection and the report, then swaps the
    /// set into place. The maps written must be one per report time of
    /// `results`, or none; the report draws `results.pressure`'s last array.
    pub fn finish(
        mut self,
        case: &Case,
        results: &RunResults,
        meta: &RunMeta,
    ) -> Result<WrittenFiles, OutputError> {
        validate::results(case, results)?;
        let n = results.times.len();
        if let Some((due, _)) = self.two_phase.as_ref().and_then(|two| two.due) {
            return Err(OutputError::Inconsistent(format!(
                "the water saturations of report time {due} never came"
            )));
        }
        if !self.steps.is_empty() && self.steps.len() != n {
            return Err(OutputError::Inconsistent(format!(
                "maps were written for {} of {n} report times",
                self.steps.len()
            )));
        }
        if self.selection == MapSelection::Last {
            if let (Some(&time), Some(pressure)) = (results.times.last(), results.pressure.last()) {
                // Validated: an oil-water run keeps saturations like pressures.
                let saturation = results
                    .oil_water
                    .as_ref()
                    .and_then(|ow| ow.saturation.last())
                    .map(Vec::as_slice);
                self.write_map(n - 1, time, pressure, saturation)?;
            }
        }
        let saturation = self
            .two_phase
            .take()
            .map_or_else(Vec::new, |two| two.keeper.into_snapshots());
        let table = series::SeriesTable::for_case(case, results);
        let title = meta
            .title
            .clone()
            .or_else(|| case.title.clone())
            .filter(|t| !t.trim().is_empty())
            .unwrap_or_else(|| {
                meta.deck
                    .file_name()
                    .map_or("rill run".into(), |n| n.to_string_lossy().into_owned())
            });
        let mut cautions = vec![report::standing_caution(results).to_string()];
        cautions.extend(meta.cautions.iter().cloned());
        cautions.extend(report::derived_cautions(case, results, &table));

        let staging = &mut self.staging;
        staging.file("series.csv", |w| csv::write_csv(&table, w))?;
        staging.file("series.json", |w| {
            json::write_json(w, case, results, meta, &table, &title, &cautions)
        })?;
        let mut relative: Vec<String> = vec!["series.csv".into(), "series.json".into()];
        if let (Some(state), Some(pressure)) = (&meta.last_state, results.pressure.last()) {
            staging.file("last_state.json", |w| {
                last_state::write_header(w, case, results, state)
            })?;
            staging.file("last_state.f64", |w| {
                last_state::write_arrays(w, pressure, state, last_state::last_saturation(results))
            })?;
            relative.push("last_state.json".into());
            relative.push("last_state.f64".into());
        }
        let mut subdirs = Vec::new();
        let has_maps = !self.steps.is_empty();
        if has_maps {
            subdirs.push("maps");
            relative.extend(self.steps.iter().map(|(_, name)| format!("maps/{name}")));
            let steps = &self.steps;
            staging.file("maps/rill.pvd", |w| vtk::write_pvd(w, steps))?;
            relative.push("maps/rill.pvd".into());
        }
        let page = report::Report {
            case,
            results,
            meta,
            table: &table,
            title: &title,
            case_name: case_name(case),
            cautions: &cautions,
            files: &relative,
            saturation: &saturation,
        };
        staging.file("report.html", |w| report::write_report(w, &page))?;

        let target = self.target;
        let (files, notes) = self.staging.publish(&subdirs)?;
        let at = |rel: &str| target.join(rel);
        Ok(WrittenFiles {
            series_csv: at("series.csv"),
            series_json: at("series.json"),
            report_html: at("report.html"),
            pvd: has_maps.then(|| at("maps/rill.pvd")),
            maps: files
                .iter()
                .filter(|p| p.extension().is_some_and(|e| e == "vtr" || e == "vts"))
                .cloned()
                .collect(),
            files,
            notes,
            dir: target,
        })
    }
}

/// The case's name as the result files show it: `None` when the deck gives
/// none (or only blanks).
pub(crate) fn case_name(case: &Case) -> Option<&str> {
    case.name.as_deref().filter(|n| !n.trim().is_empty())
}

/// Writes `matrix.mtx` and `rhs.mtx` (MatrixMarket text from
/// `rill_sim::linear::write_matrix_market`) into `dir`, created if missing.
/// Both are written to temporary files and synced before either is renamed
/// into place. `dir` may not be the deck's own directory or contain the deck.
pub fn write_system(
    dir: &Path,
    deck: &Path,
    matrix_market: &[u8],
    rhs_market: &[u8],
) -> Result<Vec<PathBuf>, OutputError> {
    write_system_with(
        dir,
        deck,
        |w| w.write_all(matrix_market),
        |w| w.write_all(rhs_market),
        None,
    )
}

/// Writes one file of an exported system into the writer it is given.
pub type SystemPart<'a> = Box<dyn FnOnce(&mut dyn Write) -> io::Result<()> + 'a>;

/// [`write_system`] with writers instead of bytes, for systems too large to
/// hold twice in memory. `accumulation`, when given, is written as
/// `accumulation.mtx` beside the other two, in the same atomic step: the
/// accumulation blocks of an oil-water system (what true-IMPES decoupling
/// needs).
pub fn write_system_with(
    dir: &Path,
    deck: &Path,
    matrix: impl FnOnce(&mut dyn Write) -> io::Result<()>,
    rhs: impl FnOnce(&mut dyn Write) -> io::Result<()>,
    accumulation: Option<SystemPart<'_>>,
) -> Result<Vec<PathBuf>, OutputError> {
    let dir = atomic::resolve(dir).map_err(|e| OutputError::Io {
        path: dir.to_path_buf(),
        source: e,
    })?;
    refuse_deck_places(&dir, deck, false)?;
    let mut files: Vec<(&str, atomic::FileWriter<'_>)> =
        vec![("matrix.mtx", Box::new(matrix)), ("rhs.mtx", Box::new(rhs))];
    if let Some(acc) = accumulation {
        files.push(("accumulation.mtx", acc));
    }
    atomic::write_files_atomically(&dir, files)
}

/// Refuses the deck file and the deck's own directory, and with
/// `ancestors` every directory that contains the deck. `path` is resolved.
fn refuse_deck_places(path: &Path, deck: &Path, ancestors: bool) -> Result<(), OutputError> {
    let refused = |reason: String| {
        Err(OutputError::Refused {
            path: path.to_path_buf(),
            reason,
        })
    };
    let deck = atomic::resolve(deck).map_err(|e| OutputError::Io {
        path: deck.to_path_buf(),
        source: e,
    })?;
    if path == deck {
        return refused(format!(
            "it is the deck file itself; the deck is never written. Results go into {} by default",
            default_out_dir(&deck).display()
        ));
    }
    if deck.parent() == Some(path) {
        return refused(format!(
            "it is the deck's own directory, and results are never written beside the deck. Use a directory of \
             their own, such as {} (the default)",
            default_out_dir(&deck).display()
        ));
    }
    if ancestors && deck.starts_with(path) {
        return refused(format!(
            "it contains the deck {}, and writing results replaces the directory as a whole. Use a directory of \
             their own, such as {} (the default)",
            deck.display(),
            default_out_dir(&deck).display()
        ));
    }
    Ok(())
}

/// Resolves `out_dir` and checks that it may be replaced by a result set.
fn check_target(out_dir: &Path, deck: &Path) -> Result<PathBuf, OutputError> {
    let target = atomic::resolve(out_dir).map_err(|e| OutputError::Io {
        path: out_dir.to_path_buf(),
        source: e,
    })?;
    let refused = |reason: &str| {
        Err(OutputError::Refused {
            path: target.clone(),
            reason: reason.to_string(),
        })
    };
    if target.parent().is_none() {
        return refused("it is a filesystem root");
    }
    refuse_deck_places(&target, deck, true)?;
    // `resolve` follows links in existing paths; look at the name as given too.
    if let Ok(meta) = std::fs::symlink_metadata(out_dir) {
        if meta.file_type().is_symlink() {
            return refused("it is a symbolic link; give the real directory (the link itself would be replaced)");
        }
    }
    match std::fs::symlink_metadata(&target) {
        Ok(meta) if meta.is_dir() => {
            let mut entries = std::fs::read_dir(&target).map_err(|e| OutputError::Io {
                path: target.clone(),
                source: e,
            })?;
            let empty = entries.next().is_none();
            if !empty && !target.join(atomic::MARKER).is_file() {
                return refused(&format!(
                    "it holds files that rill did not write (there is no {} marker), and writing results replaces \
                     the directory as a whole. Give a new or empty directory",
                    atomic::MARKER
                ));
            }
        }
        Ok(_) => return refused("it exists and is not a directory"),
        Err(_) => {}
    }
    Ok(target)
}

#[cfg(test)]
mod tests;
