//! `rill inspect --cell I,J,K`: the cell, its six faces and any well in it,
//! computed by the same functions the simulator assembles from
//! (`rill_model::derived`).

use crate::Format;
use rill_model::{derived, Case, Role};
use rill_units::{display_unit, Kind, System};
use rill_workspace::DiskSource;
use serde_json::{json, Value};
use std::path::Path;

pub fn run(path: &Path, cell: &str, format: Format) -> u8 {
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
    let (i, j, k) = match parse_cell(cell, case) {
        Ok(ijk) => ijk,
        Err(e) => {
            eprintln!("error: --cell {cell}: {e}");
            return 2;
        }
    };
    let report = cell_report(case, i, j, k);
    match format {
        Format::Json => println!(
            "{}",
            serde_json::to_string_pretty(&report).unwrap_or_default()
        ),
        Format::Text => print_text(case, &report),
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

const FT: f64 = 0.3048;
const MD: f64 = 9.869233e-16;
const RB: f64 = 0.158987294928;

/// Field-unit factor for a kind, from the unit crate's display table.
fn field(kind: Kind) -> f64 {
    display_unit(kind, System::Field).factor
}

/// The JSON report of the specification.
pub fn cell_report(case: &Case, i: usize, j: usize, k: usize) -> Value {
    let g = &case.grid;
    let c = g.index(i, j, k);
    let rock = &case.rock;
    let faces: Vec<Value> = derived::cell_faces(case, c)
        .iter()
        .map(|(side, face)| {
            let neighbor = derived::neighbor(g, c, *side).map(|n| {
                let (a, b, d) = g.ijk(n);
                json!([a + 1, b + 1, d + 1])
            });
            let boundary = case
                .boundaries
                .iter()
                .find(|b| b.side == *side && derived::neighbor(g, c, *side).is_none());
            let (perm, geo) = face
                .map(|f| (f.perm, f.geometric_trans))
                .unwrap_or((0.0, 0.0));
            let trans_si = derived::fluid_trans(case, geo);
            json!({
                "side": side.name(),
                "neighbor": neighbor,
                "boundary": boundary.map(|b| b.name.clone()),
                "perm_face_md": perm / MD,
                "trans_stb_day_psi": trans_si / field(Kind::Transmissibility),
                "trans_si": trans_si,
            })
        })
        .collect();
    let wells: Vec<Value> = case
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
            let productivity = derived::fluid_trans(case, wi.geometric);
            json!({
                "name": w.name,
                "role": if w.role == Role::Producer { "producer" } else { "injector" },
                "r_eq_ft": wi.r_eq / FT,
                "well_index_md_ft": wi.geometric / (MD * FT),
                "productivity_stb_day_psi": productivity / field(Kind::Productivity),
            })
        })
        .collect();
    json!({
        "cell": {
            "i": i + 1, "j": j + 1, "k": k + 1,
            "active": rock.is_active(c),
            "depth_ft": derived::cell_center_depth(g, c) / FT,
            "porosity": rock.porosity[c],
            "kx_md": rock.kx[c] / MD,
            "ky_md": rock.ky[c] / MD,
            "kz_md": rock.kz[c] / MD,
            "pore_volume_rb": derived::pore_volume(g, rock, c) / RB,
        },
        "faces": faces,
        "wells": wells,
    })
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

fn print_text(case: &Case, r: &Value) {
    let cell = &r["cell"];
    let g = &case.grid;
    let (dx, dy, dz) = derived::cell_size(
        g,
        g.index(
            cell["i"].as_u64().unwrap_or(1) as usize - 1,
            cell["j"].as_u64().unwrap_or(1) as usize - 1,
            cell["k"].as_u64().unwrap_or(1) as usize - 1,
        ),
    );
    println!(
        "cell ({}, {}, {}){}",
        cell["i"],
        cell["j"],
        cell["k"],
        if cell["active"].as_bool() == Some(true) {
            ""
        } else {
            "  INACTIVE (porosity 0)"
        }
    );
    println!(
        "  size        {:.2} x {:.2} x {:.2} ft",
        dx / FT,
        dy / FT,
        dz / FT
    );
    println!("  depth       {:.2} ft (centre)", num(&cell["depth_ft"]));
    println!("  porosity    {}", num(&cell["porosity"]));
    println!(
        "  kx, ky, kz  {} md, {} md, {} md",
        g6(num(&cell["kx_md"])),
        g6(num(&cell["ky_md"])),
        g6(num(&cell["kz_md"]))
    );
    println!("  pore volume {} rb", g6(num(&cell["pore_volume_rb"])));
    println!();
    println!(
        "  {:<7} {:<16} {:>14} {:>20} {:>14}",
        "face", "neighbour", "k_face [md]", "T [stb/day/psi]", "T [SI]"
    );
    for f in r["faces"].as_array().into_iter().flatten() {
        let neighbour = match (&f["neighbor"], &f["boundary"]) {
            (Value::Array(n), _) => format!("({}, {}, {})", n[0], n[1], n[2]),
            (_, Value::String(b)) => format!("boundary {b}"),
            _ => "closed".to_string(),
        };
        println!(
            "  {:<7} {:<16} {:>14} {:>20} {:>14}",
            f["side"].as_str().unwrap_or(""),
            neighbour,
            g6(num(&f["perm_face_md"])),
            g6(num(&f["trans_stb_day_psi"])),
            format!("{:.4e}", num(&f["trans_si"]))
        );
    }
    for w in r["wells"].as_array().into_iter().flatten() {
        println!();
        println!(
            "  well \"{}\" ({})",
            w["name"].as_str().unwrap_or(""),
            w["role"].as_str().unwrap_or("")
        );
        println!("    Peaceman r_eq    {} ft", g6(num(&w["r_eq_ft"])));
        println!(
            "    well index       {} md*ft",
            g6(num(&w["well_index_md_ft"]))
        );
        println!(
            "    productivity     {} stb/day/psi",
            g6(num(&w["productivity_stb_day_psi"]))
        );
    }
}

/// Six significant digits without trailing noise.
fn g6(v: f64) -> String {
    rill_units::format_number(v)
}
