//! Hover text of a `relperm` block: its curves, which cells use them, and
//! with the deck's oil and water viscosities the endpoint mobility ratio
//! and the one-dimensional waterflood they give (Buckley-Leverett
//! fractional flow with Welge's tangent), all from
//! `rill_model::derived::relperm`, the functions a two-phase engine and the
//! checks use.

use rill_model::{Case, Curves, Relperm};
use rill_units::{format_number, Kind};

use crate::present::{escape_md, show};

/// Water saturations at which the curves are tabulated in the hover.
const ROWS: usize = 6;

/// A fraction with four significant digits.
fn frac(v: f64) -> String {
    format_number((v * 1e4).round() / 1e4)
}

/// The curves in words: the Corey parameters, or the table's size and ends.
fn curves_line(r: &Relperm, case: &Case) -> String {
    let sys = case.report.units;
    match &r.curves {
        Curves::Corey(c) => format!(
            "Corey: swc {}, sor {}, krw_end {}, kro_end {}, nw {}, no {}, pc_entry {}",
            frac(c.swc),
            frac(c.sor),
            frac(c.krw_end),
            frac(c.kro_end),
            format_number(c.nw),
            format_number(c.no),
            show(c.pc_entry, Kind::Pressure, sys)
        ),
        Curves::Table(t) => format!(
            "table of {} rows, sw {} to {}",
            t.sw.len(),
            frac(r.curves.swc()),
            frac(t.sw.last().copied().unwrap_or(0.0))
        ),
    }
}

/// Markdown for the `relperm` block labelled `name` of an oil-water case.
pub(crate) fn relperm_markdown(case: &Case, name: &str) -> Option<String> {
    let ow = case.oil_water.as_ref()?;
    let index = ow.relperms.iter().position(|r| r.name == name)?;
    let r = &ow.relperms[index];
    let curves = &r.curves;
    let sys = case.report.units;
    let (mu_o, mu_w) = (case.fluid.viscosity, ow.water.viscosity);
    let cells = (0..case.grid.cell_count())
        .filter(|&c| ow.cell_relperm.of(c) == index && case.rock.is_active(c))
        .count();
    let mut s = format!(
        "**relperm \"{}\"** — {}\n\nused by {cells} active cell{}\n\n",
        escape_md(&r.name),
        curves_line(r, case),
        if cells == 1 { "" } else { "s" }
    );
    let (swc, end) = (curves.swc(), curves.sw_max());
    let (krw_end, kro_end) = curves.endpoints();
    s.push_str(&format!(
        "With oil {} and water {}:\n\n| | |\n|---|---:|\n",
        show(mu_o, Kind::Viscosity, sys),
        show(mu_w, Kind::Viscosity, sys)
    ));
    s.push_str(&format!(
        "| endpoint mobility ratio M = (krw_end / mu_w) / (kro_end / mu_o) | {} = ({} / {}) / ({} / {}) |\n",
        format_number(curves.mobility_ratio(mu_w, mu_o)),
        frac(krw_end),
        show(mu_w, Kind::Viscosity, sys),
        frac(kro_end),
        show(mu_o, Kind::Viscosity, sys)
    ));
    match curves.welge(mu_w, mu_o) {
        Some(w) => s.push_str(&format!(
            "| water saturation behind the front S_wf | {} |\n\
             | fractional flow at the front f_w(S_wf) | {} |\n\
             | average water saturation behind the front at breakthrough | {} |\n\
             | pore volumes injected at breakthrough 1 / f_w'(S_wf) | {} |\n\
             | oil recovered at breakthrough | {} % of the oil in place |\n\n\
             A one-dimensional waterflood from sw = {}: Buckley-Leverett fractional flow \
             f_w = (krw / mu_w) / (krw / mu_w + kro / mu_o), no gravity or capillarity; \
             Welge's tangent from (swc, 0).\n\n",
            frac(w.front_saturation),
            frac(w.front_fractional_flow),
            frac(w.average_saturation),
            frac(w.breakthrough_pore_volumes),
            format_number((w.breakthrough_recovery * 1000.0).round() / 10.0),
            frac(swc)
        )),
        None => {
            s.push_str("\nno waterflood front: the viscosities or the curves leave no flow\n\n")
        }
    }
    let p_unit = rill_units::display_unit(Kind::Pressure, sys).name;
    s.push_str(&format!(
        "| sw | krw | kro | pc [{p_unit}] | f_w |\n|---:|---:|---:|---:|---:|\n"
    ));
    for n in 0..ROWS {
        let sw = swc + (end - swc) * n as f64 / (ROWS - 1) as f64;
        s.push_str(&format!(
            "| {} | {} | {} | {} | {} |\n",
            frac(sw),
            frac(curves.krw(sw)),
            frac(curves.kro(sw)),
            format_number(rill_units::display_unit(Kind::Pressure, sys).from_si(curves.pc(sw))),
            frac(curves.fractional_flow(sw, mu_w, mu_o))
        ));
    }
    Some(s)
}
