//! Face fluxes from a pressure field: the flow through every interior face
//! with the same two-point formula the assembly uses (transmissibility with
//! fault multipliers, face mobility, face density and gravity), so what the
//! result set records is what the run moved.

use rill_model::derived::{self, GRAVITY};
use rill_model::{Case, RunKind};

use crate::pvt::Pvt;

/// Surface flux through the `+i`, `+j` and `+k` face of every grid cell,
/// m^3/s at surface conditions, positive towards the larger index; 0 on the
/// grid's edge and between cells without a connection.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct FaceFluxes {
    /// Through the east face (`+i`) of each cell.
    pub x: Vec<f64>,
    /// Through the north face (`+j`) of each cell.
    pub y: Vec<f64>,
    /// Through the bottom face (`+k`) of each cell.
    pub z: Vec<f64>,
}

/// The face fluxes at the last report time of a run of `case`: of the one
/// liquid, or of oil plus water in an oil-water run (at the last oil
/// pressures and saturations). `None` without cell values.
pub fn last_face_fluxes(case: &Case, results: &crate::RunResults) -> Option<FaceFluxes> {
    let p = results.pressure.last()?;
    match &results.oil_water {
        Some(ow) => crate::oilwater::liquid_face_fluxes(case, p, ow.saturation.last()?),
        None => face_fluxes(case, p),
    }
}

/// Which axis array a connection from `a` to `b` (b > a) writes.
pub(crate) fn axis_of<'f>(
    case: &Case,
    out: &'f mut FaceFluxes,
    a: usize,
    b: usize,
) -> &'f mut Vec<f64> {
    let grid = &case.grid;
    let (ia, ja, _) = grid.ijk(a);
    let (ib, jb, _) = grid.ijk(b);
    if ib != ia {
        &mut out.x
    } else if jb != ja {
        &mut out.y
    } else {
        &mut out.z
    }
}

/// The face fluxes of `case` at `pressure` (Pa, one value per grid cell),
/// with the fluid model of the run kind (steady runs are incompressible).
/// `None` when `pressure` does not have one value per cell.
pub fn face_fluxes(case: &Case, pressure: &[f64]) -> Option<FaceFluxes> {
    let grid = &case.grid;
    let n = grid.cell_count();
    if pressure.len() != n {
        return None;
    }
    let full = Pvt::new(&case.fluid, &case.rock);
    let pvt = if case.timeline.kind == RunKind::Steady {
        full.incompressible()
    } else {
        full
    };
    let mut out = FaceFluxes {
        x: vec![0.0; n],
        y: vec![0.0; n],
        z: vec![0.0; n],
    };
    let rho_per_b = pvt.rho_ref * pvt.b_ref;
    let depth = derived::cell_center_depths(grid);
    for conn in derived::case_connections(case) {
        let (a, b) = (conn.a, conn.b);
        let (pa, pb) = (pressure[a], pressure[b]);
        let (ba, bb) = (pvt.b(pa).0, pvt.b(pb).0);
        // As in the assembly: the face density from the smaller index's side.
        let (rho, _, _) = pvt.face_rho_from(rho_per_b * ba, pa, pb);
        let dd = depth[a] - depth[b];
        let phi = (pa - pb) - rho * GRAVITY * dd;
        let flux = conn.geometric_trans * 0.5 * (ba + bb) / pvt.mu * phi;
        axis_of(case, &mut out, a, b)[a] = flux;
    }
    Some(out)
}
