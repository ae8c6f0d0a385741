//! Derived quantities of a finite aquifer (`aquifer` blocks), shared by
//! hover and the simulator so that both show and use the same numbers.
//!
//! The model is the pseudo-steady finite aquifer of Fetkovich (1971): the
//! influx rate (reservoir volume) is `q = J (p_a - p_face)`, and the
//! aquifer's own material balance gives its pressure from the cumulative
//! influx, `p_a = p_ai (1 - W_e / (c_t W_i p_ai)) = p_ai - W_e / (c_t W_i)`.
//! `J` is spread over the faces in proportion to their area; each face
//! sees the aquifer pressure moved along the hydrostat of the case's fluid
//! from the faces' mean depth to its own depth.

use crate::case::{Aquifer, Case, Initial, Side};
use crate::derived;

/// One outer face of an active cell held by an aquifer.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AquiferFace {
    /// The grid cell index.
    pub cell: usize,
    /// Face area, m^2.
    pub area: f64,
    /// Depth of the face centre, m.
    pub depth: f64,
    /// The face's share of the aquifer's productivity (area over the total
    /// area of the aquifer's faces); the shares sum to 1.
    pub share: f64,
}

/// The faces of active cells an aquifer holds, in grid order, with their
/// shares of its productivity. Empty when every selected cell is inactive.
pub fn faces(case: &Case, aq: &Aquifer) -> Vec<AquiferFace> {
    let grid = &case.grid;
    let mut out: Vec<AquiferFace> = aq
        .cells(grid)
        .into_iter()
        .filter(|&c| case.rock.is_active(c))
        .map(|c| {
            let centre = derived::cell_center_depth(grid, c);
            let half = 0.5 * grid.dz[c];
            let depth = match aq.side {
                Side::Top => centre - half,
                Side::Bottom => centre + half,
                _ => centre,
            };
            AquiferFace {
                cell: c,
                area: derived::face_area(grid, c, aq.side),
                depth,
                share: 0.0,
            }
        })
        .collect();
    let total: f64 = out.iter().map(|f| f.area).sum();
    if total > 0.0 {
        for f in &mut out {
            f.share = f.area / total;
        }
    }
    out
}

/// The area-weighted mean depth of the faces, m; `None` without a face.
pub fn mean_depth(faces: &[AquiferFace]) -> Option<f64> {
    let total: f64 = faces.iter().map(|f| f.area).sum();
    (total > 0.0).then(|| faces.iter().map(|f| f.area * f.depth).sum::<f64>() / total)
}

/// The initial aquifer pressure `p_ai`, Pa: the initial equilibrium
/// pressure at the faces' mean depth. With a datum, the hydrostat through
/// it (in an oil-water case initialised from a water contact, the water's
/// hydrostat through the contact, as the engine starts the aquifer, even
/// where the faces' mean depth lies above the contact); with cell
/// pressures, the area-weighted mean of each face cell's pressure moved
/// along the hydrostat to the mean depth.
pub fn initial_pressure(case: &Case, faces: &[AquiferFace]) -> Option<f64> {
    let depth = mean_depth(faces)?;
    if let Some(eq) = derived::saturation::equilibrium(case) {
        return Some(eq.water_pressure(depth));
    }
    match &case.initial {
        Initial::Datum { .. } => crate::checks::initial_pressure_at(case, depth),
        Initial::Cells(p) => {
            let total: f64 = faces.iter().map(|f| f.area).sum();
            let sum: f64 = faces
                .iter()
                .map(|f| {
                    let centre = derived::cell_center_depth(&case.grid, f.cell);
                    f.area * derived::hydrostatic_pressure(&case.fluid, p[f.cell], centre, depth)
                })
                .sum();
            Some(sum / total)
        }
    }
}

/// The time constant `c_t W_i / J`, s: the e-folding time of the influx
/// from a reservoir held at a constant pressure.
pub fn time_constant(aq: &Aquifer) -> f64 {
    aq.compressibility * aq.water_volume / aq.productivity
}

/// Fetkovich's maximum encroachable water `W_ei = c_t W_i p_ai`, reservoir m^3:
/// the influx that would bring the aquifer to zero pressure.
pub fn max_influx(aq: &Aquifer, p_ai: f64) -> f64 {
    aq.compressibility * aq.water_volume * p_ai
}

/// The aquifer pressure after a cumulative influx `w_e` (reservoir m^3)
/// from its material balance: `p_ai (1 - W_e / W_ei)`.
pub fn pressure_after(aq: &Aquifer, p_ai: f64, w_e: f64) -> f64 {
    p_ai - w_e / (aq.compressibility * aq.water_volume)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::case::{Origin, Selection};

    fn aq() -> Aquifer {
        Aquifer {
            name: "A".into(),
            side: Side::South,
            select: Selection::default(),
            water_volume: 4.0e8,
            compressibility: 1.0e-9,
            productivity: 2.0e-9,
            origin: Origin::default(),
        }
    }

    /// The material balance is Fetkovich's `p_a = p_ai (1 - W_e / W_ei)`:
    /// half the maximum encroachable water halves the pressure.
    #[test]
    fn material_balance_matches_the_fetkovich_form() {
        let a = aq();
        let p_ai = 2.0e7;
        let w_ei = max_influx(&a, p_ai);
        assert!((w_ei / (1.0e-9 * 4.0e8 * 2.0e7) - 1.0).abs() < 1e-15);
        assert!((pressure_after(&a, p_ai, 0.5 * w_ei) / 1.0e7 - 1.0).abs() < 1e-15);
        // 1e-9 1/Pa * 4e8 m^3 / 2e-9 m^3/s/Pa = 2e8 s.
        assert!((time_constant(&a) / 2.0e8 - 1.0).abs() < 1e-15);
    }
}
