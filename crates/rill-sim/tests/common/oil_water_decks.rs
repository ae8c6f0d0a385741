//! Random oil-water decks for the engine's no-panic campaign
//! (`oil_water_robust.rs`): small grids with inactive layers, Corey and
//! table curves at their edges (zero endpoints, exponents far from 2, two
//! rows, no or a large capillary pressure, lifted table ends, now and then
//! an endpoint the checker must refuse), two sets of curves by patch, a
//! contact above, inside or below the grid or saturations given, wells of
//! both roles with every control, limits and water-cut limits, a boundary,
//! an aquifer, events, short timelines. Included by `#[path]`.
#![allow(dead_code)]

use std::fmt::Write as _;

use proptest::prelude::*;

/// The deck's own step guard: a hard case stops after this many steps
/// with its error, instead of taking minutes.
const MAX_STEPS: usize = 2000;

#[derive(Debug, Clone)]
struct Layer {
    dz: f64,
    porosity: f64,
    kx: f64,
    kz_ratio: f64,
}

#[derive(Debug, Clone)]
struct Curves {
    table: Option<(usize, bool)>, // rows, lifted ends (warnings only)
    swc: f64,
    sor: f64,
    krw_end: f64,
    kro_end: f64,
    nw: f64,
    no: f64,
    pc: Option<f64>, // psi
}

#[derive(Debug, Clone)]
enum Sat {
    /// Feet above the top of the grid.
    Above(f64),
    /// Fraction of the grid's thickness below its top.
    Inside(f64),
    /// Feet below the base of the grid.
    Below(f64),
    Uniform(f64),
    Layers(Vec<f64>),
}

#[derive(Debug, Clone)]
enum Ctl {
    /// Producers: oil (false) or liquid (true); injectors: water.
    Rate(bool, f64),
    /// Pressure difference from the datum pressure, psi: drawdown for a
    /// producer, overpressure for an injector (negative: the wrong side).
    Bhp(f64),
    Shut,
}

#[derive(Debug, Clone)]
struct WellSpec {
    injector: bool,
    at: (usize, usize, usize, usize),
    radius: f64,
    skin: f64,
    control: Ctl,
    limit: Option<f64>,
    water_cut: Option<f64>,
}

#[derive(Debug, Clone)]
pub struct Deck {
    cells: (usize, usize),
    dxy: (f64, f64),
    top: f64,
    layers: Vec<Layer>,
    rock_c: f64,
    /// viscosity cP, fvf, compressibility 1/psi, density lb/ft^3
    oil: (f64, f64, f64, f64),
    water: (f64, f64, f64, f64),
    curves: Vec<Curves>,
    second_in: (bool, usize, usize),
    sealed_column: Option<(usize, usize)>,
    gradient: f64,
    sat: Sat,
    wells: Vec<WellSpec>,
    boundary: Option<(usize, f64, bool)>,
    aquifer: Option<(usize, f64, f64, f64)>,
    end: f64,
    report: Option<f64>,
    max_step: Option<f64>,
    events: Vec<(f64, usize, Ctl, Option<f64>)>,
}

pub fn log_range(lo: f64, hi: f64) -> impl Strategy<Value = f64> {
    (lo.ln()..hi.ln()).prop_map(f64::exp)
}

/// Rounded to `digits` significant digits, so decks stay readable.
pub fn round(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}

fn layer() -> impl Strategy<Value = Layer> {
    (
        log_range(2.0, 60.0),
        prop_oneof![1 => Just(0.0), 10 => 0.03..0.35f64],
        prop_oneof![1 => Just(0.0), 2 => log_range(0.05, 10.0), 6 => log_range(10.0, 3000.0)],
        prop_oneof![1 => Just(0.0), 1 => Just(1.0), 4 => 0.01..1.0f64],
    )
        .prop_map(|(dz, porosity, kx, kz_ratio)| Layer {
            dz: round(dz, 3),
            porosity: round(porosity, 3),
            kx: round(kx, 3),
            kz_ratio: round(kz_ratio, 3),
        })
}

fn exponent() -> impl Strategy<Value = f64> {
    prop_oneof![
        4 => 1.0..4.0f64,
        1 => 0.2..1.0f64,
        1 => 4.0..25.0f64,
        1 => Just(1.0),
    ]
    .prop_map(|x| round(x, 3))
}

fn curves() -> impl Strategy<Value = Curves> {
    // Above 1 now and then: an endpoint error the checker must catch.
    let end = || prop_oneof![15 => 0.05..1.0f64, 4 => Just(1.0), 1 => 1.0..1.3f64];
    (
        prop_oneof![3 => Just(None), 2 => (2usize..7, prop::bool::weighted(0.2)).prop_map(Some)],
        prop_oneof![1 => Just(0.0), 4 => 0.01..0.45f64],
        prop_oneof![1 => Just(0.0), 4 => 0.01..0.45f64],
        end(),
        end(),
        exponent(),
        exponent(),
        prop_oneof![
            2 => Just(None),
            1 => Just(Some(0.0)),
            3 => log_range(0.05, 30.0).prop_map(Some),
            1 => log_range(100.0, 3000.0).prop_map(Some),
        ],
    )
        .prop_map(|(table, swc, sor, krw_end, kro_end, nw, no, pc)| Curves {
            table,
            swc: round(swc, 3),
            sor: round(sor, 3),
            krw_end: round(krw_end, 3),
            kro_end: round(kro_end, 3),
            nw,
            no,
            pc: pc.map(|p| round(p, 3)),
        })
}

fn sat() -> impl Strategy<Value = Sat> {
    prop_oneof![
        1 => log_range(1.0, 300.0).prop_map(|h| Sat::Above(round(h, 3))),
        4 => (0.0..1.0f64).prop_map(|f| Sat::Inside(round(f, 3))),
        1 => log_range(1.0, 300.0).prop_map(|h| Sat::Below(round(h, 3))),
        2 => prop_oneof![Just(0.0), Just(1.0), 0.0..1.0f64].prop_map(|s| Sat::Uniform(round(s, 3))),
        1 => prop::collection::vec(prop_oneof![Just(0.0), Just(1.0), 0.0..1.0f64], 3)
            .prop_map(|v| Sat::Layers(v.into_iter().map(|s| round(s, 3)).collect())),
    ]
}

fn control() -> impl Strategy<Value = Ctl> {
    prop_oneof![
        5 => (any::<bool>(), log_range(1.0, 5000.0)).prop_map(|(l, q)| Ctl::Rate(l, round(q, 3))),
        3 => prop_oneof![5 => log_range(5.0, 3000.0), 1 => -300.0..-1.0f64]
            .prop_map(|d| Ctl::Bhp(round(d, 3))),
        1 => Just(Ctl::Shut),
    ]
}

fn well() -> impl Strategy<Value = WellSpec> {
    (
        any::<bool>(),
        (0usize..6, 0usize..6, 0usize..3, 0usize..3),
        0.1..0.5f64,
        prop_oneof![3 => Just(0.0), 2 => -1.0..10.0f64],
        control(),
        prop::option::weighted(0.6, log_range(5.0, 3000.0)),
        prop::option::weighted(0.3, prop_oneof![Just(1.0), 0.01..1.0f64]),
    )
        .prop_map(
            |(injector, at, radius, skin, control, limit, water_cut)| WellSpec {
                injector,
                at,
                radius: round(radius, 2),
                skin: round(skin, 2),
                control,
                limit: limit.map(|l| round(l, 3)),
                water_cut: water_cut.map(|w| round(w, 2)),
            },
        )
}

fn fluid(
    visc: (f64, f64),
    fvf: (f64, f64),
    c: f64,
    rho: (f64, f64),
) -> impl Strategy<Value = (f64, f64, f64, f64)> {
    (
        log_range(visc.0, visc.1),
        fvf.0..fvf.1,
        prop_oneof![Just(0.0), 0.0..c],
        rho.0..rho.1,
    )
        .prop_map(|(m, b, c, r)| (round(m, 3), round(b, 3), round(c, 2), round(r, 3)))
}

pub fn deck() -> impl Strategy<Value = Deck> {
    let grid = (
        (1usize..7, 1usize..7),
        (log_range(20.0, 800.0), log_range(20.0, 800.0)),
        500.0..12000.0f64,
        prop::collection::vec(layer(), 1..4),
        prop_oneof![Just(0.0), 0.0..1e-5f64],
    );
    let fluids = (
        fluid((0.2, 50.0), (1.0, 1.6), 3e-5, (38.0, 58.0)),
        fluid((0.2, 1.5), (0.98, 1.05), 6e-6, (56.0, 70.0)),
    );
    let rock = (
        prop::collection::vec(curves(), 1..3),
        (any::<bool>(), 0usize..6, 0usize..3),
        prop::option::weighted(0.2, (0usize..6, 0usize..6)),
        0.3..0.55f64,
        sat(),
    );
    let drive = (
        prop::collection::vec(well(), 0..4),
        prop::option::weighted(0.3, (0usize..6, -300.0..300.0f64, any::<bool>())),
        prop::option::weighted(
            0.3,
            (
                0usize..6,
                log_range(1e4, 1e9),
                log_range(1e-6, 3e-5),
                log_range(0.1, 300.0),
            ),
        ),
    );
    let time = (
        log_range(0.5, 60.0),
        prop::option::of(1usize..6),
        prop::option::weighted(0.3, 2usize..20),
        prop::collection::vec(
            (
                0.01..1.0f64,
                0usize..4,
                control(),
                prop::option::weighted(0.3, log_range(5.0, 3000.0)),
            ),
            0..3,
        ),
    );
    (grid, fluids, rock, drive, time).prop_map(
        |(
            (cells, dxy, top, layers, rock_c),
            (oil, water),
            (curves, second_in, sealed_column, gradient, sat),
            (wells, boundary, aquifer),
            (end, report, max_step, events),
        )| {
            let end = round(end, 3);
            Deck {
                cells,
                dxy: (round(dxy.0, 3), round(dxy.1, 3)),
                top: round(top, 4),
                layers,
                rock_c: round(rock_c, 2),
                oil,
                water,
                curves,
                second_in,
                sealed_column,
                gradient: round(gradient, 3),
                sat,
                wells,
                boundary: boundary.map(|(s, d, a)| (s, round(d, 3), a)),
                aquifer: aquifer.map(|(s, v, c, j)| (s, round(v, 3), round(c, 3), round(j, 3))),
                end,
                report: report.map(|n| round(end / n as f64, 3)),
                max_step: max_step.map(|n| round(end / n as f64, 3)),
                events: events
                    .into_iter()
                    .map(|(f, w, c, l)| {
                        (round(f * end, 3).max(0.001), w, c, l.map(|l| round(l, 3)))
                    })
                    .collect(),
            }
        },
    )
}

const SIDES: [&str; 6] = ["west", "east", "south", "north", "top", "bottom"];

impl Curves {
    fn write(&self, out: &mut String, label: &str) {
        let _ = writeln!(out, "relperm \"{label}\" {{");
        let Some((rows, lifted)) = self.table else {
            let _ = writeln!(
                out,
                "  model = corey\n  swc = {}\n  sor = {}",
                self.swc, self.sor
            );
            let _ = writeln!(
                out,
                "  krw_end = {}\n  kro_end = {}",
                self.krw_end, self.kro_end
            );
            let _ = writeln!(out, "  nw = {}\n  no = {}", self.nw, self.no);
            if let Some(pc) = self.pc {
                let _ = writeln!(out, "  pc_entry = {pc} psi");
            }
            out.push_str("}\n\n");
            return;
        };
        // The Corey curves sampled at `rows` saturations; lifted ends give
        // a first krw and a last kro above 0 (warnings, still runnable).
        let lift = if lifted { 0.01 } else { 0.0 };
        let (mut sw, mut krw, mut kro, mut pc) = (vec![], vec![], vec![], vec![]);
        for r in 0..rows {
            let s = r as f64 / (rows - 1) as f64;
            sw.push(round(self.swc + s * (1.0 - self.swc - self.sor), 6));
            krw.push(round((self.krw_end * s.powf(self.nw)).max(lift), 6));
            kro.push(round((self.kro_end * (1.0 - s).powf(self.no)).max(lift), 6));
            pc.push(round(self.pc.unwrap_or(0.0) * (1.0 - s), 6));
        }
        let list = |v: &[f64]| {
            v.iter()
                .map(|x| x.to_string())
                .collect::<Vec<_>>()
                .join(" ")
        };
        let _ = writeln!(out, "  model = table\n  sw = [{}]", list(&sw));
        let _ = writeln!(out, "  krw = [{}]\n  kro = [{}]", list(&krw), list(&kro));
        if self.pc.is_some() {
            let _ = writeln!(out, "  pc = [{}] psi", list(&pc));
        }
        out.push_str("}\n\n");
    }
}

fn control_text(c: &Ctl, injector: bool, datum_p: f64) -> String {
    match c {
        Ctl::Rate(_, q) if injector => format!("water_rate {q} stb/day"),
        Ctl::Rate(false, q) => format!("oil_rate {q} stb/day"),
        Ctl::Rate(true, q) => format!("liquid_rate {q} stb/day"),
        Ctl::Bhp(d) => format!("bhp {} psi", bhp(datum_p, *d, injector)),
        Ctl::Shut => "shut".to_string(),
    }
}

/// An absolute BHP `d` psi from `datum_p` on the side the role flows.
fn bhp(datum_p: f64, d: f64, injector: bool) -> f64 {
    round(
        if injector {
            datum_p + d
        } else {
            (datum_p - d).max(15.0)
        },
        6,
    )
}

impl Deck {
    /// The deck text.
    pub fn render(&self) -> String {
        let (nx, ny) = self.cells;
        let nz = self.layers.len();
        let mut o = String::new();
        let list = |f: &dyn Fn(&Layer) -> f64| {
            self.layers
                .iter()
                .map(|l| f(l).to_string())
                .collect::<Vec<_>>()
                .join(" ")
        };
        let _ = writeln!(
            o,
            "grid {{\n  cells = {nx} x {ny} x {nz}\n  dx = {} ft\n  dy = {} ft\n  dz = layers [{}] ft\n  top = {} ft\n}}\n",
            self.dxy.0,
            self.dxy.1,
            list(&|l| l.dz),
            self.top
        );
        let _ = writeln!(
            o,
            "rock {{\n  porosity = layers [{}]",
            list(&|l| l.porosity)
        );
        let _ = writeln!(o, "  kx = layers [{}] md", list(&|l| l.kx));
        let _ = writeln!(
            o,
            "  kz = layers [{}] md",
            list(&|l| round(l.kx * l.kz_ratio, 3))
        );
        let _ = writeln!(o, "  compressibility = {} 1/psi", self.rock_c);
        let two = self.curves.len() > 1;
        if two || self.second_in.0 {
            o.push_str("  relperm = \"a\"\n");
        }
        if two {
            let (by_layer, i, k) = self.second_in;
            let sel = if by_layer {
                format!("k = {}", k % nz + 1)
            } else {
                format!("i = {}..{}", i % nx + 1, nx)
            };
            let _ = writeln!(o, "  patch {sel} {{\n    relperm = \"b\"\n  }}");
        }
        if let Some((i, j)) = self.sealed_column {
            let _ = writeln!(
                o,
                "  patch i = {} j = {} {{\n    kx = 0 md\n  }}",
                i % nx + 1,
                j % ny + 1
            );
        }
        o.push_str("}\n\n");
        for (name, f) in [("oil", self.oil), ("water", self.water)] {
            let _ = writeln!(
                o,
                "{name} {{\n  viscosity = {} cP\n  fvf = {} rb/stb\n  compressibility = {} 1/psi\n  density = {} lb/ft^3\n}}\n",
                f.0, f.1, f.2, f.3
            );
        }
        for (c, label) in self.curves.iter().zip(["a", "b"]) {
            c.write(&mut o, label);
        }
        let thickness: f64 = self.layers.iter().map(|l| l.dz).sum();
        let datum_p = round((self.top * self.gradient).max(100.0), 6);
        let _ = writeln!(
            o,
            "initial {{\n  pressure = {datum_p} psi at {} ft",
            self.top
        );
        match &self.sat {
            Sat::Above(h) => writeln!(o, "  water_contact = {} ft", round(self.top - h, 6)),
            Sat::Inside(f) => writeln!(
                o,
                "  water_contact = {} ft",
                round(self.top + f * thickness, 6)
            ),
            Sat::Below(h) => writeln!(
                o,
                "  water_contact = {} ft",
                round(self.top + thickness + h, 6)
            ),
            Sat::Uniform(s) => writeln!(o, "  water_saturation = {s}"),
            Sat::Layers(v) => writeln!(
                o,
                "  water_saturation = layers [{}]",
                v[..nz]
                    .iter()
                    .map(|s| s.to_string())
                    .collect::<Vec<_>>()
                    .join(" ")
            ),
        }
        .unwrap_or(());
        o.push_str("}\n\n");
        self.write_wells(&mut o, datum_p);
        if let Some((s, d, at)) = self.boundary {
            let p = round((datum_p + d).max(20.0), 6);
            let at = if at {
                format!(" at {} ft", self.top)
            } else {
                String::new()
            };
            let _ = writeln!(
                o,
                "boundary \"edge\" {{\n  side = {}\n  pressure = {p} psi{at}\n}}\n",
                SIDES[s]
            );
        }
        if let Some((s, v, c, j)) = self.aquifer {
            // Never the boundary's side: two on one face is an error.
            let s = if self.boundary.is_some_and(|b| b.0 == s) {
                (s + 1) % 6
            } else {
                s
            };
            let _ = writeln!(
                o,
                "aquifer \"flank\" {{\n  side = {}\n  water_volume = {v} rb\n  compressibility = {c} 1/psi\n  productivity = {j} rb/day/psi\n}}\n",
                SIDES[s]
            );
        }
        self.write_timeline(&mut o, datum_p);
        o
    }

    /// The layers a well at column (i, j) completes: a run of active
    /// layers around its pick, or none.
    fn well_layers(&self, w: &WellSpec) -> Option<(usize, usize, usize, usize)> {
        let (nx, ny) = self.cells;
        let nz = self.layers.len();
        let (i, j) = (w.at.0 % nx + 1, w.at.1 % ny + 1);
        let active = |k: usize| self.layers[k].porosity > 0.0;
        let k0 = (0..nz).map(|d| (w.at.2 + d) % nz).find(|&k| active(k))?;
        let mut k1 = k0;
        while k1 + 1 < nz && k1 - k0 < w.at.3 && active(k1 + 1) {
            k1 += 1;
        }
        Some((i, j, k0 + 1, k1 + 1))
    }

    fn write_wells(&self, o: &mut String, datum_p: f64) {
        for (n, w) in self.wells.iter().enumerate() {
            let Some((i, j, k0, k1)) = self.well_layers(w) else {
                continue;
            };
            let role = if w.injector { "injector" } else { "producer" };
            let _ = writeln!(
                o,
                "well \"W{n}\" {{\n  role = {role}\n  location = ({i}, {j})\n  layers = {k0}..{k1}\n  radius = {} ft\n  skin = {}",
                w.radius, w.skin
            );
            let _ = writeln!(
                o,
                "  control = {}",
                control_text(&w.control, w.injector, datum_p)
            );
            if let Some(l) = w.limit {
                let _ = writeln!(o, "  bhp_limit = {} psi", bhp(datum_p, l, w.injector));
            }
            if let (Some(c), false) = (w.water_cut, w.injector) {
                let _ = writeln!(o, "  max_water_cut = {c}");
            }
            o.push_str("}\n\n");
        }
    }

    fn write_timeline(&self, o: &mut String, datum_p: f64) {
        let _ = writeln!(
            o,
            "timeline {{\n  end = {} day\n  max_steps = {MAX_STEPS}",
            self.end
        );
        if let Some(r) = self.report {
            let _ = writeln!(o, "  report_every = {r} day");
        }
        if let Some(m) = self.max_step {
            let _ = writeln!(o, "  max_step = {m} day");
        }
        let written: Vec<usize> = (0..self.wells.len())
            .filter(|&n| self.well_layers(&self.wells[n]).is_some())
            .collect();
        let mut events = self.events.clone();
        events.sort_by(|a, b| a.0.total_cmp(&b.0));
        events.dedup_by(|a, b| a.0 == b.0);
        for (t, w, c, limit) in events.iter().filter(|e| e.0 <= self.end) {
            let Some(&n) = written.get(w % written.len().max(1)) else {
                break;
            };
            let injector = self.wells[n].injector;
            let _ = write!(
                o,
                "  at {t} day {{\n    well \"W{n}\" {{ control = {}",
                control_text(c, injector, datum_p)
            );
            if let Some(l) = limit {
                let _ = write!(o, "; bhp_limit = {} psi", bhp(datum_p, *l, injector));
            }
            o.push_str(" }\n  }\n");
        }
        o.push_str("}\n");
    }
}
