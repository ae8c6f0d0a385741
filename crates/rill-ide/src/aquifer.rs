//! Hover text of an `aquifer` block: its numbers in the report units and
//! the quantities derived from them, from `rill_model::aquifer` (the same
//! functions the simulator uses).

use rill_model::{aquifer, Case};
use rill_units::{display_unit, format_number, Kind, System};

use crate::present::{escape_md, show};

/// `J` in the report system, as reservoir rate per pressure
/// (`rb/day/psi`, `rm3/day/bar`, `m3/s/Pa`): the registry has no display
/// kind of its own for it, so it is composed from the two it divides.
fn productivity(si: f64, sys: System) -> String {
    let rate = display_unit(Kind::ReservoirRate, sys);
    let p = display_unit(Kind::Pressure, sys);
    format!(
        "{} {}/{}",
        format_number(si * p.factor / rate.factor),
        rate.name,
        p.name
    )
}

/// Markdown for the aquifer named `name`: J, W_i, c_t, the initial
/// pressure p_ai at the faces' mean depth, the time constant c_t W_i / J
/// and the faces it holds.
pub(crate) fn aquifer_markdown(
    case: &Case,
    name: &str,
    run: Option<&crate::RunValues>,
) -> Option<String> {
    let a = case.aquifers.iter().find(|a| a.name == name)?;
    let sys = case.report.units;
    let mut s = format!(
        "**aquifer \"{}\"** — {} side, finite (Fetkovich, pseudo-steady)\n\n\
         | | |\n|---|---|\n\
         | productivity J | {} |\n\
         | water volume W_i | {} |\n\
         | compressibility c_t | {} |\n",
        escape_md(&a.name),
        a.side.name(),
        productivity(a.productivity, sys),
        show(a.water_volume, Kind::ReservoirVolume, sys),
        show(a.compressibility, Kind::Compressibility, sys),
    );
    let tau = aquifer::time_constant(a);
    s.push_str(&format!(
        "| time constant c_t W_i / J | {} day |\n",
        format_number(tau / 86400.0)
    ));
    let faces = aquifer::faces(case, a);
    if let (Some(p_ai), Some(depth)) = (
        aquifer::initial_pressure(case, &faces),
        aquifer::mean_depth(&faces),
    ) {
        s.push_str(&format!(
            "| initial pressure p_ai | {} at {} |\n| largest influx c_t W_i p_ai | {} |\n",
            show(p_ai, Kind::Pressure, sys),
            show(depth, Kind::Length, sys),
            show(aquifer::max_influx(a, p_ai), Kind::ReservoirVolume, sys),
        ));
    }
    s.push_str(&format!(
        "\n{} faces of active cells; influx J (p_a - p_face), shared by face area.",
        faces.len()
    ));
    if let Some(section) =
        run.and_then(|run| crate::run_values::flow_section(case, run, &run.aquifers, name))
    {
        s.push_str(&section);
    }
    Some(s)
}
