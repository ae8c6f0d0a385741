//! Physical sanity checks on a lowered case: values that parse and have the
//! right units but are impossible (an error) or unusual enough to be a
//! likely mistake (a warning). Limits are the spec's; where they are rules
//! of thumb, that is said beside them.

use crate::case::*;
use crate::derived;
use crate::diagnostic::{Code, Diagnostic, Location};
use crate::lower::{Spans, WellSpans};
use crate::reuse::{kept, Held, Reuse};
use rill_units::{display_unit, Kind, System, STANDARD_ATMOSPHERE_PA as ATM};
use std::collections::HashSet;
use std::sync::Arc;

use rill_units::factors::{CP, FT, MD, PSI};

mod fluid;
mod phases;
mod sealed;
mod wellbore;

/// How many values match `bad`, and the first that does, in one parallel
/// pass (per-cell arrays hold a million values, checked on every edit).
fn offenders(values: &[f64], bad: impl Fn(f64) -> bool + Sync) -> Option<(usize, usize)> {
    use rayon::prelude::*;
    let (count, first) = values
        .par_iter()
        .enumerate()
        .fold(
            || (0usize, usize::MAX),
            |(n, f), (c, v)| if bad(*v) { (n + 1, f.min(c)) } else { (n, f) },
        )
        .reduce(
            || (0, usize::MAX),
            |(n1, f1), (n2, f2)| (n1 + n2, f1.min(f2)),
        );
    (count > 0).then_some((count, first))
}

/// [`offenders`] of a per-cell array, kept in `reuse` under `what` (which
/// must name the predicate) for the next analysis.
fn kept_offenders(
    reuse: Option<&Reuse>,
    what: &'static str,
    values: &CellValues,
    bad: impl Fn(f64) -> bool + Sync,
) -> Option<(usize, usize)> {
    kept(reuse, what, &[values.shared().clone()], &[], || {
        offenders(values, bad)
    })
}

fn cell_name(grid: &Grid, c: usize) -> String {
    let (i, j, k) = grid.ijk(c);
    format!("({}, {}, {})", i + 1, j + 1, k + 1)
}

/// Shows an SI value in the case's report units: "1500 psi".
fn show(si: f64, kind: Kind, system: System) -> String {
    let u = display_unit(kind, system);
    format!("{} {}", crate::values::short_number(si / u.factor), u.name)
}

/// Run every check; the scans over per-cell arrays are kept in `reuse`.
pub fn run(case: &Case, spans: &Spans, reuse: Option<&Reuse>, out: &mut Vec<Diagnostic>) {
    let sys = case.report.units;
    rock_checks(case, spans, reuse, out);
    fluid::fluid_checks(case, spans, sys, out);
    phases::oil_water_checks(case, spans, reuse, sys, out);
    initial_checks(case, spans, reuse, sys, out);
    pressure_checks(case, spans, sys, out);
    well_checks(case, spans, sys, out);
    flow_checks(case, spans, reuse, out);
}

/// Porosity and permeability, each checked per definition so that the
/// diagnostic points at the statement that set the value.
fn rock_checks(case: &Case, spans: &Spans, reuse: Option<&Reuse>, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    let at = |key: &str| {
        spans
            .rock
            .get(key)
            .and_then(|v| v.first().copied())
            .unwrap_or(spans.main)
    };
    let phi = &case.rock.porosity;
    if let Some((bad, c)) = kept_offenders(reuse, "porosity outside 0..1", phi, |v| {
        !(0.0..=1.0).contains(&v)
    }) {
        out.push(
            Diagnostic::error(
                Code::SanityPorosity,
                at("porosity"),
                format!(
                    "porosity must lie between 0 and 1; {} cell(s) are outside, the first {} with {}",
                    bad,
                    cell_name(grid, c),
                    phi[c]
                ),
            )
            .with_note("write a fraction (0.22) or a percentage with its unit (22 %)"),
        );
    } else {
        if let Some((high, c)) = kept_offenders(reuse, "porosity above 0.45", phi, |v| v > 0.45) {
            out.push(Diagnostic::warning(
                Code::SanityPorosity,
                at("porosity"),
                format!(
                    "porosity above 0.45 in {} cell(s), the first {} with {}; reservoir rock rarely exceeds 0.40 (common practice, no published source)",
                    high,
                    cell_name(grid, c),
                    phi[c]
                ),
            ));
        }
    }
    for (key, k) in [
        ("kx", &case.rock.kx),
        ("ky", &case.rock.ky),
        ("kz", &case.rock.kz),
    ] {
        if let Some((neg, c)) = kept_offenders(reuse, "negative", k, |v| v < 0.0) {
            out.push(Diagnostic::error(
                Code::SanityPermeability,
                at(key),
                format!(
                    "`{key}` is negative in {} cell(s), the first {} with {} md",
                    neg,
                    cell_name(grid, c),
                    k[c] / MD
                ),
            ));
            continue;
        }
        if let Some((high, c)) = kept_offenders(reuse, "above 20 darcy", k, |v| v > 20_000.0 * MD) {
            out.push(
                Diagnostic::warning(
                    Code::SanityPermeability,
                    at(key),
                    format!(
                        "`{key}` is above 20 darcy in {} cell(s), the first {} with {} md; check the unit (md, not darcy?)",
                        high,
                        cell_name(grid, c),
                        crate::values::short_number(k[c] / MD)
                    ),
                ),
            );
        }
    }
    if case.rock.compressibility < 0.0 {
        out.push(Diagnostic::error(
            Code::SanityCompressibility,
            spans.rock_compressibility.unwrap_or(spans.main),
            "rock compressibility cannot be negative",
        ));
    } else if case.rock.compressibility > 1e-3 / PSI {
        out.push(Diagnostic::warning(
            Code::SanityCompressibility,
            spans.rock_compressibility.unwrap_or(spans.main),
            format!(
                "rock compressibility of {} 1/psi is above 1e-3 1/psi; consolidated rock is about 3e-6 to 1e-5 1/psi (common practice, no published source)",
                crate::values::short_number(case.rock.compressibility * PSI)
            ),
        ));
    }
}

/// The initial pressure must stay above 1 atm in every cell: a liquid below
/// it would boil, and zero or less has no meaning. The usual causes are a
/// datum depth in the wrong unit (metres for feet) or with the wrong sign,
/// so the message gives the grid's depth range and the datum.
fn initial_checks(
    case: &Case,
    spans: &Spans,
    reuse: Option<&Reuse>,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let grid = &case.grid;
    let at = spans.initial.unwrap_or(spans.main);
    let params: Vec<u64> = [grid.nx as u64, grid.ny as u64, grid.nz as u64]
        .into_iter()
        .chain(grid.top.iter().map(|v| v.to_bits()))
        .collect();
    let (shallow, deep) = kept(
        reuse,
        "depth range of the cell centres",
        &[grid.dz.shared().clone()],
        &params,
        || derived::depth_range(grid),
    );
    let range = format!(
        "the grid's cell centres lie between {} and {} deep",
        show(shallow, Kind::Length, sys),
        show(deep, Kind::Length, sys)
    );
    let what = |p: f64| {
        if p <= 0.0 {
            "zero or negative"
        } else {
            "below 1 atm"
        }
    };
    match &case.initial {
        Initial::Datum { pressure, depth } => {
            let p_at = |z| initial_pressure_at(case, z).unwrap_or(f64::NAN);
            // Monotone in depth (the two hydrostats of an oil-water case
            // meet at the contact): the lowest pressure is at one end of
            // the grid.
            let (z, p) = [(shallow, p_at(shallow)), (deep, p_at(deep))]
                .into_iter()
                .min_by(|a, b| a.1.total_cmp(&b.1))
                .unwrap_or((shallow, f64::NAN));
            if p >= ATM {
                return;
            }
            let mut d = Diagnostic::error(
                Code::InitialPressure,
                at,
                format!(
                    "the initial pressure in equilibrium is {} ({}) at {} deep: {range}, and the datum ({}) is at {}",
                    what(p),
                    show(p, Kind::Pressure, sys),
                    show(z, Kind::Length, sys),
                    show(*pressure, Kind::Pressure, sys),
                    show(*depth, Kind::Length, sys)
                ),
            );
            if *depth < shallow || *depth > deep {
                let off = if *depth < shallow {
                    shallow - depth
                } else {
                    depth - deep
                };
                d = d.with_note(format!(
                    "the datum lies {} {} the grid: check the depth's unit (m or ft) and its sign (depth grows downward)",
                    show(off, Kind::Length, sys),
                    if *depth < shallow { "above" } else { "below" }
                ));
            }
            out.push(d);
        }
        Initial::Cells(values) => {
            let bad = kept(
                reuse,
                "active cells with an initial pressure below 1 atm",
                &[values.shared().clone(), case.rock.porosity.shared().clone()],
                &[],
                || {
                    use rayon::prelude::*;
                    (0..values.len())
                        .into_par_iter()
                        .filter(|&c| {
                            case.rock.is_active(c) && (values[c] < ATM || values[c].is_nan())
                        })
                        .min()
                },
            );
            if let Some(c) = bad {
                out.push(Diagnostic::error(
                    Code::InitialPressure,
                    at,
                    format!(
                        "the initial pressure of cell {} is {} ({}); {range}",
                        cell_name(grid, c),
                        what(values[c]),
                        show(values[c], Kind::Pressure, sys)
                    ),
                ));
            }
        }
    }
}

/// Every absolute pressure given to a well or a boundary must be positive.
fn pressure_checks(case: &Case, spans: &Spans, sys: System, out: &mut Vec<Diagnostic>) {
    let mut given: Vec<(f64, Location, String)> = Vec::new();
    for (w, well) in case.wells.iter().enumerate() {
        let ws = spans.wells.get(w).cloned().unwrap_or_default();
        let origin = Location::new(well.origin.file, well.origin.span);
        let name = &well.name;
        if let Control::Bhp(p) = well.control {
            given.push((
                p,
                ws.control.unwrap_or(origin),
                format!("the BHP control of \"{name}\""),
            ));
        }
        if let Some(p) = well.bhp_limit {
            given.push((
                p,
                ws.bhp_limit.unwrap_or(origin),
                format!("the `bhp_limit` of \"{name}\""),
            ));
        }
        for (e, ev) in case.timeline.events.iter().enumerate() {
            let ev_at = Location::new(ev.origin.file, ev.origin.span);
            let find = |list: &[(usize, Location)]| {
                list.iter()
                    .find(|(i, _)| *i == e)
                    .map(|(_, l)| *l)
                    .unwrap_or(ev_at)
            };
            for ch in ev.changes.iter().filter(|ch| ch.well == w) {
                if let Some(Control::Bhp(p)) = ch.control {
                    given.push((
                        p,
                        find(&ws.event_controls),
                        format!("the BHP control of \"{name}\" in an event"),
                    ));
                }
                if let Some(p) = ch.bhp_limit {
                    given.push((
                        p,
                        find(&ws.event_limits),
                        format!("the `bhp_limit` of \"{name}\" in an event"),
                    ));
                }
            }
        }
    }
    for (b, boundary) in case.boundaries.iter().enumerate() {
        let at = spans
            .boundaries
            .get(b)
            .copied()
            .unwrap_or(Location::new(boundary.origin.file, boundary.origin.span));
        given.push((
            boundary.pressure,
            at,
            format!("the pressure of boundary \"{}\"", boundary.name),
        ));
    }
    for (p, at, what) in given {
        if p <= 0.0 || p.is_nan() {
            out.push(
                Diagnostic::error(
                    Code::SanityPressure,
                    at,
                    format!(
                        "{what} is {}: an absolute pressure must be positive",
                        show(p, Kind::Pressure, sys)
                    ),
                )
                .with_note(
                    "a gauge pressure (psig, barg) counts from 1 atm; check the sign and the unit",
                ),
            );
        }
    }
}

/// Initial pressure at a depth, from the datum in hydrostatic equilibrium:
/// the pressure the engine starts from there. In an oil-water case
/// initialised from a water contact, the oil's hydrostat through the datum
/// above the contact and the water's through the contact below it (where
/// the engine puts the water leg's cells and the aquifers); otherwise the
/// hydrostat of the case's fluid (the oil of an oil-water case).
pub fn initial_pressure_at(case: &Case, depth: f64) -> Option<f64> {
    if let Some(eq) = derived::saturation::equilibrium(case) {
        return Some(eq.phase_pressure(depth));
    }
    match &case.initial {
        Initial::Datum {
            pressure,
            depth: datum,
        } => Some(derived::hydrostatic_pressure(
            &case.fluid,
            *pressure,
            *datum,
            depth,
        )),
        Initial::Cells(_) => None,
    }
}

fn well_checks(case: &Case, spans: &Spans, sys: System, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    for (w_index, well) in case.wells.iter().enumerate() {
        let ws = spans.wells.get(w_index).cloned().unwrap_or_default();
        let comp_at = ws
            .completions
            .unwrap_or(Location::new(well.origin.file, well.origin.span));
        // One statement places every completion: one error names all the
        // inactive cells it reaches, not one error per layer on one line.
        let inactive: Vec<String> = well
            .completions
            .iter()
            .filter(|c| !case.rock.is_active(c.cell))
            .map(|c| cell_name(grid, c.cell))
            .collect();
        match inactive.as_slice() {
            [] => {}
            [one] => out.push(Diagnostic::error(
                Code::WellCompletion,
                comp_at,
                format!(
                    "well \"{}\" is completed in cell {one}, which is inactive (porosity 0)",
                    well.name
                ),
            )),
            many => out.push(Diagnostic::error(
                Code::WellCompletion,
                comp_at,
                format!(
                    "well \"{}\" is completed in {} inactive cells (porosity 0): {}",
                    well.name,
                    many.len(),
                    list_cells(many)
                ),
            )),
        }
        let all_inactive = inactive.len() == well.completions.len();
        let radius_at = ws.radius.unwrap_or(comp_at);
        wellbore::radius_checks(case, w_index, well, &ws, radius_at, sys, out);
        // A well in inactive cells only cannot flow: that is the error above.
        if !all_inactive {
            productivity_check(case, well, comp_at, out);
        }
        trajectory_check(case, well, comp_at, out);
        bhp_checks(case, w_index, well, &ws, comp_at, sys, out);
    }
}

/// Cell names for a message: all of a few, the first and last of many.
fn list_cells(names: &[String]) -> String {
    if names.len() <= 6 {
        names.join(", ")
    } else {
        format!("{}, ... {}", names[..4].join(", "), names[names.len() - 1])
    }
}

/// A well whose every completion has a zero well index can neither produce
/// nor inject: its rate cannot be met and its BHP has no meaning.
fn productivity_check(case: &Case, well: &Well, comp_at: Location, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    let mut reasons = Vec::new();
    for c in &well.completions {
        match derived::zero_index_reason(grid, &case.rock, c, well.radius, well.skin) {
            Some(why) => reasons.push(format!("{}: {why}", cell_name(grid, c.cell))),
            None => return,
        }
    }
    if reasons.is_empty() {
        return;
    }
    let mut d = Diagnostic::error(
        Code::WellProductivity,
        comp_at,
        format!(
            "every completion of well \"{}\" has a zero well index: the well cannot flow",
            well.name
        ),
    );
    for r in reasons.iter().take(8) {
        d = d.with_note(r.clone());
    }
    if reasons.len() > 8 {
        d = d.with_note(format!("and {} more completions", reasons.len() - 8));
    }
    out.push(d.with_note(
        "complete the well in cells with permeability normal to the wellbore, or give them some",
    ));
}

/// Successive completions along one direction should touch: a gap is
/// wellbore the model leaves out; a deviated well listed cell by cell is not.
fn trajectory_check(case: &Case, well: &Well, comp_at: Location, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    let gap = well.completions.windows(2).find(|pair| {
        let (a, b) = (&pair[0], &pair[1]);
        let step =
            a.i.abs_diff(b.i)
                .max(a.j.abs_diff(b.j))
                .max(a.k.abs_diff(b.k));
        a.direction == b.direction && step != 1
    });
    if let Some(pair) = gap {
        out.push(
            Diagnostic::warning(
                Code::WellCompletion,
                comp_at,
                format!(
                    "the completions {} and {} of well \"{}\" both run along {} but do not touch: the wellbore between them is not modelled",
                    cell_name(grid, pair[0].cell),
                    cell_name(grid, pair[1].cell),
                    well.name,
                    pair[0].direction.name()
                ),
            )
            .with_note("list the cells in order along the wellbore, or give a deviated stretch its own direction"),
        );
    }
}

/// A bottom-hole pressure a well is given (control, limit or event control).
struct GivenBhp {
    pressure: f64,
    at: Location,
    what: &'static str,
}

/// Each BHP the well is given against the initial pressure at its datum
/// and, for an injector, against a fracture-pressure rule of thumb.
fn bhp_checks(
    case: &Case,
    w_index: usize,
    well: &Well,
    ws: &WellSpans,
    comp_at: Location,
    sys: System,
    out: &mut Vec<Diagnostic>,
) {
    let grid = &case.grid;
    let Some(depth) = derived::well_datum_depth(grid, &case.rock, well) else {
        return;
    };
    let mut pressures: Vec<GivenBhp> = Vec::new();
    if let Control::Bhp(p) = well.control {
        pressures.push(GivenBhp {
            pressure: p,
            at: ws.control.unwrap_or(comp_at),
            what: "control",
        });
    }
    if let Some(p) = well.bhp_limit {
        pressures.push(GivenBhp {
            pressure: p,
            at: ws.bhp_limit.unwrap_or(comp_at),
            what: "bhp_limit",
        });
    }
    for (ev_i, ev) in case.timeline.events.iter().enumerate() {
        for ch in ev.changes.iter().filter(|ch| ch.well == w_index) {
            if let Some(Control::Bhp(p)) = ch.control {
                let at = ws
                    .event_controls
                    .iter()
                    .find(|(i, _)| *i == ev_i)
                    .map(|(_, l)| *l)
                    .unwrap_or(Location::new(ev.origin.file, ev.origin.span));
                pressures.push(GivenBhp {
                    pressure: p,
                    at,
                    what: "event control",
                });
            }
        }
    }
    let p_init = initial_pressure_at(case, depth);
    for GivenBhp { pressure, at, what } in &pressures {
        let p = pressure;
        if let Some(p0) = p_init {
            let wrong = match well.role {
                Role::Producer => *p > p0,
                Role::Injector => *p < p0,
            };
            if wrong {
                let (verb, would) = match well.role {
                    Role::Producer => ("above", "inject"),
                    Role::Injector => ("below", "produce"),
                };
                out.push(Diagnostic::warning(
                    Code::WellBhp,
                    *at,
                    format!(
                        "the {what} of {} \"{}\" ({}) is {verb} the initial pressure at its datum ({} at {}): it would {would}",
                        if well.role == Role::Producer { "producer" } else { "injector" },
                        well.name,
                        show(*p, Kind::Pressure, sys),
                        show(p0, Kind::Pressure, sys),
                        show(depth, Kind::Length, sys)
                    ),
                ));
            }
        }
        if well.role == Role::Injector {
            // 0.8 psi/ft is a rule of thumb for fracture gradients (common practice, no published source).
            let frac = 0.8 * PSI / FT * depth;
            if *p > frac {
                out.push(
                    Diagnostic::warning(
                        Code::WellInjectionPressure,
                        *at,
                        format!(
                            "the {what} of injector \"{}\" ({}) is above 0.8 psi/ft times its depth ({}): it may exceed the fracture pressure",
                            well.name,
                            show(*p, Kind::Pressure, sys),
                            show(frac, Kind::Pressure, sys)
                        ),
                    )
                    .with_note("defer to the local fracture gradient, the injection permit and a licensed engineer"),
                );
            }
        }
    }
}

fn flow_checks(case: &Case, spans: &Spans, reuse: Option<&Reuse>, out: &mut Vec<Diagnostic>) {
    let grid = &case.grid;
    let rock = &case.rock;
    // Active cells without a face of positive transmissibility, from one
    // parallel pass per axis. Each pass is kept for the next analysis with
    // the arrays it reads, so that typing in `kz` redoes only the z faces.
    let dims: Vec<u64> = [grid.nx, grid.ny, grid.nz]
        .map(|n| n as u64)
        .into_iter()
        .chain(grid.dx.iter().chain(&grid.dy).map(|v| v.to_bits()))
        .collect();
    let along = |axis: derived::Axis, what: &'static str, k: &CellValues| {
        kept(
            reuse,
            what,
            &[
                rock.porosity.shared().clone(),
                k.shared().clone(),
                grid.dz.shared().clone(),
            ],
            &dims,
            || {
                let buffer = reuse
                    .and_then(|r| r.spare_flags(grid.cell_count()))
                    .unwrap_or_default();
                Arc::new(derived::plus_faces_with_flow_in(grid, rock, axis, buffer))
            },
        )
    };
    let flows = [
        along(derived::Axis::X, "faces with flow across x", &rock.kx),
        along(derived::Axis::Y, "faces with flow across y", &rock.ky),
        along(derived::Axis::Z, "faces with flow across z", &rock.kz),
    ];
    // Active cells without a flowing face across x or y, kept with the two
    // passes; then those without one across z. Typing in `kz` redoes only the
    // z pass and this short filter.
    let lateral = || {
        use rayon::prelude::*;
        let (fx, fy) = (&flows[0], &flows[1]);
        Arc::new(
            (0..grid.cell_count())
                .into_par_iter()
                .with_min_len(1 << 14)
                .filter(|&c| {
                    rock.is_active(c)
                        && !derived::flows_across(grid, fx, derived::Axis::X, c)
                        && !derived::flows_across(grid, fy, derived::Axis::Y, c)
                })
                .collect::<Vec<usize>>(),
        )
    };
    let lateral = match reuse {
        Some(reuse) => {
            let inputs: [Held; 3] = [
                flows[0].clone(),
                flows[1].clone(),
                rock.porosity.shared().clone(),
            ];
            reuse.get_or_held(
                "active cells without a flowing face across x or y",
                &inputs,
                &[],
                lateral,
            )
        }
        None => lateral(),
    };
    let mut shut_in: Vec<usize> = lateral
        .iter()
        .copied()
        .filter(|&c| !derived::flows_across(grid, &flows[2], derived::Axis::Z, c))
        .collect();
    // Faults that seal faces cut off the cells beside them whose every
    // other face is closed too; only those few cells are looked at again.
    let mults = derived::FaceMultipliers::of(case);
    let plus = [&flows[0][..], &flows[1][..], &flows[2][..]];
    if !mults.is_empty() {
        shut_in.extend(sealed::sealed_off(case, &plus, &mults));
        shut_in.sort_unstable();
        shut_in.dedup();
    }
    // A well, a boundary or an aquifer with a positive face lets them flow
    // after all.
    let with_well: HashSet<usize> = case
        .wells
        .iter()
        .flat_map(|w| w.completions.iter().map(|c| c.cell))
        .collect();
    let isolated: Vec<usize> = shut_in
        .into_iter()
        .filter(|&c| {
            !with_well.contains(&c)
                && !case.boundaries.iter().any(|b| {
                    b.covers(grid, c)
                        && derived::boundary_face(grid, rock, c, b.side).geometric_trans > 0.0
                })
                && !case.aquifers.iter().any(|a| a.covers(grid, c))
        })
        .collect();
    if let Some(d) = sealed::isolated_warning(case, spans, &mults, &plus, &isolated) {
        out.push(d);
    }
    if case.wells.is_empty() && case.boundaries.is_empty() {
        out.push(Diagnostic::info(
            Code::FlowNoDrive,
            spans.timeline.unwrap_or(spans.main),
            "the case has no well and no boundary: nothing drives flow, and the run will stay at its initial state",
        ));
    }
}
