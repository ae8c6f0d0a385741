//! The initial water saturation of an oil-water deck. From a water contact
//! it is the capillary-gravity equilibrium: the oil is hydrostatic in its
//! own density through the datum (`pressure = P at D` gives the oil
//! pressure), the water in its own through the contact (the free water
//! level, where both pressures are equal and `pc = 0`), and each cell's
//! saturation inverts its capillary-pressure curve at `pc = p_oil - p_water`
//! at the cell centre. Below the contact a cell is full of water.

use crate::case::{Case, Curves, Fluid, Initial, InitialSaturation};
use crate::derived::{cell_center_depth, hydrostatic_pressure};

/// The oil pressure at the contact and the two hydrostats, for one case.
#[derive(Debug, Clone, Copy)]
pub struct Equilibrium<'c> {
    /// The oil.
    pub oil: &'c Fluid,
    /// The water.
    pub water: &'c Fluid,
    /// The oil pressure at the datum, Pa.
    pub datum_pressure: f64,
    /// The datum depth, m.
    pub datum_depth: f64,
    /// The depth of the contact (free water level), m.
    pub contact: f64,
}

impl Equilibrium<'_> {
    /// The oil pressure at `depth`, Pa.
    pub fn oil_pressure(&self, depth: f64) -> f64 {
        hydrostatic_pressure(self.oil, self.datum_pressure, self.datum_depth, depth)
    }

    /// The water pressure at `depth`, Pa: equal to the oil's at the contact.
    pub fn water_pressure(&self, depth: f64) -> f64 {
        let at_contact = self.oil_pressure(self.contact);
        hydrostatic_pressure(self.water, at_contact, self.contact, depth)
    }

    /// The capillary pressure the equilibrium needs at `depth`,
    /// `p_oil - p_water`, Pa: positive above the contact.
    pub fn capillary_pressure(&self, depth: f64) -> f64 {
        self.oil_pressure(depth) - self.water_pressure(depth)
    }

    /// The pressure of the phase that fills the rock at `depth`: the oil's
    /// above the contact, the water's below it, Pa.
    pub fn phase_pressure(&self, depth: f64) -> f64 {
        if depth > self.contact {
            self.water_pressure(depth)
        } else {
            self.oil_pressure(depth)
        }
    }

    /// A cell's (or a boundary face's) state at `depth` with `curves`: the
    /// oil pressure, Pa, and the water saturation. In the water leg the oil
    /// pressure is the water's plus pc at sw = 1.
    pub fn state(&self, curves: &Curves, depth: f64) -> (f64, f64) {
        if depth > self.contact {
            (self.water_pressure(depth) + curves.pc(1.0), 1.0)
        } else {
            (
                self.oil_pressure(depth),
                self.water_saturation(curves, depth),
            )
        }
    }

    /// The water saturation at `depth` for `curves`: 1 below the contact,
    /// the curves' saturation at the equilibrium's capillary pressure above
    /// it (the connate saturation where the curves have no capillary pressure).
    pub fn water_saturation(&self, curves: &Curves, depth: f64) -> f64 {
        if depth > self.contact {
            return 1.0;
        }
        curves.sw_at_pc(self.capillary_pressure(depth).max(0.0))
    }
}

/// The equilibrium of `case`, when it is an oil-water case with a water
/// contact and a datum pressure.
pub fn equilibrium(case: &Case) -> Option<Equilibrium<'_>> {
    let Initial::Datum { pressure, depth } = case.initial else {
        return None;
    };
    equilibrium_through(case, pressure, depth)
}

/// The equilibrium of an oil-water case with a water contact through
/// another datum: the oil pressure `pressure` (Pa) at `depth` (m), as a
/// boundary's own datum sets it.
pub fn equilibrium_through(case: &Case, pressure: f64, depth: f64) -> Option<Equilibrium<'_>> {
    let ow = case.oil_water.as_ref()?;
    let InitialSaturation::Contact { depth: contact } = ow.saturation else {
        return None;
    };
    Some(Equilibrium {
        oil: &case.fluid,
        water: &ow.water,
        datum_pressure: pressure,
        datum_depth: depth,
        contact,
    })
}

/// The initial water saturation of cell `c`: given, or from the
/// equilibrium at its centre. `None` for a single-phase case, or a contact
/// without a datum pressure (cell pressures given directly).
pub fn initial_water_saturation(case: &Case, c: usize) -> Option<f64> {
    let ow = case.oil_water.as_ref()?;
    match &ow.saturation {
        InitialSaturation::Cells(values) => values.get(c).copied(),
        InitialSaturation::Contact { depth: contact } => {
            let curves = &ow.relperms.get(ow.cell_relperm.of(c))?.curves;
            let z = cell_center_depth(&case.grid, c);
            match equilibrium(case) {
                Some(eq) => Some(eq.water_saturation(curves, z)),
                // Without a datum the phase pressures are not known: the
                // contact still splits water from oil, with no transition.
                None => Some(if z > *contact { 1.0 } else { curves.swc() }),
            }
        }
    }
}

/// The initial water saturation of every cell, in grid order (empty for a
/// single-phase case).
pub fn initial_water_saturations(case: &Case) -> Vec<f64> {
    (0..case.grid.cell_count())
        .map_while(|c| initial_water_saturation(case, c))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::case::Corey;
    use crate::derived::GRAVITY;

    fn liquid(density: f64) -> Fluid {
        Fluid {
            name: None,
            viscosity: 1e-3,
            fvf: 1.0,
            compressibility: 0.0,
            density,
            ref_pressure: 2e7,
        }
    }

    /// Hand-derived: incompressible oil (800 kg/m^3) and water (1000 kg/m^3),
    /// contact at 2000 m. At a height h above it, pc = (1000 - 800) g h =
    /// 200 g h. Corey with swc = 0.2, sor = 0.2, pc_entry = 20 kPa:
    /// pc = 20 kPa (1 - S) with S = (sw - 0.2) / 0.6, so
    /// sw = 0.2 + 0.6 (1 - 200 g h / 20000) = 0.8 - 0.006 g h.
    /// h = 5 m: sw = 0.8 - 0.03 g = 0.8 - 0.2941995 = 0.5058005.
    /// The transition top is where 200 g h = 20 kPa, h = 100 / g = 10.197 m:
    /// above it, sw = swc = 0.2. Below the contact, sw = 1.
    #[test]
    fn the_transition_zone_inverts_a_linear_capillary_pressure() {
        let (oil, water) = (liquid(800.0), liquid(1000.0));
        let eq = Equilibrium {
            oil: &oil,
            water: &water,
            datum_pressure: 2.0e7,
            datum_depth: 1900.0,
            contact: 2000.0,
        };
        let corey = |pc_entry: f64| {
            Curves::Corey(Corey {
                swc: 0.2,
                sor: 0.2,
                krw_end: 0.3,
                kro_end: 0.8,
                nw: 2.0,
                no: 2.0,
                pc_entry,
            })
        };
        let curves = corey(20_000.0);
        // pc at 5 m above the contact: 200 g 5 = 9806.65 Pa.
        assert!((eq.capillary_pressure(1995.0) - 200.0 * GRAVITY * 5.0).abs() < 1e-6);
        let sw = eq.water_saturation(&curves, 1995.0);
        assert!((sw - (0.8 - 0.006 * GRAVITY * 5.0)).abs() < 1e-12, "{sw}");
        assert!((sw - 0.505_800_5).abs() < 1e-9, "{sw}");
        // 1 m above the contact: 0.8 - 0.006 g = 0.7411601.
        assert!((eq.water_saturation(&curves, 1999.0) - 0.741_160_1).abs() < 1e-9);
        // Above the transition zone (10.2 m): connate water.
        assert_eq!(eq.water_saturation(&curves, 1985.0), 0.2);
        // At the contact pc = 0: sw = 1 - sor; below it, water only.
        assert!((eq.water_saturation(&curves, 2000.0) - 0.8).abs() < 1e-12);
        assert_eq!(eq.water_saturation(&curves, 2000.5), 1.0);
        // Without capillary pressure there is no transition: swc right above.
        let sharp = corey(0.0);
        assert_eq!(eq.water_saturation(&sharp, 1999.9), 0.2);
        // The water pressure equals the oil's at the contact and is 200 g h
        // lower 5 m above it.
        assert!((eq.water_pressure(2000.0) - eq.oil_pressure(2000.0)).abs() < 1e-6);
        assert!((eq.oil_pressure(1900.0) - 2.0e7).abs() < 1e-6);
    }
}
