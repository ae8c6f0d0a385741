//! Hand-made cases and results. The numbers are invented for the tests of
//! formatting (they are not physics checks): each is chosen so that its
//! display value in field units is round (3000 psi, 600 stb/day, ...).

use rill_model::*;
use rill_sim::{
    BoundarySeries, ControlMode, OilWaterResults, PhaseWellSeries, RunResults, SolverStats,
    WellSeries,
};

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

/// `case` as an oil-water deck: the fluid is the oil, a water phase and one
/// set of Corey curves, and a second producer `P-2` (at i = 0, the last j)
/// that the water does not reach. Controls name their phase.
pub fn oil_water_case(nx: usize, ny: usize, nz: usize, units: UnitSystem) -> Case {
    let mut case = case(nx, ny, nz, units);
    let cells = case.grid.cell_count();
    case.wells[0].control = Control::OilRate(450.0 * STB / DAY);
    case.wells[1].control = Control::WaterRate(400.0 * STB / DAY);
    let mut p2 = case.wells[0].clone();
    p2.name = "P-2".into();
    p2.control = Control::LiquidRate(100.0 * STB / DAY);
    for c in &mut p2.completions {
        c.j = ny - 1;
        c.cell = nx * (ny - 1 + ny * c.k);
    }
    case.wells.push(p2);
    case.oil_water = Some(OilWater {
        water: Fluid {
            name: None,
            viscosity: 0.5e-3,
            fvf: 1.01,
            compressibility: 3e-6 / PSI,
            density: 1017.0,
            ref_pressure: 3000.0 * PSI,
        },
        relperms: vec![Relperm {
            name: "sand".into(),
            curves: Curves::Corey(Corey {
                swc: 0.2,
                sor: 0.25,
                krw_end: 0.3,
                kro_end: 0.8,
                nw: 2.0,
                no: 2.0,
                pc_entry: 0.0,
            }),
            origin: Origin::default(),
        }],
        cell_relperm: CellRelperm(std::sync::Arc::new(vec![0; cells])),
        saturation: InitialSaturation::Contact { depth: 7200.0 * FT },
    });
    case
}

/// The water saturation of cell `c` at report time `t` in
/// [`oil_water_results`] (NaN in inactive cells).
pub fn fixture_sw(case: &Case, t: usize, c: usize) -> f64 {
    if case.rock.is_active(c) {
        0.2 + 0.125 * t as f64 + 0.001 * c as f64
    } else {
        f64::NAN
    }
}

/// [`results`] of an oil-water run of [`oil_water_case`]: the wells' rates
/// are liquid; P-1 breaks through at 5 days (water cut 0.25, then 0.5),
/// P-2 produces dry oil, I-1 injects 400 stb/day of water. Round numbers
/// in field units; recovery 9500 of 100 000 stb at the end.
pub fn oil_water_results(case: &Case) -> RunResults {
    let mut r = results(case);
    let p2 = WellSeries {
        name: "P-2".into(),
        bhp: vec![3000.0 * PSI, 2900.0 * PSI, 2880.0 * PSI],
        rate: vec![0.0, 100.0 * STB / DAY, 100.0 * STB / DAY],
        cumulative: vec![0.0, 1000.0 * STB, 2000.0 * STB],
        mode: vec![ControlMode::Rate; 3],
    };
    r.wells.push(p2);
    let rate = |v: [f64; 3]| v.map(|x| x * STB / DAY).to_vec();
    let volume = |v: [f64; 3]| v.map(|x| x * STB).to_vec();
    let p1 = PhaseWellSeries {
        oil_rate: rate([0.0, 450.0, 300.0]),
        water_rate: rate([0.0, 150.0, 300.0]),
        water_cut: vec![0.0, 0.25, 0.5],
        cumulative_oil: volume([0.0, 4500.0, 7500.0]),
        cumulative_water: volume([0.0, 1500.0, 4500.0]),
        breakthrough: Some(5.0 * DAY),
    };
    let i1 = PhaseWellSeries {
        oil_rate: vec![0.0; 3],
        water_rate: rate([0.0, -400.0, -400.0]),
        water_cut: vec![0.0, 1.0, 1.0],
        cumulative_oil: vec![0.0; 3],
        cumulative_water: volume([0.0, -4000.0, -8000.0]),
        breakthrough: None,
    };
    let p2 = PhaseWellSeries {
        oil_rate: rate([0.0, 100.0, 100.0]),
        water_rate: vec![0.0; 3],
        water_cut: vec![0.0; 3],
        cumulative_oil: volume([0.0, 1000.0, 2000.0]),
        cumulative_water: vec![0.0; 3],
        breakthrough: None,
    };
    let cells = case.grid.cell_count();
    r.oil_water = Some(OilWaterResults {
        wells: vec![p1, i1, p2],
        oil_in_place: volume([100_000.0, 94_500.0, 90_500.0]),
        water_in_place: volume([40_000.0, 42_500.0, 43_500.0]),
        recovery: vec![0.0, 0.055, 0.095],
        pore_volumes_injected: vec![0.0, 0.02, 0.04],
        sw_avg: vec![0.2, 0.21, 0.22],
        balance_error_oil: vec![0.0, 1e-9, 2e-9],
        balance_error_water: vec![0.0, 1.5e-9, 2.25e-9],
        saturation: (0..3)
            .map(|t| (0..cells).map(|c| fixture_sw(case, t, c)).collect())
            .collect(),
    });
    r
}
