//! What is known about one cell: its properties, its six faces (neighbour,
//! harmonic face permeability, transmissibility with the fault multiplier
//! and without) and the wells completed in
//! it (Peaceman radius, well index, productivity). `rill inspect` and the
//! editor hover both render this, so they always show the same numbers,
//! which are the numbers the simulator assembles (`derived`).

use crate::case::{Case, Direction, Role, Side};
use crate::derived;

/// All values in SI.
#[derive(Debug, Clone, PartialEq)]
pub struct CellReport {
    /// 1-based indices.
    pub i: usize,
    /// 1-based j.
    pub j: usize,
    /// 1-based k.
    pub k: usize,
    /// Whether the cell takes part in flow (porosity above zero).
    pub active: bool,
    /// Cell sizes (dx, dy, dz), m.
    pub size: (f64, f64, f64),
    /// Depth of the cell centre, m.
    pub depth: f64,
    /// Fraction.
    pub porosity: f64,
    /// m^2
    pub kx: f64,
    /// m^2
    pub ky: f64,
    /// m^2
    pub kz: f64,
    /// Reservoir m^3 at the rock reference pressure.
    pub pore_volume: f64,
    /// The six faces, in the order of `Side::ALL`.
    pub faces: Vec<FaceReport>,
    /// Wells completed in the cell.
    pub wells: Vec<WellReport>,
    /// Oil-water cases: the label of the `relperm` block the cell uses.
    pub relperm: Option<String>,
    /// Oil-water cases: the initial water saturation, given or from the
    /// contact's capillary-gravity equilibrium (`derived::saturation`).
    pub water_saturation: Option<f64>,
    /// Oil-water cases: the phases at the initial saturation, from the
    /// cell's curves and the deck's viscosities.
    pub phases: Option<PhaseReport>,
}

/// The two phases of a cell at its initial water saturation, SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhaseReport {
    /// Water relative permeability.
    pub krw: f64,
    /// Oil relative permeability.
    pub kro: f64,
    /// Water mobility `krw / mu_w`, 1/(Pa s).
    pub water_mobility: f64,
    /// Oil mobility `kro / mu_o`, 1/(Pa s).
    pub oil_mobility: f64,
}

/// One face of the cell in a [`CellReport`], SI.
#[derive(Debug, Clone, PartialEq)]
pub struct FaceReport {
    /// Which face.
    pub side: Side,
    /// 1-based indices of the neighbour; `None` on the grid's edge.
    pub neighbor: Option<(usize, usize, usize)>,
    /// The boundary on this face, if the face is on the grid's edge and a boundary lies there.
    pub boundary: Option<String>,
    /// The aquifer on this face, if the face is on the grid's edge and an
    /// aquifer holds it (its influx follows the aquifer's productivity, not
    /// this face's transmissibility, which stays 0).
    pub aquifer: Option<String>,
    /// Harmonic face permeability (the cell's own on a boundary face), m^2.
    pub perm_face: f64,
    /// k A / L times the fault multiplier, m^3: the number the simulator assembles.
    pub geometric_trans: f64,
    /// With viscosity and formation volume factor (the oil's in an
    /// oil-water case): surface m^3 / (s Pa).
    pub trans: f64,
    /// The product of the multipliers of the faults on this face (1 without one).
    pub multiplier: f64,
    /// `trans` before the fault multiplier, surface m^3 / (s Pa).
    pub unmodified_trans: f64,
}

/// A well completed in the cell of a [`CellReport`], SI.
#[derive(Debug, Clone, PartialEq)]
pub struct WellReport {
    /// The well's name.
    pub name: String,
    /// Producer or injector.
    pub role: Role,
    /// The axis the wellbore runs along in the cell.
    pub direction: Direction,
    /// Peaceman equivalent radius, m.
    pub r_eq: f64,
    /// Geometric well index 2 pi sqrt(k1 k2) L / (ln(r_eq / r_w) + s), m^3,
    /// with the permeabilities normal to the wellbore and the length along it.
    pub well_index: f64,
    /// Well index with viscosity and formation volume factor: surface m^3 / (s Pa).
    /// In an oil-water case, the oil's, with kr = 1.
    pub productivity: f64,
    /// Oil-water cases: each phase's productivity at the cell's initial
    /// saturation, `WI kr / (mu B)`, oil then water, surface m^3 / (s Pa).
    pub phase_productivity: Option<(f64, f64)>,
}

/// The report for 0-based cell `(i, j, k)`; `None` outside the grid.
pub fn cell_report(case: &Case, i: usize, j: usize, k: usize) -> Option<CellReport> {
    let g = &case.grid;
    if i >= g.nx || j >= g.ny || k >= g.nz {
        return None;
    }
    let c = g.index(i, j, k);
    let rock = &case.rock;
    let mults = derived::FaceMultipliers::of(case);
    let faces = derived::cell_faces(case, c)
        .iter()
        .map(|(side, face)| {
            let n = derived::neighbor(g, c, *side);
            let boundary = if n.is_none() {
                case.boundaries
                    .iter()
                    .find(|b| b.side == *side && b.covers(g, c))
                    .map(|b| b.name.clone())
            } else {
                None
            };
            let aquifer = if n.is_none() {
                case.aquifers
                    .iter()
                    .find(|a| a.side == *side && a.covers(g, c))
                    .map(|a| a.name.clone())
            } else {
                None
            };
            let (perm_face, unmodified) = face
                .map(|f| (f.perm, f.geometric_trans))
                .unwrap_or((0.0, 0.0));
            let multiplier = mults.at(g, c, *side);
            FaceReport {
                side: *side,
                neighbor: n.map(|n| {
                    let (a, b, d) = g.ijk(n);
                    (a + 1, b + 1, d + 1)
                }),
                boundary,
                aquifer,
                perm_face,
                geometric_trans: unmodified * multiplier,
                trans: derived::fluid_trans(case, unmodified * multiplier),
                multiplier,
                unmodified_trans: derived::fluid_trans(case, unmodified),
            }
        })
        .collect();
    let wells = case
        .wells
        .iter()
        .flat_map(|w| {
            w.completions
                .iter()
                .filter(|comp| comp.cell == c)
                .map(move |comp| (w, comp))
        })
        .map(|(w, comp)| {
            let wi = derived::well_index(g, rock, comp, w.radius, w.skin);
            let phase_productivity = phase_productivity(case, c, wi.geometric);
            WellReport {
                name: w.name.clone(),
                role: w.role,
                direction: comp.direction,
                r_eq: wi.r_eq,
                well_index: wi.geometric,
                productivity: derived::fluid_trans(case, wi.geometric),
                phase_productivity,
            }
        })
        .collect();
    Some(CellReport {
        i: i + 1,
        j: j + 1,
        k: k + 1,
        active: rock.is_active(c),
        size: derived::cell_size(g, c),
        depth: derived::cell_center_depth(g, c),
        porosity: rock.porosity[c],
        kx: rock.kx[c],
        ky: rock.ky[c],
        kz: rock.kz[c],
        pore_volume: derived::pore_volume(g, rock, c),
        faces,
        wells,
        relperm: case
            .oil_water
            .as_ref()
            .and_then(|ow| ow.relperms.get(ow.cell_relperm.of(c)))
            .map(|r| r.name.clone()),
        water_saturation: derived::saturation::initial_water_saturation(case, c),
        phases: phases(case, c),
    })
}

/// Each phase's productivity, oil then water, of a completion with
/// geometric well index `well_index` (m^3) in cell `c` of an oil-water
/// case, at the cell's initial saturation: `WI kr / (mu B)`, surface
/// m^3 / (s Pa). `None` for a single-phase case.
pub fn phase_productivity(case: &Case, c: usize, well_index: f64) -> Option<(f64, f64)> {
    let ow = case.oil_water.as_ref()?;
    let ph = phases(case, c)?;
    Some((
        well_index * ph.oil_mobility / case.fluid.fvf,
        well_index * ph.water_mobility / ow.water.fvf,
    ))
}

/// The phases of cell `c` of an oil-water case at its initial saturation.
fn phases(case: &Case, c: usize) -> Option<PhaseReport> {
    let sw = derived::saturation::initial_water_saturation(case, c)?;
    phases_at(case, c, sw)
}

/// The phases of cell `c` of an oil-water case at water saturation `sw`
/// (a run's, say), from the cell's curves and the deck's viscosities;
/// `None` for a single-phase case.
pub fn phases_at(case: &Case, c: usize, sw: f64) -> Option<PhaseReport> {
    let ow = case.oil_water.as_ref()?;
    let curves = &ow.relperms.get(ow.cell_relperm.of(c))?.curves;
    let (krw, kro) = (curves.krw(sw), curves.kro(sw));
    Some(PhaseReport {
        krw,
        kro,
        water_mobility: krw / ow.water.viscosity,
        oil_mobility: kro / case.fluid.viscosity,
    })
}
