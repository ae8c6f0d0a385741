//! Display systems (field, metric, SI): the unit each kind of quantity is
//! shown in, and number formatting.

use crate::{parse, Dim};
use serde::Serialize;
use std::fmt;
use std::sync::OnceLock;

/// How values are shown to the user.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize)]
pub enum System {
    #[default]
    /// Oilfield units: `psi`, `ft`, `stb/day`, `md`.
    Field,
    /// Metric units: `bar`, `m`, `sm3/day`, `md`.
    Metric,
    /// SI base units: `Pa`, `m`, `sm3/s`, `m^2`.
    Si,
}

impl System {
    /// Every system, in a stable order.
    pub const ALL: [System; 3] = [System::Field, System::Metric, System::Si];

    /// `"field"`, `"metric"` or `"si"`, as written in a case.
    pub fn name(self) -> &'static str {
        match self {
            System::Field => "field",
            System::Metric => "metric",
            System::Si => "si",
        }
    }

    /// The system written `name` (exact, lower case).
    pub fn from_name(name: &str) -> Option<System> {
        System::ALL.into_iter().find(|s| s.name() == name)
    }
}

impl fmt::Display for System {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// What a shown quantity is, which picks its display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
pub enum Kind {
    /// A length or depth.
    Length,
    /// An area.
    Area,
    /// A permeability.
    Permeability,
    /// A pressure.
    Pressure,
    /// A time.
    Time,
    /// A viscosity.
    Viscosity,
    /// A density.
    Density,
    /// A compressibility.
    Compressibility,
    /// A rate at surface conditions.
    SurfaceRate,
    /// A rate at reservoir conditions.
    ReservoirRate,
    /// A volume at surface conditions.
    SurfaceVolume,
    /// A volume at reservoir conditions (pore volume).
    ReservoirVolume,
    /// A formation volume factor.
    Fvf,
    /// Surface rate per pressure.
    Transmissibility,
    /// Geometric well index, permeability times length (`md*ft`).
    WellIndex,
    /// Surface rate per pressure.
    Productivity,
}

impl Kind {
    /// Every kind, in declaration order (the index of a kind is its position).
    pub const ALL: [Kind; 16] = [
        Kind::Length,
        Kind::Area,
        Kind::Permeability,
        Kind::Pressure,
        Kind::Time,
        Kind::Viscosity,
        Kind::Density,
        Kind::Compressibility,
        Kind::SurfaceRate,
        Kind::ReservoirRate,
        Kind::SurfaceVolume,
        Kind::ReservoirVolume,
        Kind::Fvf,
        Kind::Transmissibility,
        Kind::WellIndex,
        Kind::Productivity,
    ];

    /// The dimension of quantities of this kind.
    pub fn dim(self) -> Dim {
        match self {
            Kind::Length => Dim::LENGTH,
            Kind::Area => Dim::AREA,
            Kind::Permeability => Dim::PERMEABILITY,
            Kind::Pressure => Dim::PRESSURE,
            Kind::Time => Dim::TIME,
            Kind::Viscosity => Dim::VISCOSITY,
            Kind::Density => Dim::DENSITY,
            Kind::Compressibility => Dim::COMPRESSIBILITY,
            Kind::SurfaceRate => Dim::SURFACE_RATE,
            Kind::ReservoirRate => Dim::RESERVOIR_RATE,
            Kind::SurfaceVolume => Dim::SURFACE_VOLUME,
            Kind::ReservoirVolume => Dim::RESERVOIR_VOLUME,
            Kind::Fvf => Dim::FVF,
            Kind::Transmissibility | Kind::Productivity => Dim::SURFACE_RATE_PER_PRESSURE,
            Kind::WellIndex => Dim::RESERVOIR_VOLUME,
        }
    }

    fn unit_names(self) -> [&'static str; 3] {
        // [field, metric, si]
        match self {
            Kind::Length => ["ft", "m", "m"],
            Kind::Area => ["ft^2", "m^2", "m^2"],
            Kind::Permeability => ["md", "md", "m^2"],
            Kind::Pressure => ["psi", "bar", "Pa"],
            Kind::Time => ["day", "day", "s"],
            Kind::Viscosity => ["cP", "cP", "Pa*s"],
            Kind::Density => ["lb/ft^3", "kg/m^3", "kg/m^3"],
            Kind::Compressibility => ["1/psi", "1/bar", "1/Pa"],
            Kind::SurfaceRate => ["stb/day", "sm3/day", "sm3/s"],
            Kind::ReservoirRate => ["rb/day", "rm3/day", "m3/s"],
            Kind::SurfaceVolume => ["stb", "sm3", "sm3"],
            Kind::ReservoirVolume => ["rb", "rm3", "m3"],
            Kind::Fvf => ["rb/stb", "rm3/sm3", "m3/sm3"],
            Kind::Transmissibility | Kind::Productivity => {
                ["stb/day/psi", "sm3/day/bar", "sm3/s/Pa"]
            }
            Kind::WellIndex => ["md*ft", "md*m", "m^3"],
        }
    }
}

/// The unit a quantity is shown in: value shown = SI value / `factor`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DisplayUnit {
    /// The unit as shown (`psi`, `stb/day`).
    pub name: &'static str,
    /// SI value of one of this unit.
    pub factor: f64,
}

impl DisplayUnit {
    /// The SI value `si` in this unit.
    pub fn from_si(&self, si: f64) -> f64 {
        si / self.factor
    }
    /// The value `v`, given in this unit, in SI.
    pub fn to_si(&self, v: f64) -> f64 {
        v * self.factor
    }
}

fn system_index(system: System) -> usize {
    match system {
        System::Field => 0,
        System::Metric => 1,
        System::Si => 2,
    }
}

/// The unit `kind` is shown in under `system`.
pub fn display_unit(kind: Kind, system: System) -> DisplayUnit {
    static TABLE: OnceLock<Vec<[DisplayUnit; 3]>> = OnceLock::new();
    let table = TABLE.get_or_init(|| {
        Kind::ALL
            .iter()
            .map(|k| {
                k.unit_names().map(|name| DisplayUnit {
                    name,
                    // The names are fixed above and covered by tests.
                    factor: parse(name).map(|u| u.factor).unwrap_or(f64::NAN),
                })
            })
            .collect()
    });
    // `Kind::ALL` lists the variants in declaration order.
    table[kind as usize][system_index(system)]
}

/// `si` shown in the display unit of `kind` under `system`, e.g.
/// `"1250.3 psi"`: six significant digits without trailing zeros, exponent
/// form below 1e-4 and from 1e7 on.
pub fn format_si(si: f64, kind: Kind, system: System) -> String {
    let unit = display_unit(kind, system);
    format!("{} {}", format_number(unit.from_si(si)), unit.name)
}

/// A number with six significant digits and no trailing zeros.
pub fn format_number(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    if v == 0.0 {
        return "0".to_string();
    }
    // Round to six significant digits first, so that the form is chosen
    // from the number shown (999999.7 shows as 1000000, 9999999 as 1e7).
    let sci = format!("{v:.5e}");
    let rounded: f64 = sci.parse().unwrap_or(v);
    let a = rounded.abs();
    if !(1e-4..1e7).contains(&a) {
        let (mant, exp) = sci.split_once('e').unwrap_or((&sci, "0"));
        return format!("{}e{exp}", trim_zeros(mant));
    }
    let mag = a.log10().floor() as i32;
    let decimals = (5 - mag).max(0) as usize;
    let s = format!("{rounded:.decimals$}");
    trim_zeros(&s).to_string()
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}
