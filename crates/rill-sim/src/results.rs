//! What a run produces, in SI, one entry per report time (the first is t = 0).
//!
//! Transient runs report at t = 0, every `report_every`, at every event time
//! and at the end, each hit exactly. At t = 0 the rates and cumulatives are
//! zero and the BHP is the shut-in one (the BHP at which the well would not
//! flow against the initial cell pressures). Rates at a later report time are
//! those of the step that ended there (backward Euler: constant over the
//! step), and cumulatives sum rate times step length.
//!
//! Steady runs report once, at `timeline.end` (0 without an end), with zero
//! cumulatives.

/// How a well was controlled over the step that ended at a report time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ControlMode {
    /// Held at its target surface rate.
    Rate,
    /// Held at a bottom-hole pressure: its BHP target, or the BHP limit of a
    /// rate-controlled well that could not hold its rate.
    Bhp,
    /// Shut: at its BHP control or limit it would have flowed the wrong way
    /// (a producer injecting, an injector producing), so it does not flow.
    Shut,
}

/// What happened to a well at a [`WellEvent`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WellAction {
    /// Shut: at its BHP it would have flowed against its role.
    Shut,
    /// Reopened: at its BHP it can flow its way again.
    Reopened,
}

/// A well shut or reopened, by the run (it would have flowed against its
/// role) or by a timeline event (`control = shut` and back), from the start
/// of the step at `time`.
#[derive(Debug, Clone, PartialEq)]
pub struct WellEvent {
    /// Start of the step from which it holds, s.
    pub time: f64,
    /// The well's name in the deck.
    pub well: String,
    /// Shut or reopened.
    pub action: WellAction,
}

/// One well's series, one value per report time.
#[derive(Debug, Clone, PartialEq)]
pub struct WellSeries {
    /// The well's name in the deck.
    pub name: String,
    /// Bottom-hole pressure at the well datum, Pa.
    pub bhp: Vec<f64>,
    /// Surface rate, m^3/s; positive for production, negative for injection.
    pub rate: Vec<f64>,
    /// Cumulative surface volume, m^3, same sign convention.
    pub cumulative: Vec<f64>,
    /// The control over the step that ended at each report time.
    pub mode: Vec<ControlMode>,
}

/// One boundary's series, one value per report time.
#[derive(Debug, Clone, PartialEq)]
pub struct BoundarySeries {
    /// The boundary's name in the deck.
    pub name: String,
    /// Surface rate out of the reservoir through the boundary, m^3/s (negative: inflow).
    pub rate: Vec<f64>,
    /// Cumulative surface volume out through the boundary, m^3 (negative: inflow).
    pub cumulative: Vec<f64>,
}

/// One aquifer's series, one value per report time.
#[derive(Debug, Clone, PartialEq)]
pub struct AquiferSeries {
    /// The aquifer's name in the deck.
    pub name: String,
    /// Surface rate out of the reservoir into the aquifer, m^3/s (negative:
    /// influx, the usual direction), as for boundaries.
    pub rate: Vec<f64>,
    /// Cumulative surface volume out into the aquifer, m^3 (negative: influx).
    pub cumulative: Vec<f64>,
    /// The aquifer's pressure at the mean depth of its faces, Pa.
    pub pressure: Vec<f64>,
}

/// What the run cost the solvers.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SolverStats {
    /// Accepted time steps (1 for a steady run).
    pub steps: usize,
    /// Halvings of a step after a failed attempt.
    pub step_cuts: usize,
    /// Newton iterations (linear solves), failed attempts included.
    pub newton_iterations: usize,
    /// Linear solver iterations over all solves (0 for direct solves).
    pub linear_iterations: usize,
    /// Name of the linear solver of the last solve ("direct-cholesky",
    /// "direct-lu", "amg-cg", "amg-bicgstab", ...; "none" when no system had
    /// to be solved).
    pub linear_solver: String,
    /// Wall time of the whole simulation, s.
    pub wall_seconds: f64,
}

/// Everything a run reports, one entry per report time (see the module doc).
#[derive(Debug, Clone, PartialEq)]
pub struct RunResults {
    /// Report times, s.
    pub times: Vec<f64>,
    /// Pore-volume weighted average pressure, Pa.
    pub pressure_avg: Vec<f64>,
    /// One series per well, in deck order.
    pub wells: Vec<WellSeries>,
    /// One series per boundary, in deck order.
    pub boundaries: Vec<BoundarySeries>,
    /// One series per aquifer, in deck order (steady runs: no influx, the
    /// initial pressure).
    pub aquifers: Vec<AquiferSeries>,
    /// Relative mass balance error of the last step before each report time:
    /// |change of surface volume in place + net outflow over the step| over
    /// the largest of the volume in place, the step's gross throughput and
    /// the change itself (0 at t = 0). Steady runs: |net outflow| over the
    /// largest of the total inflow, the largest single face or completion
    /// flow, and the flow 1 Pa drives through the largest cell
    /// transmissibility sum. Neither scale vanishes when nothing flows.
    pub balance_error: Vec<f64>,
    /// Cell pressures, Pa (NaN in inactive cells): one array per report
    /// time, or the last report time's only (`RunOptions::keep_pressures`).
    pub pressure: Vec<Vec<f64>>,
    /// Wells the run shut or reopened, in time order.
    pub events: Vec<WellEvent>,
    /// Steps, iterations and time spent.
    pub stats: SolverStats,
    /// Surface rate, m^3/s, that a pressure difference of 1 Pa drives
    /// through the largest transmissibility sum of any cell, at the
    /// reference viscosity and formation volume factor (the resolution of
    /// the steady balance). Times a pressure, it is the scale of the flows
    /// the reservoir could carry; writers use it to tell round-off from a
    /// flow (0 when unknown).
    pub flow_per_pascal: f64,
    /// What an oil-water run adds (`None` for a single-phase run). In an
    /// oil-water run `WellSeries::rate` and `cumulative` hold the surface
    /// liquid (oil plus water), `balance_error` the larger of the two
    /// phases' errors and `pressure` the oil pressure.
    pub oil_water: Option<OilWaterResults>,
}

/// One well's phase series in an oil-water run, one value per report time.
/// Surface m^3/s and m^3; production positive, injection negative.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PhaseWellSeries {
    /// Surface oil rate.
    pub oil_rate: Vec<f64>,
    /// Surface water rate.
    pub water_rate: Vec<f64>,
    /// Surface water cut, water over liquid (0 when the well flows nothing).
    pub water_cut: Vec<f64>,
    /// Cumulative surface oil.
    pub cumulative_oil: Vec<f64>,
    /// Cumulative surface water.
    pub cumulative_water: Vec<f64>,
    /// Producers: when the water cut first rose 0.01 above the water cut
    /// of the well's first producing step (water breakthrough), s,
    /// interpolated between the ends of the two steps around it; `None`:
    /// not yet, or not a producer.
    pub breakthrough: Option<f64>,
}

/// The series and maps an oil-water run adds, one value per report time.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct OilWaterResults {
    /// One per well, in deck order.
    pub wells: Vec<PhaseWellSeries>,
    /// Oil in place, surface m^3.
    pub oil_in_place: Vec<f64>,
    /// Water in place, surface m^3.
    pub water_in_place: Vec<f64>,
    /// Produced oil over the initial oil in place.
    pub recovery: Vec<f64>,
    /// Water injected by the wells so far over the initial pore volume
    /// (pore volumes injected), reservoir m^3 per m^3.
    pub pore_volumes_injected: Vec<f64>,
    /// Pore-volume weighted average water saturation.
    pub sw_avg: Vec<f64>,
    /// The oil balance error of the last step before each report time
    /// (defined as `RunResults::balance_error` for the one liquid).
    pub balance_error_oil: Vec<f64>,
    /// The water balance error, likewise.
    pub balance_error_water: Vec<f64>,
    /// Cell water saturations (NaN in inactive cells), kept like
    /// `RunResults::pressure`.
    pub saturation: Vec<Vec<f64>>,
}

/// Where the wall time of a run went, s. Given to `Observer::timings` at the
/// end of a successful run.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Timings {
    /// Building the discretisation: numbering, transmissibilities, pattern.
    pub setup: f64,
    /// Residual and Jacobian assembly, all calls.
    pub assembly: f64,
    /// Linear solver set-up (factorisation, multigrid hierarchy), all calls.
    pub linear_setup: f64,
    /// Linear solver iterations or triangular solves, all calls.
    pub linear_solve: f64,
    /// The whole run.
    pub total: f64,
}
