//! The state of one cell in an oil-water run: phase pressures, formation
//! volume factors, relative mobilities and densities, each with its
//! derivatives in the cell's unknowns (oil pressure, water saturation).

use rill_model::derived::relperm::SatPoint;
use rill_model::{Case, Curves};

use super::ad::Ad;
use crate::pvt::Pvt;

/// Oil (0) and water (1), in the order of the equations and of every
/// two-element array here.
pub(crate) const OIL: usize = 0;
pub(crate) const WATER: usize = 1;

/// The two liquids, the rock and the saturation functions of a run.
pub(crate) struct Phases {
    /// Oil and water, each with the rock's compressibility (`Pvt` keeps
    /// both: `pore_factor` reads the rock's, `b` and `rho` the phase's).
    pub pvt: [Pvt; 2],
    /// The `relperm` blocks' curves, in deck order.
    pub curves: Vec<Curves>,
    /// Per curve, the water saturation where the fractional flow is
    /// steepest (Newton does not step a saturation across it at once).
    pub steepest: Vec<f64>,
}

impl Phases {
    pub fn new(case: &Case) -> Option<Phases> {
        let ow = case.oil_water.as_ref()?;
        let oil = Pvt::new(&case.fluid, &case.rock);
        let water = Pvt::new(&ow.water, &case.rock);
        let curves: Vec<Curves> = ow.relperms.iter().map(|r| r.curves.clone()).collect();
        let steepest = curves
            .iter()
            .map(|c| c.steepest_flow(water.mu, oil.mu))
            .collect();
        Some(Phases {
            pvt: [oil, water],
            curves,
            steepest,
        })
    }
}

/// One cell's properties with derivatives in `(p_oil, s_water)`.
#[derive(Debug, Clone, Copy)]
pub(crate) struct CellProps {
    /// Phase pressures, Pa (water: `p_oil - pc`).
    pub p: [Ad<2>; 2],
    /// `1 / B` of each phase at its own pressure.
    pub b: [Ad<2>; 2],
    /// `kr / mu` of each phase, 1/(Pa s).
    pub kr_mu: [Ad<2>; 2],
    /// Density of each phase at its own pressure, kg/m^3.
    pub rho: [f64; 2],
}

impl CellProps {
    /// The properties at oil pressure `p` and water saturation `s` on `curves`.
    #[inline]
    pub fn new(ph: &Phases, curves: usize, p: f64, s: f64) -> CellProps {
        let sat = ph.curves[curves].at(s);
        Self::from_sat(ph, &sat, p)
    }

    /// As [`CellProps::new`], with the curves already evaluated.
    #[inline]
    pub fn from_sat(ph: &Phases, sat: &SatPoint, p: f64) -> CellProps {
        let [oil, water] = &ph.pvt;
        let po = Ad::var(p, 0);
        let pc = Ad {
            v: sat.pc,
            d: [0.0, sat.dpc],
        };
        let pw = po - pc;
        let (bo, dbo) = oil.b(po.v);
        let (bw, dbw) = water.b(pw.v);
        CellProps {
            p: [po, pw],
            b: [po.chain(bo, dbo), pw.chain(bw, dbw)],
            kr_mu: [
                Ad {
                    v: sat.kro / oil.mu,
                    d: [0.0, sat.dkro / oil.mu],
                },
                Ad {
                    v: sat.krw / water.mu,
                    d: [0.0, sat.dkrw / water.mu],
                },
            ],
            rho: [oil.rho(po.v).0, water.rho(pw.v).0],
        }
    }

    /// The total reservoir mobility `kro / mu_o + krw / mu_w`.
    #[inline]
    pub fn total_kr_mu(&self) -> Ad<2> {
        self.kr_mu[OIL] + self.kr_mu[WATER]
    }
}

/// Surface volume of oil and water in a cell of reference pore volume
/// `pv_ref`: `PV(p_oil) (1 - s) / B_o(p_oil)` and `PV(p_oil) s / B_w(p_water)`.
#[inline]
pub(crate) fn accumulation(ph: &Phases, c: &CellProps, s: f64, pv_ref: f64) -> [Ad<2>; 2] {
    let po = c.p[OIL];
    let pore = po.chain(ph.pvt[OIL].pore_factor(po.v), 0.0);
    let pore = Ad {
        v: pore.v,
        d: [ph.pvt[OIL].c_r * pore.v, 0.0],
    };
    let sw = Ad::var(s, 1);
    let so = Ad::c(1.0) - sw;
    let pv = pore.scale(pv_ref);
    [pv * so * c.b[OIL], pv * sw * c.b[WATER]]
}
