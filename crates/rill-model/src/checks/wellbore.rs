//! Checks of a wellbore against its cells: the radius against the cell
//! widths, and every skin it is given (in the well block and in events)
//! against Peaceman's equivalent radius.

use super::show;
use crate::case::*;
use crate::derived;
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::lower::WellSpans;
use rill_units::factors::IN as INCH;
use rill_units::{Kind, System};

/// The wellbore radius against the completed cells, and each skin.
pub(super) fn radius_checks(
    case: &Case,
    w_index: usize,
    well: &Well,
    ws: &WellSpans,
    radius_at: Location,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let grid = &case.grid;
    // Radius against the completed cells.
    let half_width = well
        .completions
        .iter()
        .map(|c| {
            let f = derived::wellbore_frame(grid, &case.rock, c);
            0.5 * f.d1.min(f.d2)
        })
        .fold(f64::INFINITY, f64::min);
    if well.radius <= 0.0 {
        out.push(Diagnostic::error(
            Code::SanityRadius,
            radius_at,
            "the wellbore radius must be positive",
        ));
    } else if well.radius >= half_width {
        out.push(Diagnostic::error(
            Code::SanityRadius,
            radius_at,
            format!(
                "a wellbore radius of {} is not below half the cell width ({}); check the unit (in, not ft?)",
                show(well.radius, Kind::Length, sys),
                show(half_width, Kind::Length, sys)
            ),
        ));
    } else if well.radius < INCH {
        out.push(Diagnostic::warning(
            Code::SanityRadius,
            radius_at,
            format!(
                "a wellbore radius of {} is below 1 inch; check the unit",
                show(well.radius, Kind::Length, sys)
            ),
        ));
    } else if let Some(c) = well.completions.first() {
        // Peaceman's model needs r_eq > r_w e^(-s); otherwise the index is
        // meaningless. The skin of the deck, then each skin an event gives.
        let r_eq = derived::well_index(grid, &case.rock, c, well.radius, well.skin).r_eq;
        let ln = (r_eq / well.radius).ln();
        let from_events = ws.event_skins.iter().filter_map(|(event, at)| {
            let skin = case
                .timeline
                .events
                .get(*event)?
                .changes
                .iter()
                .find(|ch| ch.well == w_index && ch.skin.is_some())?
                .skin?;
            Some((skin, *at))
        });
        for (skin, at) in std::iter::once((well.skin, radius_at)).chain(from_events) {
            if ln + skin <= 0.0 {
                out.push(Diagnostic::error(
                    Code::SanityRadius,
                    at,
                    format!(
                        "with skin {} the well index of \"{}\" would not be positive: ln(r_eq / r_w) + s <= 0 (r_eq = {})",
                        skin,
                        well.name,
                        show(r_eq, Kind::Length, sys)
                    ),
                ));
            }
        }
    }
}
