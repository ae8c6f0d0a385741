//! `flow.isolated` with faults: the cells that sealing faults (multiplier
//! 0) cut off from every neighbour (the fault blocks name only a few
//! faces, so only the cells beside those faces are looked at again), and
//! the warning, which points at the fault that cut them off.

use super::cell_name;
use crate::case::{Case, Side};
use crate::derived::{self, Axis, FaceMultipliers};
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::lower::Spans;

/// Whether the face of `c` on `side` carries flow: the rock gives it a
/// positive transmissibility (`plus`, one [`derived::plus_faces_with_flow`]
/// pass per axis x, y, z) and no fault seals it.
fn face_flows(
    case: &Case,
    plus: &[&[bool]; 3],
    mults: &FaceMultipliers,
    c: usize,
    side: Side,
) -> bool {
    let Some((low, axis)) = derived::face_key(&case.grid, c, side) else {
        return false;
    };
    let along = match axis {
        Axis::X => plus[0],
        Axis::Y => plus[1],
        Axis::Z => plus[2],
    };
    along.get(low).copied().unwrap_or(false) && mults.at(&case.grid, c, side) > 0.0
}

/// Active cells that have a face with flow in the rock but none once the
/// sealing faults are applied, in cell order.
pub(super) fn sealed_off(case: &Case, plus: &[&[bool]; 3], mults: &FaceMultipliers) -> Vec<usize> {
    let grid = &case.grid;
    let mut beside: Vec<usize> = mults
        .sealed()
        .flat_map(|(low, axis)| [Some(low), derived::neighbor(grid, low, axis.sides()[1])])
        .flatten()
        .collect();
    beside.sort_unstable();
    beside.dedup();
    beside
        .into_iter()
        .filter(|&c| {
            c < grid.cell_count()
                && case.rock.is_active(c)
                && Side::ALL
                    .iter()
                    .any(|&s| face_flows(case, plus, &FaceMultipliers::default(), c, s))
                && !Side::ALL
                    .iter()
                    .any(|&s| face_flows(case, plus, mults, c, s))
        })
        .collect()
}

/// The first fault (index into `case.faults`) that seals a face of `c`
/// on which the rock alone would let fluid through.
pub(super) fn sealing_fault(case: &Case, plus: &[&[bool]; 3], c: usize) -> Option<usize> {
    let grid = &case.grid;
    let none = FaceMultipliers::default();
    Side::ALL
        .iter()
        .filter(|&&s| face_flows(case, plus, &none, c, s))
        .filter_map(|&s| derived::face_key(grid, c, s))
        .find_map(|key| {
            case.faults
                .iter()
                .position(|f| f.multiplier == 0.0 && f.names_face(grid, key))
        })
}

/// The `flow.isolated` warning for `isolated` (active cells without a
/// face that carries flow, no well and no boundary), if there are any. It
/// points at what cut the first cell off: a sealing fault's multiplier,
/// with the base permeability as related information, when the rock alone
/// would let its fluid through; otherwise at the base permeability.
pub(super) fn isolated_warning(
    case: &Case,
    spans: &Spans,
    mults: &FaceMultipliers,
    plus: &[&[bool]; 3],
    isolated: &[usize],
) -> Option<Diagnostic> {
    let grid = &case.grid;
    let &c = isolated.first()?;
    let base = spans.rock.get("kx").and_then(|v| v.first().copied());
    let message = format!(
        "{} active cell(s) have zero transmissibility on every face and no well, the first {}: their fluid can never move",
        isolated.len(),
        cell_name(grid, c)
    );
    // Point at what cut the first cell off: a sealing fault, when the
    // rock alone would let its fluid through.
    let sealer = if mults.is_empty() {
        None
    } else {
        sealing_fault(case, plus, c)
    };
    let d = match sealer {
        Some(f) => {
            let fault = &case.faults[f];
            let at = spans
                .faults
                .get(f)
                .copied()
                .unwrap_or(Location::new(fault.origin.file, fault.origin.span));
            let d = Diagnostic::warning(
                Code::FlowIsolated,
                at,
                format!("{message}; fault \"{}\" seals them off", fault.name),
            );
            let d = match base {
                Some(b) => d.with_label(b, "the rock alone lets fluid through these cells"),
                None => d,
            };
            d.with_note("raise the fault's multiplier above 0, restrict its `i`, `j`, `k`, or make the cells inactive with porosity 0")
        }
        None => match zeroing_patch(case, spans, c) {
            // A patch that set a permeability to 0 cut them off: the
            // warning stands on that statement, the base as context.
            Some((key, at, (i, j, k))) => {
                let d = Diagnostic::warning(
                    Code::FlowIsolated,
                    at,
                    format!("{message}; this patch sets `{key}` to 0 in cell ({i}, {j}, {k})"),
                );
                let d = match spans.rock.get(key).and_then(|v| v.first().copied()) {
                    Some(b) if b != at => d.with_label(b, format!("the base value of `{key}`")),
                    _ => d,
                };
                d.with_note(
                    "make the cells inactive with porosity 0, or give the patch's cells a permeability above 0",
                )
            }
            None => Diagnostic::warning(Code::FlowIsolated, base.unwrap_or(spans.main), message)
                .with_note(
                "make them inactive with porosity 0, or check the zero permeabilities around them",
            ),
        },
    };
    Some(d)
}

/// The patch whose zero permeability closes a face of isolated cell `c`:
/// for `c` and then each neighbour, for `kx`, `ky`, `kz` in turn, the last
/// patch selecting that cell, when the cell's final value is 0 (the last
/// patch over a cell sets its final value). Returns the key, the patch's
/// value span and the cell (1-based).
fn zeroing_patch(
    case: &Case,
    spans: &Spans,
    c: usize,
) -> Option<(&'static str, Location, (usize, usize, usize))> {
    let grid = &case.grid;
    let rock = &case.rock;
    let cells = std::iter::once(c).chain(
        Side::ALL
            .iter()
            .filter_map(|&side| derived::neighbor(grid, c, side)),
    );
    for cell in cells {
        for (key, values) in [("kx", &rock.kx), ("ky", &rock.ky), ("kz", &rock.kz)] {
            if values.get(cell).copied() != Some(0.0) {
                continue;
            }
            let ijk = grid.ijk(cell);
            let last = spans
                .rock_patches
                .get(key)
                .and_then(|p| p.iter().rev().find(|(_, select)| select.contains(ijk)));
            if let Some((at, _)) = last {
                return Some((key, *at, (ijk.0 + 1, ijk.1 + 1, ijk.2 + 1)));
            }
        }
    }
    None
}
