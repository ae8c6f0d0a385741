//! Checks of an oil-water case that need the whole case: the endpoint
//! mobility ratio of each `relperm` block (`sanity.mobility`), the water
//! contact against the grid (`initial.contact`) and an initial water
//! saturation given per cell (`deck.out-of-range`).

use super::*;
use crate::derived::saturation;

/// Above this endpoint mobility ratio a displacement is unstable: water
/// fingers through the oil (common practice, no published source: the
/// ratio 1 is the theoretical limit of a stable piston-like front, and
/// about 10 is where fingering dominates a field-scale flood).
const MOBILITY_RATIO_NOTE: f64 = 10.0;

/// Every check of an oil-water case; nothing for a single-phase case.
pub(super) fn oil_water_checks(
    case: &Case,
    spans: &Spans,
    reuse: Option<&Reuse>,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let Some(ow) = &case.oil_water else {
        return;
    };
    mobility(case, ow, out);
    match &ow.saturation {
        InitialSaturation::Contact { depth } => contact(case, *depth, spans, sys, out),
        InitialSaturation::Cells(values) => given(case, values, spans, reuse, out),
    }
}

/// `sanity.mobility`: the endpoint mobility ratio of each curve set that a
/// cell uses, with the deck's viscosities.
fn mobility(case: &Case, ow: &OilWater, out: &mut Vec<Diagnostic>) {
    let (mu_o, mu_w) = (case.fluid.viscosity, ow.water.viscosity);
    if mu_o <= 0.0 || mu_w <= 0.0 {
        return; // `sanity.viscosity` says why
    }
    for r in &ow.relperms {
        let m = r.curves.mobility_ratio(mu_w, mu_o);
        if m.is_nan() || m <= MOBILITY_RATIO_NOTE {
            continue;
        }
        let (krw, kro) = r.curves.endpoints();
        out.push(
            Diagnostic::info(
                Code::SanityMobility,
                Location::new(r.origin.file, r.origin.span),
                format!(
                    "the endpoint mobility ratio (krw_end / mu_w) / (kro_end / mu_o) of \"{}\" is {} = ({} / {} cP) / ({} / {} cP), above {}: an unstable, fingering flood",
                    r.name,
                    crate::values::short_number(m),
                    crate::values::short_number(krw),
                    crate::values::short_number(mu_w / CP),
                    crate::values::short_number(kro),
                    crate::values::short_number(mu_o / CP),
                    MOBILITY_RATIO_NOTE
                ),
            )
            .with_note("water fingers through the oil, and a coarse grid smears the fingers: expect earlier water and a slower climb of the water cut than it shows")
            .with_note("hover on the relperm block gives the Buckley-Leverett front and breakthrough of these curves"),
        );
    }
}

/// `initial.contact`: a contact above the top of the grid (every cell full
/// of water) or below its base (no cell in the water).
fn contact(case: &Case, depth: f64, spans: &Spans, sys: System, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    let (top, base) = derived::grid_extent(grid);
    let at = spans.water_contact.unwrap_or(spans.main);
    let range = format!(
        "the grid reaches from {} to {} deep",
        show(top, Kind::Length, sys),
        show(base, Kind::Length, sys)
    );
    if depth < top {
        out.push(
            Diagnostic::warning(
                Code::InitialContact,
                at,
                format!(
                    "the water contact at {} lies above the top of the grid ({range}): every cell starts full of water, with no oil to displace",
                    show(depth, Kind::Length, sys)
                ),
            )
            .with_note("check the depth's unit (m or ft) and that depth grows downward"),
        );
    } else if depth > base {
        // How far the transition zone reaches above the contact: where the
        // capillary pressure of the equilibrium meets the curves' highest.
        let reach = saturation::equilibrium(case).and_then(|eq| {
            let ow = case.oil_water.as_ref()?;
            let pc_max = ow
                .relperms
                .iter()
                .map(|r| r.curves.pc_max())
                .fold(0.0, f64::max);
            let gradient = eq.capillary_pressure(depth - 1.0);
            (gradient > 0.0).then(|| pc_max / gradient)
        });
        let transition = match reach {
            Some(h) if depth - h < base => format!(
                "only the capillary transition zone ({} high) reaches into the grid",
                show(h, Kind::Length, sys)
            ),
            _ => {
                "no cell reaches the capillary transition zone: every cell starts at connate water"
                    .to_string()
            }
        };
        out.push(
            Diagnostic::warning(
                Code::InitialContact,
                at,
                format!(
                    "the water contact at {} lies below the base of the grid ({range}): no cell starts in the water",
                    show(depth, Kind::Length, sys)
                ),
            )
            .with_note(transition)
            .with_note("a reservoir without a water leg may be meant; otherwise check the depth and its unit"),
        );
    }
}

/// A water saturation given per cell must lie between 0 and 1 in active cells.
fn given(
    case: &Case,
    values: &CellValues,
    spans: &Spans,
    reuse: Option<&Reuse>,
    out: &mut Vec<Diagnostic>,
) {
    let bad = kept_offenders(reuse, "water saturation outside 0..1", values, |v| {
        !(0.0..=1.0).contains(&v)
    });
    if let Some((count, c)) = bad {
        out.push(
            Diagnostic::error(
                Code::DeckOutOfRange,
                spans.water_saturation.unwrap_or(spans.main),
                format!(
                    "a water saturation lies between 0 and 1; {count} cell(s) are outside, the first {} with {}",
                    cell_name(&case.grid, c),
                    crate::values::short_number(values[c])
                ),
            )
            .with_note("write a fraction (0.25) or a percentage with its unit (25 %)"),
        );
    }
}
