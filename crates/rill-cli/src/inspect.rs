//! `rill inspect --cell I,J,K`: renders `rill_model::inspect::cell_report`
//! as text, in the deck's report units or those of `--units`, or as the
//! JSON of the specification (field units, named in its keys).

use crate::{Format, Units};
use rill_model::inspect::{cell_report, CellReport};
use rill_model::{Case, Role};
use rill_units::{display_unit, format_number, Kind, System};
use rill_workspace::DiskSource;
use serde_json::{json, Value};
use std::path::Path;

pub fn run(path: &Path, cell: &str, format: Format, units: Option<Units>) -> u8 {
    let source = DiskSource::unconfined();
    let analysis = match crate::check::load(path, &source) {
        Ok(a) => a,
        Err(e) => {
            eprintln!("error: {e}");
            return 2;
        }
    };
    let Some(case) = analysis.runnable_case() else {
        crate::check::render_text(&analysis);
        eprintln!("error: the deck has errors; fix them to inspect cells");
        return 1;
    };
    let report = match parse_cell(cell, case)
        .and_then(|(i, j, k)| cell_report(case, i, j, k).ok_or_else(|| "outside the grid".into()))
    {
        Ok(r) => r,
        Err(e) => {
            eprintln!("error: --cell {cell}: {e}");
            return 2;
        }
    };
    match format {
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&to_json(&report)).unwrap_or_default()
        ),
        Format::Text => {
            let system = match units {
                Some(Units::Field) => System::Field,
                Some(Units::Metric) => System::Metric,
                Some(Units::Si) => System::Si,
                None => case.report.units,
            };
            print_text(&report, system);
        }
    }
    0
}

/// 1-based `I,J,K` to 0-based indices inside the grid.
fn parse_cell(text: &str, case: &Case) -> Result<(usize, usize, usize), String> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    if parts.len() != 3 {
        return Err("expected three 1-based indices I,J,K, e.g. 15,10,2".into());
    }
    let g = &case.grid;
    let mut out = [0usize; 3];
    for (n, (p, max)) in parts.iter().zip([g.nx, g.ny, g.nz]).enumerate() {
        let v: usize = p
            .parse()
            .map_err(|_| format!("`{p}` is not a whole number"))?;
        if v < 1 || v > max {
            return Err(format!(
                "index {} = {v} is outside 1..{max}",
                ["I", "J", "K"][n]
            ));
        }
        out[n] = v - 1;
    }
    Ok((out[0], out[1], out[2]))
}

/// SI to the field unit of a kind.
fn field(si: f64, kind: Kind) -> f64 {
    si / display_unit(kind, System::Field).factor
}

fn role(r: Role) -> &'static str {
    match r {
        Role::Producer => "producer",
        Role::Injector => "injector",
    }
}

/// The JSON report of the specification.
pub fn to_json(r: &CellReport) -> Value {
    let faces: Vec<Value> = r
        .faces
        .iter()
        .map(|f| {
            json!({
                "side": f.side.name(),
                "neighbor": f.neighbor.map(|(i, j, k)| json!([i, j, k])),
                "boundary": f.boundary,
                "aquifer": f.aquifer,
                "perm_face_md": field(f.perm_face, Kind::Permeability),
                "trans_stb_day_psi": field(f.trans, Kind::Transmissibility),
                "trans_si": f.trans,
                "multiplier": f.multiplier,
                "trans_unmodified_stb_day_psi": field(f.unmodified_trans, Kind::Transmissibility),
                "trans_unmodified_si": f.unmodified_trans,
            })
        })
        .collect();
    let wells: Vec<Value> = r
        .wells
        .iter()
        .map(|w| {
            json!({
                "name": w.name,
                "role": role(w.role),
                "direction": w.direction.name(),
                "r_eq_ft": field(w.r_eq, Kind::Length),
                "well_index_md_ft": field(w.well_index, Kind::WellIndex),
                "productivity_stb_day_psi": field(w.productivity, Kind::Productivity),
            })
        })
        .collect();
    let mut out = json!({
        "cell": {
            "i": r.i, "j": r.j, "k": r.k,
            "active": r.active,
            "depth_ft": field(r.depth, Kind::Length),
            "porosity": r.porosity,
            "kx_md": field(r.kx, Kind::Permeability),
            "ky_md": field(r.ky, Kind::Permeability),
            "kz_md": field(r.kz, Kind::Permeability),
            "pore_volume_rb": field(r.pore_volume, Kind::ReservoirVolume),
        },
        "faces": faces,
        "wells": wells,
    });
    // Oil-water cases only: single-phase output stays as it was.
    if let Some(cell) = out.get_mut("cell").and_then(Value::as_object_mut) {
        if let Some(r) = &r.relperm {
            cell.insert("relperm".into(), json!(r));
        }
        if let Some(sw) = r.water_saturation {
            cell.insert("water_saturation".into(), json!(sw));
        }
        if let Some(ph) = r.phases {
            cell.insert("krw".into(), json!(ph.krw));
            cell.insert("kro".into(), json!(ph.kro));
            // 1/cP, as the deck's viscosities are quoted in field units.
            cell.insert(
                "water_mobility_per_cp".into(),
                json!(ph.water_mobility * 1e-3),
            );
            cell.insert("oil_mobility_per_cp".into(), json!(ph.oil_mobility * 1e-3));
        }
    }
    out
}

fn print_text(r: &CellReport, system: System) {
    let unit = |kind| display_unit(kind, system);
    let show = |v: f64, kind| format_number(unit(kind).from_si(v));
    let (len, perm) = (unit(Kind::Length).name, unit(Kind::Permeability).name);
    println!(
        "cell ({}, {}, {}){}",
        r.i,
        r.j,
        r.k,
        if r.active {
            ""
        } else {
            "  INACTIVE (porosity 0)"
        }
    );
    println!(
        "  size        {} x {} x {} {len}",
        show(r.size.0, Kind::Length),
        show(r.size.1, Kind::Length),
        show(r.size.2, Kind::Length)
    );
    println!(
        "  depth       {} {len} (centre)",
        show(r.depth, Kind::Length)
    );
    println!("  porosity    {}", format_number(r.porosity));
    println!(
        "  kx, ky, kz  {} {perm}, {} {perm}, {} {perm}",
        show(r.kx, Kind::Permeability),
        show(r.ky, Kind::Permeability),
        show(r.kz, Kind::Permeability)
    );
    println!(
        "  pore volume {} {}",
        show(r.pore_volume, Kind::ReservoirVolume),
        unit(Kind::ReservoirVolume).name
    );
    if let Some(name) = &r.relperm {
        println!("  relperm     \"{name}\"");
    }
    if let Some(sw) = r.water_saturation {
        println!("  initial sw  {}", format_number(sw));
    }
    if let Some(ph) = r.phases {
        let (per, name) = if system == System::Si {
            (1.0, "1/(Pa s)")
        } else {
            (1e-3, "1/cP")
        };
        println!(
            "  krw, kro    {}, {}",
            format_number(ph.krw),
            format_number(ph.kro)
        );
        println!(
            "  kr/mu       water {}, oil {} {name}",
            format_number(ph.water_mobility * per),
            format_number(ph.oil_mobility * per)
        );
    }
    println!();
    let t_head = format!("T [{}]", unit(Kind::Transmissibility).name);
    let k_head = format!("k_face [{perm}]");
    println!(
        "  {:<7} {:<22} {:>12} {:>17} {:>14}",
        "face", "neighbour", k_head, t_head, "T [sm3/s/Pa]"
    );
    for f in &r.faces {
        let neighbour = match (&f.neighbor, &f.boundary, &f.aquifer) {
            (Some((i, j, k)), _, _) => format!("({i}, {j}, {k})"),
            (None, Some(b), _) => format!("boundary \"{b}\""),
            (None, None, Some(a)) => format!("aquifer \"{a}\""),
            _ => "closed".to_string(),
        };
        // A fault on the face: its multiplier and the value before it.
        let fault = if f.multiplier == 1.0 {
            String::new()
        } else {
            format!(
                "  fault multiplier {}, {} before",
                format_number(f.multiplier),
                show(f.unmodified_trans, Kind::Transmissibility)
            )
        };
        println!(
            "  {:<7} {:<22} {:>12} {:>17} {:>14}{fault}",
            f.side.name(),
            neighbour,
            show(f.perm_face, Kind::Permeability),
            show(f.trans, Kind::Transmissibility),
            format_number(f.trans)
        );
    }
    for w in &r.wells {
        println!();
        println!(
            "  well \"{}\" ({}, along {})",
            w.name,
            role(w.role),
            w.direction.name()
        );
        println!("    Peaceman r_eq  {} {len}", show(w.r_eq, Kind::Length));
        println!(
            "    well index     {} {}",
            show(w.well_index, Kind::WellIndex),
            unit(Kind::WellIndex).name
        );
        println!(
            "    productivity   {} {}",
            show(w.productivity, Kind::Productivity),
            unit(Kind::Productivity).name
        );
        if let Some((oil, water)) = w.phase_productivity {
            println!(
                "    at initial sw  oil {}, water {} {} (the productivity above: the oil's, kr = 1)",
                show(oil, Kind::Productivity),
                show(water, Kind::Productivity),
                unit(Kind::Productivity).name
            );
        }
    }
}
