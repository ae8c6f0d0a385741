//! Rendering model numbers for the editor: cell reports, wells and
//! quantities in the report system and in SI, with the number format of
//! `rill inspect` (`rill_units::format_number`), so that hover and the
//! command line show the same digits.

use rill_model::inspect::{self, cell_report, CellReport};
use rill_model::{derived, Case, Control, Role};
use rill_units::{display_unit, format_number, Dim, Kind, System};

use crate::run_values::{self, RunValues};

/// The display kind of a dimension; `perm` picks permeability over area.
pub(crate) fn kind_of(dim: Dim, perm: bool) -> Option<Kind> {
    if dim == Dim::AREA {
        return Some(if perm { Kind::Permeability } else { Kind::Area });
    }
    Kind::ALL.into_iter().find(|k| k.dim() == dim)
}

/// Whether a unit expression is a permeability unit rather than an area.
pub(crate) fn is_perm_unit(text: &str) -> bool {
    text.contains("md") || text.contains("mD") || text.contains("darcy")
}

/// The system whose display unit of `kind` is written `unit`, if any.
pub(crate) fn system_of(unit: &str, kind: Kind) -> Option<System> {
    System::ALL
        .into_iter()
        .find(|s| display_unit(kind, *s).name == unit)
}

pub(crate) fn role_name(r: Role) -> &'static str {
    match r {
        Role::Producer => "producer",
        Role::Injector => "injector",
    }
}

/// `si` in the display unit of `kind` under `system`, e.g. `"1250.3 psi"`.
pub(crate) fn show(si: f64, kind: Kind, system: System) -> String {
    rill_units::format_si(si, kind, system)
}

fn num(si: f64, kind: Kind, system: System) -> String {
    format_number(display_unit(kind, system).from_si(si))
}

/// The report system of a case, and the second system shown beside it (SI
/// unless the report is in SI already).
fn systems(case: &Case) -> (System, Option<System>) {
    let sys = case.report.units;
    (sys, (sys != System::Si).then_some(System::Si))
}

/// Markdown for the cell `(i, j, k)` (0-based) with a heading line; `None`
/// outside the grid.
pub(crate) fn cell_markdown(
    case: &Case,
    i: usize,
    j: usize,
    k: usize,
    heading: &str,
    run: Option<&RunValues>,
) -> Option<String> {
    let r = cell_report(case, i, j, k)?;
    let mut s = render_cell(case, &r, heading);
    let c = case.grid.index(i, j, k);
    if let Some(section) = run.and_then(|run| run_values::cell_section(case, run, c)) {
        s.push_str(&section);
    }
    Some(s)
}

/// The oil-water rows of a cell's table: its curves, its initial
/// saturation and the phases there (empty for a single-phase case).
fn phase_rows(case: &Case, r: &CellReport, sys: System) -> String {
    let mut s = String::new();
    if let Some(name) = &r.relperm {
        s.push_str(&format!("| relperm | \"{}\" |\n", escape_md(name)));
    }
    if let Some(sw) = r.water_saturation {
        let how = match case.oil_water.as_ref().map(|ow| &ow.saturation) {
            Some(rill_model::InitialSaturation::Contact { .. }) => "from the water contact",
            _ => "given",
        };
        s.push_str(&format!(
            "| initial water saturation | {} ({how}) |\n",
            format_number(sw)
        ));
    }
    if let Some(ph) = r.phases {
        // Mobility in 1/cP outside SI, as viscosities are quoted.
        let (per, mob_unit) = if sys == System::Si {
            (1.0, "1/(Pa s)")
        } else {
            (1e-3, "1/cP")
        };
        s.push_str(&format!(
            "| krw, kro (initial) | {}, {} |\n| water, oil mobility kr/mu | {}, {} {mob_unit} |\n",
            format_number(ph.krw),
            format_number(ph.kro),
            format_number(ph.water_mobility * per),
            format_number(ph.oil_mobility * per)
        ));
    }
    s
}

fn render_cell(case: &Case, r: &CellReport, heading: &str) -> String {
    let (sys, second) = systems(case);
    let len = display_unit(Kind::Length, sys).name;
    let perm = display_unit(Kind::Permeability, sys).name;
    let mut s = String::new();
    s.push_str(&format!("**cell ({}, {}, {})**", r.i, r.j, r.k));
    if !r.active {
        s.push_str(" — inactive (porosity 0)");
    }
    if !heading.is_empty() {
        s.push_str(" — ");
        s.push_str(heading);
    }
    s.push_str("\n\n");
    s.push_str("| property | value |\n|---|---|\n");
    s.push_str(&format!(
        "| size | {} x {} x {} {len} |\n",
        num(r.size.0, Kind::Length, sys),
        num(r.size.1, Kind::Length, sys),
        num(r.size.2, Kind::Length, sys)
    ));
    s.push_str(&format!(
        "| depth (centre) | {} {len} |\n",
        num(r.depth, Kind::Length, sys)
    ));
    s.push_str(&format!("| porosity | {} |\n", format_number(r.porosity)));
    s.push_str(&format!(
        "| kx, ky, kz | {}, {}, {} {perm} |\n",
        num(r.kx, Kind::Permeability, sys),
        num(r.ky, Kind::Permeability, sys),
        num(r.kz, Kind::Permeability, sys)
    ));
    s.push_str(&format!(
        "| pore volume | {} |\n",
        show(r.pore_volume, Kind::ReservoirVolume, sys)
    ));
    s.push_str(&phase_rows(case, r, sys));
    s.push('\n');
    let t_unit = display_unit(Kind::Transmissibility, sys).name;
    // A fault on a face adds its multiplier and the transmissibility before it.
    let faulted = r.faces.iter().any(|f| f.multiplier != 1.0);
    match second {
        Some(si) => {
            let t_si = display_unit(Kind::Transmissibility, si).name;
            s.push_str(&format!(
                "| face | neighbour | k_face [{perm}] | T [{t_unit}] | T [{t_si}] |\n|---|---|---:|---:|---:|\n"
            ));
        }
        None => s.push_str(&format!(
            "| face | neighbour | k_face [{perm}] | T [{t_unit}] |\n|---|---|---:|---:|\n"
        )),
    }
    for f in &r.faces {
        let neighbour = match (&f.neighbor, &f.boundary, &f.aquifer) {
            (Some((i, j, k)), _, _) => format!("({i}, {j}, {k})"),
            (None, Some(b), _) => format!("boundary \"{}\"", escape_md(b)),
            (None, None, Some(a)) => format!("aquifer \"{}\"", escape_md(a)),
            _ => "closed".to_string(),
        };
        s.push_str(&format!(
            "| {} | {} | {} | {} |",
            f.side.name(),
            neighbour,
            num(f.perm_face, Kind::Permeability, sys),
            num(f.trans, Kind::Transmissibility, sys)
        ));
        if let Some(si) = second {
            s.push_str(&format!(" {} |", num(f.trans, Kind::Transmissibility, si)));
        }
        s.push('\n');
    }
    if case.oil_water.is_some() {
        s.push_str("\nT and productivity with the oil's viscosity and formation volume factor (kr = 1); each phase's productivity at the initial saturation follows the well.\n");
    }
    if faulted {
        s.push_str(&format!(
            "\n| face | fault multiplier | T before [{t_unit}] |\n|---|---:|---:|\n"
        ));
        for f in r.faces.iter().filter(|f| f.multiplier != 1.0) {
            s.push_str(&format!(
                "| {} | {} | {} |\n",
                f.side.name(),
                format_number(f.multiplier),
                num(f.unmodified_trans, Kind::Transmissibility, sys)
            ));
        }
    }
    for w in &r.wells {
        s.push_str(&format!(
            "\nwell \"{}\" ({}, along {}): r_eq {}, well index {}, productivity {}\n",
            escape_md(&w.name),
            role_name(w.role),
            w.direction.name(),
            show(w.r_eq, Kind::Length, sys),
            show(w.well_index, Kind::WellIndex, sys),
            show(w.productivity, Kind::Productivity, sys)
        ));
        if let Some((oil, water)) = w.phase_productivity {
            s.push_str(&format!(
                "at the initial saturation: oil productivity {}, water productivity {}\n",
                show(oil, Kind::Productivity, sys),
                show(water, Kind::Productivity, sys)
            ));
        }
    }
    s
}

/// Markdown for the well named `name`: control, Peaceman radius, well index
/// and productivity per completion.
pub(crate) fn well_markdown(case: &Case, name: &str, run: Option<&RunValues>) -> Option<String> {
    let w = case.wells.iter().find(|w| w.name == name)?;
    let (sys, _) = systems(case);
    let mut s = format!(
        "**well \"{}\"** — {}\n\n",
        escape_md(&w.name),
        role_name(w.role)
    );
    let control = match w.control {
        Control::Rate(q) | Control::OilRate(q) | Control::LiquidRate(q) | Control::WaterRate(q) => {
            format!("{} {}", w.control.word(), show(q, Kind::SurfaceRate, sys))
        }
        Control::Bhp(p) => format!("bhp {}", show(p, Kind::Pressure, sys)),
        Control::Shut => "shut".to_string(),
    };
    s.push_str(&format!(
        "radius {}, skin {}, control {}",
        show(w.radius, Kind::Length, sys),
        format_number(w.skin),
        control
    ));
    if let Some(l) = w.bhp_limit {
        s.push_str(&format!(", BHP limit {}", show(l, Kind::Pressure, sys)));
    }
    s.push_str("\n\n");
    let len = display_unit(Kind::Length, sys).name;
    let wi = display_unit(Kind::WellIndex, sys).name;
    let pi = display_unit(Kind::Productivity, sys).name;
    // An oil-water deck adds each phase's productivity at the initial
    // saturation; the productivity column is then the oil's with kr = 1.
    let two_phase = case.oil_water.is_some();
    s.push_str(&format!(
        "| completion | r_eq [{len}] | well index [{wi}] | productivity [{pi}] |{} along |\n|---|---:|---:|---:|{}---|\n",
        if two_phase { " oil, water at initial sw |" } else { "" },
        if two_phase { "---:|" } else { "" }
    ));
    let (mut total, mut oil_total, mut water_total) = (0.0, 0.0, 0.0);
    for c in &w.completions {
        if c.cell >= case.grid.cell_count() {
            continue;
        }
        let index = derived::well_index(&case.grid, &case.rock, c, w.radius, w.skin);
        let prod = derived::fluid_trans(case, index.geometric);
        total += prod;
        let phases = match inspect::phase_productivity(case, c.cell, index.geometric) {
            Some((oil, water)) => {
                (oil_total, water_total) = (oil_total + oil, water_total + water);
                format!(
                    " {}, {} |",
                    num(oil, Kind::Productivity, sys),
                    num(water, Kind::Productivity, sys)
                )
            }
            None if two_phase => " |".to_string(),
            None => String::new(),
        };
        s.push_str(&format!(
            "| ({}, {}, {}) | {} | {} | {} |{phases} {} |\n",
            c.i + 1,
            c.j + 1,
            c.k + 1,
            num(index.r_eq, Kind::Length, sys),
            num(index.geometric, Kind::WellIndex, sys),
            num(prod, Kind::Productivity, sys),
            c.direction.name()
        ));
    }
    if w.completions.len() > 1 {
        s.push_str(&format!(
            "\ntotal productivity {}\n",
            show(total, Kind::Productivity, sys)
        ));
        if two_phase {
            s.push_str(&format!(
                "at the initial saturation: oil {}, water {}\n",
                show(oil_total, Kind::Productivity, sys),
                show(water_total, Kind::Productivity, sys)
            ));
        }
    }
    if two_phase {
        s.push_str(
            "\nProductivity with the oil's viscosity and formation volume factor (kr = 1); each phase's with its own, at the initial saturation.\n",
        );
    }
    if let Some(section) = run.and_then(|run| run_values::well_section(case, run, name)) {
        s.push_str(&section);
    }
    Some(s)
}

/// Markdown for the boundary named `name`: its side, pressure, and the
/// half-cell transmissibility summed over the faces it covers.
pub(crate) fn boundary_markdown(
    case: &Case,
    name: &str,
    run: Option<&RunValues>,
) -> Option<String> {
    let b = case.boundaries.iter().find(|b| b.name == name)?;
    let (sys, _) = systems(case);
    let g = &case.grid;
    let mut s = format!(
        "**boundary \"{}\"** — {} side, pressure {}",
        escape_md(&b.name),
        b.side.name(),
        show(b.pressure, Kind::Pressure, sys)
    );
    match b.datum {
        Some(d) => s.push_str(&format!(
            " at {} (hydrostatic along the face)",
            show(d, Kind::Length, sys)
        )),
        None => s.push_str(" at every face centre"),
    }
    // The cells on that side it holds: part of a plane, never all cells.
    if g.nx == 0 || g.ny == 0 || g.nz == 0 {
        return Some(s);
    }
    let cells = b.cells(g);
    let total: f64 = cells
        .iter()
        .filter(|c| **c < g.cell_count())
        .map(|c| {
            derived::fluid_trans(
                case,
                derived::boundary_face(g, &case.rock, *c, b.side).geometric_trans,
            )
        })
        .sum();
    s.push_str(&format!(
        "\n\n{} faces; half-cell transmissibility in total {} ({})",
        cells.len(),
        show(total, Kind::Transmissibility, sys),
        show(total, Kind::Transmissibility, System::Si)
    ));
    if let Some(section) =
        run.and_then(|run| run_values::flow_section(case, run, &run.boundaries, name))
    {
        s.push_str(&section);
    }
    Some(s)
}

/// Markdown for the fault named `name`: its side and multiplier, the faces
/// it names, and their transmissibility summed before and after the
/// multipliers (of every fault on those faces: the numbers the run assembles).
pub(crate) fn fault_markdown(case: &Case, name: &str) -> Option<String> {
    let f = case.faults.iter().find(|f| f.name == name)?;
    let (sys, _) = systems(case);
    let g = &case.grid;
    let mut s = format!(
        "**fault \"{}\"** — {} faces of the selected cells, multiplier {}",
        escape_md(&f.name),
        f.side.name(),
        format_number(f.multiplier)
    );
    if f.multiplier == 0.0 {
        s.push_str(" (sealed)");
    }
    let mults = derived::FaceMultipliers::of(case);
    let (mut before, mut after, mut faces, mut shared) = (0.0, 0.0, 0usize, 0usize);
    for c in f.cells(g) {
        let Some(face) = derived::interior_face(g, &case.rock, c, f.side) else {
            continue;
        };
        let m = mults.at(g, c, f.side);
        faces += 1;
        shared += usize::from(m != f.multiplier);
        before += derived::fluid_trans(case, face.geometric_trans);
        after += derived::fluid_trans(case, face.geometric_trans * m);
    }
    s.push_str(&format!(
        "\n\n{faces} faces; transmissibility in total {} before, {} after ({} before, {} after)",
        show(before, Kind::Transmissibility, sys),
        show(after, Kind::Transmissibility, sys),
        show(before, Kind::Transmissibility, System::Si),
        show(after, Kind::Transmissibility, System::Si)
    ));
    if shared > 0 {
        s.push_str(&format!(
            "\n\n{shared} of these faces are also scaled by another fault; \"after\" multiplies them all"
        ));
    }
    Some(s)
}

/// Escape the characters that break a markdown table cell or emphasis.
pub(crate) fn escape_md(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if matches!(c, '|' | '*' | '_' | '`' | '\\' | '[' | ']' | '<' | '>') {
            out.push('\\');
        }
        out.push(c);
    }
    out
}

/// Superscript exponents for display (`m^2` -> `m²`).
pub(crate) fn pretty_unit(unit: &str) -> String {
    let mut out = String::with_capacity(unit.len());
    let mut chars = unit.chars().peekable();
    while let Some(c) = chars.next() {
        if c != '^' {
            out.push(c);
            continue;
        }
        while let Some(&d) = chars.peek() {
            let sup = match d {
                '-' => '⁻',
                '+' => '⁺',
                '0' => '⁰',
                '1' => '¹',
                '2' => '²',
                '3' => '³',
                '4' => '⁴',
                '5' => '⁵',
                '6' => '⁶',
                '7' => '⁷',
                '8' => '⁸',
                '9' => '⁹',
                _ => break,
            };
            out.push(sup);
            chars.next();
        }
    }
    out
}

/// A short number: four significant digits, no trailing zeros, exponent
/// form outside 1e-3..1e6 (for inlay hints).
pub(crate) fn short(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".into();
    }
    let sci = format!("{v:.3e}");
    let rounded: f64 = sci.parse().unwrap_or(v);
    let a = rounded.abs();
    let trim = |s: &str| -> String {
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s.to_string()
        }
    };
    if !(1e-3..1e6).contains(&a) {
        let (mant, exp) = sci.split_once('e').unwrap_or((&sci, "0"));
        return format!("{}e{exp}", trim(mant));
    }
    let mag = a.log10().floor() as i32;
    let decimals = (3 - mag).max(0) as usize;
    trim(&format!("{rounded:.decimals$}"))
}
