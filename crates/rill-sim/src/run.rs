//! The run driver: initial state, well controls, Newton, time stepping,
//! balance checks and the results at report times.

use std::fmt;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::Instant;

use rayon::prelude::*;
use rill_model::derived;
use rill_model::{Case, Control, Initial, Role, RunKind};

use crate::disc::{assemble, completion_rate, flows, Assembly, Ctx, Disc, WellDrive};
use crate::linear::{self, CsrMatrix, SolverOptions};
use crate::pvt::Pvt;
use crate::results::*;

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
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct RunOptions {
    /// Linear solver; `Method::Auto` picks direct for small systems and AMG
    /// (CG when the system is symmetric, BiCGStab otherwise) for large ones.
    pub linear: SolverOptions,
    pub newton: NewtonOptions,
    /// Consecutive halvings of one time step before the run gives up.
    pub max_step_cuts: usize,
    /// Keep the cell pressures at every report time (`RunResults::pressure`).
    pub keep_pressures: bool,
}

impl Default for RunOptions {
    fn default() -> Self {
        RunOptions {
            linear: SolverOptions::default(),
            newton: NewtonOptions::default(),
            max_step_cuts: 12,
            keep_pressures: true,
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
    /// Where the time went, once at the end of a successful run.
    fn timings(&mut self, _t: &Timings) {}
}

/// An observer that watches nothing.
pub struct NoObserver;
impl Observer for NoObserver {}

#[derive(Debug, Clone, PartialEq)]
pub enum RunError {
    /// The observer asked to stop.
    Cancelled { time: f64 },
    /// A step failed after `cuts` halvings.
    StepFailed {
        step: usize,
        time: f64,
        step_size: f64,
        cuts: usize,
        reason: String,
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

/// Control state of one well.
#[derive(Debug, Clone)]
struct WellState {
    control: Control,
    limit: Option<f64>,
    mode: ControlMode,
    /// +1 producer, -1 injector.
    sign: f64,
    switches: usize,
}

impl WellState {
    fn drive(&self) -> WellDrive {
        match (self.mode, self.control) {
            (ControlMode::Rate, Control::Rate(q)) => WellDrive {
                bhp: false,
                rate: self.sign * q,
            },
            _ => WellDrive {
                bhp: true,
                rate: 0.0,
            },
        }
    }
    /// The BHP held when the well is on BHP control.
    fn bhp_target(&self) -> Option<f64> {
        match (self.mode, self.control) {
            (ControlMode::Bhp, Control::Bhp(p)) => Some(p),
            (ControlMode::Bhp, Control::Rate(_)) => self.limit,
            _ => None,
        }
    }
}

/// Mutable state of the run that a failed step must be able to undo.
#[derive(Clone)]
struct Snapshot {
    x: Vec<f64>,
    wells: Vec<WellState>,
}

struct Runner<'a> {
    case: &'a Case,
    opts: &'a RunOptions,
    d: Disc,
    pvt: Pvt,
    bface_p: Vec<f64>,
    pinned: Vec<bool>,
    pin_scale: f64,
    lam_ref: f64,
    solver: linear::Solver,
    first_system_sent: bool,
    stats: SolverStats,
    last_method: &'static str,
    timings: Timings,
    /// Nanoseconds spent in assembly.
    assembly_nanos: AtomicU64,
}

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
    let start = Instant::now();
    let d = Disc::new(case);
    let setup_seconds = start.elapsed().as_secs_f64();
    if d.n_cells == 0 {
        return Err(RunError::Setup(
            "the grid has no active cell (porosity 0 everywhere)".into(),
        ));
    }
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

    // Initial state: the exact hydrostat of the (compressible) fluid, as the checker computes it.
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

    let mut wells: Vec<WellState> = case
        .wells
        .iter()
        .map(|w| WellState {
            control: w.control,
            limit: w.bhp_limit,
            mode: match w.control {
                Control::Rate(_) => ControlMode::Rate,
                Control::Bhp(_) => ControlMode::Bhp,
            },
            sign: if w.role == Role::Producer { 1.0 } else { -1.0 },
            switches: 0,
        })
        .collect();

    let t_typ = {
        let s: f64 = d.t_sum.par_iter().sum();
        if s > 0.0 {
            s / d.n_cells as f64
        } else {
            1e-12
        }
    };
    let mut r = Runner {
        case,
        opts: options,
        pinned: Vec::new(),
        pin_scale: t_typ * lam_ref,
        lam_ref,
        bface_p,
        pvt,
        solver: linear::Solver::new(options.linear.clone()),
        first_system_sent: false,
        stats: SolverStats::default(),
        last_method: "none",
        timings: Timings::default(),
        assembly_nanos: AtomicU64::new(0),
        d,
    };
    let compressible = pvt.c_f + pvt.c_r > 0.0;
    if !compressible {
        r.pinned = r.floating_cells(&wells)?;
    }

    // Events at t = 0 apply before anything is reported.
    let events = &case.timeline.events;
    let mut next_event = 0;
    if !steady {
        while next_event < events.len() && events[next_event].time <= 0.0 {
            apply_event(&mut wells, &events[next_event]);
            next_event += 1;
        }
    }
    // First guess of each BHP.
    for w in 0..r.d.n_wells {
        x[r.d.n_cells + w] = match wells[w].bhp_target() {
            Some(p) => p,
            None => {
                r.shut_in_bhp(&x, w)
                    - wells[w].drive().rate / (r.lam_ref * r.d.wells[w].wi_sum.max(1e-300))
            }
        };
    }

    let mut results = RunResults {
        times: Vec::new(),
        pressure_avg: Vec::new(),
        wells: case
            .wells
            .iter()
            .map(|w| WellSeries {
                name: w.name.clone(),
                bhp: Vec::new(),
                rate: Vec::new(),
                cumulative: Vec::new(),
                mode: Vec::new(),
            })
            .collect(),
        boundaries: case
            .boundaries
            .iter()
            .map(|b| BoundarySeries {
                name: b.name.clone(),
                rate: Vec::new(),
                cumulative: Vec::new(),
            })
            .collect(),
        balance_error: Vec::new(),
        pressure: Vec::new(),
        stats: SolverStats::default(),
    };

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

fn apply_event(wells: &mut [WellState], ev: &rill_model::Event) {
    for ch in &ev.changes {
        let Some(st) = wells.get_mut(ch.well) else {
            continue;
        };
        if let Some(c) = ch.control {
            st.control = c;
            st.mode = match c {
                Control::Rate(_) => ControlMode::Rate,
                Control::Bhp(_) => ControlMode::Bhp,
            };
        }
        if let Some(l) = ch.bhp_limit {
            st.limit = Some(l);
        }
    }
}

/// What one report needs beyond the unknowns.
struct ReportRow<'a> {
    time: f64,
    well_rate: &'a [f64],
    well_cum: &'a [f64],
    bnd_rate: &'a [f64],
    bnd_cum: &'a [f64],
    balance: f64,
}

impl Runner<'_> {
    /// Cells that nothing can hold at a pressure level when there is no
    /// accumulation: connected regions with no boundary face and no BHP
    /// well. They keep their initial pressure. A region like that with a
    /// rate-controlled well has no solution.
    fn floating_cells(&self, wells: &[WellState]) -> Result<Vec<bool>, RunError> {
        let d = &self.d;
        let nc = d.n_cells;
        let mut parent: Vec<usize> = (0..nc).collect();
        fn find(p: &mut [usize], mut i: usize) -> usize {
            while p[i] != i {
                p[i] = p[p[i]];
                i = p[i];
            }
            i
        }
        let union = |p: &mut Vec<usize>, a: usize, b: usize| {
            let (ra, rb) = (find(p, a), find(p, b));
            if ra != rb {
                p[ra.max(rb)] = ra.min(rb);
            }
        };
        for i in 0..nc {
            for k in d.row_ptr[i]..d.row_ptr[i + 1] {
                let j = d.col_idx[k];
                if j < nc && j > i {
                    union(&mut parent, i, j);
                }
            }
        }
        for wg in &d.wells {
            for cp in wg.comps.iter().skip(1) {
                union(&mut parent, wg.comps[0].cell, cp.cell);
            }
        }
        let mut anchored = vec![false; nc];
        for f in &d.bfaces {
            let root = find(&mut parent, f.cell);
            anchored[root] = true;
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Bhp(_)) {
                let root = find(&mut parent, wg.comps[0].cell);
                anchored[root] = true;
            }
        }
        for (w, wg) in d.wells.iter().enumerate() {
            if wg.wi_sum > 0.0 && matches!(wells[w].control, Control::Rate(_)) {
                let root = find(&mut parent, wg.comps[0].cell);
                if !anchored[root] {
                    return Err(RunError::Setup(format!(
                        "well \"{}\" is on rate control in a region with no boundary and no BHP-controlled well; \
                         without compressibility (or in a steady run) no pressure level exists there",
                        self.case.wells[w].name
                    )));
                }
            }
        }
        let mut pinned = vec![false; nc];
        let mut any = false;
        for (i, p) in pinned.iter_mut().enumerate() {
            let root = find(&mut parent, i);
            if !anchored[root] {
                *p = true;
                any = true;
            }
        }
        Ok(if any { pinned } else { Vec::new() })
    }

    /// The BHP at which well `w` would not flow, given the cell pressures.
    fn shut_in_bhp(&self, x: &[f64], w: usize) -> f64 {
        let wg = &self.d.wells[w];
        if wg.comps.is_empty() || wg.wi_sum <= 0.0 {
            return wg.comps.first().map_or(0.0, |c| x[c.cell]);
        }
        let mut pw = x[wg.comps[0].cell]
            - self.pvt.rho(x[wg.comps[0].cell]).0 * derived::GRAVITY * wg.comps[0].dd;
        for _ in 0..20 {
            let (mut q, mut dq) = (0.0, 0.0);
            for cp in &wg.comps {
                let (qc, _, dqw) = completion_rate(&self.pvt, cp, x[cp.cell], pw);
                q += qc;
                dq += dqw;
            }
            if dq == 0.0 {
                break;
            }
            let step = q / dq;
            pw -= step;
            if step.abs() <= 1e-9 * pw.abs() {
                break;
            }
        }
        pw
    }

    /// Applies control switching at `x` and holds BHP-controlled wells at
    /// their targets. Returns true when a control changed.
    ///
    /// A rate-controlled well goes to BHP control when its BHP is past the
    /// limit (producer: below, injector: above); a well held at its limit goes
    /// back to rate control when the limit would deliver more than the
    /// target rate. Checked before each step and after every Newton update.
    fn update_controls(&self, wells: &mut [WellState], x: &mut [f64]) -> bool {
        let nc = self.d.n_cells;
        let max_sw = self.opts.newton.max_switches;
        let mut switched = false;
        for (w, st) in wells.iter_mut().enumerate() {
            let xw = nc + w;
            match st.control {
                Control::Bhp(p) => {
                    st.mode = ControlMode::Bhp;
                    x[xw] = p;
                }
                Control::Rate(q) => match (st.mode, st.limit) {
                    (ControlMode::Rate, Some(lim)) => {
                        if st.sign * (lim - x[xw]) > 0.0
                            && st.switches < max_sw
                            && self.d.wells[w].wi_sum > 0.0
                        {
                            st.mode = ControlMode::Bhp;
                            st.switches += 1;
                            x[xw] = lim;
                            switched = true;
                        }
                    }
                    (ControlMode::Rate, None) => {}
                    (ControlMode::Bhp, None) => {
                        st.mode = ControlMode::Rate;
                        switched = true;
                    }
                    (ControlMode::Bhp, Some(lim)) => {
                        x[xw] = lim;
                        let qa: f64 = self.d.wells[w]
                            .comps
                            .iter()
                            .map(|cp| completion_rate(&self.pvt, cp, x[cp.cell], lim).0)
                            .sum();
                        if st.sign * qa > q && st.switches < max_sw {
                            st.mode = ControlMode::Rate;
                            st.switches += 1;
                            switched = true;
                        }
                    }
                },
            }
        }
        switched
    }

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
        }
    }

    /// Scaled residual: (max over cells, max over rate wells, 2-norm of all).
    fn measure(&self, a: &Assembly, dt: f64, drive: &[WellDrive]) -> (f64, f64, f64) {
        let d = &self.d;
        let nc = d.n_cells;
        let floor = dt * self.lam_ref; // per m^3 of transmissibility, 1 Pa
        let (mx, ss) = (0..nc)
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
        let merit = (ss + sw).sqrt();
        (
            if mx.is_nan() || ss.is_nan() {
                f64::INFINITY
            } else {
                mx
            },
            mw,
            if merit.is_nan() { f64::INFINITY } else { merit },
        )
    }

    fn solve_linear(
        &mut self,
        a: &CsrMatrix,
        rhs: &[f64],
        sol: &mut [f64],
        observer: &mut dyn Observer,
    ) -> Result<usize, String> {
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

    fn record(&self, res: &mut RunResults, x: &[f64], wells: &[WellState], row: ReportRow) {
        let d = &self.d;
        let nc = d.n_cells;
        let (spv, spvp) = (0..nc)
            .into_par_iter()
            .with_min_len(4096)
            .map(|i| {
                let pv = d.pv_ref[i] * self.pvt.pore_factor(x[i]);
                (pv, pv * x[i])
            })
            .reduce(|| (0.0, 0.0), |p, q| (p.0 + q.0, p.1 + q.1));
        res.times.push(row.time);
        res.pressure_avg.push(if spv > 0.0 {
            spvp / spv
        } else {
            x[..nc].iter().sum::<f64>() / nc as f64
        });
        for (w, s) in res.wells.iter_mut().enumerate() {
            s.bhp.push(x[nc + w]);
            s.rate.push(row.well_rate[w]);
            s.cumulative.push(row.well_cum[w]);
            s.mode.push(wells[w].mode);
        }
        for (b, s) in res.boundaries.iter_mut().enumerate() {
            s.rate.push(row.bnd_rate[b]);
            s.cumulative.push(row.bnd_cum[b]);
        }
        res.balance_error.push(row.balance);
        if self.opts.keep_pressures {
            let mut p = vec![f64::NAN; self.case.grid.cell_count()];
            for (i, &c) in d.cell_of.iter().enumerate() {
                p[c] = x[i];
            }
            res.pressure.push(p);
        }
    }

    fn run_steady(
        &mut self,
        x: &mut Vec<f64>,
        wells: &mut [WellState],
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Result<(), RunError> {
        let end = self.case.timeline.end;
        let fail = |reason: String, cuts| RunError::StepFailed {
            step: 1,
            time: end,
            step_size: 0.0,
            cuts,
            reason,
        };
        let mut asm = Assembly::new(&self.d, self.case.boundaries.len());
        let n = self.d.n();
        let mut rhs = vec![0.0; n];
        let mut rounds = 0;
        self.update_controls(wells, x);
        loop {
            if observer.cancelled() {
                return Err(RunError::Cancelled { time: 0.0 });
            }
            let drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
            self.assemble_at(1.0, None, &drive, x, &mut asm);
            // The problem is linear: A x - R(x) is the right-hand side of A p = b.
            asm.jac.mul_vec_into(x, &mut rhs);
            rhs.par_iter_mut()
                .zip(&asm.resid)
                .for_each(|(b, r)| *b -= r);
            let mut sol = x.clone();
            self.stats.newton_iterations += 1;
            self.solve_linear(&asm.jac, &rhs, &mut sol, observer)
                .map_err(|e| fail(e, rounds))?;
            // Held cells keep their pressure exactly.
            for (i, _) in self.pinned.iter().enumerate().filter(|(_, p)| **p) {
                sol[i] = x[i];
            }
            *x = sol;
            rounds += 1;
            if !self.update_controls(wells, x) || rounds > 2 * self.opts.newton.max_switches + 1 {
                break;
            }
        }
        let drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
        flows(
            &self.d,
            &self.ctx(1.0, None, &drive),
            x,
            &mut asm.well_rate,
            &mut asm.bnd_rate,
        );
        let net: f64 = asm.well_rate.iter().chain(&asm.bnd_rate).sum();
        let gross: f64 = 0.5
            * asm
                .well_rate
                .iter()
                .chain(&asm.bnd_rate)
                .map(|q| q.abs())
                .sum::<f64>();
        let balance = if gross > 0.0 { net.abs() / gross } else { 0.0 };
        self.stats.steps = 1;
        let zeros_w = vec![0.0; self.d.n_wells];
        let zeros_b = vec![0.0; self.case.boundaries.len()];
        self.record(
            res,
            x,
            wells,
            ReportRow {
                time: end,
                well_rate: &asm.well_rate,
                well_cum: &zeros_w,
                bnd_rate: &asm.bnd_rate,
                bnd_cum: &zeros_b,
                balance,
            },
        );
        observer.progress(&Progress {
            time: end,
            end,
            step_size: 0.0,
            step: 1,
            newton_iterations: rounds,
            linear_iterations: self.stats.linear_iterations,
        });
        Ok(())
    }

    fn run_transient(
        &mut self,
        x: &mut Vec<f64>,
        wells: &mut Vec<WellState>,
        mut next_event: usize,
        res: &mut RunResults,
        observer: &mut dyn Observer,
    ) -> Result<(), RunError> {
        let tl = &self.case.timeline;
        let events = &tl.events;
        let end = tl.end;
        let nb = self.case.boundaries.len();
        let nw = self.d.n_wells;

        // Report times: every `report_every`, the events, the end.
        let mut stops: Vec<f64> = Vec::new();
        if let Some(every) = tl.report_every.filter(|e| *e > 0.0) {
            let mut k = 1.0;
            while k * every < end * (1.0 - 1e-12) {
                stops.push(k * every);
                k += 1.0;
            }
        }
        stops.extend(
            events
                .iter()
                .map(|e| e.time)
                .filter(|&t| t > 0.0 && t < end),
        );
        stops.push(end);
        stops.retain(|&t| t > 0.0);
        stops.sort_by(f64::total_cmp);
        stops.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * end.abs().max(1.0));

        // Initial accumulation and the t = 0 report.
        let mut asm = Assembly::new(&self.d, nb);
        let mut trial = Assembly::new(&self.d, nb);
        let mut mass_old = vec![0.0; self.d.n_cells];
        self.mass_into(x, &mut mass_old);
        let mut well_cum = vec![0.0; nw];
        let mut bnd_cum = vec![0.0; nb];
        {
            let shut: Vec<f64> = (0..nw).map(|w| self.shut_in_bhp(x, w)).collect();
            let mut x0 = x.clone();
            x0[self.d.n_cells..].copy_from_slice(&shut);
            let zw = vec![0.0; nw];
            let zb = vec![0.0; nb];
            self.record(
                res,
                &x0,
                wells,
                ReportRow {
                    time: 0.0,
                    well_rate: &zw,
                    well_cum: &zw,
                    bnd_rate: &zb,
                    bnd_cum: &zb,
                    balance: 0.0,
                },
            );
        }

        let mut t = 0.0;
        let mut dt_want = if tl.first_step > 0.0 {
            tl.first_step
        } else {
            tl.max_step.min(end)
        };
        let max_step = if tl.max_step > 0.0 {
            tl.max_step
        } else {
            f64::INFINITY
        };
        let growth = if tl.growth >= 1.0 { tl.growth } else { 1.0 };
        let mut si = 0;
        let mut step = 0;
        while si < stops.len() {
            while next_event < events.len() && events[next_event].time <= t + 1e-9 * end.max(1.0) {
                apply_event(wells, &events[next_event]);
                next_event += 1;
            }
            let stop = stops[si];
            let rem = stop - t;
            let mut dt = dt_want.min(max_step);
            let mut hits = false;
            let mut shortened = false;
            if dt >= rem * (1.0 - 1e-9) {
                shortened = dt > rem;
                dt = rem;
                hits = true;
            } else if dt > 0.5 * rem {
                dt = 0.5 * rem;
                shortened = true;
            }
            let snap = Snapshot {
                x: x.clone(),
                wells: wells.clone(),
            };
            let mut cuts = 0;
            let (mut its, mut lits) = (0, 0);
            loop {
                for st in wells.iter_mut() {
                    st.switches = 0;
                }
                match self.newton(x, wells, dt, &mass_old, &mut asm, &mut trial, observer) {
                    Ok((i, l)) => {
                        its += i;
                        lits += l;
                        break;
                    }
                    Err(StepFail::Cancelled) => return Err(RunError::Cancelled { time: t }),
                    Err(StepFail::Failed {
                        reason,
                        iterations,
                        linear,
                    }) => {
                        its += iterations;
                        lits += linear;
                        cuts += 1;
                        self.stats.step_cuts += 1;
                        if cuts > self.opts.max_step_cuts {
                            return Err(RunError::StepFailed {
                                step: step + 1,
                                time: t,
                                step_size: dt,
                                cuts: cuts - 1,
                                reason,
                            });
                        }
                        dt *= 0.5;
                        hits = false;
                        x.clone_from(&snap.x);
                        wells.clone_from(&snap.wells);
                    }
                }
            }
            step += 1;
            self.stats.steps += 1;
            // Balance of the step: accumulation change plus net outflow.
            let (dm, fip) = (0..self.d.n_cells)
                .into_par_iter()
                .with_min_len(4096)
                .map(|i| (asm.mass[i] - mass_old[i], asm.mass[i]))
                .reduce(|| (0.0, 0.0), |p, q| (p.0 + q.0, p.1 + q.1));
            let out: f64 = asm.well_rate.iter().chain(&asm.bnd_rate).sum::<f64>() * dt;
            let balance = if fip > 0.0 {
                (dm + out).abs() / fip
            } else {
                0.0
            };
            for (c, q) in well_cum.iter_mut().zip(&asm.well_rate) {
                *c += q * dt;
            }
            for (c, q) in bnd_cum.iter_mut().zip(&asm.bnd_rate) {
                *c += q * dt;
            }
            mass_old.copy_from_slice(&asm.mass);
            if self.pvt.c_f + self.pvt.c_r == 0.0 {
                // Incompressible: the accumulation is the reference one.
                self.mass_into(x, &mut mass_old);
            }
            t = if hits { stop } else { t + dt };
            observer.progress(&Progress {
                time: t,
                end,
                step_size: dt,
                step,
                newton_iterations: its,
                linear_iterations: lits,
            });
            if hits {
                si += 1;
                self.record(
                    res,
                    x,
                    wells,
                    ReportRow {
                        time: t,
                        well_rate: &asm.well_rate,
                        well_cum: &well_cum,
                        bnd_rate: &asm.bnd_rate,
                        bnd_cum: &bnd_cum,
                        balance,
                    },
                );
            }
            let base = if cuts == 0 && shortened { dt_want } else { dt };
            let per_step = its / (cuts + 1);
            let factor = if cuts > 0 || per_step > 8 {
                1.0
            } else {
                growth
            };
            dt_want = (base * factor).min(max_step);
        }
        Ok(())
    }

    fn mass_into(&self, x: &[f64], mass: &mut [f64]) {
        let pinned = &self.pinned;
        mass.par_iter_mut()
            .enumerate()
            .with_min_len(4096)
            .for_each(|(i, m)| {
                *m = if !pinned.is_empty() && pinned[i] {
                    0.0
                } else {
                    self.pvt.mass_factor(x[i]).0 * self.d.pv_ref[i]
                };
            });
    }

    /// One backward-Euler step by Newton. On success `asm` holds the
    /// converged state (rates, accumulation). Returns (Newton, linear) iterations.
    #[allow(clippy::too_many_arguments)]
    fn newton(
        &mut self,
        x: &mut [f64],
        wells: &mut [WellState],
        dt: f64,
        mass_old: &[f64],
        asm: &mut Assembly,
        trial: &mut Assembly,
        observer: &mut dyn Observer,
    ) -> Result<(usize, usize), StepFail> {
        let no = self.opts.newton.clone();
        let n = self.d.n();
        let nc = self.d.n_cells;
        let mut switched = self.update_controls(wells, x);
        let mut drive: Vec<WellDrive> = wells.iter().map(WellState::drive).collect();
        self.assemble_at(dt, Some(mass_old), &drive, x, asm);
        let (mut mc, mut mw, mut merit) = self.measure(asm, dt, &drive);
        let mut last_dp = f64::INFINITY;
        let mut rhs = vec![0.0; n];
        let mut delta = vec![0.0; n];
        let mut xt = x.to_vec();
        let mut lin = 0;
        for it in 0..=no.max_iterations {
            if observer.cancelled() {
                return Err(StepFail::Cancelled);
            }
            let res_ok = mc <= no.mass_tolerance && mw <= no.well_tolerance;
            if res_ok && !switched && (it == 0 || last_dp <= no.pressure_tolerance) {
                return Ok((it, lin));
            }
            if !merit.is_finite() {
                return Err(StepFail::Failed {
                    reason: "the residual is not finite".into(),
                    iterations: it,
                    linear: lin,
                });
            }
            if it == no.max_iterations {
                return Err(StepFail::Failed {
                    reason: format!(
                        "Newton did not converge in {it} iterations (scaled residual: cells {mc:.2e}, wells {mw:.2e}; last pressure change {last_dp:.2e} Pa)"
                    ),
                    iterations: it,
                    linear: lin,
                });
            }
            self.stats.newton_iterations += 1;
            for (r, v) in rhs.iter_mut().zip(&asm.resid) {
                *r = -v;
            }
            delta.fill(0.0);
            let li = self
                .solve_linear(&asm.jac, &rhs, &mut delta, observer)
                .map_err(|reason| StepFail::Failed {
                    reason,
                    iterations: it + 1,
                    linear: lin,
                })?;
            lin += li;
            for (i, _) in self.pinned.iter().enumerate().filter(|(_, p)| **p) {
                delta[i] = 0.0;
            }
            // Line search on the scaled residual.
            let mut alpha = 1.0;
            let mut accepted = None;
            for ls in 0..=no.line_search_cuts {
                let mut trial_wells = wells.to_vec();
                for k in 0..n {
                    xt[k] = x[k] + alpha * delta[k];
                }
                let sw = self.update_controls(&mut trial_wells, &mut xt);
                let tdrive: Vec<WellDrive> = trial_wells.iter().map(WellState::drive).collect();
                self.assemble_at(dt, Some(mass_old), &tdrive, &xt, trial);
                let (tc, tw, tm) = self.measure(trial, dt, &tdrive);
                let good =
                    sw || tm <= merit || (tc <= no.mass_tolerance && tw <= no.well_tolerance);
                if good || ls == no.line_search_cuts {
                    accepted = Some((sw, trial_wells, tdrive, tc, tw, tm));
                    break;
                }
                alpha *= 0.5;
            }
            let (sw, tw_state, tdrive, tc, tw, tm) =
                accepted.expect("line search accepts on its last cut");
            last_dp = (0..nc)
                .map(|k| (alpha * delta[k]).abs())
                .fold(0.0, f64::max);
            for w in 0..self.d.n_wells {
                if !drive[w].bhp && !tdrive[w].bhp {
                    last_dp = last_dp.max((alpha * delta[nc + w]).abs());
                }
            }
            x.copy_from_slice(&xt);
            wells.clone_from_slice(&tw_state);
            std::mem::swap(asm, trial);
            drive = tdrive;
            switched = sw;
            (mc, mw, merit) = (tc, tw, tm);
        }
        unreachable!("the loop returns at max_iterations")
    }
}

enum StepFail {
    Cancelled,
    Failed {
        reason: String,
        iterations: usize,
        linear: usize,
    },
}
