//! Hand-made cases and results. The numbers are invented for the tests of
//! formatting (they are not physics checks): each is chosen so that its
//! display value in field units is round (3000 psi, 600 stb/day, ...).

use rill_model::*;
use rill_sim::{BoundarySeries, ControlMode, RunResults, SolverStats, WellSeries};

/// NIST SP 811: pound-force per square inch, Pa.
pub const PSI: f64 = 6894.757293168;
/// NIST SP 811: barrel (oil, 42 US gallons), m^3.
pub const STB: f64 = 0.158987294928;
pub const FT: f64 = 0.3048;
pub const DAY: f64 = 86400.0;
pub const MD: f64 = 9.869233e-16;

pub fn case(nx: usize, ny: usize, nz: usize, units: UnitSystem) -> Case {
    let cells = nx * ny * nz;
    let columns = nx * ny;
    let grid = Grid {
        nx,
        ny,
        nz,
        dx: (0..nx).map(|i| (100.0 + 10.0 * i as f64) * FT).collect(),
        dy: vec![80.0 * FT; ny],
        dz: (0..cells)
            .map(|c| (20.0 + 5.0 * (c / columns) as f64) * FT)
            .collect(),
        // A flat top: the maps are rectilinear (`dip` tilts it).
        top: vec![7000.0 * FT; columns],
    };
    let mut porosity = vec![0.2; cells];
    porosity[cells - 1] = 0.0; // one inactive cell, the last one
    let rock = Rock {
        porosity: porosity.into(),
        kx: (0..cells)
            .map(|c| (100.0 + (c / columns) as f64 * 50.0) * MD)
            .collect(),
        ky: vec![100.0 * MD; cells].into(),
        kz: vec![10.0 * MD; cells].into(),
        compressibility: 4e-6 / PSI,
        ref_pressure: 3000.0 * PSI,
    };
    let well = |name: &str, role, i, j, control| Well {
        name: name.to_string(),
        role,
        completions: (0..nz)
            .map(|k| Completion {
                i,
                j,
                k,
                cell: i + nx * (j + ny * k),
                direction: Direction::Z,
            })
            .collect(),
        radius: 0.3 * FT,
        skin: 0.0,
        control,
        bhp_limit: Some(1000.0 * PSI),
        max_water_cut: None,
        origin: Origin::default(),
    };
    Case {
        title: Some("Test lobe".into()),
        name: Some("Quarry north".into()),
        grid,
        rock,
        fluid: Fluid {
            name: None,
            viscosity: 0.8e-3,
            fvf: 1.02,
            compressibility: 3e-6 / PSI,
            density: 1000.0,
            ref_pressure: 3000.0 * PSI,
        },
        oil_water: None,
        initial: Initial::Datum {
            pressure: 3000.0 * PSI,
            depth: 7000.0 * FT,
        },
        wells: vec![
            well(
                "P-1",
                Role::Producer,
                0,
                0,
                Control::Rate(600.0 * STB / DAY),
            ),
            well(
                "I-1",
                Role::Injector,
                nx - 1,
                ny - 1,
                Control::Rate(400.0 * STB / DAY),
            ),
        ],
        boundaries: vec![Boundary {
            name: "east aquifer".into(),
            side: Side::East,
            pressure: 3000.0 * PSI,
            datum: Some(7000.0 * FT),
            select: rill_model::Selection::default(),
            origin: Origin::default(),
        }],
        faults: Vec::new(),
        aquifers: Vec::new(),
        timeline: Timeline {
            kind: RunKind::Transient,
            end: 20.0 * DAY,
            first_step: 0.1 * DAY,
            max_step: 10.0 * DAY,
            min_step: rill_model::Timeline::DEFAULT_MIN_STEP,
            max_steps: rill_model::Timeline::DEFAULT_MAX_STEPS,
            growth: 1.5,
            report_every: Some(10.0 * DAY),
            report_at: Vec::new(),
            events: vec![],
        },
        report: ReportSettings {
            units,
            ..ReportSettings::default()
        },
    }
}

/// Tilts the case's top: 2 ft deeper per column eastward and 1 ft per row
/// northward (a planar dip), so the maps are structured grids.
pub fn dip(case: &mut Case) {
    let nx = case.grid.nx;
    for (col, top) in case.grid.top.iter_mut().enumerate() {
        *top = (7000.0 + (col % nx) as f64 * 2.0 + (col / nx) as f64) * FT;
    }
}

/// Three report times: 0, 10 and 20 days.
pub fn results(case: &Case) -> RunResults {
    let cells = case.grid.cell_count();
    let times = vec![0.0, 10.0 * DAY, 20.0 * DAY];
    let pressure = (0..times.len())
        .map(|t| {
            (0..cells)
                .map(|c| {
                    if case.rock.is_active(c) {
                        (3000.0 - 10.0 * t as f64 - c as f64) * PSI
                    } else {
                        f64::NAN
                    }
                })
                .collect()
        })
        .collect();
    RunResults {
        times,
        pressure_avg: vec![3000.0 * PSI, 2990.0 * PSI, 2980.5 * PSI],
        wells: vec![
            WellSeries {
                name: case.wells[0].name.clone(),
                bhp: vec![3000.0 * PSI, 2500.0 * PSI, 2450.0 * PSI],
                rate: vec![0.0, 600.0 * STB / DAY, 600.0 * STB / DAY],
                cumulative: vec![0.0, 6000.0 * STB, 12000.0 * STB],
                mode: vec![ControlMode::Rate; 3],
            },
            WellSeries {
                name: case.wells[1].name.clone(),
                bhp: vec![3000.0 * PSI, 3400.0 * PSI, 3420.0 * PSI],
                rate: vec![0.0, -400.0 * STB / DAY, -400.0 * STB / DAY],
                cumulative: vec![0.0, -4000.0 * STB, -8000.0 * STB],
                mode: vec![ControlMode::Rate; 3],
            },
        ],
        boundaries: vec![BoundarySeries {
            name: case.boundaries[0].name.clone(),
            rate: vec![0.0, -150.0 * STB / DAY, -175.0 * STB / DAY],
            cumulative: vec![0.0, -1500.0 * STB, -3250.0 * STB],
        }],
        aquifers: Vec::new(),
        balance_error: vec![0.0, 1.5e-9, 2.25e-9],
        pressure,
        events: Vec::new(),
        stats: SolverStats {
            steps: 14,
            step_cuts: 1,
            newton_iterations: 31,
            linear_iterations: 31,
            linear_solver: "direct".into(),
            wall_seconds: 0.125,
        },
        flow_per_pascal: 0.0,
        oil_water: None,
    }
}

/// Renames a well in both the case and the results.
pub fn rename_well(case: &mut Case, results: &mut RunResults, w: usize, name: &str) {
    case.wells[w].name = name.to_string();
    results.wells[w].name = name.to_string();
}

/// A scratch directory with a deck file in it; returns (dir guard, deck path).
pub fn deck_dir() -> (tempfile::TempDir, std::path::PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let deck = dir.path().join("lobe.rill");
    std::fs::write(&deck, "# deck\n").unwrap();
    (dir, deck)
}

/// Reads a CSV written by us (quoted fields allowed) into rows of fields.
pub fn parse_csv(text: &str) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let mut row = Vec::new();
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = text.chars().peekable();
    while let Some(ch) = chars.next() {
        match (quoted, ch) {
            (true, '"') if chars.peek() == Some(&'"') => {
                chars.next();
                field.push('"');
            }
            (true, '"') => quoted = false,
            (true, c) => field.push(c),
            (false, '"') => quoted = true,
            (false, ',') => row.push(std::mem::take(&mut field)),
            (false, '\n') => {
                row.push(std::mem::take(&mut field));
                rows.push(std::mem::take(&mut row));
            }
            (false, c) => field.push(c),
        }
    }
    rows
}
