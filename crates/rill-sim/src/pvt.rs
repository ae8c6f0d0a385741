//! Fluid and rock pressure dependence, and the hydrostatics that go with it.
//!
//! Exponential forms throughout (no linearisation):
//! * `b(p) = 1 / B(p) = exp(c_f (p - p_f)) / B_ref` (surface per reservoir volume),
//! * `rho(p) = rho_ref exp(c_f (p - p_f))`,
//! * `phi(p) = phi_ref exp(c_r (p - p_r))`.
//!
//! Gravity uses one density function for the face term, the initial state,
//! the boundary pressures and the wellbore: the exact solution of
//! `dp/dz = rho(p) g` is `H(p0, dz) = p0 - ln(1 - c_f rho(p0) g dz) / c_f`, and
//! the face density between two pressures is the one that makes the discrete
//! potential difference `p_a - p_b - rho_ab g (D_a - D_b)` vanish exactly on
//! that curve: `rho_ab = (p_a - p_b) / int_{p_b}^{p_a} dp / rho(p)`, which is
//! `rho_a x / (e^x - 1)` with `x = c_f (p_a - p_b)` (the arithmetic mean to
//! second order). So a column initialised from a datum is at rest exactly,
//! whatever the cell thicknesses or column tops.

use rill_model::derived::GRAVITY;
use rill_model::{Fluid, Rock};

/// Pressure-dependent properties. `c_f = c_r = 0` gives the incompressible
/// model of steady runs.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Pvt {
    pub mu: f64,
    pub b_ref: f64,
    pub c_f: f64,
    pub p_f: f64,
    pub rho_ref: f64,
    pub c_r: f64,
    pub p_r: f64,
}

impl Pvt {
    pub fn new(fluid: &Fluid, rock: &Rock) -> Self {
        Pvt {
            mu: fluid.viscosity,
            b_ref: fluid.fvf,
            c_f: fluid.compressibility,
            p_f: fluid.ref_pressure,
            rho_ref: fluid.density,
            c_r: rock.compressibility,
            p_r: rock.ref_pressure,
        }
    }

    /// The same fluid without compressibility (steady runs).
    pub fn incompressible(self) -> Self {
        Pvt {
            c_f: 0.0,
            c_r: 0.0,
            ..self
        }
    }

    /// `1 / B(p)` and its derivative.
    #[inline]
    pub fn b(&self, p: f64) -> (f64, f64) {
        let b = (self.c_f * (p - self.p_f)).exp() / self.b_ref;
        (b, self.c_f * b)
    }

    /// Density and its derivative.
    #[inline]
    pub fn rho(&self, p: f64) -> (f64, f64) {
        let r = self.rho_ref * (self.c_f * (p - self.p_f)).exp();
        (r, self.c_f * r)
    }

    /// Surface volume per unit reference pore volume, `phi(p)/phi_ref * b(p)`, and its derivative.
    #[inline]
    pub fn mass_factor(&self, p: f64) -> (f64, f64) {
        let m = (self.c_r * (p - self.p_r) + self.c_f * (p - self.p_f)).exp() / self.b_ref;
        (m, (self.c_r + self.c_f) * m)
    }

    /// Pore volume multiplier `phi(p) / phi_ref`.
    #[inline]
    pub fn pore_factor(&self, p: f64) -> f64 {
        (self.c_r * (p - self.p_r)).exp()
    }

    /// Face density between pressures `pa` and `pb` (see the module doc) and
    /// its derivatives with respect to `pa` and `pb`. Symmetric in value;
    /// callers pass the pair in a fixed order so that both sides of a face
    /// get the same bits.
    #[inline]
    pub fn face_rho(&self, pa: f64, pb: f64) -> (f64, f64, f64) {
        self.face_rho_from(self.rho(pa).0, pa, pb)
    }

    /// [`Pvt::face_rho`] with `rho(pa)` already known.
    #[inline]
    pub fn face_rho_from(&self, ra: f64, pa: f64, pb: f64) -> (f64, f64, f64) {
        if self.c_f == 0.0 {
            return (ra, 0.0, 0.0);
        }
        let x = self.c_f * (pa - pb);
        let (g, dg) = x_over_expm1(x);
        let r = ra * g;
        (r, self.c_f * ra * (g + dg), -self.c_f * ra * dg)
    }

    /// Pressure at `dz` below a point at pressure `p0` on the hydrostat, and
    /// `dH/dp0`.
    #[inline]
    pub fn hydrostat(&self, p0: f64, dz: f64) -> (f64, f64) {
        let (r0, _) = self.rho(p0);
        let y = self.c_f * r0 * GRAVITY * dz;
        if y.abs() < 1e-12 {
            // -ln(1 - y) / y = 1 + y/2 + ...
            return (p0 + r0 * GRAVITY * dz * (1.0 + 0.5 * y), 1.0 + y);
        }
        // Past y = 1 the exact hydrostat has no solution (infinite density);
        // far outside any reservoir (hundreds of km for a liquid).
        let y = y.min(1.0 - 1e-12);
        (p0 - (-y).ln_1p() / self.c_f, 1.0 / (1.0 - y))
    }
}

/// `g(x) = x / (e^x - 1)` and `g'(x)`, accurate near 0.
#[inline]
fn x_over_expm1(x: f64) -> (f64, f64) {
    if x.abs() < 1e-4 {
        let x2 = x * x;
        (
            1.0 - 0.5 * x + x2 / 12.0 - x2 * x2 / 720.0,
            -0.5 + x / 6.0 - x2 * x / 180.0,
        )
    } else {
        let e = x.exp_m1();
        let g = x / e;
        // g' = (e^x - 1 - x e^x) / (e^x - 1)^2 = g/x - g^2 e^x / x ... written stably:
        let dg = (e - x * (e + 1.0)) / (e * e);
        (g, dg)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pvt() -> Pvt {
        Pvt {
            mu: 1e-3,
            b_ref: 1.02,
            c_f: 4.35e-10 * 10.0,
            p_f: 2e7,
            rho_ref: 1000.0,
            c_r: 5e-10,
            p_r: 2e7,
        }
    }

    #[test]
    fn face_density_makes_the_hydrostat_exact() {
        let f = pvt();
        for dz in [0.1, 3.0, 50.0, 800.0] {
            let pa = 2.1e7;
            let (pb, _) = f.hydrostat(pa, dz);
            let (r, _, _) = f.face_rho(pa, pb);
            let phi = (pa - pb) + r * GRAVITY * dz;
            assert!(phi.abs() < 1e-8 * pa, "dz {dz}: residual potential {phi}");
        }
    }

    #[test]
    fn face_density_derivatives_match_differences() {
        let f = pvt();
        for (pa, pb) in [(2.0e7, 2.0e7 + 1.0), (2.0e7, 2.3e7), (3.0e7, 1.0e7)] {
            let (_, da, db) = f.face_rho(pa, pb);
            let h = 10.0;
            let na = (f.face_rho(pa + h, pb).0 - f.face_rho(pa - h, pb).0) / (2.0 * h);
            let nb = (f.face_rho(pa, pb + h).0 - f.face_rho(pa, pb - h).0) / (2.0 * h);
            assert!((da - na).abs() <= 1e-6 * na.abs().max(1e-12), "{da} {na}");
            assert!((db - nb).abs() <= 1e-6 * nb.abs().max(1e-12), "{db} {nb}");
        }
    }

    #[test]
    fn hydrostat_derivative_and_incompressible_limit() {
        let f = pvt();
        let (_, d) = f.hydrostat(2e7, 300.0);
        let n = (f.hydrostat(2e7 + 100.0, 300.0).0 - f.hydrostat(2e7 - 100.0, 300.0).0) / 200.0;
        assert!((d - n).abs() < 1e-7);
        let i = f.incompressible();
        let (p, d) = i.hydrostat(2e7, 100.0);
        assert_eq!(p, 2e7 + 1000.0 * GRAVITY * 100.0);
        assert_eq!(d, 1.0);
    }
}
