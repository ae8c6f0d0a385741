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
    match &case.oil_water {
        Some(ow) => {
            liquid_checks(&case.fluid, &oil, Liquid::Oil, spans.main, sys, out);
            liquid_checks(&ow.water, &spans.water, Liquid::Water, spans.main, sys, out);
        }
        None => liquid_checks(&case.fluid, &oil, Liquid::Fluid, spans.main, sys, out),
    }
}

/// Which liquid a block describes: the one `fluid` of a single-phase deck,
/// or the `oil` or the `water` of an oil-water deck.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Liquid {
    Fluid,
    Oil,
    Water,
}

impl Liquid {
    /// What starts the messages that name it: nothing for the one fluid.
    fn prefix(self) -> &'static str {
        match self {
            Liquid::Fluid => "",
            Liquid::Oil => "oil ",
            Liquid::Water => "water ",
        }
    }

    /// Its name as a noun ("a liquid density", "fluid compressibility").
    fn noun(self, single_phase: &'static str) -> &'static str {
        match self {
            Liquid::Fluid => single_phase,
            Liquid::Oil => "oil",
            Liquid::Water => "water",
        }
    }
}

/// The checks of one liquid, each message naming it.
fn liquid_checks(
    f: &Fluid,
    spans: &FluidSpans,
    liquid: Liquid,
    main: Location,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let at = |l: Option<Location>| l.unwrap_or(main);
    let phase = liquid.prefix();
    let fluid_word = liquid.noun("fluid");
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
    } else if liquid == Liquid::Oil && f.fvf < 1.0 {
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
            format!("{fluid_word} compressibility cannot be negative"),
        ));
    } else if f.compressibility > 1e-3 / PSI {
        out.push(Diagnostic::warning(
            Code::SanityCompressibility,
            at(spans.compressibility),
            format!(
                "{fluid_word} compressibility of {} 1/psi is above 1e-3 1/psi; water is about 3e-6 1/psi (common practice, no published source)",
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
                liquid.noun("liquid"),
                show(f.density, Kind::Density, sys)
            ),
        ));
    }
}
