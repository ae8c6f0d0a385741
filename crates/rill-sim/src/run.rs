//! The run driver: options, the observer, errors, and the set-up that turns
//! a checked case into a [`Runner`]; the stages live in the submodules:
//! `controls` (well control state, switching, events), `floating` (cells
//! nothing holds at a pressure level), `report` (the rows at report times),
//! `steady`, `transient` (report times, step sizes, cuts, balance) and
//! `newton` (one backward-Euler step with line search).
//!
//! A distributed run ([`run_distributed`]) is the same code on every
//! process: each holds its slab of the cells ([`crate::Part`]); every sum
//! or maximum over cells, wells, boundaries and aquifers goes through
//! [`Parallel`], so every process sees the same global numbers and takes
//! the same decisions (steps, cuts, switches, errors) in lockstep.

mod controls;
mod floating;
mod guard;
mod newton;
pub(crate) mod pace;
mod parallel;
mod reduce;
mod report;
mod steady;
pub(crate) mod transient;

use std::fmt;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

use rayon::prelude::*;
use rill_model::derived;
use rill_model::{Case, Initial, RunKind};

use crate::disc::{assemble, Assembly, Ctx, Disc, WellDrive};
use crate::linear::{self, CsrMatrix, SolverOptions};
use crate::pvt::Pvt;
use crate::results::*;
pub use parallel::{Parallel, PartSolve, PartSystem};
pub(crate) use report::empty_results as empty_results_for;

/// Newton's stopping test and safeguards.
#[derive(Debug, Clone, PartialEq)]
pub struct NewtonOptions {
    /// Iterations before the step is cut.
    pub max_iterations: usize,
    /// Converged when every cell has `|R_i| / (PV_i / B_i) <= mass_tolerance`
    /// (the residual is the surface volume unaccounted for over the step; the
    /// denominator also gets `dt * sum(T) / (mu B_ref) * 1 Pa`, a floor that
    /// only matters in cells with a tiny pore volume) ...
    pub mass_tolerance: f64,
    /// ... every rate-controlled well misses its rate by at most
    /// `well_tolerance` relative ...
    pub well_tolerance: f64,
    /// ... and the last update moved no pressure by more than this, Pa.
    pub pressure_tolerance: f64,
    /// Halvings of a Newton update while the scaled residual grows.
    pub line_search_cuts: usize,
    /// Control switches (rate <-> BHP limit) allowed per well in one step;
    /// past that the control stays as it is for the rest of the step.
    pub max_switches: usize,
    /// Switches after which a well on its BHP limit goes back to its rate
    /// target only when the limit would deliver more than the target by
    /// the relative `settle_margin` (hysteresis). Near the boundary between
    /// the two controls (a target close to what the limit delivers) the
    /// Newton iterates can carry a well back and forth; each switch costs an
    /// iteration, and several wells doing so use up Newton and cut the
    /// step. Within the margin the well settles on its limit for the rest
    /// of the step: the limit, a hard constraint, is honoured and the rate
    /// exceeds the target by less than the margin; the next step tests the
    /// well afresh. Going to the limit is never restricted.
    pub settle_after_switches: usize,
    /// The hysteresis band of `settle_after_switches`, relative to the target.
    pub settle_margin: f64,
}

impl Default for NewtonOptions {
    fn default() -> Self {
        NewtonOptions {
            max_iterations: 15,
            mass_tolerance: 1e-9,
            well_tolerance: 1e-9,
            pressure_tolerance: 0.1,
            line_search_cuts: 4,
            max_switches: 4,
            settle_after_switches: 2,
            settle_margin: 1e-3,
        }
    }
}

/// How a run is solved: linear solver, Newton, step cuts, what is kept.
#[derive(Debug, Clone, PartialEq)]
pub struct RunOptions {
    /// Linear solver; `Method::Auto` picks direct for small systems and AMG
    /// (CG when the system is symmetric, BiCGStab otherwise) for large ones.
    pub linear: SolverOptions,
    /// Newton's stopping test and safeguards.
    pub newton: NewtonOptions,
    /// Consecutive halvings of one time step before the run gives up.
    pub max_step_cuts: usize,
    /// Which report times keep their cell pressures in
    /// `RunResults::pressure`. Every report time's pressures also go to
    /// [`Observer::report_time`], so a caller that writes them as they
    /// come keeps only the last ([`KeepPressures::Last`]) and its memory
    /// does not grow with the number of report times.
    pub keep_pressures: KeepPressures,
}

/// Which report times keep their cell pressures in `RunResults::pressure`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KeepPressures {
    /// One array per report time.
    Every,
    /// The last report time's array only (what the report's maps draw).
    Last,
}

impl Default for RunOptions {
    fn default() -> Self {
        RunOptions {
            linear: SolverOptions::default(),
            newton: NewtonOptions::default(),
            max_step_cuts: 12,
            keep_pressures: KeepPressures::Every,
        }
    }
}

/// Where a run is, after each accepted step (steady runs: once).
#[derive(Debug, Clone, PartialEq)]
pub struct Progress {
    /// Time reached, s.
    pub time: f64,
    /// End time, s.
    pub end: f64,
    /// Length of the step just taken, s.
    pub step_size: f64,
    /// Number of accepted steps so far.
    pub step: usize,
    /// Newton iterations of this step (cut attempts included).
    pub newton_iterations: usize,
    /// Linear iterations of this step.
    pub linear_iterations: usize,
}

/// Watches a run: progress, cancellation, and the first linear system.
pub trait Observer {
    /// After each accepted step (steady runs: once).
    fn progress(&mut self, _p: &Progress) {}
    /// Polled before each step and each Newton iteration.
    fn cancelled(&self) -> bool {
        false
    }
    /// The first linear system solved, once per run. For a steady run it is
    /// the pressure system `A p = b` itself; for a transient run, the first
    /// Newton system `J dx = -R`. Unknowns: active cells in grid order, then
    /// one BHP per well.
    fn first_system(&mut self, _matrix: &CsrMatrix, _rhs: &[f64]) {}
    /// Oil-water runs, in place of [`Observer::first_system`] (which it
    /// calls unless overridden): the first Newton system, two unknowns a
    /// block row (oil pressure, water saturation; a well's BHP and a held
    /// zero), with the accumulation blocks the engine's true-IMPES
    /// decoupling uses (one 2 x 2 row-major block a block row).
    fn first_coupled_system(&mut self, matrix: &CsrMatrix, rhs: &[f64], _accumulation: &[f64]) {
        self.first_system(matrix, rhs);
    }
    /// Where the time went, once at the end of a successful run.
    fn timings(&mut self, _t: &Timings) {}
    /// At each report time (t = 0 first), after its series values are
    /// recorded: the time, s, and the cell pressures, Pa, one per grid cell
    /// in grid order (NaN in inactive cells).
    fn report_time(&mut self, _time: f64, _pressure: &[f64]) {}
    /// Oil-water runs, at each report time right after
    /// [`Observer::report_time`] (which then gives the oil pressures): the
    /// cell water saturations, one per grid cell in grid order (NaN in
    /// inactive cells).
    fn report_saturation(&mut self, _time: f64, _water_saturation: &[f64]) {}
}

/// An observer that watches nothing.
pub struct NoObserver;
impl Observer for NoObserver {}

/// Why a run stopped without results.
#[derive(Debug, Clone, PartialEq)]
pub enum RunError {
    /// The observer asked to stop.
    Cancelled {
        /// Time reached, s.
        time: f64,
    },
    /// A step failed after `cuts` halvings.
    StepFailed {
        /// The step that failed, counting from 1.
        step: usize,
        /// Time at the start of the step, s.
        time: f64,
        /// Length of the last attempt, s (0 in a steady run).
        step_size: f64,
        /// Halvings before the run gave up.
        cuts: usize,
        /// What went wrong in the last attempt.
        reason: String,
    },
    /// An accepted step left a state no liquid can have: a cell pressure
    /// not positive or not finite, or a bottom-hole pressure not finite.
    Unphysical {
        /// The step, counting from 1.
        step: usize,
        /// Time at the end of the step, s.
        time: f64,
        /// The cell or well, the value and the likely cause.
        reason: String,
    },
    /// A step failed at the shortest length a cut may leave
    /// (`timeline.min_step`).
    StepTooShort {
        /// The step that failed, counting from 1.
        step: usize,
        /// Time at the start of the step, s.
        time: f64,
        /// Length of the last attempt, s.
        step_size: f64,
        /// `timeline.min_step`, s.
        min_step: f64,
        /// What went wrong in the last attempt.
        reason: String,
    },
    /// The run used `timeline.max_steps` steps before its end, or the pace
    /// of its last steps projects far more (see `run::pace`).
    TooManySteps {
        /// Steps taken.
        steps: usize,
        /// Time reached, s.
        time: f64,
        /// End of the run, s.
        end: f64,
        /// `timeline.max_steps`.
        max_steps: usize,
        /// Steps the whole run would take at the pace of its last steps,
        /// once measured.
        projected: Option<u64>,
    },
    /// The case cannot be run as it stands (e.g. a steady run with nothing
    /// that fixes the pressure level).
    Setup(String),
}

impl fmt::Display for RunError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        const DAY: f64 = 86400.0;
        match self {
            RunError::Cancelled { time } => write!(f, "run cancelled at t = {} day", fmt_g(time / DAY)),
            RunError::StepFailed { step, time, step_size, cuts, reason } => write!(
                f,
                "step {step} failed at t = {} day (last step size {} day) after {cuts} cuts: {reason}",
                fmt_g(time / DAY),
                fmt_g(step_size / DAY)
            ),
            RunError::Unphysical { step, time, reason } => write!(
                f,
                "step {step} ended at t = {} day with an impossible state, so the run stopped: {reason}",
                fmt_g(time / DAY)
            ),
            RunError::StepTooShort { step, time, step_size, min_step, reason } => write!(
                f,
                "step {step} failed at t = {} day with a step of {} s, the shortest allowed (`min_step` = {} s): {reason}; the case is likely too hard to solve as written (check the units of viscosity, permeability and compressibility, and well rates the rock can deliver), or lower `min_step`",
                fmt_g(time / DAY),
                fmt_g(*step_size),
                fmt_g(*min_step)
            ),
            RunError::TooManySteps { steps, time, end, max_steps, projected } => {
                write!(
                    f,
                    "the run stopped after {steps} steps at t = {} day of {} day",
                    fmt_g(time / DAY),
                    fmt_g(end / DAY)
                )?;
                match projected {
                    Some(p) if *steps < *max_steps => write!(
                        f,
                        ": at the pace of its last steps it would need about {p} steps, far above `max_steps` = {max_steps}"
                    )?,
                    Some(p) => write!(f, ", its `max_steps`; at the pace of its last steps it would need about {p}")?,
                    None => write!(f, ", its `max_steps`")?,
                }
                write!(f, "; steps this short point to a case that is hard to solve as written (check the units of viscosity, permeability and compressibility), or raise `max_step` or `max_steps`")
            }
            RunError::Setup(msg) => write!(f, "cannot run this case: {msg}"),
        }
    }
}

impl std::error::Error for RunError {}

fn fmt_g(v: f64) -> String {
    if v != 0.0 && (v.abs() < 1e-3 || v.abs() >= 1e6) {
        format!("{v:.4e}")
    } else {
        format!("{}", (v * 1e6).round() / 1e6)
    }
}

/// The run's fixed data and its counters; the stages are methods on it.
struct Runner<'a> {
    case: &'a Case,
    opts: &'a RunOptions,
    d: Disc,
    pvt: Pvt,
    /// Pressure at each boundary face, Pa.
    bface_p: Vec<f64>,
    /// Aquifer pressures at the start of the current step.
    aq_old: Vec<f64>,
    /// Cells held at their initial pressure (empty: none); see `floating`.
    pinned: Vec<bool>,
    /// Weight of the equation that holds a pinned cell, per second of step.
    pin_scale: f64,
    /// Reference mobility `1 / (mu B_ref)`.
    lam_ref: f64,
    solver: linear::Solver,
    /// The other processes of a distributed run (`None`: serial).
    par: Option<&'a dyn Parallel>,
    first_system_sent: bool,
    stats: SolverStats,
    last_method: &'static str,
    timings: Timings,
    /// Nanoseconds spent in assembly.
    assembly_nanos: AtomicU64,
}

impl<'a> Runner<'a> {
    /// The fluid for the run (incompressible in a steady run), the boundary
    /// pressures and the scales of the held cells.
    fn new(
        case: &'a Case,
        options: &'a RunOptions,
        d: Disc,
        par: Option<&'a dyn Parallel>,
    ) -> Runner<'a> {
        let steady = case.timeline.kind == RunKind::Steady;
        let full = Pvt::new(&case.fluid, &case.rock);
        let pvt = if steady { full.incompressible() } else { full };
        let lam_ref = 1.0 / (pvt.mu * pvt.b_ref);

        // Boundary pressure at each boundary face, on the same hydrostat as the
        // initial state (of the incompressible fluid in a steady run).
        let fluid = if steady {
            rill_model::Fluid {
                compressibility: 0.0,
                ..case.fluid.clone()
            }
        } else {
            case.fluid.clone()
        };
        let bface_p: Vec<f64> = d
            .bfaces
            .iter()
            .map(|f| {
                let b = &case.boundaries[f.boundary];
                match b.datum {
                    Some(datum) => {
                        derived::hydrostatic_pressure(&fluid, b.pressure, datum, f.face_depth)
                    }
                    None => b.pressure,
                }
            })
            .collect();
        let t_typ = {
            let mut s = [d.t_sum[d.owned.clone()].par_iter().sum::<f64>()];
            if let Some(p) = par {
                p.sum(&mut s);
            }
            if s[0] > 0.0 {
                s[0] / d.n_global_cells as f64
            } else {
                1e-12
            }
        };
        Runner {
            case,
            opts: options,
            pinned: Vec::new(),
            pin_scale: t_typ * lam_ref,
            lam_ref,
            bface_p,
            aq_old: d.aquifers.iter().map(|g| g.p_init).collect(),
            pvt,
            solver: linear::Solver::new(options.linear.clone()),
            par,
            first_system_sent: false,
            stats: SolverStats::default(),
            last_method: "none",
            timings: Timings::default(),
            assembly_nanos: AtomicU64::new(0),
            d,
        }
    }
}

/// Initial state: the exact hydrostat of the (compressible) fluid, as the
/// checker computes it, or the given cell pressures; BHPs are set later.
fn initial_state(case: &Case, d: &Disc) -> Vec<f64> {
    let mut x = vec![0.0; d.n()];
    match &case.initial {
        Initial::Datum { pressure, depth } => {
            x[..d.n_cells]
                .par_iter_mut()
                .zip(&d.depth)
                .for_each(|(p, &z)| {
                    *p = derived::hydrostatic_pressure(&case.fluid, *pressure, *depth, z)
                });
        }
        Initial::Cells(values) => {
            for (i, &c) in d.cell_of.iter().enumerate() {
                x[i] = values[c];
            }
        }
    }
    let first = d.n_cells + d.n_wells;
    for (a, g) in d.aquifers.iter().enumerate() {
        x[first + a] = g.p_init;
    }
    x
}

/// Why an oil-water case does not run in a distributed run: the
/// distributed engine is single-phase.
pub const NO_DISTRIBUTED_OIL_WATER: &str = "the distributed engine runs single-phase decks only (the deck has `oil` and `water` blocks); run this deck with the embedded engine (`--engine embedded`, the default)";

/// Runs a checked case.
///
/// Transient runs: fully implicit backward Euler in surface volume, Newton
/// with line search, step cuts on failure. Steady runs: the incompressible
/// pressure equation (no accumulation; `B`, `rho` at their reference values),
/// solved once (again only if a well switches control), reported at
/// `timeline.end`.
pub fn run(
    case: &Case,
    options: &RunOptions,
    observer: &mut dyn Observer,
) -> Result<RunResults, RunError> {
    run_on(case, options, observer, None)
}

/// Runs a checked case as one process of a distributed run: call it on
/// every process with the same case and options. Each process holds its
/// slab of the cells; rank 0's results are the run's (the others' hold the
/// same series and no cell pressures), and only rank 0's observer hears of
/// report times. Errors are the same on every process.
pub fn run_distributed(
    case: &Case,
    options: &RunOptions,
    observer: &mut dyn Observer,
    par: &dyn Parallel,
) -> Result<RunResults, RunError> {
    run_on(case, options, observer, Some(par))
}

fn run_on(
    case: &Case,
    options: &RunOptions,
    observer: &mut dyn Observer,
    par: Option<&dyn Parallel>,
) -> Result<RunResults, RunError> {
    let start = Instant::now();
    let part = par.map_or(crate::disc::Part::SERIAL, |p| crate::disc::Part {
        rank: p.rank(),
        size: p.size(),
    });
    if case.oil_water.is_some() {
        if par.is_some() {
            return Err(RunError::Setup(NO_DISTRIBUTED_OIL_WATER.into()));
        }
        return crate::oilwater::run(case, options, observer);
    }
    let d = Disc::new_part(case, part);
    let setup_seconds = start.elapsed().as_secs_f64();
    check_runnable(case, &d)?;
    let steady = case.timeline.kind == RunKind::Steady;
    let mut x = initial_state(case, &d);
    let mut wells = controls::initial_wells(case);
    let mut r = Runner::new(case, options, d, par);
    let compressible = r.pvt.c_f + r.pvt.c_r > 0.0;
    if !compressible {
        r.pinned = r.floating_cells(&wells)?;
    }

    // Events at t = 0 apply before anything is reported.
    let events = &case.timeline.events;
    let mut next_event = 0;
    if !steady {
        while next_event < events.len() && events[next_event].time <= 0.0 {
            r.apply_event(&mut wells, &events[next_event]);
            next_event += 1;
        }
    }
    r.guess_bhps(&mut x, &wells);

    let mut results = report::empty_results(case);
    let t_max = r.max_over_owned(&r.d.t_sum);
    results.flow_per_pascal = r.pvt.b(r.pvt.p_f).0 / r.pvt.mu * t_max;
    if steady {
        r.run_steady(&mut x, &mut wells, &mut results, observer)?;
    } else {
        r.run_transient(&mut x, &mut wells, next_event, &mut results, observer)?;
    }
    r.stats.linear_solver = r.last_method.to_string();
    r.stats.wall_seconds = start.elapsed().as_secs_f64();
    r.timings.assembly = r.assembly_nanos.load(Ordering::Relaxed) as f64 * 1e-9;
    r.timings.setup = setup_seconds;
    r.timings.total = r.stats.wall_seconds;
    observer.timings(&r.timings);
    results.stats = r.stats;
    Ok(results)
}

/// Refuses a discretisation no engine can run: no active cell, or a rate
/// well whose completions all have a zero well index (its rate cannot be
/// delivered, and its BHP would be undetermined).
pub(crate) fn check_runnable(case: &Case, d: &Disc) -> Result<(), RunError> {
    if d.n_global_cells == 0 {
        return Err(RunError::Setup(
            "the grid has no active cell (porosity 0 everywhere)".into(),
        ));
    }
    if let Some(w) = case
        .wells
        .iter()
        .zip(&d.wells)
        .find(|(w, g)| w.control.surface_rate().is_some() && g.wi_sum <= 0.0)
    {
        return Err(RunError::Setup(format!(
            "well \"{}\" is on a rate control but every completion has a zero well index (well.productivity): its rate cannot be delivered",
            w.0.name
        )));
    }
    Ok(())
}

/// The scaled residual of an assembly (see [`NewtonOptions`]).
#[derive(Debug, Clone, Copy)]
struct Residual {
    /// Largest scaled cell residual.
    cells: f64,
    /// Largest scaled residual of a rate-controlled well.
    wells: f64,
    /// 2-norm of all scaled residuals, the line search's merit.
    merit: f64,
}

impl Runner<'_> {
    /// [`assemble`] with the run's context, timed.
    fn assemble_at(
        &self,
        dt: f64,
        mass_old: Option<&[f64]>,
        drive: &[WellDrive],
        x: &[f64],
        out: &mut Assembly,
    ) {
        let t0 = Instant::now();
        assemble(&self.d, &self.ctx(dt, mass_old, drive), x, out);
        self.reduce_assembly(out);
        self.assembly_nanos
            .fetch_add(t0.elapsed().as_nanos() as u64, Ordering::Relaxed);
    }

    fn ctx<'b>(&'b self, dt: f64, mass_old: Option<&'b [f64]>, drive: &'b [WellDrive]) -> Ctx<'b> {
        Ctx {
            pvt: &self.pvt,
            dt,
            mass_old,
            drive,
            bface_p: &self.bface_p,
            pinned: &self.pinned,
            pin_scale: self.pin_scale * dt,
            aquifer_old: mass_old.map(|_| self.aq_old.as_slice()),
        }
    }

    /// Scaled residual of an assembly; NaN counts as infinite.
    fn measure(&self, a: &Assembly, dt: f64, drive: &[WellDrive]) -> Residual {
        let d = &self.d;
        let nc = d.n_cells;
        let floor = dt * self.lam_ref; // per m^3 of transmissibility, 1 Pa
        let (mx, ss) = d
            .owned
            .clone()
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let den = a.mass[i] + floor * d.t_sum[i];
                let v = if den > 0.0 {
                    a.resid[i].abs() / den
                } else {
                    0.0
                };
                (v, v * v)
            })
            .reduce(|| (0.0, 0.0), |p, q| (p.0.max(q.0), p.1 + q.1));
        let (mx, ss) = (self.max1(mx), self.sum1(ss));
        let mut mw = 0.0f64;
        let mut sw = 0.0;
        for (w, dr) in drive.iter().enumerate() {
            if dr.bhp {
                continue;
            }
            let den = dt * dr.rate.abs().max(self.lam_ref * d.wells[w].wi_sum);
            let v = if den > 0.0 {
                a.resid[nc + w].abs() / den
            } else {
                0.0
            };
            mw = mw.max(v);
            sw += v * v;
        }
        // Aquifer rows: volume mismatch over the water volume (with the
        // cells' floor), checked with the cells' mass tolerance.
        let (mut mx, mut ss) = (mx, ss);
        for (k, g) in d.aquifers.iter().enumerate() {
            let v = a.resid[nc + d.n_wells + k].abs() / (g.water_volume + dt * g.j_total);
            mx = mx.max(v);
            ss += v * v;
        }
        let merit = (ss + sw).sqrt();
        Residual {
            cells: if mx.is_nan() || ss.is_nan() {
                f64::INFINITY
            } else {
                mx
            },
            wells: mw,
            merit: if merit.is_nan() { f64::INFINITY } else { merit },
        }
    }

    fn solve_linear(
        &mut self,
        a: &CsrMatrix,
        rhs: &[f64],
        sol: &mut [f64],
        observer: &mut dyn Observer,
    ) -> Result<usize, String> {
        if let Some(par) = self.par {
            let d = &self.d;
            let system = PartSystem {
                matrix: a,
                rhs,
                n_cells: d.n_cells,
                first_global: d.first_global,
                owned: d.owned.clone(),
                n_global_cells: d.n_global_cells,
                rel_tol: self.opts.linear.rel_tol,
                max_iter: self.opts.linear.max_iter,
            };
            let st = par.solve(&system, sol)?;
            self.last_method = st.method;
            self.stats.linear_iterations += st.iterations;
            self.timings.linear_setup += st.setup_seconds;
            self.timings.linear_solve += st.solve_seconds;
            return Ok(st.iterations);
        }
        if !self.first_system_sent {
            self.first_system_sent = true;
            observer.first_system(a, rhs);
        }
        match self.solver.solve(a, rhs, sol) {
            Ok(st) => {
                self.last_method = st.method;
                self.stats.linear_iterations += st.iterations;
                self.timings.linear_setup += st.setup_seconds;
                self.timings.linear_solve += st.solve_seconds;
                Ok(st.iterations)
            }
            Err(e) => Err(format!("linear solve failed: {e}")),
        }
    }

    /// Surface volume in place per cell at `x` (0 in held cells).
    fn mass_into(&self, x: &[f64], mass: &mut [f64]) {
        let (pinned, pvt, pv_ref) = (&self.pinned, &self.pvt, &self.d.pv_ref);
        mass.par_iter_mut()
            .enumerate()
            .with_min_len(4096)
            .for_each(|(i, m)| {
                *m = if !pinned.is_empty() && pinned[i] {
                    0.0
                } else {
                    pvt.mass_factor(x[i]).0 * pv_ref[i]
                };
            });
    }
}
