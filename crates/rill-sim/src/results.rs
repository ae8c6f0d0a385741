//! What a run produces, in SI, one entry per report time (the first is t = 0).

/// How a well was controlled over the step that ended at a report time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ControlMode {
    Rate,
    Bhp,
}

#[derive(Debug, Clone, PartialEq)]
pub struct WellSeries {
    pub name: String,
    /// Bottom-hole pressure at the well datum, Pa.
    pub bhp: Vec<f64>,
    /// Surface rate, m^3/s; positive for production, negative for injection.
    pub rate: Vec<f64>,
    /// Cumulative surface volume, m^3, same sign convention.
    pub cumulative: Vec<f64>,
    pub mode: Vec<ControlMode>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct BoundarySeries {
    pub name: String,
    /// Surface rate out of the reservoir through the boundary, m^3/s (negative: inflow).
    pub rate: Vec<f64>,
    pub cumulative: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Default)]
pub struct SolverStats {
    pub steps: usize,
    pub step_cuts: usize,
    pub newton_iterations: usize,
    pub linear_iterations: usize,
    /// Name of the linear solver used ("direct", "amg-cg", ...).
    pub linear_solver: String,
    pub wall_seconds: f64,
}

#[derive(Debug, Clone, PartialEq)]
pub struct RunResults {
    /// s
    pub times: Vec<f64>,
    /// Pore-volume weighted average pressure, Pa.
    pub pressure_avg: Vec<f64>,
    pub wells: Vec<WellSeries>,
    pub boundaries: Vec<BoundarySeries>,
    /// Relative mass balance error of the last step before each report time.
    pub balance_error: Vec<f64>,
    /// Cell pressures per report time, Pa (NaN in inactive cells).
    pub pressure: Vec<Vec<f64>>,
    pub stats: SolverStats,
}
