//! The liquids' sanity: viscosity, formation volume factor, density and
//! compressibility of the one fluid of a single-phase deck, or of the oil
//! and the water of an oil-water deck, each named in its messages.

use super::show;
use crate::case::{Case, Fluid};
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::lower::{FluidSpans, Spans};
use rill_units::factors::{CP, PSI};
use rill_units::{Kind, System};

pub(super) fn fluid_checks(case: &Case, spans: &Spans, sys: System, out: &mut Vec<Diagnostic>) {
    let oil = FluidSpans {
        viscosity: spans.viscosity,
        fvf: spans.fvf,
        density: spans.density,
        compressibility: spans.fluid_compressibility,
    };
    // In an oil-water deck each phase is checked, and named.
    let (oil_name, water) = match &case.oil_water {
        Some(ow) => ("oil ", Some(&ow.water)),
        None => ("", None),
    };
    liquid_checks(&case.fluid, &oil, oil_name, spans.main, sys, out);
    if let Some(water) = water {
        liquid_checks(water, &spans.water, "water ", spans.main, sys, out);
    }
}

/// The checks of one liquid (`fluid`, `oil` or `water`); `phase` ("",
/// "oil " or "water ") starts the messages that name it.
fn liquid_checks(
    f: &Fluid,
    spans: &FluidSpans,
    phase: &str,
    main: Location,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let at = |l: Option<Location>| l.unwrap_or(main);
    let fluid_word = if phase.is_empty() { "fluid " } else { phase };
    if f.viscosity <= 0.0 {
        out.push(Diagnostic::error(
            Code::SanityViscosity,
            at(spans.viscosity),
            format!("{phase}viscosity must be positive"),
        ));
    } else if !(0.01 * CP..=10_000.0 * CP).contains(&f.viscosity) {
        out.push(Diagnostic::warning(
            Code::SanityViscosity,
            at(spans.viscosity),
            format!(
                "{phase}viscosity of {} cP is outside 0.01 to 10000 cP; check the unit (cP, not Pa*s?)",
                crate::values::short_number(f.viscosity / CP)
            ),
        ));
    }
    if f.fvf <= 0.0 {
        out.push(Diagnostic::error(
            Code::SanityFvf,
            at(spans.fvf),
            format!("the {phase}formation volume factor must be positive"),
        ));
    } else if !(0.5..=3.0).contains(&f.fvf) {
        out.push(
            Diagnostic::warning(
                Code::SanityFvf,
                at(spans.fvf),
                format!(
                    "a {phase}formation volume factor of {} rb/stb is outside 0.5 to 3 rb/stb",
                    crate::values::short_number(f.fvf)
                ),
            )
            .with_note(
                "a liquid's fvf is close to 1 rb/stb; a value near 1/fvf may be upside down",
            ),
        );
    } else if phase == "oil " && f.fvf < 1.0 {
        // Reservoir oil holds its dissolved gas: it fills more room than
        // the stock-tank oil it gives (common practice, no published source
        // for a bound; dead oils sit just above 1).
        out.push(
            Diagnostic::warning(
                Code::SanityFvf,
                at(spans.fvf),
                format!(
                    "an oil formation volume factor of {} rb/stb is below 1: oil in the reservoir holds its dissolved gas and fills more room than the stock-tank oil it gives",
                    crate::values::short_number(f.fvf)
                ),
            )
            .with_note(format!(
                "is it upside down? 1/fvf is {} rb/stb",
                crate::values::short_number(1.0 / f.fvf)
            )),
        );
    }
    if f.compressibility < 0.0 {
        out.push(Diagnostic::error(
            Code::SanityCompressibility,
            at(spans.compressibility),
            format!("{fluid_word}compressibility cannot be negative"),
        ));
    } else if f.compressibility > 1e-3 / PSI {
        out.push(Diagnostic::warning(
            Code::SanityCompressibility,
            at(spans.compressibility),
            format!(
                "{fluid_word}compressibility of {} 1/psi is above 1e-3 1/psi; water is about 3e-6 1/psi (common practice, no published source)",
                crate::values::short_number(f.compressibility * PSI)
            ),
        ));
    }
    if !(500.0..=1300.0).contains(&f.density) {
        out.push(Diagnostic::warning(
            Code::SanityDensity,
            at(spans.density),
            format!(
                "a {} density of {} is outside 500 to 1300 kg/m^3",
                if phase.is_empty() {
                    "liquid"
                } else {
                    phase.trim_end()
                },
                show(f.density, Kind::Density, sys)
            ),
        ));
    }
}
