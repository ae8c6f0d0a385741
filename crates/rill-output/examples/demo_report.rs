//! Writes a result set from invented demo data (not a simulation), to look
//! at the report and the maps without running the simulator:
//!
//! ```text
//! cargo run -p rill-output --example demo_report -- OUT_DIR [--large] [--oil-water]
//! ```
//! `--large` uses a 60 x 220 x 85 grid (1.12 million cells) to measure the
//! writers' time and the report's size. `--oil-water` makes it a waterflood:
//! phase series, water cuts with breakthrough, saturation maps.

use std::path::PathBuf;
use std::time::Instant;

use rill_model::*;
use rill_output::{write_results, RunMeta};
use rill_sim::{
    BoundarySeries, ControlMode, OilWaterResults, PhaseWellSeries, RunResults, SolverStats,
    WellSeries,
};

const PSI: f64 = 6894.757293168;
const STB: f64 = 0.158987294928;
const FT: f64 = 0.3048;
const DAY: f64 = 86400.0;
const MD: f64 = 9.869233e-16;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(out) = args
        .iter()
        .find(|a| !a.starts_with("--"))
        .map(PathBuf::from)
    else {
        eprintln!("usage: demo_report OUT_DIR [--large] [--oil-water]");
        std::process::exit(2);
    };
    let large = args.iter().any(|a| a == "--large");
    let (nx, ny, nz) = if large { (60, 220, 85) } else { (30, 20, 4) };
    let mut case = demo_case(nx, ny, nz);
    let mut results = demo_results(&case, 13);
    if args.iter().any(|a| a == "--oil-water") {
        waterflood(&mut case, &mut results);
    }
    let deck = out
        .parent()
        .unwrap_or(&PathBuf::from("."))
        .join("demo.rill");
    let mut meta = RunMeta::new(&deck);
    meta.wall_seconds = Some(1.84);
    meta.started = Some("2026-12-02T01:00:00Z".into());
    meta.cautions
        .push("Demo data: invented numbers to show the layout, not a simulation.".into());
    let start = Instant::now();
    match write_results(&out, &case, &results, &meta) {
        Ok(files) => {
            let size = |p: &PathBuf| std::fs::metadata(p).map(|m| m.len()).unwrap_or(0);
            let total: u64 = files.files.iter().map(size).sum();
            println!(
                "wrote {} files ({:.1} MB; report.html {:.2} MB) to {} in {:.2} s",
                files.files.len(),
                total as f64 / 1e6,
                size(&files.report_html) as f64 / 1e6,
                files.dir.display(),
                start.elapsed().as_secs_f64()
            );
        }
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(1);
        }
    }
}

fn demo_case(nx: usize, ny: usize, nz: usize) -> Case {
    let cells = nx * ny * nz;
    let columns = nx * ny;
    let layer_k = [150.0, 40.0, 300.0, 90.0];
    let mut porosity = vec![0.22; cells];
    // A few inactive cells in a corner of the top layer.
    for j in 0..2 {
        for i in nx - 3..nx {
            porosity[i + nx * j] = 0.0;
        }
    }
    let well = |name: &str, role, i: usize, j: usize, control| Well {
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
        skin: 1.5,
        control,
        bhp_limit: Some(1200.0 * PSI),
        max_water_cut: None,
        origin: Origin::default(),
    };
    Case {
        title: Some("demo data".into()),
        name: Some("Larkspur east lobe".into()),
        grid: Grid {
            nx,
            ny,
            nz,
            dx: vec![50.0 * FT; nx],
            dy: (0..ny)
                .map(|j| (if j < ny / 2 { 40.0 } else { 60.0 }) * FT)
                .collect(),
            dz: (0..cells)
                .map(|c| [20.0, 15.0, 15.0, 30.0][(c / columns) % 4] * FT)
                .collect(),
            top: (0..columns)
                .map(|col| (7150.0 + 0.8 * (col % nx) as f64) * FT)
                .collect(),
        },
        rock: Rock {
            porosity: porosity.into(),
            kx: (0..cells)
                .map(|c| layer_k[(c / columns) % 4] * MD)
                .collect(),
            ky: (0..cells)
                .map(|c| layer_k[(c / columns) % 4] * MD)
                .collect(),
            kz: (0..cells)
                .map(|c| 0.1 * layer_k[(c / columns) % 4] * MD)
                .collect(),
            compressibility: 4e-6 / PSI,
            ref_pressure: 3000.0 * PSI,
        },
        fluid: Fluid {
            name: Some("formation water".into()),
            viscosity: 0.8e-3,
            fvf: 1.02,
            compressibility: 3e-6 / PSI,
            density: 999.5,
            ref_pressure: 3000.0 * PSI,
        },
        oil_water: None,
        initial: Initial::Datum {
            pressure: 3200.0 * PSI,
            depth: 7150.0 * FT,
        },
        wells: vec![
            well(
                "LE-1",
                Role::Producer,
                nx * 3 / 10,
                ny / 2,
                Control::Rate(600.0 * STB / DAY),
            ),
            well(
                "LE-2",
                Role::Producer,
                nx * 3 / 4,
                ny * 3 / 10,
                Control::Rate(450.0 * STB / DAY),
            ),
            well(
                "INJ-1",
                Role::Injector,
                nx * 9 / 10,
                ny * 17 / 20,
                Control::Rate(500.0 * STB / DAY),
            ),
        ],
        boundaries: vec![Boundary {
            name: "east aquifer".into(),
            side: Side::East,
            pressure: 3150.0 * PSI,
            datum: Some(7150.0 * FT),
            select: rill_model::Selection::default(),
            origin: Origin::default(),
        }],
        faults: Vec::new(),
        aquifers: Vec::new(),
        timeline: Timeline {
            kind: RunKind::Transient,
            end: 360.0 * DAY,
            first_step: 0.1 * DAY,
            max_step: 30.0 * DAY,
            min_step: rill_model::Timeline::DEFAULT_MIN_STEP,
            max_steps: rill_model::Timeline::DEFAULT_MAX_STEPS,
            growth: 1.5,
            report_every: Some(30.0 * DAY),
            report_at: Vec::new(),
            events: vec![],
        },
        report: ReportSettings {
            units: UnitSystem::Field,
            ..ReportSettings::default()
        },
    }
}

/// Invented smooth series and maps with the look of a depletion case.
fn demo_results(case: &Case, n: usize) -> RunResults {
    let times: Vec<f64> = (0..n).map(|t| t as f64 * 30.0 * DAY).collect();
    let f = |t: usize| t as f64 / (n - 1) as f64;
    let grid = &case.grid;
    let (nx, ny) = (grid.nx as f64, grid.ny as f64);
    let depth = rill_model::derived::cell_center_depths(grid);
    let wells_xy: Vec<(f64, f64, f64)> = case
        .wells
        .iter()
        .map(|w| {
            let c = &w.completions[0];
            (
                c.i as f64 / nx,
                c.j as f64 / ny,
                if w.role == Role::Producer { 1.0 } else { -0.8 },
            )
        })
        .collect();
    let pressure = (0..n)
        .map(|t| {
            (0..grid.cell_count())
                .map(|c| {
                    if !case.rock.is_active(c) {
                        return f64::NAN;
                    }
                    let (i, j, _) = grid.ijk(c);
                    let (x, y) = (i as f64 / nx, j as f64 / ny);
                    let mut p = 3200.0 - 180.0 * f(t) + (depth[c] / FT - 7150.0) * 0.433;
                    for (wx, wy, s) in &wells_xy {
                        let r = ((x - wx).powi(2) + (y - wy).powi(2)).sqrt() + 0.02;
                        p -= s * 420.0 * f(t).sqrt() * (-(r / 0.18)).exp();
                    }
                    p += 60.0 * f(t) * x; // support from the east aquifer
                    p * PSI
                })
                .collect()
        })
        .collect();
    let ramp = |t: usize, rate: f64| if t == 0 { 0.0 } else { rate };
    let le2_rate = |t: usize| {
        if t < 7 {
            450.0
        } else {
            450.0 * (1.0 - 0.08 * (t - 6) as f64)
        }
    };
    let cumulative = |rate: &dyn Fn(usize) -> f64| {
        let mut acc = 0.0;
        (0..n)
            .map(|t| {
                if t > 0 {
                    acc += rate(t) * 30.0;
                }
                acc * STB
            })
            .collect::<Vec<f64>>()
    };
    RunResults {
        pressure_avg: (0..n)
            .map(|t| (3200.0 - 180.0 * f(t) - 25.0 * f(t).sqrt()) * PSI)
            .collect(),
        wells: vec![
            WellSeries {
                name: "LE-1".into(),
                bhp: (0..n)
                    .map(|t| (3200.0 - 900.0 * f(t).sqrt() - 150.0 * f(t)) * PSI)
                    .collect(),
                rate: (0..n).map(|t| ramp(t, 600.0) * STB / DAY).collect(),
                cumulative: cumulative(&|t| ramp(t, 600.0)),
                mode: vec![ControlMode::Rate; n],
            },
            WellSeries {
                name: "LE-2".into(),
                bhp: (0..n)
                    .map(|t| (3200.0 - 2000.0 * f(t).sqrt()).max(1200.0) * PSI)
                    .collect(),
                rate: (0..n).map(|t| ramp(t, le2_rate(t)) * STB / DAY).collect(),
                cumulative: cumulative(&|t| ramp(t, le2_rate(t))),
                mode: (0..n)
                    .map(|t| {
                        if t < 7 {
                            ControlMode::Rate
                        } else {
                            ControlMode::Bhp
                        }
                    })
                    .collect(),
            },
            WellSeries {
                name: "INJ-1".into(),
                bhp: (0..n)
                    .map(|t| (3200.0 + 700.0 * f(t).sqrt()) * PSI)
                    .collect(),
                rate: (0..n).map(|t| -ramp(t, 500.0) * STB / DAY).collect(),
                cumulative: cumulative(&|t| -ramp(t, 500.0)),
                mode: vec![ControlMode::Rate; n],
            },
        ],
        boundaries: vec![BoundarySeries {
            name: "east aquifer".into(),
            rate: (0..n).map(|t| -220.0 * f(t).sqrt() * STB / DAY).collect(),
            cumulative: cumulative(&|t| -220.0 * f(t).sqrt()),
        }],
        aquifers: Vec::new(),
        balance_error: (0..n)
            .map(|t| {
                if t == 0 {
                    0.0
                } else {
                    2.0e-10 * (1.0 + t as f64)
                }
            })
            .collect(),
        pressure,
        events: Vec::new(),
        times,
        stats: SolverStats {
            steps: 41,
            step_cuts: 2,
            newton_iterations: 97,
            linear_iterations: 97,
            linear_solver: "direct".into(),
            wall_seconds: 1.62,
        },
        flow_per_pascal: 0.0,
        oil_water: None,
    }
}

/// Turns the demo into a waterflood from INJ-1: the oil is the fluid, a
/// front of water spreads from the injector (faster in the better layers)
/// and reaches LE-2, then LE-1; their water cuts rise after breakthrough.
fn waterflood(case: &mut Case, results: &mut RunResults) {
    let (swc, sor) = (0.2, 0.25);
    let n = results.times.len();
    let days: Vec<f64> = results.times.iter().map(|t| t / DAY).collect();
    let end = days[n - 1];
    let cells = case.grid.cell_count();
    case.fluid.name = Some("light oil".into());
    case.oil_water = Some(OilWater {
        water: Fluid {
            name: Some("brine".into()),
            viscosity: 0.5e-3,
            fvf: 1.01,
            compressibility: 3e-6 / PSI,
            density: 1030.0,
            ref_pressure: 3000.0 * PSI,
        },
        relperms: vec![Relperm {
            name: "sand".into(),
            curves: Curves::Corey(Corey {
                swc,
                sor,
                krw_end: 0.3,
                kro_end: 0.8,
                nw: 2.0,
                no: 2.0,
                pc_entry: 0.0,
            }),
            origin: Origin::default(),
        }],
        cell_relperm: CellRelperm(std::sync::Arc::new(vec![0; cells])),
        saturation: InitialSaturation::Cells(vec![swc; cells].into()),
    });
    case.wells[0].control = Control::LiquidRate(600.0 * STB / DAY);
    case.wells[1].control = Control::LiquidRate(450.0 * STB / DAY);
    case.wells[2].control = Control::WaterRate(500.0 * STB / DAY);

    // The front's reach (fractions of the grid) from the injector.
    let reach = |day: f64, layer_k: f64| 0.8 * (day / end).sqrt() * (layer_k / 150.0).sqrt();
    let grid = case.grid.clone();
    let inj = &case.wells[2].completions[0];
    let (ix, iy) = (inj.i as f64 / grid.nx as f64, inj.j as f64 / grid.ny as f64);
    let distance = |i: usize, j: usize| {
        ((i as f64 / grid.nx as f64 - ix).powi(2) + (j as f64 / grid.ny as f64 - iy).powi(2)).sqrt()
    };
    let layer_k = [150.0, 40.0, 300.0, 90.0];
    let saturation: Vec<Vec<f64>> = days
        .iter()
        .map(|&day| {
            (0..cells)
                .map(|c| {
                    if !case.rock.is_active(c) {
                        return f64::NAN;
                    }
                    let (i, j, k) = grid.ijk(c);
                    let front = reach(day, layer_k[k % 4]);
                    let r = distance(i, j);
                    if r < front {
                        swc + (1.0 - swc - sor) * (0.55 + 0.45 * (1.0 - r / front))
                    } else {
                        swc
                    }
                })
                .collect()
        })
        .collect();

    // Breakthrough: the front in the main layer reaches the producer.
    let mut phases = Vec::new();
    let mut produced_oil = vec![0.0; n];
    let mut produced_water = vec![0.0; n];
    for (w, well) in results.wells.iter().enumerate() {
        let c = &case.wells[w].completions[0];
        let r = distance(c.i, c.j);
        let producer = case.wells[w].role == Role::Producer;
        let breakthrough = (producer && reach(end, 150.0) > r).then(|| end * (r / 0.8).powi(2));
        let cut: Vec<f64> = days
            .iter()
            .map(|&day| match breakthrough {
                Some(bt) if day > bt => 0.85 * (1.0 - (-(day - bt) / 110.0).exp()),
                _ if producer => 0.0,
                _ => 1.0,
            })
            .collect();
        let oil_rate: Vec<f64> = well
            .rate
            .iter()
            .zip(&cut)
            .map(|(q, f)| q * (1.0 - f))
            .collect();
        let water_rate: Vec<f64> = well.rate.iter().zip(&cut).map(|(q, f)| q * f).collect();
        let sum = |rate: &[f64]| {
            let mut acc = 0.0;
            rate.iter()
                .enumerate()
                .map(|(t, q)| {
                    if t > 0 {
                        acc += q * (results.times[t] - results.times[t - 1]);
                    }
                    acc
                })
                .collect::<Vec<f64>>()
        };
        let (cumulative_oil, cumulative_water) = (sum(&oil_rate), sum(&water_rate));
        for t in 0..n {
            produced_oil[t] += cumulative_oil[t];
            produced_water[t] += cumulative_water[t];
        }
        phases.push(PhaseWellSeries {
            water_cut: if producer { cut } else { vec![1.0; n] },
            oil_rate,
            water_rate,
            cumulative_oil,
            cumulative_water,
            breakthrough: breakthrough.map(|d| d * DAY),
        });
    }
    // Invented volumes: 2.4 million stb of oil and 4 million rb of pores;
    // the water's formation volume factor is 1.01. `produced_water` is
    // the wells' net (the injector's share is negative).
    let oil_0 = 2.4e6 * STB;
    let pore_volume = 4.0e6 * STB;
    results.oil_water = Some(OilWaterResults {
        wells: phases,
        oil_in_place: produced_oil.iter().map(|p| oil_0 - p).collect(),
        water_in_place: produced_water
            .iter()
            .map(|net| swc * pore_volume / 1.01 - net)
            .collect(),
        recovery: produced_oil.iter().map(|p| p / oil_0).collect(),
        pore_volumes_injected: results.wells[2]
            .cumulative
            .iter()
            .map(|v| -v * 1.01 / pore_volume)
            .collect(),
        sw_avg: produced_water
            .iter()
            .map(|net| swc - net * 1.01 / pore_volume)
            .collect(),
        balance_error_oil: results.balance_error.clone(),
        balance_error_water: results.balance_error.iter().map(|e| 0.7 * e).collect(),
        saturation,
    });
}
