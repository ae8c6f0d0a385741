//! The oil-water engine: two immiscible, slightly compressible liquids,
//! fully implicit.
//!
//! Owns the run of a case with `oil` and `water` blocks: the initial state
//! (capillary-gravity equilibrium from the contact, or the given
//! saturations), the residual and Jacobian in 2 x 2 blocks (`assemble`),
//! Newton with saturation damping and the well controls (`newton`), the
//! time loop with its step control (`steps`), and the results (`record`).
//! Must never: change what a single-phase deck does (that is `run`), parse
//! text or do I/O.
//!
//! Modelling choices, each documented where it lives:
//! * unknowns per cell: oil pressure and water saturation; water pressure
//!   `p_w = p_o - pc(s_w)`; each phase's `B`, density as in the
//!   single-phase engine (`pvt`), at its own pressure; pore volume at the
//!   oil pressure;
//! * two-point fluxes per phase with the single-phase face
//!   transmissibility, relative mobility upstream in the phase potential,
//!   `1/B` averaged over the face;
//! * Peaceman completions: producers take each phase by its mobility,
//!   injectors put in water with the total mobility; no completion flows
//!   against its well's role; the wellbore column holds the phases in the
//!   proportion the well produced over the last step (water for
//!   injectors), fixed over a step;
//! * constant-pressure boundaries: the oil pressure of the single-phase
//!   rule on the face, full of water (below the contact, or with no
//!   contact) or at the equilibrium saturation of the face depth above it;
//! * aquifers (Fetkovich) hold water on the water's hydrostat;
//! * backward Euler; Newton stops when every cell's oil and water residual
//!   is below `CELL_TOLERANCE` of its pore volume, each phase's field
//!   balance closes to `BALANCE_TOLERANCE`, and every rate well meets its
//!   rate; saturation updates are damped in the manner of Appleyard and
//!   Cheshire (at most `MAX_DS` per iteration, never across the steepest
//!   point of the fractional flow in one iteration); the linear systems go
//!   to GMRES with the CPR preconditioner of `rill_linear`, its pressure
//!   equation decoupled with true-IMPES weights (the accumulation blocks
//!   the assembly hands over): on a heterogeneous waterflood they halved
//!   the linear iterations of quasi-IMPES weights (29.6 to 13.2 per Newton
//!   iteration on the generated block at 6,000 cells).

// `!(x <= tol)` is meant: it is also true for NaN.
#![allow(clippy::neg_cmp_op_on_partial_ord)]
// A phase index walks several two-element arrays at once.
#![allow(clippy::needless_range_loop)]

mod ad;
mod assemble;
mod cells;
mod floating;
mod newton;
mod record;
mod steps;
#[cfg(test)]
mod tests;

use std::time::Instant;

use rill_model::derived::{self, saturation};
use rill_model::{Case, Control, Initial, InitialSaturation, Role};

use self::assemble::Outside;
use self::cells::{CellProps, Phases, WATER};
use crate::disc::Disc;
use crate::linear::{CoupledOptions, CoupledSolver};
use crate::results::*;
use crate::run::{Observer, RunError, RunOptions};

/// Largest oil or water residual of a cell, over its pore volume in
/// surface units, at convergence.
const CELL_TOLERANCE: f64 = 1e-7;
/// Largest imbalance of either phase over the field (the step's change in
/// place plus what left, over the larger of what is in place and what
/// moved), at convergence: the balance error the results report.
const BALANCE_TOLERANCE: f64 = 1e-10;
/// Largest change of a saturation in one Newton iteration.
const MAX_DS: f64 = 0.2;
/// Newton iterations before a step is cut.
const MAX_NEWTON: usize = 20;
/// Relative residual of the linear solves.
const LINEAR_TOLERANCE: f64 = 1e-6;

/// The run's fixed data.
pub(crate) struct Engine<'a> {
    case: &'a Case,
    opts: &'a RunOptions,
    d: Disc,
    ph: Phases,
    /// The curves of each active cell (index into `Phases::curves`).
    curves_of: Vec<u32>,
    /// The far side of each boundary face.
    outside: Vec<Outside>,
    /// Diagonal of a held well row per second of step.
    hold: f64,
    solver: CoupledSolver,
    /// Regions an incompressible run may leave floating (see `floating`).
    floating: Vec<floating::FloatRegion>,
    first_system_sent: bool,
    stats: SolverStats,
    timings: Timings,
}

/// Runs an oil-water case (serial).
pub(crate) fn run(
    case: &Case,
    options: &RunOptions,
    observer: &mut dyn Observer,
) -> Result<RunResults, RunError> {
    let start = Instant::now();
    if case.timeline.kind == rill_model::RunKind::Steady {
        return Err(RunError::Setup(
            "an oil-water deck runs in time only: a displacement has no steady state short of the end of the flood; give the timeline an `end` and drop `steady`".into(),
        ));
    }
    let Some(ph) = Phases::new(case) else {
        return Err(RunError::Setup(
            "the deck has no `oil` and `water` blocks".into(),
        ));
    };
    if ph.curves.is_empty() {
        return Err(RunError::Setup(
            "an oil-water deck needs a `relperm` block for its relative permeabilities".into(),
        ));
    }
    let d = Disc::new_part(case, crate::disc::Part::SERIAL);
    crate::run::check_runnable(case, &d)?;
    let ow = case.oil_water.as_ref().expect("Phases::new checked it");
    let curves_of: Vec<u32> = d
        .cell_of
        .iter()
        .map(|&c| (ow.cell_relperm.of(c).min(ph.curves.len() - 1)) as u32)
        .collect();
    let outside = boundary_sides(case, &d, &ph);
    let lam_ref = 1.0 / (ph.pvt[WATER].mu * ph.pvt[WATER].b_ref);
    let t_typ = d.t_sum.iter().sum::<f64>() / d.n_cells as f64;
    let mut opts = CoupledOptions {
        rel_tol: LINEAR_TOLERANCE,
        ..CoupledOptions::default()
    };
    opts.cpr.decoupling = crate::linear::Decoupling::TrueImpes;
    opts.max_iter = opts.max_iter.max(options.linear.max_iter.min(1000));
    let mut engine = Engine {
        case,
        opts: options,
        curves_of,
        outside,
        hold: t_typ.max(1e-30) * lam_ref,
        solver: CoupledSolver::new(opts),
        floating: Vec::new(),
        first_system_sent: false,
        stats: SolverStats::default(),
        timings: Timings {
            setup: start.elapsed().as_secs_f64(),
            ..Timings::default()
        },
        ph,
        d,
    };
    let x = engine.initial_state()?;
    engine.floating = engine.floating_regions(&x);
    let mut results = crate::run::empty_results_for(case);
    results.oil_water = Some(record::empty(case));
    let t_max = engine.d.t_sum.iter().copied().fold(0.0, f64::max);
    results.flow_per_pascal = t_max * lam_ref;
    engine.run_steps(x, &mut results, observer)?;
    engine.stats.linear_solver = "cpr-gmres".to_string();
    engine.stats.wall_seconds = start.elapsed().as_secs_f64();
    engine.timings.total = engine.stats.wall_seconds;
    observer.timings(&engine.timings);
    results.stats = engine.stats.clone();
    Ok(results)
}

/// The oil pressure and water saturation of a boundary face's far side at
/// depth `z`, with no derivatives. A boundary with a datum in a case with a
/// water contact is in the capillary-gravity equilibrium of its own datum,
/// as the initial state is of the initial datum: the oil's hydrostat above
/// the contact, full of water on the water's below it. So a boundary held
/// at the initial datum leaves the initial state at rest (on the oil's
/// hydrostat alone it drained the water leg).
fn boundary_sides(case: &Case, d: &Disc, ph: &Phases) -> Vec<Outside> {
    let eq = saturation::equilibrium(case);
    let ow = case.oil_water.as_ref().expect("an oil-water case");
    let contact = match ow.saturation {
        InitialSaturation::Contact { depth } => Some(depth),
        _ => None,
    };
    d.bfaces
        .iter()
        .map(|f| {
            let b = &case.boundaries[f.boundary];
            let z = f.face_depth;
            let curves = &ph.curves[ow
                .cell_relperm
                .of(d.cell_of[f.cell])
                .min(ph.curves.len() - 1)];
            let (p, s) = match b.datum {
                // With a contact, the equilibrium through its own datum;
                // without one, the oil's hydrostat and water beyond.
                Some(datum) => match saturation::equilibrium_through(case, b.pressure, datum) {
                    Some(own) => own.state(curves, z),
                    None => (
                        derived::hydrostatic_pressure(&case.fluid, b.pressure, datum, z),
                        1.0,
                    ),
                },
                None => match contact {
                    Some(c) if z < c => (
                        b.pressure,
                        eq.map_or(curves.swc(), |eq| eq.water_saturation(curves, z)),
                    ),
                    _ => (b.pressure, 1.0),
                },
            };
            let mut props = CellProps::from_sat(ph, &curves.at(s), p);
            for a in props
                .p
                .iter_mut()
                .chain(&mut props.b)
                .chain(&mut props.kr_mu)
            {
                a.d = [0.0; 2];
            }
            Outside { props }
        })
        .collect()
}

impl Engine<'_> {
    /// Unknowns at t = 0, two per block row: cells from the equilibrium or
    /// the given saturations, BHPs guessed later, aquifers at rest.
    fn initial_state(&self) -> Result<Vec<f64>, RunError> {
        let case = self.case;
        let d = &self.d;
        let ow = case.oil_water.as_ref().expect("an oil-water case");
        let mut x = vec![0.0; 2 * d.n()];
        let eq = saturation::equilibrium(case);
        for (i, &c) in d.cell_of.iter().enumerate() {
            let z = d.depth[i];
            let curves = &self.ph.curves[self.curves_of[i] as usize];
            let (p, s) = match (&ow.saturation, eq) {
                (InitialSaturation::Contact { .. }, Some(eq)) => eq.state(curves, z),
                (sat, _) => {
                    let s = match sat {
                        InitialSaturation::Cells(v) => v[c],
                        InitialSaturation::Contact { depth } => {
                            if z > *depth {
                                1.0
                            } else {
                                curves.swc()
                            }
                        }
                    };
                    let p = match &case.initial {
                        Initial::Datum { pressure, depth } => {
                            derived::hydrostatic_pressure(&case.fluid, *pressure, *depth, z)
                        }
                        Initial::Cells(v) => v[c],
                    };
                    (p, s)
                }
            };
            if !(p.is_finite() && p > 0.0 && (0.0..=1.0).contains(&s)) {
                return Err(RunError::Setup(format!(
                    "the initial state of cell {} is not physical (oil pressure {p:.6e} Pa, water saturation {s})",
                    c + 1
                )));
            }
            x[2 * i] = p;
            x[2 * i + 1] = s;
        }
        let first = d.n_cells + d.n_wells;
        for (a, g) in d.aquifers.iter().enumerate() {
            // On the water's hydrostat at its mean face depth when the
            // case starts from a contact (`aquifer::initial_pressure`).
            x[2 * (first + a)] = g.p_init;
        }
        Ok(x)
    }
}

/// What a well's deck control asks of the engine.
fn target_of(control: Control, role: Role) -> assemble::Target {
    use assemble::Target;
    match control {
        Control::Shut => Target::Shut,
        Control::Bhp(_) => Target::Bhp,
        Control::OilRate(q) => Target::Oil(q),
        Control::LiquidRate(q) => Target::Liquid(q),
        Control::WaterRate(q) => Target::Water(q),
        // The checker refuses `rate` in an oil-water deck; read it as the
        // liquid of a producer or the water of an injector.
        Control::Rate(q) => match role {
            Role::Producer => Target::Liquid(q),
            Role::Injector => Target::Water(q),
        },
    }
}

/// Oil plus water surface flux through the `+i`, `+j`, `+k` face of every
/// cell at oil pressures `p` and water saturations `sw` (one per grid
/// cell), by the assembly's own face formula. `None` when the arrays do
/// not have one value per cell or the case is not oil-water.
pub(crate) fn liquid_face_fluxes(case: &Case, p: &[f64], sw: &[f64]) -> Option<crate::FaceFluxes> {
    let n = case.grid.cell_count();
    if p.len() != n || sw.len() != n {
        return None;
    }
    let ph = Phases::new(case)?;
    let ow = case.oil_water.as_ref()?;
    if ph.curves.is_empty() {
        return None;
    }
    let props = |c: usize| {
        let curves = ow.cell_relperm.of(c).min(ph.curves.len() - 1);
        CellProps::new(&ph, curves, p[c], sw[c])
    };
    let depth = derived::cell_center_depths(&case.grid);
    let mut out = crate::FaceFluxes {
        x: vec![0.0; n],
        y: vec![0.0; n],
        z: vec![0.0; n],
    };
    for conn in derived::case_connections(case) {
        let (a, b) = (conn.a, conn.b);
        if !(case.rock.is_active(a) && case.rock.is_active(b)) {
            continue;
        }
        let f = assemble::face_flux(
            &ph,
            conn.geometric_trans,
            depth[a] - depth[b],
            &props(a),
            &props(b),
        );
        crate::fluxes::axis_of(case, &mut out, a, b)[a] = f[0].v + f[1].v;
    }
    Some(out)
}
